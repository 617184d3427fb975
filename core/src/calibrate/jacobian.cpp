#include "jacobian.hpp"

#include <algorithm>

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

}  // namespace triaxcal::detail
