#include "triaxcal/calibrate.hpp"

#include <nlopt.h>

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdint>
#include <memory>
#include <mutex>
#include <numeric>
#include <random>
#include <sstream>
#include <thread>

#include "engine.hpp"
#include "jacobian.hpp"
#include "least_squares.hpp"
#include "uncertainty.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

std::string to_string(Loss loss) {
  switch (loss) {
    case Loss::linear: return "linear";
    case Loss::soft_l1: return "soft_l1";
    case Loss::huber: return "huber";
  }
  return "unknown";
}

std::string to_string(Sensitivities s) {
  switch (s) {
    case Sensitivities::exact: return "exact";
    case Sensitivities::finite_differences: return "finite_differences";
  }
  return "unknown";
}

std::string to_string(GlobalAlgorithm a) {
  switch (a) {
    case GlobalAlgorithm::none: return "none";
    case GlobalAlgorithm::crs2: return "crs2";
    case GlobalAlgorithm::isres: return "isres";
    case GlobalAlgorithm::direct_l: return "direct_l";
  }
  return "unknown";
}

std::string to_string(LocalAlgorithm a) {
  switch (a) {
    case LocalAlgorithm::none: return "none";
    case LocalAlgorithm::least_squares: return "least_squares";
    case LocalAlgorithm::bobyqa: return "bobyqa";
    case LocalAlgorithm::cobyla: return "cobyla";
    case LocalAlgorithm::sbplx: return "sbplx";
    case LocalAlgorithm::nelder_mead: return "nelder_mead";
  }
  return "unknown";
}

std::string to_string(CalibrationTermination t) {
  switch (t) {
    case CalibrationTermination::converged: return "converged";
    case CalibrationTermination::evaluation_limit: return "evaluation_limit";
    case CalibrationTermination::time_limit: return "time_limit";
    case CalibrationTermination::stopped: return "stopped";
    case CalibrationTermination::optimiser_halted: return "optimiser_halted";
    case CalibrationTermination::no_usable_result: return "no_usable_result";
    case CalibrationTermination::not_run: return "not_run";
  }
  return "unknown";
}

void CalibrationOptions::validate() const {
  auto fail = [](const std::string& field, double value, const std::string& rule) {
    throw InputError("calibration options: " + field + " = " + format_number(value) + " " + rule);
  };
  if (global == GlobalAlgorithm::none && local == LocalAlgorithm::none && design_points == 0)
    throw InputError("calibration options: global = none and local = none: at least one stage must run");
  if (global != GlobalAlgorithm::none && global_evaluations < 1)
    fail("global_evaluations", static_cast<double>(global_evaluations), "must be at least 1");
  if (local != LocalAlgorithm::none && local_evaluations < 1)
    fail("local_evaluations", static_cast<double>(local_evaluations), "must be at least 1");
  if (starts < 0 || starts > 1000) fail("starts", starts, "must be in [0, 1000] (0 = the rule: least_squares 1 + free parameters, others 1)");
  if (global_runs < 1 || global_runs > 64) fail("global_runs", global_runs, "must be in [1, 64]");
  if (design_points < 0 || design_points > 1000000) fail("design_points", design_points, "must be in [0, 1000000]");
  if (starts > 1 && design_points > 0 && design_points < starts - 1)
    fail("design_points", design_points, "must be at least starts - 1 = " + std::to_string(starts - 1) +
                                             " (extra local runs start from the best design points)");
  if (!(relative_tolerance >= 0.0 && relative_tolerance < 1.0)) fail("relative_tolerance", relative_tolerance, "must be in [0, 1)");
  if (!(x_tolerance >= 0.0 && x_tolerance < 1.0)) fail("x_tolerance", x_tolerance, "must be in [0, 1)");
  if (!(max_seconds >= 0.0)) fail("max_seconds", max_seconds, "must be at least 0 (0 = no limit)");
  if (threads < 0 || threads > 1024) fail("threads", threads, "must be in [0, 1024] (0 = all cores)");
  if (!(loss_scale > 0.0 && std::isfinite(loss_scale))) fail("loss_scale", loss_scale, "must be positive");
  if (!(failure_penalty > 0.0 && std::isfinite(failure_penalty))) fail("failure_penalty", failure_penalty, "must be positive");
  if (!(jacobian_step > 0.0 && jacobian_step <= 0.1)) fail("jacobian_step", jacobian_step, "must be in (0, 0.1]");
  if (max_substeps_per_record < 0 || max_substeps_per_record > 1000000)
    fail("max_substeps_per_record", max_substeps_per_record, "must be in [0, 1000000] (0 = no work limit)");
  if (!(same_optimum_tolerance >= 0.0 && same_optimum_tolerance < 1.0))
    fail("same_optimum_tolerance", same_optimum_tolerance, "must be in [0, 1)");
  if (!(correlation_warning > 0.0 && correlation_warning <= 1.0))
    fail("correlation_warning", correlation_warning, "must be in (0, 1]");
  if (!(min_r_squared >= -1.0 && min_r_squared <= 1.0)) fail("min_r_squared", min_r_squared, "must be in [-1, 1]");
  if (!(stress_precision > 0.0 && std::isfinite(stress_precision)))
    fail("stress_precision", stress_precision, "must be a positive number of kPa");
  if (!(strain_precision > 0.0 && strain_precision < 0.1)) fail("strain_precision", strain_precision, "must be in (0, 0.1)");
}

void validate_problem(const CalibrationProblem& problem) {
  (void)detail::prepare(problem);
  if (!problem.fit_stages.empty()) (void)detail::check_fit_stages(problem);
}

namespace {

using Clock = std::chrono::steady_clock;

// Threads asked (0 = all cores), at most as many as there are parallel jobs in any stage.
int resolve_threads(int asked, std::size_t jobs) {
  int n = asked > 0 ? asked : static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  return std::max(1, std::min<int>(n, static_cast<int>(jobs)));
}

// Uniform [0, 1) from the top 53 bits: the same numbers on every platform for the same seed.
double unit_random(std::mt19937_64& rng) { return static_cast<double>(rng() >> 11) * 0x1.0p-53; }

std::vector<std::vector<double>> latin_hypercube(int points, std::size_t dims, std::mt19937_64& rng) {
  std::vector<std::vector<double>> design(static_cast<std::size_t>(points), std::vector<double>(dims));
  std::vector<int> perm(static_cast<std::size_t>(points));
  for (std::size_t d = 0; d < dims; ++d) {
    std::iota(perm.begin(), perm.end(), 0);
    for (std::size_t i = perm.size(); i > 1; --i) std::swap(perm[i - 1], perm[rng() % i]);
    for (std::size_t i = 0; i < perm.size(); ++i)
      design[i][d] = (perm[i] + unit_random(rng)) / static_cast<double>(points);
  }
  return design;
}

struct Run;

// The stage an evaluation belongs to (HistoryEntry::stage holds its number).
enum class Phase { design = 0, global = 1, local = 2 };

// NLopt's handle, destroyed on every way out.
using NloptHandle = std::unique_ptr<nlopt_opt_s, decltype(&nlopt_destroy)>;

// One evaluation context: an evaluator and what its evaluations found since the last merge. The
// main lane simulates the tests of an evaluation in parallel; side lanes simulate serially and run
// side by side (design points, global runs, Jacobian columns). Lanes are merged into the summary
// in a fixed order, so the result never depends on the number of threads.
struct Lane {
  detail::Evaluator evaluator;
  long evaluations = 0, failed = 0, design = 0, global = 0, local = 0, jacobian = 0;
  long exact_jacobians = 0, difference_jacobians = 0;
  long work_limited = 0;  // failed simulations ended by the work limit
  int failed_starts = 0;  // least-squares runs whose start could not be simulated
  bool record_plans = false;    // evaluations keep their substeps (the least-squares Jacobian replays them)
  bool last_penalised = false;  // the latest evaluation holds a failure or constraint penalty
  // The least-squares stage's latest Jacobian and where it was taken.
  Eigen::MatrixXd jac;
  std::vector<double> jac_at;
  bool jac_complete = false;
  double best = std::numeric_limits<double>::infinity();
  std::vector<double> best_unit;
  bool best_penalised = false;  // the best point's objective holds a failure or constraint penalty
  std::vector<HistoryEntry> history;  // evaluation and best are set when merged
  nlopt_opt current = nullptr;

  Lane(const detail::Prepared& p, const CalibrationOptions& o, int threads) : evaluator(p, o, threads) {}
};

struct StageContext {
  Run* run;
  Lane* lane;
  Phase stage;
};

struct Run {
  const detail::Prepared& prepared;
  const CalibrationOptions& options;
  Lane main;
  std::vector<std::unique_ptr<Lane>> side;
  CalibrationSummary& summary;
  Clock::time_point begin = Clock::now();
  std::thread::id caller = std::this_thread::get_id();
  std::size_t n = 0;
  std::vector<double> best_unit;
  double best = std::numeric_limits<double>::infinity();
  bool best_penalised = false;
  std::atomic<bool> stop_requested{false};
  std::atomic<bool> time_up{false};
  bool native_constraints = false;
  double penalty_all = 0.0;
  std::vector<std::pair<double, std::vector<double>>> design_ranked;
  // Progress across lanes (for the callback only; the summary is built from the merged lanes).
  std::atomic<long> total_evaluations{0};
  std::mutex best_mutex;
  double shared_best = std::numeric_limits<double>::infinity();

  Run(const detail::Prepared& p, const CalibrationOptions& o, int threads, CalibrationSummary& s)
      : prepared(p), options(o), main(p, o, threads), summary(s), n(p.free.size()) {
    for (const auto& t : p.tests) penalty_all += o.failure_penalty * t.total_weight;
  }

  double elapsed() const { return std::chrono::duration<double>(Clock::now() - begin).count(); }

  /// At least k side lanes (serial evaluators).
  void side_lanes(std::size_t k) {
    while (side.size() < k) side.push_back(std::make_unique<Lane>(prepared, options, 1));
  }

  /// Runs fn(lane index) for lanes 0..k-1 of `side` on the main lane's threads.
  void on_side_lanes(int k, const std::function<void(int)>& fn) {
    side_lanes(static_cast<std::size_t>(k));
    main.evaluator.run_tasks(k, fn);
  }

  double evaluate(Lane& lane, const double* u, Phase stage) {
    std::vector<double> unit(u, u + n);
    const ParameterValues values = prepared.values(unit);
    double f;
    bool penalised = true;
    const double violation = prepared.constraints.empty() ? -1.0 : prepared.violation(values);
    if (!native_constraints && violation > 0.0) {
      // Outside the constraints: penalised without simulating, growing with the violation.
      f = penalty_all * (1.0 + violation);
    } else {
      const bool built = lane.evaluator.simulate(values, lane.record_plans ? detail::PlanMode::record : detail::PlanMode::none);
      f = lane.evaluator.objective(built);
      lane.failed += built ? lane.evaluator.failed_tests() : static_cast<long>(prepared.tests.size());
      if (built) lane.work_limited += lane.evaluator.work_limited_tests();
      penalised = !built || !std::isfinite(f);
      for (std::size_t t = 0; t < prepared.tests.size() && !penalised; ++t)
        penalised = !lane.evaluator.outcome(static_cast<int>(t)).ok && prepared.tests[t].total_weight > 0.0;
    }
    ++lane.evaluations;
    lane.last_penalised = penalised;
    if (stage == Phase::design) ++lane.design;
    if (stage == Phase::global) ++lane.global;
    if (stage == Phase::local) ++lane.local;
    if (f < lane.best) {
      lane.best = f;
      lane.best_unit = unit;
      lane.best_penalised = penalised;
    }
    if (options.record_history) lane.history.push_back({0, static_cast<int>(stage), f, 0.0});
    const long total = total_evaluations.fetch_add(1) + 1;
    double best_now;
    {
      std::lock_guard<std::mutex> lock(best_mutex);
      shared_best = std::min(shared_best, f);
      best_now = shared_best;
    }
    const double t = elapsed();
    // The callback runs on the calling thread only; it sees the evaluations of every lane.
    if (options.progress && std::this_thread::get_id() == caller) {
      static const char* names[] = {"design", "global", "local"};
      CalibrationProgress p{total == 1 ? "start" : names[static_cast<int>(stage)], total, f, best_now, t};
      if (!options.progress(p)) stop_requested = true;
    }
    if (options.max_seconds > 0.0 && t >= options.max_seconds) time_up = true;
    if (halted() && lane.current != nullptr) nlopt_force_stop(lane.current);
    return f;
  }

  bool halted() const { return stop_requested.load() || time_up.load(); }

  // The least-squares Jacobian of the best local run so far, for the uncertainty when it was taken
  // at the final optimum.
  Eigen::MatrixXd kept_jac;
  std::vector<double> kept_jac_at;
  void keep_jacobian(const Lane& lane) {
    kept_jac_at.clear();
    if (!lane.jac_complete) return;
    kept_jac = lane.jac;
    kept_jac_at = lane.jac_at;
  }

  /// Moves what the lane found into the summary (counts, history in order, best so far).
  void merge(Lane& lane) {
    summary.evaluations += lane.evaluations;
    summary.failed_simulations += lane.failed;
    summary.design_evaluations += lane.design;
    summary.global_evaluations += lane.global;
    summary.local_evaluations += lane.local;
    summary.jacobian_evaluations += lane.jacobian;
    summary.exact_jacobians += lane.exact_jacobians;
    summary.difference_jacobians += lane.difference_jacobians;
    summary.work_limited_simulations += lane.work_limited;
    summary.failed_starts += lane.failed_starts;
    for (HistoryEntry h : lane.history) {
      h.evaluation = static_cast<long>(summary.history.size()) + 1;
      h.best = summary.history.empty() ? h.objective : std::min(summary.history.back().best, h.objective);
      summary.history.push_back(h);
    }
    if (lane.best < best) {
      best = lane.best;
      best_unit = lane.best_unit;
      best_penalised = lane.best_penalised;
    }
    lane.evaluations = lane.failed = lane.design = lane.global = lane.local = lane.jacobian = lane.work_limited = 0;
    lane.exact_jacobians = lane.difference_jacobians = 0;
    lane.failed_starts = 0;
    lane.history.clear();
    lane.best = std::numeric_limits<double>::infinity();
    lane.best_unit.clear();
    lane.best_penalised = false;
  }

  nlopt_result optimise(Lane& lane, nlopt_algorithm algorithm, Phase stage, long budget, std::vector<double>& x,
                        double step, unsigned long seed) {
    const NloptHandle handle(nlopt_create(algorithm, static_cast<unsigned>(n)), &nlopt_destroy);
    nlopt_opt opt = handle.get();
    nlopt_set_lower_bounds1(opt, 0.0);
    nlopt_set_upper_bounds1(opt, 1.0);
    StageContext ctx{this, &lane, stage};
    nlopt_set_min_objective(
        opt,
        [](unsigned, const double* u, double*, void* data) {
          auto* c = static_cast<StageContext*>(data);
          return c->run->evaluate(*c->lane, u, c->stage);
        },
        &ctx);
    if (native_constraints) {
      // One constraint: the worst relative violation of all of them.
      nlopt_add_inequality_constraint(
          opt,
          [](unsigned m, const double* u, double*, void* data) {
            auto* r = static_cast<Run*>(data);
            std::vector<double> unit(u, u + m);
            return r->prepared.violation(r->prepared.values(unit));
          },
          this, 1e-9);
    }
    nlopt_set_maxeval(opt, static_cast<int>(std::min<long>(budget, 2000000000L)));
    if (stage == Phase::local) {
      nlopt_set_ftol_rel(opt, options.relative_tolerance);
      nlopt_set_xtol_abs1(opt, options.x_tolerance);
      nlopt_set_initial_step1(opt, step);
    }
    if (options.max_seconds > 0.0) nlopt_set_maxtime(opt, std::max(1e-3, options.max_seconds - elapsed()));
    // NLopt's generator is thread-local (libnlopt 2.7 keeps its state in thread-local storage):
    // seeding here, on the thread that runs this optimisation, makes it reproducible even when
    // other calibrations or global runs go on in other threads.
    nlopt_srand(seed);
    lane.current = opt;
    double f = 0.0;
    for (double& v : x) v = std::clamp(v, 0.0, 1.0);
    const nlopt_result result = nlopt_optimize(opt, x.data(), &f);
    lane.current = nullptr;
    return result;
  }
};

// Runs the jobs of a Jacobian on the side lanes, side by side (each job a fresh simulation, so
// which lane runs it never changes its result).
detail::JobRunner side_jobs(Run& run) {
  return [&run](int jobs, const std::function<void(int, detail::Evaluator&)>& task) {
    const int lanes = std::max(1, std::min(run.main.evaluator.threads(), jobs));
    run.on_side_lanes(lanes, [&](int lane) {
      for (int j = lane; j < jobs; j += lanes) task(j, run.side[static_cast<std::size_t>(lane)]->evaluator);
    });
  };
}

// The Jacobian simulations of the local runs of a multi-start, shared: each run posts its batch of
// jobs and works through it on its own evaluator; a thread whose run has ended while no start is
// left to take helps with the batches still open, on an evaluator of its own. Each job writes only
// its own slot and replays the posting run's substeps, so which thread runs it never changes a
// result; the last runs of a multi-start no longer leave the other threads idle.
struct SharedJobs {
  struct Batch {
    int jobs = 0;
    const std::function<void(int, detail::Evaluator&)>* task = nullptr;
    int next = 0, done = 0;
  };
  std::mutex mutex;
  std::condition_variable changed;
  std::vector<Batch*> open;  // batches with jobs not yet taken
  int count = 0;             // local runs
  int finished = 0;          // local runs ended
  std::atomic<int> begun{0};
  std::atomic<int> helpers{0};

  /// The run's job runner: post the batch, take its jobs until none is left, wait for the helpers'.
  detail::JobRunner runner(Lane& lane) {
    return [this, &lane](int jobs, const std::function<void(int, detail::Evaluator&)>& task) {
      Batch batch;
      batch.jobs = jobs;
      batch.task = &task;
      {
        std::lock_guard<std::mutex> lock(mutex);
        open.push_back(&batch);
      }
      changed.notify_all();
      for (;;) {
        int job;
        {
          std::lock_guard<std::mutex> lock(mutex);
          if (batch.next >= batch.jobs) break;
          job = batch.next++;
        }
        task(job, lane.evaluator);
        std::lock_guard<std::mutex> lock(mutex);
        ++batch.done;
      }
      std::unique_lock<std::mutex> lock(mutex);
      open.erase(std::find(open.begin(), open.end(), &batch));
      changed.wait(lock, [&] { return batch.done == batch.jobs; });
    };
  }

  /// Takes jobs of the open batches on `ev` until every local run has ended.
  void help(detail::Evaluator& ev) {
    std::unique_lock<std::mutex> lock(mutex);
    for (;;) {
      Batch* batch = nullptr;
      changed.wait(lock, [&] {
        for (Batch* b : open)
          if (b->next < b->jobs) {
            batch = b;
            return true;
          }
        return finished == count;
      });
      if (batch == nullptr) return;
      const int job = batch->next++;
      lock.unlock();
      (*batch->task)(job, ev);
      lock.lock();
      ++batch->done;
      changed.notify_all();
    }
  }

  void run_ended() {
    {
      std::lock_guard<std::mutex> lock(mutex);
      ++finished;
    }
    changed.notify_all();
  }
};

// One least-squares local run from x on `lane`. The values are the lane's evaluations (they keep
// their substeps); the Jacobian is exact (the model's derivative version on those substeps,
// ceil(n / kDualLanes) dual passes) or, where the model has none, forward differences of
// options.jacobian_step in the unit box on those frozen substeps (n simulations; central ones cost
// 2n and moved no fit measurably); its simulations run by `jobs`.
detail::LocalResult solve_least_squares(Run& run, Lane& lane, std::vector<double>& x, const detail::JobRunner& jobs) {
  const CalibrationOptions& o = run.options;
  const long used_before = lane.local;
  lane.record_plans = true;
  detail::LeastSquaresCalls calls;
  calls.values = [&](const std::vector<double>& u, Eigen::VectorXd& d) {
    run.evaluate(lane, u.data(), Phase::local);
    return !lane.last_penalised && detail::residuals(run.prepared, lane.evaluator, d);
  };
  calls.jacobian = [&](const std::vector<double>& u, const Eigen::VectorXd& d, Eigen::MatrixXd& J) {
    std::vector<bool> have;
    const detail::JacobianTaken taken =
        detail::take_jacobian(run.prepared, o.sensitivities, u, d, o.jacobian_step, detail::Differences::forward,
                              &lane.evaluator.plans(), jobs, J, have);
    lane.jacobian += taken.simulations;
    ++(taken.exact ? lane.exact_jacobians : lane.difference_jacobians);
    lane.jac = J;
    lane.jac_at = u;
    lane.jac_complete = std::all_of(have.begin(), have.end(), [](bool b) { return b; });
  };
  calls.stop = [&] { return run.halted() || lane.local - used_before >= o.local_evaluations; };
  const detail::LocalResult r = detail::least_squares(run.prepared, o, x, calls);
  lane.record_plans = false;
  // Ceres ends a run whose first point cannot be evaluated at once (no Jacobian is taken there).
  if (lane.local - used_before == 1 && lane.last_penalised) ++lane.failed_starts;
  return r;
}

nlopt_algorithm global_algorithm(GlobalAlgorithm a) {
  switch (a) {
    case GlobalAlgorithm::crs2: return NLOPT_GN_CRS2_LM;
    case GlobalAlgorithm::isres: return NLOPT_GN_ISRES;
    case GlobalAlgorithm::direct_l: return NLOPT_GN_DIRECT_L;
    case GlobalAlgorithm::none: break;
  }
  return NLOPT_GN_CRS2_LM;
}

nlopt_algorithm local_algorithm(LocalAlgorithm a) {
  switch (a) {
    case LocalAlgorithm::bobyqa: return NLOPT_LN_BOBYQA;
    case LocalAlgorithm::cobyla: return NLOPT_LN_COBYLA;
    case LocalAlgorithm::sbplx: return NLOPT_LN_SBPLX;
    case LocalAlgorithm::nelder_mead: return NLOPT_LN_NELDERMEAD;
    case LocalAlgorithm::least_squares:
    case LocalAlgorithm::none: break;
  }
  return NLOPT_LN_BOBYQA;
}

std::string options_text(const CalibrationOptions& o) {
  std::ostringstream s;
  s << "global = " << to_string(o.global) << "\nglobal_evaluations = " << o.global_evaluations << "\nglobal_runs = " << o.global_runs
    << "\nlocal = " << to_string(o.local) << "\nlocal_evaluations = " << o.local_evaluations << "\nstarts = " << o.starts
    << "\ndesign_points = " << o.design_points << "\nrelative_tolerance = " << format_number(o.relative_tolerance)
    << "\nx_tolerance = " << format_number(o.x_tolerance) << "\nmax_seconds = " << format_number(o.max_seconds)
    << "\nseed = " << o.seed << "\nthreads = " << o.threads << "\nloss = " << to_string(o.loss)
    << "\nloss_scale = " << format_number(o.loss_scale) << "\nfailure_penalty = " << format_number(o.failure_penalty)
    << "\nuncertainty = " << (o.uncertainty ? "true" : "false") << "\nsensitivities = " << to_string(o.sensitivities)
    << "\njacobian_step = " << format_number(o.jacobian_step)
    << "\nmax_substeps_per_record = " << o.max_substeps_per_record
    << "\nsame_optimum_tolerance = " << format_number(o.same_optimum_tolerance)
    << "\ncorrelation_warning = " << format_number(o.correlation_warning)
    << "\nmin_r_squared = " << format_number(o.min_r_squared) << "\nstress_precision = " << format_number(o.stress_precision)
    << "\nstrain_precision = " << format_number(o.strain_precision)
    << "\nnoise_from_residuals = " << (o.noise_from_residuals ? "true" : "false") << "\n";
  return s.str();
}

// How the stages ended: the detailed termination, its message, and the reason shown with the
// outcome (for a stop: what ended it and the option that extends it).
struct Ending {
  CalibrationTermination termination = CalibrationTermination::converged;
  std::string message;
  std::string reason;
};

// How the last stage that ran ended: NLopt's code (a least-squares run maps onto it: converged
// success, budget maxeval, a Ceres failure a halt with Ceres's words).
struct StageEnd {
  nlopt_result code = NLOPT_SUCCESS;
  std::string stage = "start";
  std::string halted;  ///< why the stage halted, when not an NLopt code
};

Ending ending_of(const Run& run, const StageEnd& end, long evaluations) {
  const nlopt_result last = end.code;
  const std::string& last_stage = end.stage;
  const CalibrationOptions& o = run.options;
  const std::string after = " after " + std::to_string(evaluations) + " evaluations";
  Ending e;
  e.termination = CalibrationTermination::evaluation_limit;
  if (run.stop_requested) {
    e.termination = CalibrationTermination::stopped;
    e.message = "stopped on request" + after + "; the best point so far is kept";
    e.reason = "stopped on request (the progress callback; Ctrl-C in triaxcal fit)" + after +
               ": run it again without stopping it to let the local stage converge";
  } else if (run.time_up || last == NLOPT_MAXTIME_REACHED) {
    e.termination = CalibrationTermination::time_limit;
    e.message = "time limit of " + format_number(o.max_seconds) + " s reached in the " + last_stage + " stage" + after +
                "; not converged";
    e.reason = "the time limit of " + format_number(o.max_seconds) + " s was reached in the " + last_stage + " stage" +
               after + ": raise options.max_seconds (0 = no limit)";
  } else if (o.local == LocalAlgorithm::none && o.global != GlobalAlgorithm::none) {
    e.message = "the " + last_stage + " stage " +
                (last == NLOPT_MAXEVAL_REACHED ? "used its budget of " + std::to_string(o.global_evaluations) + " evaluations"
                                               : std::string("ended (NLopt ") + nlopt_result_to_string(last) + ")" + after) +
                " and no local stage tested convergence";
    e.reason = e.message + ": set options.local (e.g. least_squares), or raise options.global_evaluations";
  } else if (o.local == LocalAlgorithm::none) {
    e.message = "only the start and " + std::to_string(o.design_points) +
                " design points were evaluated and no stage tested convergence";
    e.reason = e.message + ": set options.local (e.g. least_squares) to polish the best of them";
  } else if (last == NLOPT_MAXEVAL_REACHED) {
    e.message = "the " + last_stage + " stage used its budget of " + std::to_string(o.local_evaluations) +
                " evaluations; not converged to the tolerance";
    e.reason = "the " + last_stage + " stage used its budget of " + std::to_string(o.local_evaluations) +
               " evaluations before it met its tolerance: raise options.local_evaluations";
  } else if (last < 0) {
    e.termination = CalibrationTermination::optimiser_halted;
    e.message = "the " + last_stage + " stage ended " +
                (end.halted.empty() ? "with NLopt code " + std::to_string(static_cast<int>(last)) + " (" +
                                          nlopt_result_to_string(last) + ")"
                                    : "early (" + end.halted + ")") +
                after + "; not converged";
    e.reason = e.message + ": loosen options.relative_tolerance or options.x_tolerance, or start from another point";
  } else {
    e.termination = CalibrationTermination::converged;
    e.message = "the " + last_stage + " stage met its tolerance (relative objective change " +
                format_number(o.relative_tolerance) + ", unit-box step " + format_number(o.x_tolerance) + ")";
    e.reason = "the " + last_stage + " stage met its tolerance";
  }
  return e;
}

std::string r2_text(double r) {
  char b[32];
  std::snprintf(b, sizeof b, "%.3f", r);
  return b;
}

// What the result means for its user (outcome.hpp), with the reason. Failed: the best point carries
// a failure or constraint penalty, or a used test could not be simulated there. Poor fit: a used
// curve with R^2 below min_r_squared; a curve whose R^2 is not defined (constant measured values)
// is not judged. Otherwise stopped or converged as the stages ended.
void judge_outcome(CalibrationSummary& s, const Ending& ending, const Run& run, bool built) {
  const CalibrationOptions& o = run.options;
  const std::string in = " in " + std::to_string(s.evaluations) + " evaluations";
  std::string failed_tests;
  for (std::size_t t = 0; t < s.tests.size(); ++t)
    if (!s.tests[t].simulated && run.prepared.tests[t].total_weight > 0.0)
      failed_tests += (failed_tests.empty() ? "" : "; ") + s.tests[t].id + " (" + s.tests[t].message + ")";
  if (!built || !failed_tests.empty() || run.best_penalised || !std::isfinite(run.best)) {
    s.outcome = CalibrationOutcome::failed;
    s.termination = CalibrationTermination::no_usable_result;
    if (!std::isfinite(run.best))
      s.outcome_reason = "no finite objective" + in;
    else if (!failed_tests.empty() || !built)
      s.outcome_reason = "no point free of a failure penalty" + in + "; at the best point " +
                         (built ? "these tests could not be simulated: " + failed_tests
                                : (s.tests.empty() ? std::string("the model was not built") : s.tests[0].message));
    else
      s.outcome_reason = "no point inside the constraints" + in + " (the best point violates them by " +
                         format_number(run.prepared.violation(s.values)) + ", relative)";
    const bool searched = o.design_points > 0 || o.global != GlobalAlgorithm::none;
    if (s.objective < s.start_objective)
      s.outcome_reason += ": check the bounds, the start values and the tests named";
    else if (!searched)
      s.outcome_reason += ": the start point failed and nothing better was found; check the start values, or add "
                          "design_points or a global stage";
    else
      s.outcome_reason += ": the start point failed and no point of the search did better; check the bounds and "
                          "the tests named";
    return;
  }
  std::string poor, undefined, lowest;
  double lowest_r2 = std::numeric_limits<double>::infinity();
  int poor_count = 0;
  for (TestFit& t : s.tests)
    for (CurveFit& c : t.curves) {
      if (!c.used) continue;
      const std::string name = t.id + " " + to_string(c.y);
      if (std::isnan(c.r_squared)) {
        undefined += (undefined.empty() ? "" : ", ") + name;
        continue;
      }
      if (c.r_squared < lowest_r2) {
        lowest_r2 = c.r_squared;
        lowest = name;
      }
      if (c.r_squared < o.min_r_squared) {
        c.poor = true;
        ++poor_count;
        poor += (poor.empty() ? "" : ", ") + name + " (R^2 = " + r2_text(c.r_squared) + ")";
      }
    }
  const std::string not_judged =
      undefined.empty() ? std::string() : "; R^2 not defined (constant measured values), not judged: " + undefined;
  if (poor_count > 0) {
    s.outcome = CalibrationOutcome::poor_fit;
    s.outcome_reason = "the model does not follow " + std::to_string(poor_count) +
                       (poor_count == 1 ? " used curve" : " used curves") + " (R^2 below min_r_squared = " +
                       format_number(o.min_r_squared) + "): " + poor + not_judged +
                       (ending.termination == CalibrationTermination::converged ? std::string()
                                                                                 : "; also not converged: " + ending.reason);
  } else if (ending.termination != CalibrationTermination::converged) {
    s.outcome = CalibrationOutcome::stopped;
    s.outcome_reason = ending.reason + not_judged;
  } else {
    s.outcome = CalibrationOutcome::converged;
    s.outcome_reason = ending.reason + (lowest.empty() ? std::string()
                                                       : "; every used curve has R^2 >= " + format_number(o.min_r_squared) +
                                                             " (lowest " + r2_text(lowest_r2) + ", " + lowest + ")") +
                       not_judged;
  }
}


// The start point, evaluated first: the objective every stage has to beat.
void evaluate_start(Run& run) {
  std::vector<double> x(run.n);
  for (std::size_t k = 0; k < run.n; ++k) x[k] = run.prepared.to_unit(static_cast<int>(k), run.prepared.start[k]);
  run.summary.start_objective = run.evaluate(run.main, x.data(), Phase::design);
  run.merge(run.main);
}

// Space-filling design, evaluated on side lanes in contiguous chunks and merged in point order;
// ranked, its best points seed the extra local runs.
void run_design(Run& run, std::mt19937_64& rng) {
  const CalibrationOptions& options = run.options;
  if (options.design_points == 0 || run.halted()) return;
  const auto design = latin_hypercube(options.design_points, run.n, rng);
  const int points = static_cast<int>(design.size());
  const int lanes = std::max(1, std::min(run.summary.threads, points));
  std::vector<double> f(design.size(), std::numeric_limits<double>::quiet_NaN());
  run.on_side_lanes(lanes, [&](int lane) {
    const int from = static_cast<int>(static_cast<long>(points) * lane / lanes);
    const int to = static_cast<int>(static_cast<long>(points) * (lane + 1) / lanes);
    for (int i = from; i < to && !run.halted(); ++i)
      f[static_cast<std::size_t>(i)] =
          run.evaluate(*run.side[static_cast<std::size_t>(lane)], design[static_cast<std::size_t>(i)].data(), Phase::design);
  });
  for (int lane = 0; lane < lanes; ++lane) run.merge(*run.side[static_cast<std::size_t>(lane)]);
  for (std::size_t i = 0; i < design.size(); ++i)
    if (!std::isnan(f[i])) run.design_ranked.emplace_back(f[i], design[i]);
  std::stable_sort(run.design_ranked.begin(), run.design_ranked.end(),
                   [](const auto& l, const auto& r) { return l.first < r.first; });
}

// The derivative-free global stage (NLopt). DIRECT-L is deterministic and ignores the start: one
// run. The stochastic searches run global_runs independent searches from the best point so far,
// each with its share of the budget and its own seed, side by side; the best goes on.
void run_global(Run& run, StageEnd& end) {
  const CalibrationOptions& options = run.options;
  if (options.global == GlobalAlgorithm::none || run.halted()) return;
  run.native_constraints = !run.prepared.constraints.empty() && options.global == GlobalAlgorithm::isres;
  const int runs = options.global == GlobalAlgorithm::direct_l ? 1 : options.global_runs;
  if (runs == 1) {
    std::vector<double> g = run.best_unit;
    end.code = run.optimise(run.main, global_algorithm(options.global), Phase::global, options.global_evaluations, g, 0.0,
                            options.seed + 1);
    run.merge(run.main);
  } else {
    std::vector<nlopt_result> results(static_cast<std::size_t>(runs), NLOPT_SUCCESS);
    const std::vector<double> from = run.best_unit;
    run.on_side_lanes(runs, [&](int i) {
      const long budget = options.global_evaluations * (i + 1) / runs - options.global_evaluations * i / runs;
      std::vector<double> g = from;
      results[static_cast<std::size_t>(i)] =
          run.optimise(*run.side[static_cast<std::size_t>(i)], global_algorithm(options.global), Phase::global,
                       std::max(1L, budget), g, 0.0, options.seed + 1 + 7919UL * static_cast<unsigned long>(i));
    });
    // The result code of the run that found the best point.
    int winner = 0;
    for (int i = 0; i < runs; ++i)
      if (run.side[static_cast<std::size_t>(i)]->best < run.side[static_cast<std::size_t>(winner)]->best) winner = i;
    end.code = results[static_cast<std::size_t>(winner)];
    for (int i = 0; i < runs; ++i) run.merge(*run.side[static_cast<std::size_t>(i)]);
  }
  end.stage = "global (" + to_string(options.global) + ")";
}

// Where the local runs start: the best point so far, then the best design points, or without a
// design a Latin hypercube of further starts (the rule: least_squares 1 + free parameters starts,
// NLopt's methods 1), taken in order from a hypercube of 4 times as many points, skipping those
// outside the constraints (a start there cannot move). A start equal to an earlier one is dropped.
std::vector<std::vector<double>> local_starts(const Run& run, std::mt19937_64& rng) {
  const CalibrationOptions& o = run.options;
  const int wanted = o.starts > 0 ? o.starts : (o.local == LocalAlgorithm::least_squares ? 1 + static_cast<int>(run.n) : 1);
  std::vector<std::vector<double>> candidates{run.best_unit};
  if (o.design_points > 0) {
    for (const auto& [f, u] : run.design_ranked) candidates.push_back(u);
  } else if (wanted > 1) {
    std::vector<std::vector<double>> outside;
    for (auto& u : latin_hypercube(4 * (wanted - 1), run.n, rng)) {
      const bool inside = run.prepared.constraints.empty() || run.prepared.violation(run.prepared.values(u)) <= 0.0;
      (inside ? candidates : outside).push_back(std::move(u));
    }
    // Too few inside: the rest from outside, in order (they fail and say so).
    for (auto& u : outside) candidates.push_back(std::move(u));
  }
  std::vector<std::vector<double>> starts;
  for (const auto& u : candidates) {
    if (static_cast<int>(starts.size()) >= wanted) break;
    if (std::find(starts.begin(), starts.end(), u) == starts.end()) starts.push_back(u);
  }
  return starts;
}

StageEnd local_end(const detail::LocalResult& r) {
  StageEnd e;
  switch (r.end) {
    case detail::LocalEnd::converged: e.code = NLOPT_SUCCESS; break;
    case detail::LocalEnd::stopped: e.code = NLOPT_MAXEVAL_REACHED; break;
    case detail::LocalEnd::failed:
      e.code = NLOPT_FAILURE;
      e.halted = "Ceres: " + r.message;
      break;
  }
  return e;
}

// Objectives below this are all "the data reproduced" (an RMS error of 1e-6 of each curve's range):
// noise-free fits end anywhere between 1e-30 and 1e-13, and count as the same optimum.
constexpr double kSameOptimumFloor = 1e-12;

// The local stage from each start. least_squares: one start on the main lane with the Jacobian's
// simulations side by side, several starts side by side on their own lanes; NLopt's methods one
// after the other on the main lane. Lanes are merged in start order, the winner is the first run
// with the lowest objective, and the summary counts the runs that reached it.
void run_local(Run& run, std::mt19937_64& rng, StageEnd& end) {
  const CalibrationOptions& options = run.options;
  if (options.local == LocalAlgorithm::none || run.halted()) return;
  run.native_constraints = !run.prepared.constraints.empty() && options.local == LocalAlgorithm::cobyla;
  const std::vector<std::vector<double>> starts = local_starts(run, rng);
  const std::size_t count = starts.size();
  std::vector<StageEnd> ends(count);
  std::vector<double> finals(count, std::numeric_limits<double>::infinity());
  std::vector<char> ran(count, 0);
  if (options.local == LocalAlgorithm::least_squares && count > 1) {
    // Lanes 0..count-1 run the starts; lanes count.. are the helpers' evaluators (SharedJobs).
    const int helper_lanes = run.main.evaluator.threads();
    run.side_lanes(count + static_cast<std::size_t>(helper_lanes));
    SharedJobs shared;
    shared.count = static_cast<int>(count);
    run.on_side_lanes(static_cast<int>(count), [&](int i) {
      Lane& lane = *run.side[static_cast<std::size_t>(i)];
      ++shared.begun;
      if (!run.halted()) {
        std::vector<double> x = starts[static_cast<std::size_t>(i)];
        ends[static_cast<std::size_t>(i)] = local_end(solve_least_squares(run, lane, x, shared.runner(lane)));
        ran[static_cast<std::size_t>(i)] = 1;
      }
      shared.run_ended();
      // Every start taken: help the runs still going instead of waiting for them.
      if (shared.begun.load() == shared.count) {
        const int slot = shared.helpers++;
        if (slot < helper_lanes) shared.help(run.side[count + static_cast<std::size_t>(slot)]->evaluator);
      }
    });
    for (std::size_t i = 0; i < count; ++i) {
      finals[i] = run.side[i]->best;
      if (i == 0 || finals[i] < finals[0]) run.keep_jacobian(*run.side[i]);
      run.merge(*run.side[i]);
    }
  } else {
    const double step = options.global != GlobalAlgorithm::none ? 0.05 : 0.1;
    for (std::size_t i = 0; i < count && !run.halted(); ++i) {
      std::vector<double> x = starts[i];
      if (options.local == LocalAlgorithm::least_squares)
        ends[i] = local_end(solve_least_squares(run, run.main, x, side_jobs(run)));
      else
        ends[i].code = run.optimise(run.main, local_algorithm(options.local), Phase::local, options.local_evaluations, x,
                                    i == 0 ? step : 0.1, options.seed + 2);
      ran[i] = 1;
      finals[i] = run.main.best;
      if (i == 0 || finals[i] < *std::min_element(finals.begin(), finals.begin() + static_cast<std::ptrdiff_t>(i)))
        run.keep_jacobian(run.main);
      run.merge(run.main);
    }
  }
  std::size_t winner = 0;
  for (std::size_t i = 0; i < count; ++i) {
    if (!ran[i]) continue;
    ++run.summary.local_runs;
    if (finals[i] < finals[winner] || !ran[winner]) winner = i;
  }
  for (std::size_t i = 0; i < count; ++i)
    if (ran[i] && finals[i] - finals[winner] <= options.same_optimum_tolerance * std::abs(finals[winner]) + kSameOptimumFloor)
      ++run.summary.starts_at_best;
  end = ends[winner];
  end.stage = "local (" + to_string(options.local) + ")";
}

}  // namespace

namespace detail {
std::string options_text_of(const CalibrationOptions& options) { return options_text(options); }
}  // namespace detail

CalibrationSummary calibrate(const CalibrationOptions& options, const CalibrationProblem& problem) {
  if (!problem.fit_stages.empty()) return detail::calibrate_staged(options, problem);
  options.validate();
  return detail::calibrate_validated(options, problem);
}

namespace {

// The summary's header: model, algorithms, options, threads and the free parameters' names.
CalibrationSummary begin_summary(const CalibrationOptions& options, const CalibrationProblem& problem,
                                 const detail::Prepared& prepared) {
  CalibrationSummary summary;
  summary.model = problem.model->name;
  summary.global_algorithm = to_string(options.global);
  summary.local_algorithm = to_string(options.local);
  summary.loss = to_string(options.loss);
  summary.options_text = options_text(options);
  // Parallel jobs: the tests of an evaluation, the global runs, the Jacobian columns (2 per free
  // parameter), the design points.
  std::size_t jobs = std::max(prepared.tests.size(), 2 * prepared.free.size());
  if (options.global != GlobalAlgorithm::none) jobs = std::max(jobs, static_cast<std::size_t>(options.global_runs));
  jobs = std::max(jobs, static_cast<std::size_t>(options.design_points));
  jobs = std::max(jobs, static_cast<std::size_t>(options.starts > 0 ? options.starts : 1 + static_cast<int>(prepared.free.size())));
  summary.threads = resolve_threads(options.threads, jobs);
  for (int k : prepared.free) summary.free_names.push_back(prepared.names[static_cast<std::size_t>(k)]);
  return summary;
}

// Every parameter of the model with its status and fitted value; the free ones with start and bounds.
void record_parameters(const Run& run, const ModelInfo& info, CalibrationSummary& summary) {
  const detail::Prepared& prepared = run.prepared;
  const ParameterValues best_values = prepared.values(run.best_unit);
  summary.values = best_values;
  summary.objective = run.best;
  for (std::size_t i = 0; i < info.parameters.size(); ++i) {
    FittedParameter fp;
    fp.name = info.parameters[i].name;
    fp.unit = info.parameters[i].unit;
    fp.status = prepared.status[i];
    fp.value = best_values[i];
    summary.parameters.push_back(fp);
  }
  for (const auto& [i, e] : prepared.ties) summary.parameters[static_cast<std::size_t>(i)].expression = e.text();
  for (std::size_t k = 0; k < prepared.free.size(); ++k) {
    FittedParameter& fp = summary.parameters[static_cast<std::size_t>(prepared.free[k])];
    fp.start = prepared.start[k];
    fp.lower = prepared.lower[k];
    fp.upper = prepared.upper[k];
    fp.at_bound = run.best_unit[k] < 1e-6 || run.best_unit[k] > 1.0 - 1e-6;
  }
}

// The fitted set's own simulation of every test: curves, R^2 and the warnings of poor curves and
// failed tests. Returns whether the simulation could be built.
bool record_fitted_curves(Run& run, const CalibrationOptions& options, CalibrationSummary& summary) {
  const detail::Prepared& prepared = run.prepared;
  // The fitted set's own simulation runs without the search's work limit: its messages are the
  // driver's own.
  run.main.evaluator.limit_work(false);
  const bool built = run.main.evaluator.simulate(summary.values, detail::PlanMode::record);
  std::vector<double> shares;
  run.main.evaluator.objective(built, &shares);
  for (std::size_t t = 0; t < prepared.tests.size(); ++t) {
    const auto& pt = prepared.tests[t];
    const auto& o = run.main.evaluator.outcome(static_cast<int>(t));
    TestFit tf;
    tf.id = pt.test->id;
    tf.simulated = built && o.ok;
    tf.message = o.result.message;
    tf.objective = shares[t];
    std::size_t i = 0;
    for (const auto& c : pt.curves) {
      CurveFit cf;
      cf.x = c.x;
      cf.y = c.y;
      cf.shear_stage = pt.test->curves[static_cast<std::size_t>(c.source)].shear_stage;
      cf.points = static_cast<int>(c.xs.size());
      cf.range = c.range;
      cf.xs = c.xs;
      cf.measured = c.ys;
      cf.used = c.weight > 0.0;
      if (tf.simulated) {
        cf.simulated.assign(o.simulated.begin() + static_cast<std::ptrdiff_t>(i),
                            o.simulated.begin() + static_cast<std::ptrdiff_t>(i + c.xs.size()));
        double ssr = 0.0;
        for (std::size_t j = 0; j < c.xs.size(); ++j) ssr += (cf.simulated[j] - c.ys[j]) * (cf.simulated[j] - c.ys[j]);
        cf.rmse = std::sqrt(ssr / static_cast<double>(c.xs.size()));
        cf.r_squared = c.sst > 0.0 ? 1.0 - ssr / c.sst : kNotGiven;
        if (cf.used && !std::isnan(cf.r_squared) && cf.r_squared < options.min_r_squared)
          summary.warnings.push_back("Test " + tf.id + ", " + to_string(c.y) + ": R^2 = " + r2_text(cf.r_squared) +
                                     ": the model does not follow this curve well.");
      }
      i += c.xs.size();
      tf.curves.push_back(std::move(cf));
    }
    if (!tf.simulated)
      summary.warnings.push_back("Test " + tf.id + " could not be simulated with the fitted parameters: " + tf.message);
    summary.tests.push_back(std::move(tf));
    summary.simulations.push_back(run.main.evaluator.outcome(static_cast<int>(t)).result);
  }
  return built;
}

void warn_at_bounds(const Run& run, CalibrationSummary& summary) {
  const detail::Prepared& prepared = run.prepared;
  for (std::size_t k = 0; k < prepared.free.size(); ++k) {
    const FittedParameter& fp = summary.parameters[static_cast<std::size_t>(prepared.free[k])];
    if (fp.at_bound)
      summary.warnings.push_back(fp.name + " ended at its " + (run.best_unit[k] < 0.5 ? "lower" : "upper") + " bound " +
                                 format_number(run.best_unit[k] < 0.5 ? fp.lower : fp.upper) + " " + fp.unit +
                                 ": the fit may want a value beyond it; widen the bounds or fix it (its interval is not reliable).");
  }
}

// Intervals from the Jacobian at the end point (uncertainty.cpp), for a usable fit that was not stopped.
void estimate_uncertainty(Run& run, const CalibrationOptions& options, CalibrationSummary& summary) {
  Eigen::VectorXd d0;
  if (!options.uncertainty || !summary.usable() || summary.termination == CalibrationTermination::stopped ||
      !detail::residuals(run.prepared, run.main.evaluator, d0))
    return;
  const bool same = !run.kept_jac_at.empty() && run.kept_jac_at == run.best_unit;
  const detail::UncertaintyContext context{run.prepared,   options, run.best_unit, run.main.evaluator,
                                           side_jobs(run), summary, same ? &run.kept_jac : nullptr};
  detail::uncertainty(context, summary.values, d0);
}

}  // namespace

CalibrationSummary detail::calibrate_validated(const CalibrationOptions& options, const CalibrationProblem& problem) {
  const detail::Prepared prepared = detail::prepare(problem);
  CalibrationSummary summary = begin_summary(options, problem, prepared);
  Run run(prepared, options, summary.threads, summary);
  std::mt19937_64 rng(options.seed);
  // The search: the start point, a design, a global stage (if any), the local runs.
  evaluate_start(run);
  run_design(run, rng);
  StageEnd end;
  run_global(run, end);
  run_local(run, rng, end);
  const Ending ending = ending_of(run, end, summary.evaluations);
  summary.termination = ending.termination;
  // The result: parameters, the fitted set's curves, the outcome, warnings, intervals.
  record_parameters(run, *problem.model, summary);
  const bool built = record_fitted_curves(run, options, summary);
  judge_outcome(summary, ending, run, built);
  warn_at_bounds(run, summary);
  estimate_uncertainty(run, options, summary);
  summary.message = (summary.outcome == CalibrationOutcome::failed ? "no usable result: " + summary.outcome_reason
                                                                   : ending.message) +
                    "; objective " + format_number(summary.objective) + " (start " +
                    format_number(summary.start_objective) + ")";
  summary.wall_time = run.elapsed();
  return summary;
}

double calibration_objective(const CalibrationOptions& options, const CalibrationProblem& problem,
                             const ParameterValues& values) {
  const detail::Prepared prepared = detail::prepare(problem);
  detail::Evaluator ev(prepared, options, resolve_threads(options.threads, prepared.tests.size()));
  ev.limit_work(false);
  const bool built = ev.simulate(values);
  return built ? ev.objective(true) : std::numeric_limits<double>::infinity();
}

}  // namespace triaxcal
