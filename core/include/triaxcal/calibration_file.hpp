#pragma once
// The calibration file: JSON of our own, format "triaxcal-calibration", version 1
// (docs/calibration-format.md). It names a test series, a model, the tests and curves to match,
// each parameter's status and the optimiser options. Core does not know the models: the caller
// looks the model up (models/registry.hpp) and passes its metadata and factory to
// build_calibration_problem.

#include <limits>
#include <string>
#include <vector>

#include "triaxcal/calibrate.hpp"
#include "triaxcal/core_export.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal {

inline constexpr const char* kCalibrationFormat = "triaxcal-calibration";
inline constexpr int kCalibrationVersion = 1;

struct CalibrationCurveSpec {
  Quantity y = Quantity::deviator_stress;
  double weight = 1.0;
};

struct CalibrationTestSpec {
  std::string specimen;   ///< id in the test series
  double weight = 1.0;
  double strain_min = -std::numeric_limits<double>::infinity();  ///< axial-strain range compared
  double strain_max = std::numeric_limits<double>::infinity();
  std::vector<CalibrationCurveSpec> curves;
};

struct CalibrationFile {
  std::string source;        ///< the file, for messages
  std::string description;
  std::string series;        ///< test-series path, resolved against the calibration file's folder
  std::string model;         ///< registry name
  int steps_per_shear_stage = 200;
  std::vector<CalibrationTestSpec> tests;
  std::vector<ParameterSpec> parameters;
  std::vector<std::string> constraints;
  CalibrationOptions options;  ///< from "options" (defaults otherwise); no progress callback
};

/// Strict: unknown keys, wrong types and bad values throw InputError "<source>: <key path>: ...".
TRIAXCAL_CORE_EXPORT CalibrationFile parse_calibration_file(const std::string& text, const std::string& source);
TRIAXCAL_CORE_EXPORT CalibrationFile read_calibration_file(const std::string& path);

/// The problem of `file` on `series`: each test is its specimen's protocol (specimen_protocol) and
/// its measured curves, strains zeroed where the series zeroes them. Throws InputError naming the
/// calibration file: "<source>: tests[i].specimen: ...", "<source>: parameters.<name>: ...".
/// A free parameter without "start" starts in the middle of its box unless
/// seed_starts_from_interpretation gives it one.
TRIAXCAL_CORE_EXPORT CalibrationProblem build_calibration_problem(const CalibrationFile& file, const TestSeries& series,
                                                                  const ModelInfo& model, ModelFactory create);

/// Starting values from the classical interpretation of the series (interpret.hpp) for free
/// parameters that have none, by parameter name: friction_angle and cohesion (s'-t envelope),
/// dilation_angle (peak dilation rate), youngs_modulus (initial stiffness), secant_stiffness_ref,
/// stress_exponent and unloading_stiffness_ref (stiffness laws), critical_state_ratio and
/// critical_state_friction_angle (critical states, Rowe), lambda and kappa (consolidation stages).
/// Values are clamped into the bounds. Returns one line per parameter seeded. Bounds stay required.
TRIAXCAL_CORE_EXPORT std::vector<std::string> seed_starts_from_interpretation(CalibrationProblem& problem,
                                                                             const TestSeries& series);

}  // namespace triaxcal
