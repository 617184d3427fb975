#include "triaxcal/interpret.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "triaxcal/conventions.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

std::string to_string(FailureCriterion c) {
  switch (c) {
    case FailureCriterion::max_deviator: return "max-deviator";
    case FailureCriterion::max_stress_ratio: return "max-stress-ratio";
    case FailureCriterion::limiting_strain: return "strain";
    case FailureCriterion::end_of_test: return "end";
  }
  return "?";
}

void InterpretOptions::validate() const {
  auto fail = [](const std::string& field, double v, const std::string& rule) {
    throw InputError("interpret options: " + field + " = " + format_number(v) + " " + rule);
  };
  if (!(limiting_strain > 0.0 && limiting_strain < 1.0)) fail("limiting_strain", limiting_strain, "must be in (0, 1) (a decimal)");
  if (!(stress_low >= 0.0)) fail("stress_low", stress_low, "must be 0 or more (kPa)");
  if (!(stress_high > stress_low)) fail("stress_high", stress_high, "must be above stress_low (kPa)");
  if (!std::isnan(design_stress) && !(design_stress > 0.0)) fail("design_stress", design_stress, "must be positive (kPa)");
  if (!(reference_pressure > 0.0)) fail("reference_pressure", reference_pressure, "must be positive (kPa)");
}

double student_t95(int dof) {
  // One-sided 95 % quantiles of Student's t (standard tables, value from memory, checked against
  // the normal limit 1.6449); beyond 30 degrees of freedom the Cornish-Fisher expansion.
  static constexpr double table[] = {6.314, 2.920, 2.353, 2.132, 2.015, 1.943, 1.895, 1.860, 1.833, 1.812,
                                     1.796, 1.782, 1.771, 1.761, 1.753, 1.746, 1.740, 1.734, 1.729, 1.725,
                                     1.721, 1.717, 1.714, 1.711, 1.708, 1.706, 1.703, 1.701, 1.699, 1.697};
  if (dof < 1) return std::numeric_limits<double>::quiet_NaN();
  if (dof <= 30) return table[dof - 1];
  const double z = 1.6448536269514722, v = dof;
  return z + (z * z * z + z) / (4 * v) + (5 * std::pow(z, 5) + 16 * z * z * z + 3 * z) / (96 * v * v);
}

LineFit fit_line(const std::vector<double>& x, const std::vector<double>& y) {
  LineFit f;
  const std::size_t n = x.size();
  f.n = static_cast<int>(n);
  if (n < 2 || y.size() != n) return f;
  const double mx = std::accumulate(x.begin(), x.end(), 0.0) / static_cast<double>(n);
  const double my = std::accumulate(y.begin(), y.end(), 0.0) / static_cast<double>(n);
  double sxx = 0, sxy = 0, syy = 0;
  for (std::size_t i = 0; i < n; ++i) {
    sxx += (x[i] - mx) * (x[i] - mx);
    sxy += (x[i] - mx) * (y[i] - my);
    syy += (y[i] - my) * (y[i] - my);
  }
  f.x_min = *std::min_element(x.begin(), x.end());
  f.x_max = *std::max_element(x.begin(), x.end());
  f.x_mean = mx;
  f.sxx = sxx;
  if (!(sxx > 0.0)) return f;
  f.slope = sxy / sxx;
  f.intercept = my - f.slope * mx;
  double sse = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double r = y[i] - f.intercept - f.slope * x[i];
    sse += r * r;
  }
  f.r2 = syy > 0.0 ? 1.0 - sse / syy : 1.0;
  if (n >= 3) {
    const double s2 = sse / static_cast<double>(n - 2);
    f.residual_sd = std::sqrt(s2);
    f.se_slope = std::sqrt(s2 / sxx);
    f.se_intercept = std::sqrt(s2 * (1.0 / static_cast<double>(n) + mx * mx / sxx));
    f.covariance = -mx * s2 / sxx;
  }
  return f;
}

namespace {

bool given(double v) { return !std::isnan(v); }
std::string fmt(double v) { return format_number(v); }

/// Fraction of peak q up to which the initial tangent is fitted (common practice, no source).
constexpr double kInitialFraction = 0.2;
/// Steady state at the end of a stage: the last 20 % of the stage strain changes q by at most
/// 3 % and (drained) the dilation rate is within +-0.05; the stage reached 10 % axial strain.
/// Common practice for identifying critical states from lab curves, no source.
constexpr double kSteadyWindow = 0.2, kSteadyQ = 0.03, kSteadyRate = 0.05, kSteadyStrain = 0.10;
/// Half-width (points) of the sliding regression for d e_v / d e_a.
constexpr int kRateHalfWidth = 2;

struct StageView {
  const Specimen* sp;
  int first, last;
  double dir;
  double e0;  // axial strain at the stage start
  std::size_t at(int i) const { return static_cast<std::size_t>(i); }
  double ea(int i) const { return dir * (sp->curves.axial_strain[at(i)] - e0); }
  double qd(int i) const { return dir * sp->curves.deviator_stress[at(i)]; }
  double s1(int i) const { return dir > 0 ? sp->curves.axial_stress[at(i)] : sp->curves.radial_stress[at(i)]; }
  double s3(int i) const { return dir > 0 ? sp->curves.radial_stress[at(i)] : sp->curves.axial_stress[at(i)]; }
};

FailurePoint make_point(const StageView& v, int i) {
  FailurePoint f;
  if (i < 0) return f;
  const ReducedCurves& c = v.sp->curves;
  f.index = i;
  f.axial_strain = v.ea(i);
  f.q = c.deviator_stress[v.at(i)];
  f.s1 = v.s1(i);
  f.s3 = v.s3(i);
  f.p = c.mean_stress[v.at(i)];
  f.s = 0.5 * (f.s1 + f.s3);
  f.t = 0.5 * std::abs(f.q);
  f.excess_pore_pressure = c.excess_pore_pressure[v.at(i)];
  f.cell_pressure = c.cell_pressure[v.at(i)];
  return f;
}

bool in_loop(const SpecimenStage& st, double e) {
  for (const auto& l : st.loops)
    if (e >= l.from_strain && e <= l.to_strain) return true;
  return false;
}

void interpret_stage(const Specimen& sp, int k, const InterpretOptions& o, StageInterpretation& r,
                     std::vector<std::string>& warnings) {
  const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
  const auto [first, last] = sp.stage_points(k);
  r.specimen = sp.id;
  r.stage = k;
  r.test = st.shear;
  r.direction = st.direction;
  r.points = last - first + 1;
  if (r.points <= 0) return;
  const ReducedCurves& c = sp.curves;
  StageView v{&sp, first, last, st.direction == ShearDirection::compression ? 1.0 : -1.0,
              c.axial_strain[static_cast<std::size_t>(first)]};
  const bool effective = given(c.radial_stress[static_cast<std::size_t>(first)]);
  r.consolidation_radial = effective ? v.s3(first) : kNotGiven;
  // Failure points.
  int imax_q = first, imax_r = -1;
  double best_ratio = -1.0;
  for (int i = first; i <= last; ++i) {
    if (v.qd(i) > v.qd(imax_q)) imax_q = i;
    if (effective && v.s3(i) > 0.0 && v.s1(i) / v.s3(i) > best_ratio) {
      best_ratio = v.s1(i) / v.s3(i);
      imax_r = i;
    }
  }
  r.by_max_deviator = make_point(v, imax_q);
  r.by_max_stress_ratio = make_point(v, imax_r);
  int icrit = imax_q;
  switch (o.criterion) {
    case FailureCriterion::max_deviator: icrit = imax_q; break;
    case FailureCriterion::max_stress_ratio: icrit = effective ? imax_r : imax_q; break;
    case FailureCriterion::limiting_strain: {
      icrit = -1;
      for (int i = first; i <= last && icrit < 0; ++i)
        if (v.ea(i) >= o.limiting_strain * (1.0 - 1e-9)) icrit = i;
      if (icrit < 0) {
        icrit = last;
        warnings.push_back("specimen '" + sp.id + "', stages[" + std::to_string(k) + "]: the test ends at " + fmt(v.ea(last)) +
                           " axial strain, below the limiting strain " + fmt(o.limiting_strain) + "; the last point is used");
      }
      break;
    }
    case FailureCriterion::end_of_test: icrit = last; break;
  }
  r.by_criterion = make_point(v, icrit);
  if (st.shear != ShearType::cd) {
    // c_u = (s1 - s3)_max / 2 (common practice, no source); phi_u = 0 assumed.
    const int iu = o.criterion == FailureCriterion::max_stress_ratio || o.criterion == FailureCriterion::max_deviator ? imax_q : icrit;
    r.undrained_strength = 0.5 * std::abs(c.deviator_stress[static_cast<std::size_t>(iu)]);
  }
  // Stiffness from the branch before the peak.
  const double q0 = v.qd(first);
  const double qpk = v.qd(imax_q);
  {
    std::vector<double> x, y;
    for (int i = first; i <= imax_q; ++i) {
      x.push_back(v.ea(i));
      y.push_back(v.qd(i));
      if (v.qd(i) - q0 >= kInitialFraction * (qpk - q0) && x.size() >= 2) break;
    }
    const LineFit f = fit_line(x, y);
    if (given(f.slope) && f.slope > 0.0) r.initial_stiffness = f.slope;
    const double q50 = q0 + 0.5 * (qpk - q0);
    for (int i = first + 1; i <= imax_q; ++i)
      if (v.qd(i) >= q50 && v.qd(i - 1) < q50) {
        const double w = (q50 - v.qd(i - 1)) / (v.qd(i) - v.qd(i - 1));
        const double e50 = v.ea(i - 1) + w * (v.ea(i) - v.ea(i - 1));
        if (e50 > 0.0) r.secant_stiffness_50 = (q50 - q0) / e50;
        break;
      }
  }
  for (const UnloadReloadLoop& l : st.loops) {
    int top = -1;
    for (int i = first; i < last && top < 0; ++i) {
      const double e = c.axial_strain[static_cast<std::size_t>(i)];
      if (e >= l.from_strain && e <= l.to_strain && v.ea(i + 1) < v.ea(i)) top = i;
    }
    if (top < 0) continue;
    int bottom = -1;
    for (int i = top + 1; i <= last; ++i) {
      const double e = c.axial_strain[static_cast<std::size_t>(i)];
      if (e < l.from_strain || e > l.to_strain) continue;
      if (bottom < 0 || v.qd(i) < v.qd(bottom)) bottom = i;
    }
    if (bottom >= 0 && v.ea(top) > v.ea(bottom)) r.unload_reload_stiffness.push_back((v.qd(top) - v.qd(bottom)) / (v.ea(top) - v.ea(bottom)));
  }
  // Dilatancy (drained): d = d e_v / d e_a by a sliding least-squares slope outside the loops.
  if (st.shear == ShearType::cd && effective) {
    std::vector<int> idx;
    for (int i = first; i <= last; ++i)
      if (!in_loop(st, c.axial_strain[static_cast<std::size_t>(i)])) idx.push_back(i);
    double dmin = std::numeric_limits<double>::infinity();
    double sum_rd = 0.0, sum_dd = 0.0;
    const int m = static_cast<int>(idx.size());
    for (int j = 0; j < m; ++j) {
      const int a = std::max(0, j - kRateHalfWidth), b = std::min(m - 1, j + kRateHalfWidth);
      if (b - a < 2) continue;
      std::vector<double> x, y;
      for (int jj = a; jj <= b; ++jj) {
        x.push_back(v.ea(idx[static_cast<std::size_t>(jj)]));
        y.push_back(c.volumetric_strain[static_cast<std::size_t>(idx[static_cast<std::size_t>(jj)])]);
      }
      const LineFit f = fit_line(x, y);
      if (!given(f.slope)) continue;
      const double d = v.dir * f.slope;  // both strains in the shear direction
      const int i = idx[static_cast<std::size_t>(j)];
      dmin = std::min(dmin, d);
      // Rowe (1962) stress-dilatancy R = K D, D = 1 - d e_v / d e_1 (compression positive), on
      // the plastic part of the curve (past 50 % of peak q).
      if (v.qd(i) - q0 >= 0.5 * (qpk - q0) && v.s3(i) > 0.0) {
        const double dd = 1.0 - d, rr = v.s1(i) / v.s3(i);
        r.dilatancy_d.push_back(dd);
        r.dilatancy_ratio.push_back(rr);
        sum_rd += rr * dd;
        sum_dd += dd * dd;
      }
    }
    if (dmin < std::numeric_limits<double>::infinity()) {
      r.max_dilation_rate = dmin;
      // Mohr-Coulomb flow rule in triaxial compression, elastic strains neglected:
      // d e_v / d e_1 = -2 sin psi / (1 - sin psi)  =>  sin psi = -d / (2 - d).
      r.dilation_angle = radians_to_degrees(std::asin(std::clamp(-dmin / (2.0 - dmin), -1.0, 1.0)));
    }
    if (sum_dd > 0.0) {
      const double kcv = sum_rd / sum_dd;
      r.phi_cv_rowe = radians_to_degrees(std::asin(std::clamp((kcv - 1.0) / (kcv + 1.0), -1.0, 1.0)));
    }
    if (given(sp.relative_density) && r.by_max_stress_ratio.index >= 0) {
      // Bolton (1986), "The strength and dilatancy of sands", Geotechnique 36(1): I_R = I_D (Q - ln p')
      // - R with Q = 10, R = 1 (p' in kPa), 0 <= I_R <= 4; triaxial phi_max - phi_crit = 3 I_R (deg).
      const double ir = std::clamp(sp.relative_density * (10.0 - std::log(r.by_max_stress_ratio.p)) - 1.0, 0.0, 4.0);
      r.bolton_index = ir;
      r.bolton_phi_difference = 3.0 * ir;
    }
    if (given(r.phi_cv_rowe) && r.by_max_stress_ratio.index >= 0) {
      const double rr = r.by_max_stress_ratio.s1 / r.by_max_stress_ratio.s3;
      r.measured_phi_difference = radians_to_degrees(std::asin((rr - 1.0) / (rr + 1.0))) - r.phi_cv_rowe;
    }
  }
  // End state and steady state.
  r.end_p = c.mean_stress[static_cast<std::size_t>(last)];
  r.end_q = c.deviator_stress[static_cast<std::size_t>(last)];
  r.end_void_ratio = c.void_ratio[static_cast<std::size_t>(last)];
  if (effective && v.ea(last) >= kSteadyStrain) {
    const double from = (1.0 - kSteadyWindow) * v.ea(last);
    int w = last;
    while (w > first && v.ea(w - 1) >= from) --w;
    const bool q_steady = std::abs(v.qd(last) - v.qd(w)) <= kSteadyQ * std::abs(v.qd(last));
    bool rate_steady = true;
    if (st.shear == ShearType::cd && v.ea(last) > v.ea(w)) {
      const double rate = (c.volumetric_strain[static_cast<std::size_t>(last)] - c.volumetric_strain[static_cast<std::size_t>(w)]) /
                          (v.ea(last) - v.ea(w));
      rate_steady = std::abs(rate) <= kSteadyRate;
    } else if (st.shear != ShearType::cd) {
      const double du = c.excess_pore_pressure[static_cast<std::size_t>(last)] - c.excess_pore_pressure[static_cast<std::size_t>(w)];
      rate_steady = std::abs(du) <= kSteadyQ * std::max(1.0, r.end_p);
    }
    r.steady_state = q_steady && rate_steady && last > w;
  }
  // Skempton (1954), "The pore-pressure coefficients A and B", Geotechnique 4(4):
  // du = B [d s3 + A (d s1 - d s3)]; constant cell pressure, B = 1 taken: A_f = du_f / dq_f.
  if (st.shear == ShearType::cu && r.by_criterion.index >= 0) {
    const double dq = c.deviator_stress[static_cast<std::size_t>(r.by_criterion.index)] - c.deviator_stress[static_cast<std::size_t>(first)];
    const double du = c.excess_pore_pressure[static_cast<std::size_t>(r.by_criterion.index)] - c.excess_pore_pressure[static_cast<std::size_t>(first)];
    if (std::abs(dq) > 0.0) r.skempton_a = du / dq;
  }
}

StrengthEnvelope fit_envelope(const Interpretation& res, FailureCriterion crit, const InterpretOptions& o,
                              std::vector<std::string>& warnings) {
  StrengthEnvelope env;
  env.criterion = crit;
  std::vector<double> s, t, pc, qc;
  for (const StageInterpretation& r : res.stages) {
    if (r.test == ShearType::uu) continue;
    const FailurePoint& f = crit == FailureCriterion::max_stress_ratio ? r.by_max_stress_ratio
                            : crit == FailureCriterion::max_deviator   ? r.by_max_deviator
                                                                       : r.by_criterion;
    UsedPoint u;
    u.specimen = r.specimen;
    u.stage = r.stage;
    u.s = f.s;
    u.t = f.t;
    if (f.index < 0 || !given(f.s)) {
      u.reason = "no effective-stress failure point";
    } else if (f.s < o.stress_low || f.s > o.stress_high) {
      u.reason = "s' = " + fmt(f.s) + " kPa is outside the stress range [" + fmt(o.stress_low) + ", " + fmt(o.stress_high) + "] kPa";
    } else {
      u.used = true;
      s.push_back(f.s);
      t.push_back(f.t);
      if (r.direction == ShearDirection::compression) {
        pc.push_back(f.p);
        qc.push_back(f.q);
      }
    }
    env.points.push_back(u);
  }
  if (s.size() < 2) {
    env.note = "fewer than 2 failure points in the stress range: no envelope";
    return env;
  }
  env.st = fit_line(s, t);
  if (!given(env.st.slope) || !(std::abs(env.st.slope) < 1.0)) {
    env.note = "the s'-t points give no admissible slope (|tan alpha| must be below 1)";
    return env;
  }
  // s'-t: t = a + s' tan(alpha), sin phi' = tan(alpha), c' = a / cos phi' (Mohr-Coulomb in
  // principal stresses, common practice).
  const double b = env.st.slope, a = env.st.intercept;
  const double phi = std::asin(b), cphi = std::cos(phi);
  env.phi = radians_to_degrees(phi);
  env.cohesion = a / cphi;
  if (given(env.st.se_slope)) {
    env.se_phi = radians_to_degrees(env.st.se_slope / cphi);
    const double dca = 1.0 / cphi, dcb = a * b / (cphi * cphi * cphi);
    const double var = dca * dca * env.st.se_intercept * env.st.se_intercept + dcb * dcb * env.st.se_slope * env.st.se_slope +
                       2.0 * dca * dcb * env.st.covariance;
    env.se_cohesion = std::sqrt(std::max(0.0, var));
    // Conservative design line: through the lower one-sided 95 % confidence bound of the regression
    // mean at the smallest and largest s' used.
    const double tq = student_t95(env.st.n - 2);
    auto lower = [&](double x) {
      const double se = env.st.residual_sd *
                        std::sqrt(1.0 / env.st.n + (x - env.st.x_mean) * (x - env.st.x_mean) / env.st.sxx);
      return a + b * x - tq * se;
    };
    const double x1 = env.st.x_min, x2 = env.st.x_max;
    const double bd = (lower(x2) - lower(x1)) / (x2 - x1);
    const double ad = lower(x1) - bd * x1;
    if (std::abs(bd) < 1.0) {
      env.design_phi = radians_to_degrees(std::asin(bd));
      env.design_cohesion = ad / std::cos(std::asin(bd));
    }
  }
  if (env.cohesion < 0.0)
    warnings.push_back("envelope (" + to_string(crit) + "): negative cohesion intercept c' = " + fmt(env.cohesion) +
                       " kPa; the points do not support a cohesion");
  if (pc.size() >= 2) {
    env.pq = fit_line(pc, qc);
    if (given(env.pq.slope)) {
      // p'-q: q = d + M p'; sin phi' = 3M/(6+M), c' = d (3 - sin phi')/(6 cos phi') (triaxial compression).
      const double mm = env.pq.slope;
      const double sp = 3.0 * mm / (6.0 + mm);
      if (std::abs(sp) < 1.0) {
        env.phi_pq = radians_to_degrees(std::asin(sp));
        env.cohesion_pq = env.pq.intercept * (3.0 - sp) / (6.0 * std::cos(std::asin(sp)));
      }
    }
  }
  if (o.curved_envelope) {
    std::vector<double> ls, lt;
    for (std::size_t i = 0; i < s.size(); ++i)
      if (s[i] > 0.0 && t[i] > 0.0) {
        ls.push_back(std::log(s[i] / o.reference_pressure));
        lt.push_back(std::log(t[i] / o.reference_pressure));
      }
    const LineFit f = fit_line(ls, lt);
    if (given(f.slope)) {
      env.power_a = std::exp(f.intercept);
      env.power_b = f.slope;
    }
  }
  return env;
}

StiffnessLaw fit_stiffness(const std::vector<double>& s3, const std::vector<double>& e, double pref, const std::string& basis) {
  StiffnessLaw law;
  law.basis = basis;
  std::vector<double> x, y;
  for (std::size_t i = 0; i < s3.size(); ++i)
    if (s3[i] > 0.0 && e[i] > 0.0) {
      x.push_back(std::log(s3[i] / pref));
      y.push_back(std::log(e[i]));
    }
  law.n = static_cast<int>(x.size());
  const LineFit f = fit_line(x, y);
  if (given(f.slope)) {
    law.reference = std::exp(f.intercept);
    law.exponent = f.slope;
    law.r2 = f.r2;
  }
  return law;
}

/// lambda, kappa and the constrained modulus of an oedometer stage (see the note in interpret()).
Interpretation::Compressibility interpret_oedometer(const Specimen& sp, int k, double stress) {
  Interpretation::Compressibility cm;
  cm.specimen = sp.id;
  cm.stage = k;
  cm.basis = "oedometer: e - ln s_a' (s_a' as a proxy of p')";
  cm.constrained_modulus_stress = stress;
  const auto [first, last] = sp.stage_points(k);
  if (last - first + 1 < 2) return cm;
  const auto& sa = sp.curves.axial_stress;
  const auto& ea = sp.curves.axial_strain;
  const auto& e = sp.curves.void_ratio;
  const auto at = [](int i) { return static_cast<std::size_t>(i); };
  // First loading: from the first point up to the first turning point (largest stress before a decrease).
  int top = last;
  for (int i = first; i < last; ++i)
    if (sa[at(i + 1)] < sa[at(i)]) {
      top = i;
      break;
    }
  const double smax = sa[at(top)];
  {
    std::vector<double> x, y;
    double running = 0.0;
    for (int i = first; i <= top; ++i) {
      if (sa[at(i)] < running) continue;
      running = sa[at(i)];
      if (sa[at(i)] >= 0.25 * smax && given(e[at(i)])) {
        x.push_back(std::log(sa[at(i)]));
        y.push_back(e[at(i)]);
      }
    }
    if (x.size() >= 2) cm.lambda = -fit_line(x, y).slope;
  }
  if (top < last) {
    std::vector<double> x, y;
    for (int i = top; i <= last && (i == top || sa[at(i)] < sa[at(i - 1)]); ++i)
      if (given(e[at(i)])) {
        x.push_back(std::log(sa[at(i)]));
        y.push_back(e[at(i)]);
      }
    if (x.size() >= 2) cm.kappa = -fit_line(x, y).slope;
  }
  for (int i = first; i < top; ++i) {
    const double a = sa[at(i)], b = sa[at(i + 1)];
    if (a < stress && stress <= b && ea[at(i + 1)] > ea[at(i)]) {
      cm.constrained_modulus = stress * std::log(b / a) / (ea[at(i + 1)] - ea[at(i)]);
      break;
    }
  }
  cm.compression_index = cm.lambda * std::log(10.0);
  cm.swelling_index = cm.kappa * std::log(10.0);
  return cm;
}

}  // namespace

Interpretation interpret(const TestSeries& series, const InterpretOptions& o) {
  o.validate();
  Interpretation res;
  res.series = series.source;
  res.options = o;
  for (const Specimen& sp : series.specimens) {
    if (!o.material.empty() && sp.material != o.material) continue;
    if (std::find(res.materials.begin(), res.materials.end(), sp.material) == res.materials.end())
      res.materials.push_back(sp.material);
    if (given(sp.b_value)) res.b_values.push_back({sp.id, sp.b_value});
    for (int k : sp.shear_stages()) {
      StageInterpretation r;
      interpret_stage(sp, k, o, r, res.warnings);
      res.stages.push_back(r);
    }
    // Compressibility from consolidation stages with data: e against ln p'.
    for (std::size_t k = 0; k < sp.stages.size(); ++k) {
      if (sp.stages[k].type != SpecimenStageType::consolidation) continue;
      const auto [first, last] = sp.stage_points(static_cast<int>(k));
      if (last - first + 1 < 3) continue;
      std::vector<double> xl, yl, xu, yu;
      double pmax = 0.0;
      for (int i = first; i <= last; ++i) {
        const double p = sp.curves.mean_stress[static_cast<std::size_t>(i)];
        const double e = sp.curves.void_ratio[static_cast<std::size_t>(i)];
        if (!(p > 0.0) || !given(e)) continue;
        if (p >= pmax) {
          xl.push_back(std::log(p));
          yl.push_back(e);
          pmax = p;
        } else {
          xu.push_back(std::log(p));
          yu.push_back(e);
        }
      }
      Interpretation::Compressibility cm;
      cm.specimen = sp.id;
      cm.stage = static_cast<int>(k);
      cm.basis = "consolidation: e - ln p'";
      if (xl.size() >= 3) cm.lambda = -fit_line(xl, yl).slope;
      if (xu.size() >= 2) {
        // The unloading branch starts at the largest p' reached.
        xu.insert(xu.begin(), std::log(pmax));
        yu.insert(yu.begin(), yl.back());
        cm.kappa = -fit_line(xu, yu).slope;
      }
      if (given(cm.lambda) || given(cm.kappa)) {
        cm.compression_index = cm.lambda * std::log(10.0);
        cm.swelling_index = cm.kappa * std::log(10.0);
        res.compressibility.push_back(cm);
      }
    }
    for (int k : sp.oedometer_stages()) {
      Interpretation::Compressibility cm = interpret_oedometer(sp, k, o.reference_pressure);
      if (given(cm.lambda) || given(cm.kappa) || given(cm.constrained_modulus)) res.compressibility.push_back(cm);
      else res.warnings.push_back(sp.id + " stages[" + std::to_string(k) + "] (oedometer): no lambda, kappa or constrained modulus (too few loading or unloading points, or no void ratio)");
    }
  }
  {
    bool any_oedometer = false;
    for (const auto& c : res.compressibility) any_oedometer = any_oedometer || c.basis.rfind("oedometer", 0) == 0;
    if (any_oedometer)
      res.notes.push_back(
          "oedometer: lambda from e - ln s_a' on the first-loading points at the largest s_a' so far with s_a' >= s_a'max / 4, "
          "kappa from the first unloading branch (from its turning point); the vertical effective stress s_a' is used as a "
          "proxy of p' (on the normal compression line K0 is constant, so the slopes in ln s_a' and ln p' agree; on "
          "unloading K0 rises, p' falls less than s_a', and kappa from s_a' underestimates kappa in e - ln p', for a "
          "Modified Cam-Clay soil by half or more over a tenfold unloading: fit the model to the oedometer curve for kappa): "
          "common practice, no source. C_c = lambda ln 10 and "
          "C_s = kappa ln 10 (e - log10 s_a'). Constrained modulus E_oed = d s_a'/d e_a (e_a from the reference height) at "
          "s_a' = p_ref on the first loading, interpolated as s_a' d(ln s_a')/d e_a over the step that spans p_ref");
  }
  if (!o.material.empty() && res.materials.empty()) {
    std::string list;
    for (const Specimen& sp : series.specimens)
      if (list.find("'" + sp.material + "'") == std::string::npos) list += (list.empty() ? "" : ", ") + ("'" + sp.material + "'");
    throw InputError(series.source + ": no specimen has material '" + o.material + "' (found: " + list + ")");
  }
  if (res.materials.size() > 1)
    res.warnings.push_back("the specimens belong to " + std::to_string(res.materials.size()) +
                           " materials; envelopes and laws mix them (select one with the material option)");
  // UU.
  {
    std::vector<double> cu;
    for (const StageInterpretation& r : res.stages)
      if (r.test == ShearType::uu && given(r.undrained_strength)) cu.push_back(r.undrained_strength);
    res.uu_count = static_cast<int>(cu.size());
    if (!cu.empty()) {
      res.cu_mean = std::accumulate(cu.begin(), cu.end(), 0.0) / static_cast<double>(cu.size());
      res.cu_min = *std::min_element(cu.begin(), cu.end());
      res.cu_max = *std::max_element(cu.begin(), cu.end());
      res.notes.push_back("UU: c_u = (s1 - s3)_max / 2 per specimen, phi_u = 0 assumed (total stresses, common practice)");
    }
  }
  // Envelopes: the declared criterion, then the other of the two common ones.
  res.envelopes.push_back(fit_envelope(res, o.criterion, o, res.warnings));
  for (FailureCriterion c : {FailureCriterion::max_deviator, FailureCriterion::max_stress_ratio})
    if (c != o.criterion) res.envelopes.push_back(fit_envelope(res, c, o, res.warnings));
  res.notes.push_back("envelope: t = a + s' tan(alpha) by least squares, s' = (s1'+s3')/2, t = (s1'-s3')/2; sin phi' = tan alpha, "
                      "c' = a / cos phi'; p'-q route on compression tests: sin phi' = 3M/(6+M), c' = d (3 - sin phi')/(6 cos phi')");
  res.notes.push_back("design line: the straight line through the lower one-sided 95 % confidence bound of the regression mean "
                      "at the smallest and the largest s' used (Student t, n - 2 degrees of freedom)");
  if (given(o.design_stress)) {
    const StrengthEnvelope& env = res.envelopes.front();
    if (given(env.phi)) {
      // Normal effective stress on the failure plane: sigma'_nf = s' - t sin phi'.
      const double sphi = std::sin(degrees_to_radians(env.phi));
      double lowest = std::numeric_limits<double>::infinity();
      for (const UsedPoint& u : env.points) {
        if (!u.used) continue;
        const double sn = u.s - u.t * sphi;
        lowest = std::min(lowest, sn);
        if (sn > 2.0 * o.design_stress)
          res.warnings.push_back("specimen '" + u.specimen + "', stages[" + std::to_string(u.stage) +
                                 "]: normal effective stress on the failure plane " + fmt(sn) + " kPa is above twice the design stress " +
                                 fmt(o.design_stress) + " kPa");
      }
      if (lowest > o.design_stress)
        res.warnings.push_back("no test reaches the design stress: the lowest normal effective stress on a failure plane is " +
                               fmt(lowest) + " kPa, above " + fmt(o.design_stress) +
                               " kPa; the envelope is extrapolated to the design range");
      res.notes.push_back("design stress " + fmt(o.design_stress) +
                          " kPa: tests are flagged when sigma'_nf = s' - t sin phi' exceeds twice it, and the series when no test "
                          "is at or below it (common practice, no source)");
    }
  }
  // Stiffness laws: E = E_ref (s3'/p_ref)^m.
  {
    std::vector<double> s3, e50, s3ur, eur;
    for (const StageInterpretation& r : res.stages) {
      if (r.test != ShearType::cd) continue;
      if (given(r.secant_stiffness_50)) {
        s3.push_back(r.consolidation_radial);
        e50.push_back(r.secant_stiffness_50);
      }
      for (double e : r.unload_reload_stiffness) {
        s3ur.push_back(r.consolidation_radial);
        eur.push_back(e);
      }
    }
    res.secant_law = fit_stiffness(s3, e50, o.reference_pressure, "E_50 of the CD stages");
    res.unload_reload_law = fit_stiffness(s3ur, eur, o.reference_pressure, "E_ur of the loops of CD stages");
  }
  // Critical state: steady end states of compression stages, q = M p' through the origin.
  {
    double sqp = 0, spp = 0;
    std::vector<double> lp, ee, cv;
    for (const StageInterpretation& r : res.stages) {
      if (given(r.phi_cv_rowe)) cv.push_back(r.phi_cv_rowe);
      if (!r.steady_state || r.direction != ShearDirection::compression) continue;
      ++res.cs_count;
      sqp += r.end_q * r.end_p;
      spp += r.end_p * r.end_p;
      if (given(r.end_void_ratio) && r.end_p > 0.0) {
        lp.push_back(std::log(r.end_p));
        ee.push_back(r.end_void_ratio);
      }
    }
    if (spp > 0.0) {
      res.critical_m = sqp / spp;
      res.phi_cs = radians_to_degrees(std::asin(3.0 * res.critical_m / (6.0 + res.critical_m)));
    }
    if (lp.size() >= 2) res.csl = fit_line(lp, ee);
    if (!cv.empty()) res.phi_cv_rowe = std::accumulate(cv.begin(), cv.end(), 0.0) / static_cast<double>(cv.size());
  }
  return res;
}

}  // namespace triaxcal
