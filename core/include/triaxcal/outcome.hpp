#pragma once
// The outcome of a calibration in one word, shared by the CLI, the report, the parameter-set JSON,
// the HDF5 archive, the C ABI and the Gmsh client (docs/calibration-format.md, "Outcome").
// calibrate() derives it from the detailed termination (calibrate.hpp) and the fit of the used
// curves; only `converged` is shown as a success.

#include <string>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// What a calibration's result means for its user.
enum class CalibrationOutcome {
  converged,  ///< the local stage met its tolerance and no used curve fits poorly
  stopped,    ///< a budget or the time limit was reached, or the run was stopped on request
  poor_fit,   ///< converged or stopped, but a used curve has R^2 below min_r_squared
  failed,     ///< no finite objective, or the best point is a failure penalty: no parameter set
};
/// "converged", "stopped", "poor_fit", "failed".
TRIAXCAL_CORE_EXPORT std::string to_string(CalibrationOutcome outcome);
/// One line in plain words, e.g. "the optimiser stopped before it converged (a budget, the time
/// limit or a stop request); the parameters are the best found so far".
TRIAXCAL_CORE_EXPORT std::string explain(CalibrationOutcome outcome);
/// Reads to_string's words; false for anything else.
TRIAXCAL_CORE_EXPORT bool parse_outcome(const std::string& text, CalibrationOutcome& outcome);

}  // namespace triaxcal
