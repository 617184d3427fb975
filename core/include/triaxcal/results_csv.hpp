#pragma once
// Simulated curves as CSV: one row a step, units in the header.

#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/driver.hpp"

namespace triaxcal {

struct NamedResult {
  std::string test;                 ///< protocol name
  const SimulationResult* result;   ///< not owned
};

/// Header: test,stage,step,axial_strain[-],radial_strain[-],volumetric_strain[-],axial_stress[kPa],...
TRIAXCAL_CORE_EXPORT std::string format_results_csv(const std::vector<NamedResult>& results,
                                                    const std::vector<std::string>& state_names);

}  // namespace triaxcal
