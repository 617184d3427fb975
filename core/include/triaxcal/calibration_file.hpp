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
#include "triaxcal/interpret.hpp"
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
  /// Record density: records of a stage whose points do not place them (Stage::steps of the shear
  /// stages); with fixed_steps, the increments of each shear stage.
  int steps_per_shear_stage = 200;
  double simulation_tolerance = DriverOptions{}.tolerance;  ///< -> CalibrationProblem::driver.tolerance
  bool fixed_steps = false;  ///< -> CalibrationProblem::driver.fixed_steps (no error control)
  std::vector<CalibrationTestSpec> tests;
  std::vector<ParameterSpec> parameters;
  std::vector<std::string> constraints;
  std::vector<FitStage> fit_stages;  ///< "fit_stages": a staged fit; empty: one joint fit
  CalibrationOptions options;  ///< from "options" (defaults otherwise); no progress callback
  /// The classical interpretation the user chose (key "interpretation": criterion, limiting_strain,
  /// stress_range, design_stress); material and reference pressure are set by
  /// interpretation_options(). It seeds bounds and starts and is the one the report shows.
  InterpretOptions interpretation;
};

/// Strict: unknown keys, wrong types and bad values throw InputError "<source>: <key path>: ...".
TRIAXCAL_CORE_EXPORT CalibrationFile parse_calibration_file(const std::string& text, const std::string& source);
TRIAXCAL_CORE_EXPORT CalibrationFile read_calibration_file(const std::string& path);

/// The problem of `file` on `series`: each test is its specimen's protocol (specimen_protocol) and
/// its measured curves: one curve per shear stage and quantity, compared on the stage's own strains
/// with the records of that stage (an oedometer specimen: one curve per quantity, strains from the
/// protocol start); consolidation rows are not compared. Driver options from simulation_tolerance
/// and fixed_steps. Throws InputError naming the
/// calibration file: "<source>: tests[i].specimen: ...", "<source>: parameters.<name>: ...".
/// Every free parameter needs both bounds here: call seed_from_interpretation first to fill the
/// ones the file leaves out. A free parameter without "start" starts in the middle of its box
/// unless seed_from_interpretation gives it one.
TRIAXCAL_CORE_EXPORT CalibrationProblem build_calibration_problem(const CalibrationFile& file, const TestSeries& series,
                                                                  const ModelInfo& model, ModelFactory create);

/// The options of the classical interpretation of a calibration: the file's "interpretation" key,
/// the fitted specimens' material when they all have the same one (else every specimen), and the
/// model's fixed reference_pressure where it has one (else the interpretation's default).
TRIAXCAL_CORE_EXPORT InterpretOptions interpretation_options(const CalibrationFile& file, const TestSeries& series,
                                                             const ModelInfo& model);

/// Missing bounds and starts of the free parameters of `file` from the classical interpretation
/// of `series` with interpretation_options(file, series, model) (interpret.hpp), by the
/// parameter's declared role (ParameterInfo::role, never its name), with v the interpretation's value:
///   friction_angle, cohesion            s'-t envelope
///   dilation_angle                      mean peak dilation angle of the CD stages
///   youngs_modulus                      mean initial stiffness of the CD stages
///   secant_stiffness_ref, stiffness_exponent   secant stiffness law
///   unload_reload_stiffness_ref         unload-reload stiffness law
///   oedometer_stiffness_ref             mean constrained modulus of the oedometer stages at s_a' = p_ref
///   critical_state_ratio, critical_state_friction_angle   critical states, else Rowe's phi_cv
///   compression_index, swelling_index   consolidation and oedometer stages
///   undrained_shear_strength, undrained_youngs_modulus   mean c_u and initial stiffness of the UU stages
///   csl_void_ratio_ref, csl_slope       e_Gamma and lambda_c of the power-law critical-state line (xi: the
///                                       model's fixed csl_exponent, else the interpretation's default)
/// Bounds not given (either one or both) follow a rule per role: stiffnesses, lambda and kappa
/// [v/4, 4 v]; friction angles [v - 8, v + 8] deg; dilation_angle [0, max(v + 8, 5)] deg; cohesion
/// [0, max(3 v, 20)] kPa; stiffness_exponent [max(0.1, v - 0.3), min(1, v + 0.3)];
/// critical_state_ratio [0.75 v, 1.25 v]; undrained_shear_strength [v/2, 2 v]; csl_void_ratio_ref [v - 0.1, v + 0.1]. v is first taken
/// into the model's range (ParameterInfo, open ends moved inward by 1e-4 max(1, |end|)), the
/// derived bounds are cut to that range and widened to include a start given in the file; a given
/// bound is kept as given. A start not given is v clamped into the bounds.
/// Throws InputError "<source>: parameters.<name>: lower and upper are needed: the interpretation
/// of the series gives no value for <name>" (or "lower is needed", "upper is needed") when a bound
/// is missing and v is not there, and when a derived bound does not leave lower < upper beside a
/// given one. Parameters the model does not have are left to build_calibration_problem.
/// A fixed parameter with from_interpretation ("from": "interpretation") gets v as its value; no v is
/// an InputError "<source>: parameters.<name>: fixed from the interpretation: the interpretation of the
/// series gives no value for <name>".
/// Returns one line a derived bound pair, one a seeded start and one a fixed value, for the user.
TRIAXCAL_CORE_EXPORT std::vector<std::string> seed_from_interpretation(CalibrationFile& file, const TestSeries& series,
                                                                       const ModelInfo& model);

}  // namespace triaxcal
