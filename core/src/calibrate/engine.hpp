#pragma once
// Internal: the prepared problem (free/fixed/tied map, unit box, compared points) and the
// evaluator that simulates the tests on a thread pool.

#include <atomic>
#include <condition_variable>
#include <functional>
#include <mutex>
#include <thread>
#include <vector>

#include "expression.hpp"
#include "triaxcal/calibrate.hpp"

namespace triaxcal::detail {

/// The stages of problem.fit_stages as model parameter indices; throws InputError
/// "fit_stages[i].free[j]: ..." for an unknown parameter, one not free, one in two stages, an empty
/// stage, or a free parameter in no stage (staged.cpp).
std::vector<std::vector<int>> check_fit_stages(const CalibrationProblem& problem);

/// The options as asked, one "key = value" per line (CalibrationSummary::options_text).
std::string options_text_of(const CalibrationOptions& options);

/// calibrate() without fit_stages and without options.validate(): a staged fit's end point is
/// evaluated with no stage at all (global and local none, no design points).
CalibrationSummary calibrate_validated(const CalibrationOptions& options, const CalibrationProblem& problem);

/// calibrate() of a problem with fit_stages (staged.cpp).
CalibrationSummary calibrate_staged(const CalibrationOptions& options, const CalibrationProblem& problem);

/// Runs `n` tasks on `threads` threads (the caller is one of them). Which thread runs a task never
/// changes a result: every task writes only its own slot.
class TaskPool {
 public:
  explicit TaskPool(int threads);
  ~TaskPool();
  TaskPool(const TaskPool&) = delete;
  TaskPool& operator=(const TaskPool&) = delete;

  void run(int n, const std::function<void(int)>& task);
  int threads() const { return static_cast<int>(workers_.size()) + 1; }

 private:
  void work();
  void drain();

  std::vector<std::thread> workers_;
  std::mutex mutex_;
  std::condition_variable wake_, done_;
  const std::function<void(int)>* task_ = nullptr;
  int count_ = 0;
  std::atomic<int> next_{0};
  std::atomic<long> generation_{0};
  std::atomic<int> busy_{0};
  std::atomic<bool> quit_{false};
};

/// One compared curve of a test, points already filtered by the x range.
struct PreparedCurve {
  int source = 0;            ///< index into CalibrationTest::curves
  Quantity x = Quantity::axial_strain, y = Quantity::deviator_stress;
  int stage = -1;
  int zero_stage = -1;
  std::vector<double> xs, ys;
  double range = 1.0;        ///< normalisation (unit of y)
  double x_span = 0.0;       ///< max - min of the measured x
  std::vector<std::size_t> runs;  ///< first point of each monotone run of x (see interpolate_curve)
  double weight = 0.0;       ///< w_test * w_curve / n (objective weight of e^2)
  double sst = 0.0;          ///< sum of squares about the mean, for R^2
};

struct PreparedTest {
  const CalibrationTest* test = nullptr;
  /// The test's protocol with record points (Stage::record_at) at the measured axial strains of
  /// its strain-controlled stages (see place_records); the test's own protocol with fixed steps.
  TestProtocol protocol;
  std::vector<PreparedCurve> curves;
  int points = 0;
  double total_weight = 0.0;  ///< w_test * sum of curve weights (penalty scale)
};

/// The search's work limit in all (substeps of one simulation) is at least this many, so that a
/// protocol with few records keeps room for its consolidation stages (CalibrationOptions::
/// max_substeps_per_record; about 0.1 s of a sand model simulation on this machine).
inline constexpr double kWorkLimitFloor = 5000.0;

/// How an evaluation treats the driver's substeps (SubstepPlan): as usual, recording them, or
/// replaying recorded ones.
enum class PlanMode { none, record, replay };

/// Outcome of simulating one test at one parameter set.
struct TestOutcome {
  bool ok = false;
  bool work_limited = false;      ///< failed at the search's work limit (CalibrationOptions::max_substeps_per_record)
  std::vector<double> simulated;  ///< at the compared points, curves in order
  SimulationResult result;        ///< of the last simulate(); reused, so its vectors keep their capacity
};

struct Prepared {
  const CalibrationProblem* problem = nullptr;
  std::vector<std::string> names;
  std::vector<ParameterStatus> status;
  std::vector<double> fixed;                 ///< ModelInfo order; fixed values (NaN for free/tied)
  std::vector<int> free;                     ///< model indices of the free parameters
  std::vector<double> lower, upper, start;   ///< per free parameter, physical
  std::vector<ParameterScale> scale;
  std::vector<std::pair<int, Expression>> ties;  ///< in evaluation order
  std::vector<Inequality> constraints;
  std::vector<PreparedTest> tests;
  int points = 0;

  /// Physical value of free parameter k at unit coordinate u (clamped to [0, 1]).
  double to_physical(int k, double u) const;
  double to_unit(int k, double value) const;
  /// Derivative d(value)/du of free parameter k at `value`.
  double slope(int k, double value) const;
  /// Full ModelInfo-order values from the unit coordinates of the free parameters.
  ParameterValues values(const std::vector<double>& unit) const;
  /// Largest relative violation of the constraints (<= 0 when all hold).
  double violation(const ParameterValues& values) const;
};

/// Throws InputError for a bad problem (see validate_problem).
Prepared prepare(const CalibrationProblem& problem);

class Evaluator {
 public:
  Evaluator(const Prepared& prepared, const CalibrationOptions& options, int threads);

  /// Simulates every test at `values`; fills outcome(t), whose `result` holds the simulation (or
  /// why it failed) until the next call. Returns false when the model could not be built.
  /// PlanMode::record keeps each test's accepted substeps in plans(); PlanMode::replay runs the
  /// substeps of `replay` (one plan a test, e.g. another evaluator's plans()).
  bool simulate(const ParameterValues& values, PlanMode mode = PlanMode::none,
                const std::vector<SubstepPlan>* replay = nullptr);
  const std::vector<SubstepPlan>& plans() const { return plans_; }
  /// Objective of the last simulate() (see calibrate.hpp), summed in test order.
  double objective(bool model_built, std::vector<double>* per_test = nullptr) const;
  const TestOutcome& outcome(int t) const { return outcomes_[static_cast<std::size_t>(t)]; }
  int failed_tests() const;
  /// Of those, the ones ended by the search's work limit.
  int work_limited_tests() const;
  /// false: the simulations run with the problem's driver options alone (the fitted set's own
  /// simulation); true (the default): with the search's work limit as well.
  void limit_work(bool on) { limit_work_ = on; }
  int threads() const { return pool_.threads(); }
  /// Runs n independent tasks on this evaluator's threads (none of them may use this evaluator).
  void run_tasks(int n, const std::function<void(int)>& task) { pool_.run(n, task); }

 private:
  void run_test(int t);

  const Prepared& prepared_;
  const CalibrationOptions& options_;
  TaskPool pool_;
  std::vector<TestOutcome> outcomes_;
  std::vector<SubstepPlan> plans_;
  std::vector<DriverOptions> limited_;  ///< per test: the problem's driver options with the work limit
  bool limit_work_ = true;
  PlanMode mode_ = PlanMode::none;
  const std::vector<SubstepPlan>* replay_ = nullptr;
  const Model* model_ = nullptr;
  std::function<void(int)> task_;
};

/// rho'(z) of the loss at z = e^2 (1 for the linear loss): psi(e) = rho'(e^2) e is a point's
/// influence on the gradient of the objective.
double loss_weight(Loss kind, double z, double c);
/// psi'(e) = rho'(z) + 2 z rho''(z) at z = e^2 (1 for the linear loss): a point's share of the
/// Gauss-Newton curvature.
double loss_curvature(Loss kind, double z, double c);

/// Sets Stage::record_at of the strain-controlled stages of `protocol` so that records fall on the
/// measured axial strains of `curves` (engineering, relative to each curve's origin) and the stage
/// end, instead of the stage's `steps` equal steps. Points of stages whose start strain is not known in advance
/// (after a stress-controlled stage inside the compared range) are placed as if that stage left
/// the axial strain unchanged: they then lie near, not on, a record.
void place_records(TestProtocol& protocol, const std::vector<PreparedCurve>& curves);

/// The compared value of a simulated curve at each x (forward-moving search, see the .cpp).
void interpolate_curve(const SimulationResult& result, const PreparedCurve& curve, double* out);
/// The same on a simulation with derivatives: the segments are chosen on the values, the
/// interpolated values carry the records' derivatives (and the x columns', where records do not
/// fall on the measured x).
void interpolate_curve(const DualSimulationResult& result, const PreparedCurve& curve, Dual* out);

}  // namespace triaxcal::detail
