#pragma once
// Internal to plugin/: the JSON the C ABI and the Gmsh client hand out (model metadata, resolved
// parameter sets, simulated curves). One place, so both front-ends say the same thing.

#include <nlohmann/json.hpp>

#include <string>

#include "triaxcal/driver.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal::plugin {

using nlohmann::json;

inline constexpr const char* kModelsFormat = "triaxcal-models";
inline constexpr const char* kCurvesFormat = "triaxcal-curves";

/// The caution every result that may feed design carries; the same words as the CLI's kCaution
/// (cli/commands.hpp; tests/plugin/c_abi_test.cpp checks they agree).
inline constexpr const char* kCaution =
    "Caution: these parameters are for numerical analysis. They must be reviewed by a qualified "
    "geotechnical engineer; design values follow local codes and licensed practice.";

/// The project version, set by plugin/CMakeLists.txt.
inline constexpr const char* kPluginVersion = TRIAXCAL_PLUGIN_VERSION;

/// {"name", "title", "parameters": [...], "state_variables": [...]}; NaN defaults become null.
json model_json(const ModelInfo& info);

/// {"format": "triaxcal-models", "version": 1, "models": [...]} over the whole registry.
json models_json();

/// A "triaxcal-parameters" document with every parameter of `info` as {"value", "unit"}.
json parameter_set_json(const ModelInfo& info, const ParameterValues& values, const std::string& description);

/// A "triaxcal-curves" document for one simulation (see triaxcal_c.h, triaxcal_simulate).
json curves_json(const ModelInfo& info, const std::string& test, const SimulationResult& result);

/// Compact text; invalid UTF-8 in strings is replaced rather than thrown on.
std::string dump(const json& value);

/// JSON null for NaN and infinities (JSON has no such numbers), else the number.
json number_or_null(double value);

}  // namespace triaxcal::plugin
