// A staged fit (CalibrationProblem::fit_stages; docs/calibration-format.md, "Staged fit"): each
// stage is a calibrate() run of its own free parameters with the others held fixed (at their start
// values before their own stage, at its result after it); then one evaluation at the end point with
// every free parameter free gives the fitted curves and the intervals from a joint Jacobian.
#include <chrono>
#include <cmath>
#include <cstdio>
#include <limits>

#include "engine.hpp"
#include "../key_path.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

std::string join(const std::vector<std::string>& names) {
  std::string out;
  for (const std::string& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

std::string r2_text(double r) {
  char b[32];
  std::snprintf(b, sizeof b, "%.3f", r);
  return b;
}

/// The worse of two terminations for the whole: any that is not `converged`, the first one kept.
bool converged(CalibrationTermination t) { return t == CalibrationTermination::converged; }

}  // namespace

std::string FitStageSummary::line(std::size_t k, std::size_t n) const {
  std::string s = "stage " + std::to_string(k + 1) + " of " + std::to_string(n) + " (free: " + join(free) + "): ";
  if (!run) return s + "not run (an earlier stage failed or was stopped)";
  s += to_string(outcome) + ", objective " + format_number(objective) + " (start " + format_number(start_objective) + "), " +
       std::to_string(evaluations) + " evaluations";
  if (local_runs > 1) s += ", " + std::to_string(starts_at_best) + " of " + std::to_string(local_runs) + " local runs at its best";
  if (!note.empty()) s += "; " + note;
  return s;
}

namespace detail {

std::vector<std::vector<int>> check_fit_stages(const CalibrationProblem& problem) {
  const ModelInfo& info = *problem.model;
  std::vector<int> stage_of(info.parameters.size(), -1);
  std::vector<std::vector<int>> stages;
  const KeyPath root("fit_stages");
  for (std::size_t i = 0; i < problem.fit_stages.size(); ++i) {
    const FitStage& st = problem.fit_stages[i];
    if (st.free.empty()) throw InputError((root[i] / "free").str() + ": an empty stage (list the free parameters fitted in it)");
    std::vector<int> indices;
    for (std::size_t j = 0; j < st.free.size(); ++j) {
      const std::string where = (root[i] / "free")[j].str();
      const std::string& name = st.free[j];
      const int index = parameter_index(info, name);
      if (index < 0) throw InputError(where + ": " + info.name + " has no parameter '" + name + "'");
      ParameterStatus status = ParameterStatus::fixed;  // a parameter without a spec is fixed at its default
      for (const ParameterSpec& p : problem.parameters)
        if (p.name == name) status = p.status;
      if (status != ParameterStatus::free)
        throw InputError(where + ": " + name + " is " + to_string(status) + ", not free (a stage fits free parameters only)");
      int& owner = stage_of[static_cast<std::size_t>(index)];
      if (owner >= 0) throw InputError(where + ": " + name + " is already in " + root[static_cast<std::size_t>(owner)].str());
      owner = static_cast<int>(i);
      indices.push_back(index);
    }
    stages.push_back(std::move(indices));
  }
  for (const ParameterSpec& p : problem.parameters) {
    if (p.status != ParameterStatus::free) continue;
    const int index = parameter_index(info, p.name);
    if (index >= 0 && stage_of[static_cast<std::size_t>(index)] < 0)
      throw InputError(root.str() + ": the free parameter " + p.name + " is in no stage (each free parameter is fitted in exactly one)");
  }
  return stages;
}

CalibrationSummary calibrate_staged(const CalibrationOptions& options, const CalibrationProblem& problem) {
  options.validate();
  const auto t0 = std::chrono::steady_clock::now();
  const auto elapsed = [&t0] { return std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count(); };
  CalibrationProblem base = problem;
  base.fit_stages.clear();
  const Prepared prepared = prepare(base);  // resolved starts (the middle of the box where none is given)
  const std::vector<std::vector<int>> stages = check_fit_stages(problem);
  const ModelInfo& info = *problem.model;

  // Current values of the free parameters (ModelInfo order): their starts until their stage has run.
  std::vector<double> current(info.parameters.size(), kNotGiven), original_start(info.parameters.size(), kNotGiven);
  for (std::size_t k = 0; k < prepared.free.size(); ++k)
    current[static_cast<std::size_t>(prepared.free[k])] = original_start[static_cast<std::size_t>(prepared.free[k])] = prepared.start[k];

  std::vector<FitStageSummary> done(stages.size());
  std::vector<HistoryEntry> history;
  long evaluations = 0, design = 0, global = 0, local = 0, jacobian = 0, failed_simulations = 0, work_limited = 0;
  long exact_jacobians = 0, difference_jacobians = 0;
  int failed_starts = 0;
  double start_objective = std::numeric_limits<double>::infinity();
  int broken = -1;  // the stage that failed or was stopped; later ones are not run
  for (std::size_t s = 0; s < stages.size(); ++s) {
    FitStageSummary& fs = done[s];
    fs.free = problem.fit_stages[s].free;
    fs.note = problem.fit_stages[s].note;
    if (broken >= 0) continue;
    CalibrationProblem sub = base;
    for (ParameterSpec& p : sub.parameters) {
      if (p.status != ParameterStatus::free) continue;
      const int index = parameter_index(info, p.name);
      bool here = false;
      for (int i : stages[s]) here = here || i == index;
      if (here) {
        p.start = current[static_cast<std::size_t>(index)];
      } else {
        p.status = ParameterStatus::fixed;
        p.value = current[static_cast<std::size_t>(index)];
      }
    }
    CalibrationOptions o = options;
    o.uncertainty = false;  // the intervals come from the joint Jacobian at the end
    if (options.max_seconds > 0.0) {
      o.max_seconds = options.max_seconds - elapsed();
      if (!(o.max_seconds > 0.0)) o.max_seconds = 1e-3;  // the stage ends at once with time_limit
    }
    if (options.progress) {
      const std::string tag = "stage " + std::to_string(s + 1) + "/" + std::to_string(stages.size()) + " ";
      o.progress = [&options, tag, evaluations](const CalibrationProgress& p) {
        CalibrationProgress q = p;
        q.stage = tag + p.stage;
        q.evaluations += evaluations;
        return options.progress(q);
      };
    }
    const CalibrationSummary r = calibrate(o, sub);
    fs.run = true;
    fs.outcome = r.outcome;
    fs.outcome_reason = r.outcome_reason;
    fs.termination = r.termination;
    fs.objective = r.objective;
    fs.start_objective = r.start_objective;
    fs.evaluations = r.evaluations;
    fs.jacobian_evaluations = r.jacobian_evaluations;
    fs.local_runs = r.local_runs;
    fs.starts_at_best = r.starts_at_best;
    fs.wall_time = r.wall_time;
    if (s == 0) start_objective = r.start_objective;
    for (const HistoryEntry& h : r.history) history.push_back({h.evaluation + evaluations, h.stage, h.objective, h.best});
    evaluations += r.evaluations;
    design += r.design_evaluations;
    global += r.global_evaluations;
    local += r.local_evaluations;
    jacobian += r.jacobian_evaluations;
    exact_jacobians += r.exact_jacobians;
    difference_jacobians += r.difference_jacobians;
    failed_simulations += r.failed_simulations;
    work_limited += r.work_limited_simulations;
    failed_starts += r.failed_starts;
    if (r.usable())
      for (int i : stages[s]) current[static_cast<std::size_t>(i)] = r.values[static_cast<std::size_t>(i)];
    if (!r.usable() || r.termination == CalibrationTermination::stopped || r.termination == CalibrationTermination::time_limit)
      broken = static_cast<int>(s);
  }

  // The end point with every free parameter free: its curves, its judgement and the intervals of all
  // free parameters from one joint Jacobian (central differences) there.
  CalibrationProblem last = base;
  for (ParameterSpec& p : last.parameters)
    if (p.status == ParameterStatus::free) p.start = current[static_cast<std::size_t>(parameter_index(info, p.name))];
  CalibrationOptions o = options;
  o.global = GlobalAlgorithm::none;
  o.local = LocalAlgorithm::none;
  o.design_points = 0;
  o.starts = 0;
  o.max_seconds = 0.0;
  o.progress = nullptr;
  CalibrationSummary whole = calibrate_validated(o, last);

  for (FittedParameter& fp : whole.parameters)
    if (fp.status == ParameterStatus::free) fp.start = original_start[static_cast<std::size_t>(parameter_index(info, fp.name))];
  for (const HistoryEntry& h : whole.history) history.push_back({h.evaluation + evaluations, h.stage, h.objective, h.best});
  whole.history = std::move(history);
  whole.evaluations += evaluations;
  whole.design_evaluations += design;
  whole.global_evaluations = global;
  whole.local_evaluations = local;
  whole.jacobian_evaluations += jacobian;
  whole.exact_jacobians += exact_jacobians;
  whole.difference_jacobians += difference_jacobians;
  whole.failed_simulations += failed_simulations;
  whole.work_limited_simulations += work_limited;
  whole.failed_starts += failed_starts;
  whole.local_runs = 0;  // per stage (fit_stages)
  whole.starts_at_best = 0;
  whole.start_objective = start_objective;
  whole.global_algorithm = to_string(options.global);
  whole.local_algorithm = to_string(options.local);
  whole.options_text = options_text_of(options) + "fit_stages =";
  for (const FitStage& st : problem.fit_stages) whole.options_text += " [" + join(st.free) + "]";
  whole.options_text += "\n";
  whole.fit_stages = done;
  whole.wall_time = elapsed();
  if (options.uncertainty && whole.covariance.size() > 0)
    whole.uncertainty_basis = "one joint Jacobian of all " + std::to_string(prepared.free.size()) +
                              " free parameters at the end point of the last stage (central differences), not a stage's own";
  else if (options.uncertainty)
    whole.uncertainty_basis = "not computed (no usable end point)";

  // The outcome of the whole: the worst honest outcome of its stages. Failed when a stage failed (or
  // the end point cannot be simulated); poor_fit when a used curve fits poorly at the end point;
  // stopped when a stage did not converge; else converged. An earlier stage's own poor fit is
  // expected (the later stages' parameters are still at their starts) and is shown for it only.
  const std::size_t n = stages.size();
  std::string first_unconverged;
  CalibrationTermination termination = CalibrationTermination::converged;
  for (std::size_t s = 0; s < n; ++s)
    if (done[s].run && !converged(done[s].termination) && first_unconverged.empty()) {
      first_unconverged = "stage " + std::to_string(s + 1) + " of " + std::to_string(n) + " (free: " + join(done[s].free) +
                          "): " + done[s].outcome_reason;
      termination = done[s].termination;
    }
  if (broken >= 0 && !done[static_cast<std::size_t>(broken)].outcome_reason.empty() &&
      done[static_cast<std::size_t>(broken)].outcome == CalibrationOutcome::failed) {
    const FitStageSummary& b = done[static_cast<std::size_t>(broken)];
    whole.outcome = CalibrationOutcome::failed;
    whole.termination = CalibrationTermination::no_usable_result;
    whole.outcome_reason = "stage " + std::to_string(broken + 1) + " of " + std::to_string(n) + " (free: " + join(b.free) +
                           ") failed: " + b.outcome_reason;
  } else if (whole.outcome == CalibrationOutcome::failed) {
    whole.termination = CalibrationTermination::no_usable_result;
    whole.outcome_reason = "at the end point of the stages: " + whole.outcome_reason;
  } else {
    std::string poor, lowest;
    int poor_count = 0;
    double lowest_r2 = std::numeric_limits<double>::infinity();
    for (const TestFit& t : whole.tests)
      for (const CurveFit& c : t.curves) {
        if (!c.used || std::isnan(c.r_squared)) continue;
        const std::string name = t.id + " " + to_string(c.y);
        if (c.r_squared < lowest_r2) {
          lowest_r2 = c.r_squared;
          lowest = name;
        }
        if (c.poor) {
          ++poor_count;
          poor += (poor.empty() ? "" : ", ") + name + " (R^2 = " + r2_text(c.r_squared) + ")";
        }
      }
    whole.termination = termination;
    if (poor_count > 0) {
      whole.outcome = CalibrationOutcome::poor_fit;
      whole.outcome_reason = "the model does not follow " + std::to_string(poor_count) +
                             (poor_count == 1 ? " used curve" : " used curves") + " at the end of the stages (R^2 below min_r_squared = " +
                             format_number(options.min_r_squared) + "): " + poor +
                             (first_unconverged.empty() ? std::string() : "; also not converged: " + first_unconverged);
    } else if (!first_unconverged.empty()) {
      whole.outcome = CalibrationOutcome::stopped;
      whole.outcome_reason = first_unconverged;
    } else {
      whole.outcome = CalibrationOutcome::converged;
      whole.outcome_reason = "each of the " + std::to_string(n) + " stages met its tolerance" +
                             (lowest.empty() ? std::string()
                                             : "; every used curve has R^2 >= " + format_number(options.min_r_squared) + " (lowest " +
                                                   r2_text(lowest_r2) + ", " + lowest + ")");
    }
  }
  whole.message = "staged fit of " + std::to_string(n) + " stages: " + whole.outcome_reason + "; objective " +
                  format_number(whole.objective) + " (start " + format_number(whole.start_objective) + ")";
  return whole;
}

}  // namespace detail

}  // namespace triaxcal
