#include <cmath>
#include <cstdio>
#include <sstream>

#include "triaxcal/calibrate.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

std::string fmt(const char* format, double v) {
  char b[64];
  std::snprintf(b, sizeof b, format, v);
  return b;
}

std::string value_text(double v) { return std::isnan(v) ? "-" : format_number(v); }

std::string parameter_line(const FittedParameter& p) {
  // A dimensionless parameter has no unit after its value (never "-").
  std::string line = "  " + p.name + " = " + format_number(p.value) + (p.unit.empty() || p.unit == "-" ? "" : " " + p.unit);
  if (p.status == ParameterStatus::free) {
    if (std::isinf(p.standard_error)) {
      line += "  (not determined)";
    } else if (!std::isnan(p.standard_error)) {
      line += "  +/- " + format_number(p.standard_error) + "  95 % [" + format_number(p.interval_low) + ", " +
              format_number(p.interval_high) + "]";
    }
    if (p.at_bound) line += "  AT BOUND";
  } else if (p.status == ParameterStatus::tied) {
    line += "  (tied: " + p.expression + ")";
  } else {
    line += "  (fixed)";
  }
  return line;
}

}  // namespace

std::string to_string(CalibrationOutcome outcome) {
  switch (outcome) {
    case CalibrationOutcome::converged: return "converged";
    case CalibrationOutcome::stopped: return "stopped";
    case CalibrationOutcome::poor_fit: return "poor_fit";
    case CalibrationOutcome::failed: return "failed";
  }
  return "failed";
}

std::string explain(CalibrationOutcome outcome) {
  switch (outcome) {
    case CalibrationOutcome::converged:
      return "the optimiser converged and the model follows every used curve (R^2 at or above the threshold)";
    case CalibrationOutcome::stopped:
      return "the optimiser stopped before it converged (a budget, the time limit or a stop request); the parameters "
             "are the best found so far";
    case CalibrationOutcome::poor_fit:
      return "the model does not follow at least one used curve (R^2 below the threshold); review the curves named "
             "before using the parameters";
    case CalibrationOutcome::failed:
      return "no usable parameter set: every evaluation failed or was penalised";
  }
  return "no usable parameter set";
}

bool parse_outcome(const std::string& text, CalibrationOutcome& outcome) {
  for (CalibrationOutcome o : {CalibrationOutcome::converged, CalibrationOutcome::stopped, CalibrationOutcome::poor_fit,
                               CalibrationOutcome::failed})
    if (text == to_string(o)) {
      outcome = o;
      return true;
    }
  return false;
}

std::string CalibrationSummary::outcome_line() const {
  return to_string(outcome) + (outcome_reason.empty() ? std::string() : ": " + outcome_reason);
}

namespace {
// "; 2 of the 11 could not simulate their start and ended there" (nothing when none failed).
std::string starts_text(int failed, int runs) {
  if (failed == 0) return std::string();
  return "; " + std::to_string(failed) + " of the " + std::to_string(runs) +
         (failed == 1 ? " could not simulate its start" : " could not simulate their start") + " and ended there";
}
}  // namespace

std::string CalibrationSummary::brief() const {
  std::ostringstream s;
  s << "calibration of " << model << ": " << to_string(outcome) << ", objective " << format_number(objective)
    << ", " << evaluations << " evaluations (" << failed_simulations << " failed simulations), "
    << fmt("%.2f", wall_time) << " s on " << threads << (threads == 1 ? " thread\n" : " threads\n");
  if (!outcome_reason.empty()) s << "  " << outcome_reason << "\n";
  for (std::size_t k = 0; k < fit_stages.size(); ++k) s << "  " << fit_stages[k].line(k, fit_stages.size()) << "\n";
  if (!uncertainty_basis.empty()) s << "  intervals: " << uncertainty_basis << "\n";
  if (local_runs > 1)
    s << "  " << starts_at_best << " of " << local_runs << " local runs reached the best objective (within "
      << "same_optimum_tolerance)" << starts_text(failed_starts, local_runs) << "\n";
  for (const FittedParameter& p : parameters)
    if (p.status != ParameterStatus::fixed) s << parameter_line(p) << "\n";
  double worst = 0.0;
  std::string worst_name;
  for (const TestFit& t : tests)
    for (const CurveFit& c : t.curves)
      if (!std::isnan(c.rmse) && c.range > 0.0 && c.rmse / c.range >= worst) {
        worst = c.rmse / c.range;
        worst_name = t.id + " " + to_string(c.y) + (c.shear_stage > 0 ? " (stage " + std::to_string(c.shear_stage) + ")" : "") +
                     ", R^2 " + (std::isnan(c.r_squared) ? std::string("-") : fmt("%.3f", c.r_squared));
      }
  if (!worst_name.empty()) s << "  worst curve: " << worst_name << ", RMSE " << fmt("%.2f", 100.0 * worst) << " % of its range\n";
  // The warnings themselves are in full() and the report.
  if (!warnings.empty())
    s << "  " << warnings.size() << (warnings.size() == 1 ? " warning" : " warnings") << " (listed in the full summary)\n";
  return s.str();
}

std::string CalibrationSummary::full() const {
  std::ostringstream s;
  s << "Calibration of " << model << "\n";
  s << "  outcome: " << outcome_line() << "\n";
  s << "  termination: " << to_string(termination) << ": " << message << "\n";
  for (std::size_t k = 0; k < fit_stages.size(); ++k) {
    const FitStageSummary& f = fit_stages[k];
    s << "  " << f.line(k, fit_stages.size()) << "\n";
    if (f.run) s << "      " << to_string(f.outcome) << ": " << f.outcome_reason << "\n";
  }
  if (!uncertainty_basis.empty()) s << "  intervals: " << uncertainty_basis << "\n";
  s << "  objective: " << format_number(objective) << " (start " << format_number(start_objective) << ")\n";
  s << "  evaluations: " << evaluations << " (design " << design_evaluations << ", global " << global_evaluations
    << ", local " << local_evaluations << " in " << local_runs << (local_runs == 1 ? " run" : " runs") << "), "
    << jacobian_evaluations << " for the Jacobian; " << failed_simulations << " failed test simulations";
  if (work_limited_simulations > 0)
    s << " (" << work_limited_simulations << " ended by the work limit, max_substeps_per_record)";
  s << "\n";
  if (exact_jacobians + difference_jacobians > 0) {
    s << "  Jacobians: " << exact_jacobians << " exact (the model's derivative version along the substeps)";
    if (difference_jacobians > 0) s << ", " << difference_jacobians << " by finite differences on frozen substeps";
    s << "\n";
  }
  if (local_runs > 1)
    s << "  local runs reaching the best objective: " << starts_at_best << " of " << local_runs << starts_text(failed_starts, local_runs)
      << "\n";
  s << "  wall time: " << fmt("%.3f", wall_time) << " s on " << threads << " threads ("
    << fmt("%.0f", wall_time > 0.0 ? static_cast<double>(evaluations + jacobian_evaluations) / wall_time : 0.0)
    << " evaluations/s)\n";
  s << "  algorithms used: global " << global_algorithm << ", local " << local_algorithm << ", loss " << loss << "\n";
  s << "\nOptions as asked:\n";
  std::istringstream lines(options_text);
  for (std::string line; std::getline(lines, line);) s << "  " << line << "\n";

  s << "\nParameters (asked -> found):\n";
  for (const FittedParameter& p : parameters) {
    s << parameter_line(p) << "\n";
    if (p.status == ParameterStatus::free)
      s << "      start " << format_number(p.start) << ", bounds [" << format_number(p.lower) << ", "
        << format_number(p.upper) << "]\n";
  }
  if (correlation.size() > 0) {
    s << "\nCorrelation of the free parameters:\n  " << std::string(22, ' ');
    for (std::size_t j = 0; j < free_names.size(); ++j) {
      std::string head = "[" + std::to_string(j + 1) + "]";
      s << std::string(head.size() < 7 ? 7 - head.size() : 0, ' ') << head << " ";
    }
    s << "\n";
    for (Eigen::Index i = 0; i < correlation.rows(); ++i) {
      std::string name = "[" + std::to_string(i + 1) + "] " + free_names[static_cast<std::size_t>(i)];
      name.resize(22, ' ');
      s << "  " << name;
      for (Eigen::Index j = 0; j < correlation.cols(); ++j)
        s << (std::isnan(correlation(i, j)) ? std::string("     -  ") : fmt("%7.3f ", correlation(i, j)));
      s << "\n";
    }
  }
  s << "\nFit per test and curve (RMSE in the curve's unit):\n";
  for (const TestFit& t : tests) {
    s << "  " << t.id << ": " << (t.simulated ? "simulated" : "FAILED: " + t.message) << ", objective share "
      << format_number(t.objective) << "\n";
    for (const CurveFit& c : t.curves)
      s << "    " << to_string(c.y) << " vs " << to_string(c.x)
        << (c.shear_stage > 0 ? " (stage " + std::to_string(c.shear_stage) + ")" : "") << ": " << c.points << " points, RMSE "
        << value_text(c.rmse) << " " << unit_of(c.y) << " ("
        << (std::isnan(c.rmse) ? std::string("-") : fmt("%.2f", 100.0 * c.rmse / c.range)) << " % of range "
        << format_number(c.range) << "), R^2 " << (std::isnan(c.r_squared) ? std::string("-") : fmt("%.4f", c.r_squared))
        << (c.poor ? "  POOR FIT" : "") << (c.used ? "" : "  (weight 0: not used)") << "\n";
  }
  s << "\nWarnings:" << (warnings.empty() ? " none\n" : "\n");
  for (const std::string& w : warnings) s << "  - " << w << "\n";
  return s.str();
}

}  // namespace triaxcal
