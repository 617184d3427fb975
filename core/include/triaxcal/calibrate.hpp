#pragma once
// Calibration: fit model parameters to measured tests. Plain data says what to fit (a
// CalibrationProblem); calibrate(options, problem) does the how and returns a CalibrationSummary.
// NLopt stays behind this interface (core links it privately).
//
// Objective (docs/calibration-format.md): every test is simulated on its own protocol; each
// measured curve y(x) is compared at its measured points with the simulated curve interpolated at
// the same x. The error of a point is normalised by the measured range of its curve,
// e = (y_sim - y_meas) / range, so kPa and strain mix fairly, and
//     objective = sum_curves  w_test * w_curve / n_curve * sum_points rho(e^2)
// with rho the loss (linear: rho(z) = z). A test whose simulation fails adds failure_penalty times
// its weights instead: the evaluation is penalised, never a crash.

#include <Eigen/Core>

#include <functional>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/model.hpp"
#include "triaxcal/outcome.hpp"
#include "triaxcal/protocol.hpp"

namespace triaxcal {

/// A column of a simulated or measured curve (units of conventions.hpp).
enum class Quantity {
  axial_strain,          ///< - (decimal)
  radial_strain,         ///< -
  volumetric_strain,     ///< -
  axial_stress,          ///< s_a' kPa
  radial_stress,         ///< s_r' kPa
  mean_stress,           ///< p' kPa
  deviator_stress,       ///< q kPa
  excess_pore_pressure,  ///< kPa
  void_ratio,            ///< -
  stress_ratio,          ///< s_a'/s_r' -
};

TRIAXCAL_CORE_EXPORT std::string to_string(Quantity quantity);
/// Throws InputError "<where>: expected one of: axial_strain, ... , found "x"".
TRIAXCAL_CORE_EXPORT Quantity parse_quantity(const std::string& text, const std::string& where);
TRIAXCAL_CORE_EXPORT std::string unit_of(Quantity quantity);
TRIAXCAL_CORE_EXPORT double value_of(const StepRecord& record, Quantity quantity);

/// One measured curve y(x) of a test, points in time order.
struct MeasuredCurve {
  Quantity x = Quantity::axial_strain;
  Quantity y = Quantity::deviator_stress;
  std::vector<double> xs;  ///< in the unit of `x`
  std::vector<double> ys;  ///< in the unit of `y`
  double weight = 1.0;     ///< relative weight of this curve (>= 0)
  /// Strain quantities (x and y) counted from the start of this protocol stage, as when a lab
  /// zeroes the strains at the start of shearing; -1 = from the start of the protocol.
  int strain_zero_stage = -1;
  /// Compare with the records of this stage only; -1 = every record from the start of
  /// strain_zero_stage (or of the protocol) to the end. Points are matched in time order.
  int stage = -1;
  /// Which shear stage of a multi-stage specimen the curve holds, numbered 1, 2, 3 for people;
  /// 0 = the specimen's only shear stage (or an oedometer test). Labels only, never used to compare.
  int shear_stage = 0;
  double x_min = -std::numeric_limits<double>::infinity();  ///< points with x outside [x_min, x_max]
  double x_max = std::numeric_limits<double>::infinity();   ///< are not compared
};

struct CalibrationTest {
  std::string id;
  TestProtocol protocol;  ///< the test's own history (consolidation, drainage, loops, stages)
  std::vector<MeasuredCurve> curves;
  double weight = 1.0;    ///< multiplies the weights of its curves
};

enum class ParameterStatus { free, fixed, tied };
enum class ParameterScale { linear, log };

TRIAXCAL_CORE_EXPORT std::string to_string(ParameterStatus status);

/// How one model parameter takes part. Parameters without a spec are fixed at their default.
struct ParameterSpec {
  std::string name;
  ParameterStatus status = ParameterStatus::fixed;
  double value = kNotGiven;  ///< fixed: the value (NaN = model default)
  std::string word;          ///< fixed word parameter as the file writes it (ParameterInfo::words); sets value
  double lower = kNotGiven;  ///< free: bounds (required) and start (NaN = middle of the box)
  double upper = kNotGiven;
  double start = kNotGiven;
  ParameterScale scale = ParameterScale::linear;  ///< free: log needs lower > 0
  std::string expression;    ///< tied: e.g. "3 * secant_stiffness_ref" (+ - * / ^, parentheses, names)
  /// fixed: at the classical interpretation's value of the parameter's role ("from": "interpretation"
  /// in a calibration file); seed_from_interpretation sets `value` (calibration_file.hpp).
  bool from_interpretation = false;
};

/// Builds a model from values in ModelInfo order; throws InputError for values the model rejects.
using ModelFactory = std::function<std::unique_ptr<Model>(const ParameterValues&)>;

/// One stage of a staged fit (CalibrationProblem::fit_stages): the free parameters fitted in it. The
/// problem's other free parameters are held fixed meanwhile: at their start values before their own
/// stage, at that stage's result after it. Every free parameter is in exactly one stage.
struct FitStage {
  std::vector<std::string> free;
  std::string note;  ///< what the stage is for, shown beside it
};

struct CalibrationProblem {
  const ModelInfo* model = nullptr;  ///< not owned
  ModelFactory create;
  std::vector<CalibrationTest> tests;
  std::vector<ParameterSpec> parameters;
  /// Inequalities between parameters, "lhs <= rhs" or "lhs >= rhs", each side an expression.
  std::vector<std::string> constraints;
  DriverOptions driver;
  /// Empty: one joint fit of every free parameter. Else the stages in order, each a calibrate() run
  /// of its parameters with the options given, then the intervals of all free parameters from one
  /// joint Jacobian at the end point (docs/calibration-format.md, "Staged fit").
  std::vector<FitStage> fit_stages;
};

enum class Loss { linear, soft_l1, huber };
enum class GlobalAlgorithm { none, crs2, isres, direct_l };
/// least_squares: bounded nonlinear least squares (Ceres, Levenberg-Marquardt trust region) on the
/// per-point residuals, with their Jacobian by finite differences; the others are NLopt's
/// derivative-free methods (they minimise the objective as a number).
enum class LocalAlgorithm { none, least_squares, bobyqa, cobyla, sbplx, nelder_mead };
/// How the Jacobian of the residuals is taken (least-squares stage and intervals). exact: the model's
/// derivative version (Model::with_derivatives) on the substeps of the run at the point, forward-mode
/// through the model and the driver (sensitivity.hpp); finite differences where a model has none or
/// a derivative run fails. finite_differences: always differences on the frozen substeps
/// (jacobian_step).
enum class Sensitivities { exact, finite_differences };

TRIAXCAL_CORE_EXPORT std::string to_string(Loss loss);
TRIAXCAL_CORE_EXPORT std::string to_string(Sensitivities sensitivities);
TRIAXCAL_CORE_EXPORT std::string to_string(GlobalAlgorithm algorithm);
TRIAXCAL_CORE_EXPORT std::string to_string(LocalAlgorithm algorithm);

/// Seen by the progress callback after every evaluation.
struct CalibrationProgress {
  std::string stage;       ///< "start", "design", "global", "local", "uncertainty"
  long evaluations = 0;    ///< objective evaluations so far
  double objective = 0.0;  ///< of the latest evaluation
  double best = 0.0;       ///< best so far
  double elapsed = 0.0;    ///< seconds
};

/// Called on the thread that called calibrate(), after each evaluation made on that thread (the
/// counts include the evaluations of the other threads). Return false to stop: the calibration
/// ends cleanly with the best point found so far.
using CalibrationCallback = std::function<bool(const CalibrationProgress&)>;

struct CalibrationOptions {
  GlobalAlgorithm global = GlobalAlgorithm::none;   ///< derivative-free global stage; none = skip
  long global_evaluations = 4000;                   ///< budget of the global stage
  /// Independent searches of the global stage (crs2, isres), each from the best point so far with
  /// its share of the budget and its own seed, run side by side on the threads; the best goes on.
  /// The result depends on this number, never on the thread count. direct_l always runs once.
  int global_runs = 2;
  LocalAlgorithm local = LocalAlgorithm::least_squares;  ///< local stage; none = skip
  long local_evaluations = 3000;                    ///< budget of each local run (objective evaluations)
  /// Local runs. 0 = the rule: least_squares 1 + free parameters (the start point, then a Latin
  /// hypercube of starts over the box), NLopt's methods 1. With design_points: from the best point,
  /// then from the best design points. Several starts run side by side on the threads.
  int starts = 0;
  int design_points = 0;       ///< space-filling (Latin hypercube) points evaluated before the stages
  double relative_tolerance = 1e-10;   ///< local stop: relative change of the objective
  double x_tolerance = 1e-7;           ///< local stop: change of the scaled unit-box coordinates
  double max_seconds = 0.0;            ///< wall-time limit over all stages; 0 = none
  unsigned long seed = 1;              ///< design, global stage and NLopt's generator
  int threads = 0;                     ///< tests, global runs, design points and Jacobian columns in parallel; 0 = all cores
  Loss loss = Loss::linear;
  double loss_scale = 0.05;            ///< robust loss: error (fraction of the range) where it bends
  double failure_penalty = 10.0;       ///< per failed test, times its weights
  bool uncertainty = true;             ///< Jacobian, covariance and intervals at the optimum
  Sensitivities sensitivities = Sensitivities::exact;  ///< how Jacobians are taken (see Sensitivities)
  double jacobian_step = 1e-4;         ///< difference step of finite-difference Jacobians, fraction of each box width
  /// Work limit of the search: a simulation of an evaluation that takes more accepted + rejected
  /// substeps than this many a record (at least 5000 in all; scaled by sqrt(1e-4 / tolerance) for a
  /// driver tolerance tighter than the default, never above DriverOptions::max_substeps) fails like
  /// any other failed simulation (penalised, counted in work_limited_simulations). Runaway responses
  /// far from the data take thousands of substeps a record where a usable one takes a few dozen
  /// (docs/calibration-format.md "Work limit"). The fitted set's own simulation has no such limit.
  /// 0 = none (the driver's max_substeps only).
  int max_substeps_per_record = 200;
  /// Starts whose objective is within this relative distance of the best (or 1e-12 absolute: data
  /// reproduced) count as reaching it (CalibrationSummary::starts_at_best).
  double same_optimum_tolerance = 1e-6;
  double correlation_warning = 0.95;   ///< |correlation| above this gives an identifiability warning
  // Noise model of the intervals (errors in variables, docs/calibration-format.md "Uncertainty"):
  // every measured column is noisy, x as well as y; a point's variance is sigma_y^2 +
  // (dy/dx)^2 sigma_x^2 with the simulated curve's local slope (Orear 1982).
  double stress_precision = 0.5;       ///< kPa, standard deviation of measured stresses (lab precision; common practice, no source)
  double strain_precision = 1e-4;      ///< -, standard deviation of measured strains (lab precision; common practice, no source)
  /// true: the precisions set each point's share of its curve's noise and the curve's residual
  /// scatter sets the level (a model that misses the data widens the intervals); false: the
  /// precisions are the noise as declared.
  bool noise_from_residuals = true;
  bool record_history = true;          ///< keep every evaluation in the summary
  /// A used curve (weight > 0) whose R^2 at the result is below this makes the outcome poor_fit.
  double min_r_squared = 0.9;
  CalibrationCallback progress;        ///< may be empty

  /// Throws InputError "calibration options: <field> = <value> <rule>".
  void validate() const;
};

enum class CalibrationTermination {
  converged,         ///< the local stage met its tolerance
  evaluation_limit,  ///< a stage used its whole budget
  time_limit,        ///< max_seconds reached
  stopped,           ///< the progress callback asked to stop
  optimiser_halted,  ///< NLopt ended the stage with an error code (e.g. roundoff limited) before its tolerance
  no_usable_result,  ///< no evaluation without a failure penalty (a test failed, the model or a constraint rejected it)
  not_run,
};
TRIAXCAL_CORE_EXPORT std::string to_string(CalibrationTermination termination);

// Beside the detailed termination: the outcome a user reads (converged, stopped, poor_fit, failed),
// CalibrationOutcome in triaxcal/outcome.hpp (its own header, so the report needs no Eigen).

struct FittedParameter {
  std::string name;
  std::string unit;
  ParameterStatus status = ParameterStatus::fixed;
  std::string expression;        ///< tied
  double value = kNotGiven;
  double start = kNotGiven;      ///< free: where the fit started
  double lower = kNotGiven;      ///< free: bounds
  double upper = kNotGiven;
  double standard_error = kNotGiven;  ///< free and uncertainty computed; NaN otherwise
  double interval_low = kNotGiven;    ///< 95 % interval
  double interval_high = kNotGiven;
  bool at_bound = false;              ///< free value within 1e-6 of the box width from a bound
};

struct CurveFit {
  Quantity x = Quantity::axial_strain;
  Quantity y = Quantity::deviator_stress;
  int shear_stage = 0;         ///< MeasuredCurve::shear_stage (1, 2, 3; 0 = the specimen's only stage)
  int points = 0;              ///< compared points
  double rmse = kNotGiven;     ///< in the unit of y
  double r_squared = kNotGiven;
  double range = 0.0;          ///< measured range used for normalisation
  bool used = true;            ///< weight > 0: counts in the objective and in the outcome
  bool poor = false;           ///< used, and R^2 below min_r_squared (R^2 undefined: never poor)
  std::vector<double> xs, measured, simulated;  ///< the compared points
};

struct TestFit {
  std::string id;
  bool simulated = false;      ///< the simulation at the optimum completed
  std::string message;         ///< the driver's message
  double objective = 0.0;      ///< this test's share of the objective
  std::vector<CurveFit> curves;
};

struct HistoryEntry {
  long evaluation = 0;
  int stage = 0;               ///< 0 start/design, 1 global, 2 local
  double objective = 0.0;
  double best = 0.0;
};

/// How one stage of a staged fit ended (CalibrationSummary::fit_stages).
struct FitStageSummary {
  std::vector<std::string> free;   ///< the parameters fitted in the stage
  std::string note;
  bool run = false;                ///< false: not run (an earlier stage failed or was stopped)
  /// The stage's own outcome; its curves are judged with the later stages' parameters still at their starts.
  CalibrationOutcome outcome = CalibrationOutcome::failed;
  std::string outcome_reason;
  CalibrationTermination termination = CalibrationTermination::not_run;
  double objective = std::numeric_limits<double>::infinity();
  double start_objective = std::numeric_limits<double>::infinity();
  long evaluations = 0, jacobian_evaluations = 0;
  int local_runs = 0, starts_at_best = 0;
  double wall_time = 0.0;
  /// "stage k of n (free: a, b): <outcome>, objective ..." for the summaries and the report.
  std::string line(std::size_t k, std::size_t n) const;
};

struct CalibrationSummary {
  CalibrationTermination termination = CalibrationTermination::not_run;
  std::string message;
  CalibrationOutcome outcome = CalibrationOutcome::failed;
  /// Why, with the numbers: the budget or limit reached and the option that raises it, each poorly
  /// fitted curve with its R^2, or what failed.
  std::string outcome_reason;
  std::string model;
  double objective = std::numeric_limits<double>::infinity();
  double start_objective = std::numeric_limits<double>::infinity();
  long evaluations = 0;
  long failed_simulations = 0;     ///< test simulations that failed (or models that could not be built)
  /// Of those, simulations ended by the search's work limit (CalibrationOptions::max_substeps_per_record).
  long work_limited_simulations = 0;
  /// Local runs whose start could not be simulated (their first evaluation failed): they end there.
  int failed_starts = 0;
  /// jacobian_evaluations: simulations of all tests made for Jacobians: one a finite-difference column
  /// (central: two), one a pass of an exact Jacobian (kDualLanes columns on dual numbers, about
  /// 1 + kDualLanes simulations' work).
  long design_evaluations = 0, global_evaluations = 0, local_evaluations = 0, jacobian_evaluations = 0;
  /// Jacobians taken exactly (model's derivative version) and by finite differences (no derivative
  /// version, finite_differences asked, or an exact one that failed).
  long exact_jacobians = 0, difference_jacobians = 0;
  int local_runs = 0;
  /// Local runs that ended within same_optimum_tolerance of the best objective: all of them (or
  /// most) is a sign of a well-posed problem; few is a sign of several minima or a flat valley.
  int starts_at_best = 0;
  double wall_time = 0.0;          ///< seconds
  int threads = 0;                 ///< threads used
  std::string global_algorithm, local_algorithm, loss;
  std::string options_text;        ///< the options as asked, one "key = value" per line

  std::vector<FittedParameter> parameters;  ///< every model parameter, ModelInfo order
  ParameterValues values;                   ///< the fitted set, ModelInfo order
  std::vector<std::string> free_names;      ///< rows/columns of covariance and correlation
  Eigen::MatrixXd covariance;               ///< free parameters, physical units; empty if not computed
  Eigen::MatrixXd correlation;
  std::vector<std::string> warnings;        ///< identifiability and fit warnings in plain words
  std::vector<TestFit> tests;
  std::vector<SimulationResult> simulations;  ///< at the optimum, one a test
  std::vector<HistoryEntry> history;
  /// A staged fit (CalibrationProblem::fit_stages): each stage in order; empty for a joint fit.
  std::vector<FitStageSummary> fit_stages;
  /// Where the intervals come from when that needs saying (a staged fit: one joint Jacobian of all
  /// free parameters at the end point); empty for a joint fit (the local stage's optimum).
  std::string uncertainty_basis;

  /// A parameter set was found: the outcome is not failed.
  bool usable() const { return outcome != CalibrationOutcome::failed; }
  /// "<outcome>: <reason>", the line every front end shows.
  std::string outcome_line() const;
  /// A few lines: outcome, objective, counts, each free or tied parameter (free ones with their
  /// intervals), the worst curve, and how many warnings there are (full() lists them).
  std::string brief() const;
  /// Everything: options asked against used, per-test/per-curve fit, correlations, warnings.
  std::string full() const;
};

/// Checks the problem (names, bounds, starts, ties, constraints, tests) and throws InputError with
/// an exact message: "parameters.<name>: ...", "constraints[i]: ...", "tests[i]: ...".
TRIAXCAL_CORE_EXPORT void validate_problem(const CalibrationProblem& problem);

/// Runs the stages of `options` on `problem`. Throws InputError for a bad problem or options;
/// numerical trouble ends up in the summary.
TRIAXCAL_CORE_EXPORT CalibrationSummary calibrate(const CalibrationOptions& options, const CalibrationProblem& problem);

/// The objective at a full parameter set (ModelInfo order), as calibrate() computes it; infinite
/// when the model cannot be built. For tests and reports.
TRIAXCAL_CORE_EXPORT double calibration_objective(const CalibrationOptions& options, const CalibrationProblem& problem,
                                                  const ParameterValues& values);

}  // namespace triaxcal
