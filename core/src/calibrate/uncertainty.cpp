#include "uncertainty.hpp"

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>
#include <vector>

#include "triaxcal/parameters.hpp"

namespace triaxcal::detail {

namespace {

std::string percent(double v) {
  char b[32];
  std::snprintf(b, sizeof b, "%.0f %%", 100.0 * v);
  return b;
}

}  // namespace

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

// Gauss-Newton (sandwich) covariance of the free parameters at the optimum. With A the objective's
// weight of each point (w / range^2) and Sigma the noise variance of each curve estimated from its
// residuals, Cov = H^+ (J^T A Sigma A J) H^+ with H = J^T A J; this reduces to the textbook
// s^2 (J^T J)^-1 when one curve with unit weights is fitted (e.g. Bates & Watts 1988, "Nonlinear
// Regression Analysis and Its Applications", eq. 2.23; the sandwich form: White 1980). A robust
// loss makes it the M-estimator's sandwich (Huber 1981, "Robust Statistics", ch. 7):
// H = J^T A Psi' J and Sigma from the influences psi(e) = rho'(e^2) e instead of the residuals.
void uncertainty(const UncertaintyContext& run, const ParameterValues& best_values, const Eigen::VectorXd& d0) {
  const Prepared& p = run.prepared;
  CalibrationSummary& s = run.summary;
  const std::size_t n = p.free.size();
  const Eigen::Index N = p.points;
  Eigen::MatrixXd jac = Eigen::MatrixXd::Zero(N, static_cast<Eigen::Index>(n));
  std::vector<bool> have(n, true);
  const double h = run.options.jacobian_step;
  // The 2n simulations beside the optimum are independent: side lanes run them in parallel.
  const int jobs = static_cast<int>(2 * n);
  std::vector<std::vector<double>> at_unit(static_cast<std::size_t>(jobs), run.best_unit);
  for (std::size_t k = 0; k < n; ++k) {
    at_unit[2 * k][k] = std::min(1.0, run.best_unit[k] + h);
    at_unit[2 * k + 1][k] = std::max(0.0, run.best_unit[k] - h);
  }
  std::vector<Eigen::VectorXd> shifted(static_cast<std::size_t>(jobs));
  std::vector<char> shifted_ok(static_cast<std::size_t>(jobs), 0);
  const int lanes = std::max(1, std::min(run.threads, jobs));
  run.on_lanes(lanes, [&](int lane, Evaluator& ev) {
    for (int j = lane; j < jobs; j += lanes) {
      const auto i = static_cast<std::size_t>(j);
      const bool built = ev.simulate(p.values(at_unit[i]));
      shifted_ok[i] = built && residuals(p, ev, shifted[i]) ? 1 : 0;
    }
  });
  s.jacobian_evaluations += jobs;
  for (std::size_t k = 0; k < n; ++k) {
    const int free_index = static_cast<int>(k);
    const std::string& name = p.names[static_cast<std::size_t>(p.free[k])];
    const Eigen::VectorXd& dp = shifted[2 * k];
    const Eigen::VectorXd& dm = shifted[2 * k + 1];
    const bool ok_up = shifted_ok[2 * k] != 0, ok_down = shifted_ok[2 * k + 1] != 0;
    const double tp = p.to_physical(free_index, at_unit[2 * k][k]), tm = p.to_physical(free_index, at_unit[2 * k + 1][k]);
    const double t0 = best_values[static_cast<std::size_t>(p.free[k])];
    if (ok_up && ok_down) {
      jac.col(static_cast<Eigen::Index>(k)) = (dp - dm) / (tp - tm);
    } else if (ok_up && tp != t0) {
      jac.col(static_cast<Eigen::Index>(k)) = (dp - d0) / (tp - t0);
    } else if (ok_down && tm != t0) {
      jac.col(static_cast<Eigen::Index>(k)) = (d0 - dm) / (t0 - tm);
    } else {
      have[k] = false;
      s.warnings.push_back("The sensitivity of " + name +
                           " could not be computed (the simulations next to the optimum failed); it has no interval.");
    }
  }
  // Weights and per-curve noise variance. a_i = w / range^2 is a point's weight in the objective.
  // With a robust loss (an M-estimator) the curvature takes each point with psi'(e_i) and the
  // noise is that of the influences psi(e_i) = rho'(e_i^2) e_i, so an outlier counts at most
  // with the loss scale; for the linear loss both reduce to the plain residuals.
  Eigen::VectorXd a(N), a_curv(N), sigma2(N);
  {
    Eigen::Index k = 0;
    const double share = 1.0 - static_cast<double>(n) / static_cast<double>(std::max<Eigen::Index>(N, 1));
    const Loss kind = run.options.loss;
    const double c_loss = run.options.loss_scale;
    for (const auto& t : p.tests)
      for (const auto& c : t.curves) {
        double ssr = 0.0;
        const Eigen::Index k0 = k;
        for (std::size_t j = 0; j < c.xs.size(); ++j, ++k) {
          const double d = d0[k];
          const double z = (d / c.range) * (d / c.range);
          const double psi = loss_weight(kind, z, c_loss) * d;  // in the unit of the curve
          a[k] = c.weight / (c.range * c.range);
          a_curv[k] = a[k] * loss_curvature(kind, z, c_loss);
          ssr += psi * psi;
        }
        const double dof = std::max(1.0, static_cast<double>(c.xs.size()) * share);
        for (Eigen::Index j = k0; j < k; ++j) sigma2[j] = ssr / dof;
      }
  }
  const Eigen::MatrixXd aj = a.asDiagonal() * jac;
  const Eigen::MatrixXd H = jac.transpose() * (a_curv.asDiagonal() * jac);
  const Eigen::MatrixXd M = aj.transpose() * sigma2.asDiagonal() * aj;
  // Scaled pseudo-inverse: parameters with no effect or in a null direction get no interval.
  const Eigen::Index P = static_cast<Eigen::Index>(n);
  Eigen::VectorXd scale = Eigen::VectorXd::Zero(P);
  std::vector<bool> identifiable(n, true);
  for (Eigen::Index k = 0; k < P; ++k) {
    const std::string& name = p.names[static_cast<std::size_t>(p.free[static_cast<std::size_t>(k)])];
    if (!have[static_cast<std::size_t>(k)]) {
      identifiable[static_cast<std::size_t>(k)] = false;
    } else if (!(H(k, k) > 0.0) || jac.col(k).cwiseAbs().maxCoeff() == 0.0) {
      identifiable[static_cast<std::size_t>(k)] = false;
      s.warnings.push_back(name + " has no effect on the compared curves over these tests: fix it (its value is the start value).");
    } else {
      scale[k] = 1.0 / std::sqrt(H(k, k));
    }
  }
  const Eigen::MatrixXd Hs = scale.asDiagonal() * H * scale.asDiagonal();
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(Hs);
  Eigen::MatrixXd Hplus = Eigen::MatrixXd::Zero(P, P);
  if (eig.info() == Eigen::Success) {
    const double top = eig.eigenvalues().cwiseAbs().maxCoeff();
    for (Eigen::Index i = 0; i < P; ++i) {
      const double lambda = eig.eigenvalues()[i];
      const Eigen::VectorXd v = eig.eigenvectors().col(i);
      if (lambda > 1e-10 * top) {
        Hplus += v * v.transpose() / lambda;
        continue;
      }
      // A direction the curves cannot see: name the parameters that make it up.
      std::vector<std::string> involved;
      for (Eigen::Index k = 0; k < P; ++k)
        if (scale[k] > 0.0 && std::abs(v[k]) > 0.3) {
          identifiable[static_cast<std::size_t>(k)] = false;
          involved.push_back(p.names[static_cast<std::size_t>(p.free[static_cast<std::size_t>(k)])]);
        }
      if (involved.size() >= 2) {
        std::string list;
        for (std::size_t j = 0; j < involved.size(); ++j)
          list += (j == 0 ? "" : (j + 1 == involved.size() ? " and " : ", ")) + involved[j];
        s.warnings.push_back(list + " cannot be told apart by these tests (they trade off exactly): fix all but one, "
                                    "or add a test that separates them.");
      } else if (involved.size() == 1) {
        s.warnings.push_back(involved[0] + " is not determined by these tests: fix it.");
      }
    }
  }
  Hplus = scale.asDiagonal() * Hplus * scale.asDiagonal();
  s.covariance = Hplus * M * Hplus;
  s.correlation = Eigen::MatrixXd::Identity(P, P);
  for (Eigen::Index i = 0; i < P; ++i)
    for (Eigen::Index j = 0; j < P; ++j) {
      const double den = std::sqrt(s.covariance(i, i) * s.covariance(j, j));
      s.correlation(i, j) = (i == j) ? 1.0 : (den > 0.0 ? s.covariance(i, j) / den : kNotGiven);
      if (!identifiable[static_cast<std::size_t>(i)] || !identifiable[static_cast<std::size_t>(j)])
        s.correlation(i, j) = i == j ? 1.0 : kNotGiven;
    }
  // 1.96: two-sided 95 % quantile of the normal distribution (N is hundreds of points here).
  constexpr double z95 = 1.959963984540054;
  for (Eigen::Index k = 0; k < P; ++k) {
    FittedParameter& fp = s.parameters[static_cast<std::size_t>(p.free[static_cast<std::size_t>(k)])];
    if (!identifiable[static_cast<std::size_t>(k)]) {
      fp.standard_error = std::numeric_limits<double>::infinity();
      continue;
    }
    const double se = std::sqrt(std::max(0.0, s.covariance(k, k)));
    fp.standard_error = se;
    if (p.scale[static_cast<std::size_t>(k)] == ParameterScale::log && fp.value > 0.0) {
      const double spread = std::exp(z95 * se / fp.value);
      fp.interval_low = fp.value / spread;
      fp.interval_high = fp.value * spread;
    } else {
      fp.interval_low = fp.value - z95 * se;
      fp.interval_high = fp.value + z95 * se;
    }
    if (fp.value != 0.0 && se > 0.5 * std::abs(fp.value))
      s.warnings.push_back(fp.name + " is poorly determined by these tests (standard error " +
                           percent(se / std::abs(fp.value)) + " of its value): fix it or add a test that is sensitive to it.");
  }
  for (Eigen::Index i = 0; i < P; ++i)
    for (Eigen::Index j = i + 1; j < P; ++j) {
      const double r = s.correlation(i, j);
      if (std::isnan(r) || std::abs(r) < run.options.correlation_warning) continue;
      char b[16];
      std::snprintf(b, sizeof b, "%.2f", r);
      s.warnings.push_back(s.free_names[static_cast<std::size_t>(i)] + " and " + s.free_names[static_cast<std::size_t>(j)] +
                           " are correlated at " + b +
                           " over these tests: fix one, or add a test that separates them (e.g. at a different confining stress).");
    }
}

}  // namespace triaxcal::detail
