#pragma once
// Every model by name. The CLI, the optimiser, the report and the plugin find models here.

#include <memory>
#include <string>
#include <vector>

#include "triaxcal/model.hpp"
#include "triaxcal/models_export.hpp"

namespace triaxcal {

struct ModelEntry {
  const ModelInfo& (*info)();
  /// Checks the values (bounds and rules between parameters: exact messages naming `where`)
  /// and builds the model. Throws InputError.
  std::unique_ptr<Model> (*create)(const ParameterValues& values, const std::string& where);
};

TRIAXCAL_MODELS_EXPORT const std::vector<ModelEntry>& model_registry();

/// Throws InputError "unknown model 'x' (known: a, b, c)".
TRIAXCAL_MODELS_EXPORT const ModelEntry& find_model(const std::string& name);

}  // namespace triaxcal
