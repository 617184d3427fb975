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

// Standard deviation of a measured value of `q` (value `v`; `radial` = s_r' at the point, kPa).
// Void ratio follows from the volumetric strain, e = (1 + e0) exp(-eps_v) - 1, so de = (1 + e) deps_v;
// the stress ratio s_a'/s_r' from two stresses, each with the stress precision.
double precision_of(Quantity q, double v, double radial, const CalibrationOptions& o) {
  switch (q) {
    case Quantity::axial_strain:
    case Quantity::radial_strain:
    case Quantity::volumetric_strain: return o.strain_precision;
    case Quantity::void_ratio: return (1.0 + std::abs(v)) * o.strain_precision;
    case Quantity::stress_ratio:
      return std::abs(radial) > o.stress_precision ? o.stress_precision * std::sqrt(1.0 + v * v) / std::abs(radial)
                                                   : o.stress_precision;
    default: return o.stress_precision;
  }
}

// The noise of each compared point at the optimum (see uncertainty()): sigma_y^2 and the one-sided
// changes of the simulated curve over +- sigma_x, all tests, curves in order. False when a test
// was not simulated.
bool point_noise(const Prepared& p, const Evaluator& ev, const CalibrationOptions& o, Eigen::VectorXd& var_y,
                 Eigen::VectorXd& up, Eigen::VectorXd& down) {
  var_y.resize(p.points);
  up.resize(p.points);
  down.resize(p.points);
  Eigen::Index k = 0;
  std::vector<double> plus, minus, radial;
  for (std::size_t t = 0; t < p.tests.size(); ++t) {
    const TestOutcome& out = ev.outcome(static_cast<int>(t));
    if (!out.ok) return false;
    std::size_t i = 0;
    for (const PreparedCurve& c : p.tests[t].curves) {
      const std::size_t m = c.xs.size();
      radial.assign(m, 0.0);
      if (c.x == Quantity::stress_ratio || c.y == Quantity::stress_ratio) {
        PreparedCurve r = c;
        r.y = Quantity::radial_stress;
        interpolate_curve(out.result, r, radial.data());
      }
      PreparedCurve shifted = c;
      plus.resize(m);
      minus.resize(m);
      for (std::size_t j = 0; j < m; ++j) shifted.xs[j] = c.xs[j] + precision_of(c.x, c.xs[j], radial[j], o);
      interpolate_curve(out.result, shifted, plus.data());
      for (std::size_t j = 0; j < m; ++j) shifted.xs[j] = c.xs[j] - precision_of(c.x, c.xs[j], radial[j], o);
      interpolate_curve(out.result, shifted, minus.data());
      for (std::size_t j = 0; j < m; ++j, ++k) {
        const double y = out.simulated[i + j];
        const double sy = precision_of(c.y, c.ys[j], radial[j], o);
        var_y[k] = sy * sy;
        up[k] = plus[j] - y;
        down[k] = y - minus[j];
      }
      i += m;
    }
  }
  return true;
}

// Points that share a measured row: within a test, curves with the same x column, origin, stage
// and x values share their rows (the lab measured them together), so row j of each is one group.
// Every other point is a group of its own.
std::vector<std::vector<Eigen::Index>> row_groups(const Prepared& p) {
  std::vector<std::vector<Eigen::Index>> groups;
  Eigen::Index first = 0;
  for (const PreparedTest& t : p.tests) {
    std::vector<Eigen::Index> start;
    Eigen::Index k = first;
    for (const PreparedCurve& c : t.curves) {
      start.push_back(k);
      k += static_cast<Eigen::Index>(c.xs.size());
    }
    std::vector<bool> taken(t.curves.size(), false);
    for (std::size_t a = 0; a < t.curves.size(); ++a) {
      if (taken[a]) continue;
      std::vector<std::size_t> members{a};
      for (std::size_t b = a + 1; b < t.curves.size(); ++b) {
        const PreparedCurve &ca = t.curves[a], &cb = t.curves[b];
        if (!taken[b] && ca.x == cb.x && ca.zero_stage == cb.zero_stage && ca.stage == cb.stage && ca.xs == cb.xs) {
          members.push_back(b);
          taken[b] = true;
        }
      }
      for (std::size_t j = 0; j < t.curves[a].xs.size(); ++j) {
        std::vector<Eigen::Index> g;
        for (std::size_t c : members) g.push_back(start[c] + static_cast<Eigen::Index>(j));
        groups.push_back(std::move(g));
      }
    }
    first = k;
  }
  return groups;
}

}  // namespace

// Gauss-Newton (sandwich) covariance of the free parameters at the optimum:
//     Cov = H^+ (G^T Omega G) H^+,  G = A J,  H = J^T A Psi' J,
// with J the sensitivities of the compared values, A the objective's weight of each point
// (w / range^2), Psi' the loss curvature (1 for the linear loss) and Omega the covariance of the
// points' influences psi(e) = rho'(e^2) r (the residuals r for the linear loss). The sandwich form
// keeps the intervals right for the objective's own weights, which are not the inverse noise
// variances (White 1980, "A heteroskedasticity-consistent covariance matrix estimator", Econometrica
// 48(4); for one curve with unit weights it is s^2 (J^T J)^-1, Bates & Watts 1988,
// "Nonlinear Regression Analysis and Its Applications", eq. 2.23; for a robust loss the
// M-estimator's sandwich, Huber 1981, "Robust Statistics", ch. 7).
//
// Omega, the noise model: every measured column is noisy, x as well as y (errors in variables).
// A point's residual varies as sigma_y^2 + (dy/dx)^2 sigma_x^2, the effective variance (Orear 1982,
// "Least squares when both variables have uncertainties", Am. J. Phys. 50(10) 912-916;
// Clutton-Brock 1967), with dy/dx the local slope of the simulated curve. The slope term is taken
// as the mean of the squared one-sided changes y(x +- sigma_x) - y(x) of the simulated curve, so a
// point at a kink (Mohr-Coulomb's failure point) gets the mean of both sides, not a central
// difference that averages the slopes away. Curves of a test that share their x column (the same
// measured rows) share the x error: their residuals at a row are correlated through it.
// sigma_y and sigma_x are the declared precisions (CalibrationOptions::stress_precision,
// strain_precision). With noise_from_residuals (the default) they set only each point's share of
// its curve's noise; the level is the curve's residual scatter, phi_c = mean(psi^2 / V) over the
// curve's points with n (1 - P/N) degrees of freedom, so a model that misses the data, or a lab
// noisier than declared, widens the intervals instead of hiding behind a declared precision.
// Without it the declared precisions are taken as they are (phi_c = 1).
void uncertainty(const UncertaintyContext& run, const ParameterValues& best_values, const Eigen::VectorXd& d0) {
  const Prepared& p = run.prepared;
  CalibrationSummary& s = run.summary;
  const std::size_t n = p.free.size();
  const Eigen::Index N = p.points;
  // Sensitivities in unit coordinates: the least-squares stage's own Jacobian when it has one at
  // the optimum, else the exact one on the substeps of the run at the optimum (the model's derivative
  // version), or central differences on those frozen substeps (smooth in the parameters) where
  // there is none; then per physical unit: d/dtheta = d/du / (dtheta/du).
  Eigen::MatrixXd jac;
  std::vector<bool> have(n, true);
  if (run.unit_jacobian != nullptr) {
    jac = *run.unit_jacobian;
  } else {
    const JacobianTaken taken =
        take_jacobian(p, run.options.sensitivities, run.best_unit, d0, run.options.jacobian_step, Differences::central,
                      &run.at_optimum.plans(), run.on_lanes, jac, have);
    s.jacobian_evaluations += taken.simulations;
    ++(taken.exact ? s.exact_jacobians : s.difference_jacobians);
  }
  for (std::size_t k = 0; k < n; ++k) {
    const int free_index = static_cast<int>(k);
    jac.col(static_cast<Eigen::Index>(k)) /= p.slope(free_index, best_values[static_cast<std::size_t>(p.free[k])]);
    if (!have[k])
      s.warnings.push_back("The sensitivity of " + p.names[static_cast<std::size_t>(p.free[k])] +
                           " could not be computed (the simulations next to the optimum failed); it has no interval.");
  }
  Eigen::VectorXd var_y, up, down;
  if (!point_noise(p, run.at_optimum, run.options, var_y, up, down)) {
    s.warnings.push_back("The simulation at the optimum could not be repeated for the noise model: no intervals.");
    return;
  }
  // Per point: a_i = w / range^2, its weight in the objective; the loss's rho'(e^2) and psi'(e);
  // V_i = sigma_y^2 + the x term (the mean of the squared one-sided changes over +- sigma_x).
  Eigen::VectorXd a(N), a_curv(N), rho1(N), V(N), phi(N);
  {
    Eigen::Index k = 0;
    const double share = 1.0 - static_cast<double>(n) / static_cast<double>(std::max<Eigen::Index>(N, 1));
    const Loss kind = run.options.loss;
    const double c_loss = run.options.loss_scale;
    for (const auto& t : p.tests)
      for (const auto& c : t.curves) {
        double scatter = 0.0, count = 0.0;
        const Eigen::Index k0 = k;
        for (std::size_t j = 0; j < c.xs.size(); ++j, ++k) {
          const double d = d0[k];
          const double z = (d / c.range) * (d / c.range);
          a[k] = c.weight / (c.range * c.range);
          rho1[k] = loss_weight(kind, z, c_loss);
          a_curv[k] = a[k] * loss_curvature(kind, z, c_loss);
          V[k] = var_y[k] + 0.5 * (up[k] * up[k] + down[k] * down[k]);
          const double psi = rho1[k] * d;  // in the unit of the curve
          scatter += psi * psi / V[k];
          count += rho1[k] * rho1[k];
        }
        // The curve's noise level relative to the declared precisions (1 = as declared).
        const double level = run.options.noise_from_residuals ? scatter / std::max(1e-300, count * share) : 1.0;
        for (Eigen::Index j = k0; j < k; ++j) phi[j] = level;
      }
  }
  const Eigen::MatrixXd aj = a.asDiagonal() * jac;
  const Eigen::MatrixXd H = jac.transpose() * (a_curv.asDiagonal() * jac);
  // G^T Omega G over the groups of points that share a measured row (Omega is block diagonal):
  // Omega_kl = sqrt(phi_k phi_l) rho'_k rho'_l [delta_kl sigma_y,k^2 + (up_k up_l + down_k down_l) / 2].
  Eigen::MatrixXd M = Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
  for (const std::vector<Eigen::Index>& g : row_groups(p))
    for (Eigen::Index k : g)
      for (Eigen::Index l : g) {
        const double x_term = 0.5 * (up[k] * up[l] + down[k] * down[l]);
        const double omega =
            std::sqrt(phi[k] * phi[l]) * rho1[k] * rho1[l] * ((k == l ? var_y[k] : 0.0) + x_term);
        if (omega != 0.0) M.noalias() += omega * aj.row(k).transpose() * aj.row(l);
      }
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
