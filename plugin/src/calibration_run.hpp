#pragma once
// Internal to plugin/: one calibration from a calibration-file JSON ("triaxcal-calibration"), as
// `triaxcal fit` runs it (series read, problem built, starts seeded from the interpretation), and
// its result as JSON. Shared by triaxcal_calibrate and the Gmsh client.

#include <string>
#include <vector>

#include "plugin_json.hpp"
#include "triaxcal/calibrate.hpp"

namespace triaxcal::plugin {

inline constexpr const char* kCalibrationResultFormat = "triaxcal-calibration-result";

struct CalibrationRun {
  const ModelInfo* model = nullptr;
  CalibrationSummary summary;
  std::string parameter_set;        ///< "triaxcal-parameters" text (format_parameter_set); empty if not usable
  std::vector<std::string> notes;   ///< starting values seeded from the interpretation, one line each
};

/// `source` names the JSON in messages; a relative "series" path resolves against its folder.
/// Throws InputError for a bad file, series, model or problem (the messages name file and key).
CalibrationRun run_calibration(const std::string& text, const std::string& source, const CalibrationCallback& progress);

/// {"format": "triaxcal-calibration-result", "version": 1, "model", "outcome", "outcome_reason",
///  "outcome_explanation", "termination", "message", "usable", "objective", "start_objective",
///  "evaluations", "failed_simulations", "wall_time", "warnings", "notes", "parameter_set" (object or
///  null), "tests": [{"id", "simulated", "message", "objective", "curves": [{"x", "y", "unit", "points",
///  "rmse", "r_squared", "used", "poor_fit", "x_values", "measured", "simulated"}]}]}
json calibration_result_json(const CalibrationRun& run);

}  // namespace triaxcal::plugin
