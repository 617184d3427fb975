#include "jacobian.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>

#include "triaxcal/sensitivity.hpp"

namespace triaxcal::detail {

bool residuals(const Prepared& p, const Evaluator& ev, Eigen::VectorXd& d) {
  d.resize(p.points);
  Eigen::Index k = 0;
  for (std::size_t t = 0; t < p.tests.size(); ++t) {
    const auto& o = ev.outcome(static_cast<int>(t));
    if (!o.ok) return false;
    std::size_t i = 0;
    for (const auto& c : p.tests[t].curves)
      for (std::size_t j = 0; j < c.xs.size(); ++j, ++i) d[k++] = o.simulated[i] - c.ys[j];
  }
  return true;
}

int jacobian(const Prepared& p, const std::vector<double>& unit, const Eigen::VectorXd& d0, double h,
             Differences scheme, const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J,
             std::vector<bool>& have) {
  const std::size_t n = p.free.size();
  // Job 2k: u_k + h (u_k - h at the upper bound for forward differences); job 2k + 1: u_k - h
  // (central only). Steps are cut at the bounds of the unit box.
  const bool central = scheme == Differences::central;
  const int per = central ? 2 : 1;
  const int jobs = per * static_cast<int>(n);
  std::vector<std::vector<double>> at(static_cast<std::size_t>(jobs), unit);
  std::vector<Eigen::VectorXd> shifted(static_cast<std::size_t>(jobs));
  std::vector<char> ok(static_cast<std::size_t>(jobs), 0);
  for (std::size_t k = 0; k < n; ++k) {
    const double up = std::min(1.0, unit[k] + h), down = std::max(0.0, unit[k] - h);
    if (central) {
      at[2 * k][k] = up;
      at[2 * k + 1][k] = down;
    } else {
      at[k][k] = up > unit[k] ? up : down;
    }
  }
  run(jobs, [&](int job, Evaluator& ev) {
    const auto i = static_cast<std::size_t>(job);
    const bool built = ev.simulate(p.values(at[i]), plans != nullptr ? PlanMode::replay : PlanMode::none, plans);
    ok[i] = built && residuals(p, ev, shifted[i]) ? 1 : 0;
  });
  J.setZero(p.points, static_cast<Eigen::Index>(n));
  have.assign(n, true);
  for (std::size_t k = 0; k < n; ++k) {
    const auto col = static_cast<Eigen::Index>(k);
    if (central) {
      const std::size_t a = 2 * k, b = 2 * k + 1;
      const double ua = at[a][k], ub = at[b][k];
      if (ok[a] && ok[b] && ua != ub) {
        J.col(col) = (shifted[a] - shifted[b]) / (ua - ub);
        continue;
      }
      if (ok[a] && ua != unit[k]) {
        J.col(col) = (shifted[a] - d0) / (ua - unit[k]);
        continue;
      }
      if (ok[b] && ub != unit[k]) {
        J.col(col) = (d0 - shifted[b]) / (unit[k] - ub);
        continue;
      }
    } else if (ok[k] && at[k][k] != unit[k]) {
      J.col(col) = (shifted[k] - d0) / (at[k][k] - unit[k]);
      continue;
    }
    have[k] = false;
  }
  return jobs;
}

int exact_jacobian(const Prepared& p, const std::vector<double>& unit, const Eigen::VectorXd& d0,
                   const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J) {
  const std::size_t n = p.free.size();
  const ParameterValues values = p.values(unit);
  std::unique_ptr<Model> model;
  try {
    model = p.problem->create(values);
  } catch (const std::exception&) {
    return -1;
  }
  const std::size_t np = values.size();
  const int passes = static_cast<int>((n + kDualLanes - 1) / kDualLanes);
  // Seeds of each pass: d(parameter i) / d(u_k) for the pass's free parameters k, one a lane.
  std::vector<std::unique_ptr<DualModel>> duals(static_cast<std::size_t>(passes));
  for (int pass = 0; pass < passes; ++pass) {
    std::vector<double> seeds(np * kDualLanes, 0.0);
    for (int lane = 0; lane < kDualLanes; ++lane) {
      const std::size_t k = static_cast<std::size_t>(pass * kDualLanes + lane);
      if (k >= n) break;
      const auto free_index = static_cast<std::size_t>(p.free[k]);
      seeds[free_index * kDualLanes + static_cast<std::size_t>(lane)] = p.slope(static_cast<int>(k), values[free_index]);
      if (p.ties.empty()) continue;
      std::vector<double> up = unit, down = unit;
      up[k] = std::min(1.0, unit[k] + 1e-6);
      down[k] = std::max(0.0, unit[k] - 1e-6);
      const ParameterValues vu = p.values(up), vd = p.values(down);
      for (const auto& [index, expression] : p.ties) {
        (void)expression;
        const auto i = static_cast<std::size_t>(index);
        seeds[i * kDualLanes + static_cast<std::size_t>(lane)] = (vu[i] - vd[i]) / (up[k] - down[k]);
      }
    }
    try {
      duals[static_cast<std::size_t>(pass)] = model->with_derivatives(seeds);
    } catch (const std::exception&) {
      return -1;
    }
    if (duals[static_cast<std::size_t>(pass)] == nullptr) return -1;
  }
  // Row offset of each test's first compared point.
  const std::size_t tests = p.tests.size();
  std::vector<Eigen::Index> first(tests + 1, 0);
  for (std::size_t t = 0; t < tests; ++t) first[t + 1] = first[t] + p.tests[t].points;
  J.setZero(p.points, static_cast<Eigen::Index>(n));
  std::atomic<bool> ok{true};
  const int jobs = passes * static_cast<int>(tests);
  run(jobs, [&](int job, Evaluator&) {
    const int pass = job / static_cast<int>(tests);
    const auto t = static_cast<std::size_t>(job % static_cast<int>(tests));
    const PreparedTest& pt = p.tests[t];
    thread_local DualSimulationResult result;
    thread_local std::vector<Dual> simulated;
    try {
      simulate(p.problem->driver, *duals[static_cast<std::size_t>(pass)], pt.protocol, result, true,
               plans != nullptr && !p.problem->driver.fixed_steps ? &(*plans)[t] : nullptr);
    } catch (const std::exception&) {
      ok = false;
      return;
    }
    if (!result.ok()) {
      ok = false;
      return;
    }
    simulated.resize(static_cast<std::size_t>(pt.points));
    Dual* out = simulated.data();
    for (const PreparedCurve& c : pt.curves) {
      interpolate_curve(result, c, out);
      out += c.xs.size();
    }
    std::size_t i = 0;
    for (const PreparedCurve& c : pt.curves)
      for (std::size_t j = 0; j < c.xs.size(); ++j, ++i) {
        const Eigen::Index row = first[t] + static_cast<Eigen::Index>(i);
        // The dual run's value is the double run's residual plus the measured value, to rounding
        // (the same substeps and decisions; the operations' order differs in places, and a path
        // through liquefaction amplifies that to about 1e-8 of the range, seen on the Gannet Reach
        // sand tests); more than 1e-6 of the range is a run that left the plan's path.
        const double value = simulated[i].a - c.ys[j];
        if (!std::isfinite(value) || std::abs(value - d0[row]) > 1e-6 * (std::abs(c.ys[j]) + c.range)) {
          ok = false;
          return;
        }
        for (int lane = 0; lane < kDualLanes; ++lane) {
          const std::size_t k = static_cast<std::size_t>(pass * kDualLanes + lane);
          if (k < n) J(row, static_cast<Eigen::Index>(k)) = simulated[i].v[lane];
        }
      }
  });
  if (!ok) return -1;
  return passes;
}

JacobianTaken take_jacobian(const Prepared& p, Sensitivities sensitivities, const std::vector<double>& unit,
                            const Eigen::VectorXd& d0, double h, Differences scheme,
                            const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J,
                            std::vector<bool>& have) {
  const int passes = sensitivities == Sensitivities::exact ? exact_jacobian(p, unit, d0, plans, run, J) : -1;
  if (passes >= 0) {
    have.assign(p.free.size(), true);
    return {passes, true};
  }
  return {jacobian(p, unit, d0, h, scheme, plans, run, J, have), false};
}

}  // namespace triaxcal::detail
