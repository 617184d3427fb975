#include "triaxcal/interpret.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <numeric>

#include "triaxcal/conventions.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

#include "local_rate.hpp"

namespace triaxcal {

const char* const kDesignLineRule =
    "our rule, no source: the chord of the lower one-sided 95 % confidence bound of the s'-t regression mean (Student t, "
    "n - 2 degrees of freedom) between the smallest and the largest s' used, no steeper than the best fit (else the "
    "best-fit slope, under the bound at both ends); where that line's or the regression's intercept is negative, c' = 0 "
    "and the secant from the origin to the bound at the largest s' used (no steeper than the best fit), which lies under "
    "any concave envelope through the origin above the bound there; 3 or more failure points";

const char* const kDesignStressRule =
    "common practice, no source: sigma'_nf = s' - t sin phi' is the normal effective stress on the failure plane at the "
    "declared criterion's failure point (phi' of that criterion's envelope); a test is flagged 'above' when sigma'_nf "
    "exceeds the design stress and 'above twice' when it exceeds twice it; the series is flagged when no test is at or "
    "below the design stress (the envelope is then extrapolated to the design range)";

const char* const kSecantAtDesignRule =
    "common practice, no source: the secant friction angle with c' = 0 through the envelope at the design stress "
    "sigma'_d, tan phi'_sec = (c' + sigma'_d tan phi') / sigma'_d; it equals the envelope's strength at sigma'_d and "
    "over-predicts it below sigma'_d when c' > 0";

const char* const kSteadyStateRule =
    "a stage ends in a steady (critical) state when it reached 10 % axial strain and over the last 20 % of its stage strain q "
    "changes by at most 3 % and the dilation rate d eps_v/d eps_a stays within +-0.05 (drained) or the excess pore pressure "
    "changes by at most 3 % of p' (undrained) (common practice for critical states from lab curves, no source)";
const char* const kSandStateRule =
    "psi = e - e_c(p') at the start of shear (Been & Jefferies 1985); phase transformation: least p' followed by a rise of 2 % "
    "(and 1 kPa); instability: first peak of q followed by a fall of more than 5 % while p' falls (common practice, no source)";
const char* const kOriginRegressionRule =
    "common practice, no source: least squares of t on s' with no intercept, tan alpha_0 = sum(s' t) / sum(s'^2), "
    "sin phi'_0 = tan alpha_0, c' = 0; its standard error s_0 / sqrt(sum s'^2) with s_0^2 = SSE / (n - 1)";

std::string to_string(DesignStressFlag flag) {
  switch (flag) {
    case DesignStressFlag::not_checked: return "not checked";
    case DesignStressFlag::within: return "at or below";
    case DesignStressFlag::above: return "above";
    case DesignStressFlag::above_twice: return "above twice";
  }
  return "?";
}

std::string to_string(DesignLineForm form) {
  switch (form) {
    case DesignLineForm::not_determined: return "not determined";
    case DesignLineForm::lower_bound: return "lower-bound chord";
    case DesignLineForm::origin_secant: return "c' = 0, secant from the origin";
  }
  return "?";
}

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
  if (!std::isnan(design_stress) && !(design_stress > 0.0 && std::isfinite(design_stress)))
    fail("design_stress", design_stress, "must be positive and finite (kPa), or NaN for none");
  if (!(reference_pressure > 0.0 && std::isfinite(reference_pressure)))
    fail("reference_pressure", reference_pressure, "must be positive and finite (kPa)");
  for (const LeftOut& l : left_out) {
    if (l.specimen.empty()) throw InputError("interpret options: left_out: a specimen id is empty");
    if (l.shear_stage < 0)
      throw InputError("interpret options: left_out '" + l.specimen + "': shear stage " + std::to_string(l.shear_stage) +
                       " must be 1 or more (0: the whole specimen)");
    if (l.reason.empty())
      throw InputError("interpret options: left_out '" + l.specimen + "': give the reason (the outputs repeat it)");
  }
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
/// v with `decimals` decimals (for reasons that quote a measured value).
std::string fixed(double v, int decimals) {
  char b[48];
  std::snprintf(b, sizeof b, "%.*f", decimals, v);
  return b;
}

/// Fraction of peak q up to which the initial tangent is fitted (common practice, no source).
constexpr double kInitialFraction = 0.2;
/// Steady state at the end of a stage: the last 20 % of the stage strain changes q by at most
/// 3 % and (drained) the dilation rate is within +-0.05; the stage reached 10 % axial strain.
/// Common practice for identifying critical states from lab curves, no source.
constexpr double kSteadyWindow = 0.2, kSteadyQ = 0.03, kSteadyRate = 0.05, kSteadyStrain = 0.10;
/// A power law or a semi-log line needs stresses that span at least this factor (largest / smallest)
/// to determine its slope (common practice, no source).
constexpr double kMinStressSpan = 1.25;
/// Atmospheric pressure of the power-law critical-state line, kPa (the sand model's p_at).
constexpr double kAtmosphericPressure = 101.325;
/// Phase transformation: p' rises after its least value by at least 2 % of it (and 1 kPa); instability:
/// q falls after a peak by more than 5 % of it. Thresholds against noise, common practice, no source.
constexpr double kPhaseRise = 0.02, kInstabilityDrop = 0.05;
/// A trend against the state parameter needs states that span at least 0.05 (common practice, no source).
constexpr double kMinPsiSpan = 0.05;

/// phi' (deg) of a cohesionless soil from the stress ratio R = s1'/s3': sin phi' = (R - 1)/(R + 1) (Mohr-Coulomb).
double friction_angle_from_ratio(double rr) { return radians_to_degrees(std::asin((rr - 1.0) / (rr + 1.0))); }

/// The curves of one stage in the shear direction. The series gives every point's strains as
/// engineering strains relative to the specimen at the start of the point's own stage (series.hpp).
struct StageView {
  const Specimen* sp;
  int first, last;
  double dir;
  std::size_t at(int i) const { return static_cast<std::size_t>(i); }
  double ea(int i) const { return dir * sp->curves.axial_strain[at(i)]; }
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

/// Dilatancy of a drained stage from its points outside unload-reload loops: the local rates
/// d = d eps_v / d eps_a (local_rate.hpp), the most negative of them (over windows that lie within the
/// data) and psi from it, Rowe's phi_cv from the rates past 50 % of the peak q.
void interpret_dilatancy(const Specimen& sp, const SpecimenStage& st, const StageView& v, double q0, double qpk,
                         StageInterpretation& r) {
  const ReducedCurves& c = sp.curves;
  const bool compression = v.dir > 0.0;
  // Natural strains from the stage start, axial in the shear direction: eps = -ln(1 - e) for the
  // engineering stage strain e (conventions.hpp). A flow rule relates strain increments of the
  // current specimen, which natural strains add up exactly; engineering strains give rates that
  // differ by (1 - e_v) / (1 - e_a), 4 % at e_a = 3 %, e_v = -1 %.
  std::vector<int> idx;
  std::vector<double> x, y;
  for (int i = v.first; i <= v.last; ++i) {
    const double a = c.axial_strain[v.at(i)], e = c.volumetric_strain[v.at(i)];
    if (in_loop(st, a) || !(a < 1.0) || !(e < 1.0)) continue;
    idx.push_back(i);
    x.push_back(v.dir * natural_strain(a));
    y.push_back(natural_strain(e));
  }
  const int m = static_cast<int>(idx.size());
  const detail::LocalRates lr = detail::local_rates(x, y);
  r.dilation_window.width = lr.width;
  r.dilation_window.noise = lr.noise;
  // In extension at constant radial stress the elastic volume change is itself dilative
  // (d eps_v = (1 - 2 nu) d eps_a with d eps_a < 0), so the flow rule, which neglects elastic strains,
  // is read only on windows whose ends have q within 10 % of its peak (the stress, and so the elastic strain, changes
  // little there; our rule, no source). In compression elastic strains are contractive and never the
  // peak dilation.
  auto near_peak_q = [&](int j) { return v.qd(idx[static_cast<std::size_t>(j)]) - q0 >= 0.9 * (qpk - q0); };
  auto candidate = [&](int j) {
    const std::size_t uj = static_cast<std::size_t>(j);
    return lr.full[uj] && given(lr.rate[uj]) && (compression || (near_peak_q(lr.first[uj]) && near_peak_q(lr.last[uj])));
  };
  int best = -1;
  for (int j = 0; j < m; ++j)
    if (candidate(j) && (best < 0 || lr.rate[static_cast<std::size_t>(j)] < lr.rate[static_cast<std::size_t>(best)])) best = j;
  if (best < 0) {
    r.dilation_reason = m < detail::kRateMinPoints
                            ? std::to_string(m) + " points outside unload-reload loops: a local rate needs " +
                                  std::to_string(detail::kRateMinPoints) + " or more"
                            : "no window of " + fmt(lr.width) + " axial strain within the data holds " +
                                  std::to_string(detail::kRateMinPoints) + " points" +
                                  (compression ? "" : " where q is within 10 % of its peak (extension)");
  } else {
    // The most negative local rate is biased high in magnitude when many windows share the same
    // true rate (the least of many noisy estimates). The peak rate is therefore the least-squares
    // slope over the stretch around it where the local rates stay within two standard errors
    // (the median of the windows') of the least: one window at a sharp peak, the whole plastic
    // branch of a Mohr-Coulomb curve (our rule, no source).
    std::vector<double> ses;
    for (int j = 0; j < m; ++j)
      if (lr.full[static_cast<std::size_t>(j)] && given(lr.se[static_cast<std::size_t>(j)])) ses.push_back(lr.se[static_cast<std::size_t>(j)]);
    std::sort(ses.begin(), ses.end());
    const double tol = ses.empty() ? 0.0 : 2.0 * ses[ses.size() / 2];
    const double least = lr.rate[static_cast<std::size_t>(best)];
    auto near_peak = [&](int j) {
      const std::size_t uj = static_cast<std::size_t>(j);
      return j >= 0 && j < m && candidate(j) && lr.rate[uj] <= least + tol;
    };
    int lo = best, hi = best;
    while (near_peak(lo - 1)) --lo;
    while (near_peak(hi + 1)) ++hi;
    const std::size_t from = static_cast<std::size_t>(lr.first[static_cast<std::size_t>(lo)]);
    const std::size_t to = static_cast<std::size_t>(lr.last[static_cast<std::size_t>(hi)]);
    const LineFit f = fit_line(std::vector<double>(x.begin() + static_cast<std::ptrdiff_t>(from), x.begin() + static_cast<std::ptrdiff_t>(to) + 1),
                               std::vector<double>(y.begin() + static_cast<std::ptrdiff_t>(from), y.begin() + static_cast<std::ptrdiff_t>(to) + 1));
    const double d = f.slope;
    r.max_dilation_rate = d;
    r.max_dilation_rate_se = f.se_slope;
    r.dilation_window.from = v.ea(idx[from]);
    r.dilation_window.to = v.ea(idx[to]);
    r.dilation_window.points = static_cast<int>(to - from + 1);
    // Mohr-Coulomb plastic potential on the triaxial edge (two planes, equal multipliers), elastic
    // increments neglected, K_psi = (1 + sin psi)/(1 - sin psi) (hand calculation):
    //   compression: d = 1 - K_psi = -2 sin psi / (1 - sin psi)   =>  sin psi = -d / (2 - d);
    //   extension (axial strain the minor principal strain, d in the shear direction):
    //   d = 1 / K_psi - 1 = -2 sin psi / (1 + sin psi)              =>  sin psi = -d / (2 + d).
    const double sin_psi = compression ? -d / (2.0 - d) : -d / (2.0 + d);
    if (!(d < 0.0))
      r.dilation_reason = "no dilation: the most negative rate d eps_v/d eps_a is " + fmt(d) + " (the specimen contracts throughout)";
    else if (!(sin_psi < 1.0))
      r.dilation_reason = "the rate d eps_v/d eps_a = " + fmt(d) + " is beyond the flow rule's range (sin psi = " + fmt(sin_psi) + ")";
    else
      r.dilation_angle = radians_to_degrees(std::asin(sin_psi));
  }
  // Rowe (1962) stress-dilatancy R = K D, D = 1 - d eps_v / d eps_1 (compression positive), on the
  // plastic part of the curve (past 50 % of peak q); K = tan^2(45 + phi_cv/2) by least squares
  // through the origin. Triaxial compression only: in extension eps_1 is the radial strain.
  if (!compression) {
    r.phi_cv_reason = "extension stage: Rowe's relation is applied to compression stages";
    return;
  }
  double sum_rd = 0.0, sum_dd = 0.0;
  for (int j = 0; j < m; ++j) {
    const std::size_t uj = static_cast<std::size_t>(j);
    const int i = idx[uj];
    if (!given(lr.rate[uj]) || !(v.qd(i) - q0 >= 0.5 * (qpk - q0)) || !(v.s3(i) > 0.0)) continue;
    const double dd = 1.0 - lr.rate[uj], rr = v.s1(i) / v.s3(i);
    r.dilatancy_d.push_back(dd);
    r.dilatancy_ratio.push_back(rr);
    sum_rd += rr * dd;
    sum_dd += dd * dd;
  }
  if (!(sum_dd > 0.0)) {
    r.phi_cv_reason = "no local rate past 50 % of the peak deviator stress";
    return;
  }
  const double kcv = sum_rd / sum_dd;
  if (!(kcv > 1.0)) {
    r.phi_cv_reason = "Rowe's K = R/D is " + fmt(kcv) + ", not above 1";
    return;
  }
  r.phi_cv_rowe = radians_to_degrees(std::asin((kcv - 1.0) / (kcv + 1.0)));
}

/// Tolerance of the check of a lab's reported failure values against the curve's (our rule, no
/// source): 2 % of the reported deviator stress, at least 2 kPa.
constexpr double kReportedRel = 0.02, kReportedAbs = 2.0;

/// The criterion a lab's reported failure criterion (free text) names: "ratio" in it is the largest
/// stress ratio, "deviator" the largest deviator stress; `fallback` otherwise (not stated or not recognised).
FailureCriterion lab_criterion(const std::string& text, FailureCriterion fallback, bool& recognised) {
  std::string t;
  for (char c : text) t.push_back(static_cast<char>(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c));
  recognised = true;
  if (t.find("ratio") != std::string::npos) return FailureCriterion::max_stress_ratio;
  if (t.find("deviator") != std::string::npos) return FailureCriterion::max_deviator;
  recognised = false;
  return fallback;
}

/// A shear stage known only by the lab's values at failure (ReportedFailure): effective stresses at
/// failure s3' = cell - u_f, s1' = s3' + q_f in compression (s1' = cell - u_f, s3' = s1' - q_f in
/// extension, cell pressure constant); c_u = q_f / 2; A_f = (u_f - u_0) / q_f (Skempton 1954, B = 1).
/// The point stands for the lab's criterion only: the other cannot be recomputed from failure values.
void interpret_reported_stage(const Specimen& sp, int k, const InterpretOptions& o, StageInterpretation& r,
                              std::vector<std::string>& warnings) {
  const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
  const ReportedFailure& rf = st.failure;
  r.failure_values_only = true;
  r.reported_criterion = rf.criterion;
  const bool compression = st.direction == ShearDirection::compression;
  FailurePoint f;
  f.reported = true;
  f.axial_strain = rf.axial_strain;
  f.q = compression ? rf.deviator_stress : -rf.deviator_stress;
  f.t = 0.5 * rf.deviator_stress;
  f.cell_pressure = st.cell_pressure;
  if (st.shear != ShearType::uu && given(rf.pore_pressure) && given(st.cell_pressure)) {
    const double radial = st.cell_pressure - rf.pore_pressure;
    f.s1 = compression ? radial + rf.deviator_stress : radial;
    f.s3 = compression ? radial : radial - rf.deviator_stress;
    f.s = 0.5 * (f.s1 + f.s3);
    f.p = radial + f.q / 3.0;  // p' = s_r' + q/3 (axial = radial + q, q signed)
    f.excess_pore_pressure = rf.pore_pressure - sp.back_pressure;
    r.consolidation_radial = given(rf.pore_pressure_start) ? st.cell_pressure - rf.pore_pressure_start : kNotGiven;
  }
  if (!given(r.consolidation_radial))
    for (int j = k - 1; j >= 0; --j)
      if (sp.stages[static_cast<std::size_t>(j)].type == SpecimenStageType::consolidation) {
        r.consolidation_radial = sp.stages[static_cast<std::size_t>(j)].radial_stress;
        break;
      }
  bool recognised = false;
  const FailureCriterion fallback =
      o.criterion == FailureCriterion::max_stress_ratio ? FailureCriterion::max_stress_ratio : FailureCriterion::max_deviator;
  const FailureCriterion lab = lab_criterion(rf.criterion, fallback, recognised);
  if (!recognised && st.shear != ShearType::uu)
    warnings.push_back("specimen '" + sp.id + "', stages[" + std::to_string(k) + "]: the failure criterion is " +
                       (rf.criterion.empty() ? std::string("not reported") : "reported as '" + rf.criterion + "', not recognised") +
                       "; its failure values are taken as " + to_string(lab));
  if (lab == FailureCriterion::max_deviator) r.by_max_deviator = f;
  else r.by_max_stress_ratio = f;
  if (o.criterion == lab) r.by_criterion = f;
  if (st.shear != ShearType::cd) r.undrained_strength = 0.5 * rf.deviator_stress;  // c_u = q_f / 2, phi_u = 0 (common practice)
  if (st.shear == ShearType::cu && given(rf.pore_pressure) && given(rf.pore_pressure_start) && rf.deviator_stress > 0.0)
    r.skempton_a = (rf.pore_pressure - rf.pore_pressure_start) / rf.deviator_stress;
}

/// A stage with curves and reported failure values: the lab's point recomputed from the curves by
/// the lab's criterion (max-deviator when not recognised) against the reported deviator stress and pore
/// pressure at failure; a difference over kReportedRel of q_f (kReportedAbs floor) is a warning.
ReportedFailureCheck compare_reported_failure(const Specimen& sp, int k, const StageInterpretation& r) {
  const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
  const ReportedFailure& rf = st.failure;
  ReportedFailureCheck c;
  c.specimen = sp.id;
  c.stage = k;
  bool recognised = false;
  const FailureCriterion lab = lab_criterion(rf.criterion, FailureCriterion::max_deviator, recognised);
  c.criterion = lab;
  c.q_reported = rf.deviator_stress;
  const FailurePoint& f = lab == FailureCriterion::max_stress_ratio ? r.by_max_stress_ratio : r.by_max_deviator;
  if (f.index < 0) return c;
  const double tol = std::max(kReportedAbs, kReportedRel * rf.deviator_stress);
  c.tolerance = tol;
  const std::string at = "specimen '" + sp.id + "', stages[" + std::to_string(k) + "]: ";
  const double q = std::abs(f.q);
  c.q_curve = q;
  if (std::abs(q - rf.deviator_stress) > tol)
    c.warnings.push_back(at + "the deviator stress at failure (" + to_string(lab) + ") recomputed from the curve is " + fmt(q) +
                         " kPa, the lab reported " + fmt(rf.deviator_stress) + " kPa (difference " + fmt(q - rf.deviator_stress) +
                         " kPa, tolerance " + fmt(tol) + " kPa: 2 % of the reported value, 2 kPa floor)");
  if (given(rf.pore_pressure) && given(f.excess_pore_pressure) && st.shear == ShearType::cu) {
    const double u = f.excess_pore_pressure + sp.back_pressure;
    c.u_reported = rf.pore_pressure;
    c.u_curve = u;
    if (std::abs(u - rf.pore_pressure) > tol)
      c.warnings.push_back(at + "the pore pressure at failure (" + to_string(lab) + ") from the curve is " + fmt(u) +
                           " kPa, the lab reported " + fmt(rf.pore_pressure) + " kPa (difference " + fmt(u - rf.pore_pressure) +
                           " kPa, tolerance " + fmt(tol) + " kPa)");
  }
  return c;
}

void check_reported_failure(const Specimen& sp, int k, const StageInterpretation& r, std::vector<std::string>& warnings) {
  const ReportedFailureCheck c = compare_reported_failure(sp, k, r);
  warnings.insert(warnings.end(), c.warnings.begin(), c.warnings.end());
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
  if (r.points <= 0) {
    r.points = 0;
    if (st.failure.given()) interpret_reported_stage(sp, k, o, r, warnings);
    return;
  }
  const ReducedCurves& c = sp.curves;
  StageView v{&sp, first, last, st.direction == ShearDirection::compression ? 1.0 : -1.0};
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
    if (!(qpk > q0)) {
      r.initial_stiffness_reason = r.secant_stiffness_reason = "the deviator stress never rises above its value at the stage start";
    } else {
      if (!given(f.slope))
        r.initial_stiffness_reason = std::to_string(x.size()) + " point(s) up to 20 % of the peak deviator stress: a slope needs 2 at distinct strains";
      else if (!(f.slope > 0.0))
        r.initial_stiffness_reason = "the slope of q against e_a up to 20 % of the peak is " + fmt(f.slope) + " kPa, not positive";
      else
        r.initial_stiffness = f.slope;
      std::vector<double> ea, qd;
      for (int i = first; i <= last; ++i) {
        ea.push_back(v.ea(i));
        qd.push_back(v.qd(i));
      }
      const SecantModulus e50 = secant_modulus_50(ea, qd);
      r.secant_stiffness_50 = e50.value;
      r.secant_stiffness_reason = e50.reason;
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
  if (st.shear == ShearType::cd && effective) interpret_dilatancy(sp, st, v, q0, qpk, r);
  if (st.shear == ShearType::cd && effective && given(sp.relative_density) && r.by_max_stress_ratio.index >= 0 &&
      r.by_max_stress_ratio.p > 0.0) {
    // Bolton (1986), "The strength and dilatancy of sands", Geotechnique 36(1): I_R = I_D (Q - ln p')
    // - R with Q = 10, R = 1 (p' in kPa), 0 <= I_R <= 4; triaxial phi_max - phi_crit = 3 I_R (deg).
    const double ir = std::clamp(sp.relative_density * (10.0 - std::log(r.by_max_stress_ratio.p)) - 1.0, 0.0, 4.0);
    r.bolton_index = ir;
    r.bolton_phi_difference = 3.0 * ir;
  }
  if (given(r.phi_cv_rowe) && r.by_max_stress_ratio.index >= 0 && r.by_max_stress_ratio.s3 > 0.0) {
    // phi'_max from the peak stress ratio R: sin phi' = (R - 1)/(R + 1) (Mohr-Coulomb, cohesionless).
    const double rr = r.by_max_stress_ratio.s1 / r.by_max_stress_ratio.s3;
    r.measured_phi_difference = friction_angle_from_ratio(rr) - r.phi_cv_rowe;
  }
  // End state and steady state.
  r.end_p = c.mean_stress[static_cast<std::size_t>(last)];
  r.end_q = c.deviator_stress[static_cast<std::size_t>(last)];
  r.end_void_ratio = c.void_ratio[static_cast<std::size_t>(last)];
  if (!effective)
    r.steady_reason = "no effective stresses";
  else if (!(v.ea(last) >= kSteadyStrain))
    r.steady_reason = "the stage ends at " + fmt(100.0 * v.ea(last)) + " % axial strain, below " + fmt(100.0 * kSteadyStrain) + " %";
  if (effective && v.ea(last) >= kSteadyStrain) {
    const double from = (1.0 - kSteadyWindow) * v.ea(last);
    int w = last;
    while (w > first && v.ea(w - 1) >= from) --w;
    const bool q_steady = std::abs(v.qd(last) - v.qd(w)) <= kSteadyQ * std::abs(v.qd(last));
    if (!q_steady && std::abs(v.qd(last)) > 0.0)
      r.steady_reason = "q changes by " + fixed(100.0 * std::abs(v.qd(last) - v.qd(w)) / std::abs(v.qd(last)), 1) +
                        " % over the last 20 % of the stage strain (3 % at most)";
    else if (!q_steady)
      r.steady_reason = "q ends at 0";
    bool rate_steady = true;
    if (st.shear == ShearType::cd && v.ea(last) > v.ea(w)) {
      // Least-squares rate over the window, natural strains as for the dilation rate.
      std::vector<double> x, y;
      for (int i = w; i <= last; ++i) {
        x.push_back(v.dir * natural_strain(c.axial_strain[v.at(i)]));
        y.push_back(natural_strain(c.volumetric_strain[v.at(i)]));
      }
      const LineFit f = fit_line(x, y);
      rate_steady = given(f.slope) && std::abs(f.slope) <= kSteadyRate;
      if (!rate_steady && r.steady_reason.empty())
        r.steady_reason = given(f.slope) ? "the dilation rate over the last 20 % of the stage strain is " + fixed(f.slope, 3) + " (within +-" +
                                               fmt(kSteadyRate) + " needed)"
                                         : "no dilation rate over the last 20 % of the stage strain";
    } else if (st.shear != ShearType::cd) {
      const double du = c.excess_pore_pressure[static_cast<std::size_t>(last)] - c.excess_pore_pressure[static_cast<std::size_t>(w)];
      rate_steady = std::abs(du) <= kSteadyQ * std::max(1.0, r.end_p);
      if (!rate_steady && r.steady_reason.empty())
        r.steady_reason = "the excess pore pressure changes by " + fixed(du, 1) + " kPa over the last 20 % of the stage strain (3 % of p' at most)";
    }
    r.steady_state = q_steady && rate_steady && last > w;
    if (!r.steady_state && r.steady_reason.empty()) r.steady_reason = "too few points over the last 20 % of the stage strain";
    if (r.steady_state) r.steady_reason.clear();
  }
  // Sand state (issue 17): the start of shear, for the state parameter found once the set's
  // critical-state line is known (interpret(), below).
  r.start_p = c.mean_stress[static_cast<std::size_t>(first)];
  r.start_void_ratio = c.void_ratio[static_cast<std::size_t>(first)];
  if (st.shear == ShearType::cd && effective && r.by_max_stress_ratio.index >= 0 && r.by_max_stress_ratio.s3 > 0.0 &&
      r.direction == ShearDirection::compression) {
    const double rr = r.by_max_stress_ratio.s1 / r.by_max_stress_ratio.s3;
    r.peak_friction_angle = friction_angle_from_ratio(rr);
  }
  if (st.shear == ShearType::cu && effective && last > first) {
    // Phase transformation: the least p' with a rise of p' after it of kPhaseRise of it (and 1 kPa).
    int imin = first;
    for (int i = first; i <= last; ++i)
      if (c.mean_stress[static_cast<std::size_t>(i)] < c.mean_stress[static_cast<std::size_t>(imin)]) imin = i;
    double after = c.mean_stress[static_cast<std::size_t>(imin)];
    for (int i = imin; i <= last; ++i) after = std::max(after, c.mean_stress[static_cast<std::size_t>(i)]);
    const double pmin = c.mean_stress[static_cast<std::size_t>(imin)];
    if (imin > first && pmin > 0.0 && after - pmin >= std::max(kPhaseRise * pmin, 1.0)) {
      r.phase_transformation = make_point(v, imin);
      r.phase_transformation_ratio = std::abs(c.deviator_stress[static_cast<std::size_t>(imin)]) / pmin;
    }
    // Instability: the first peak of |q| followed by a fall of more than kInstabilityDrop of it, with
    // p' lower at the end of the fall than at the peak.
    for (int i = first + 1; i < last; ++i) {
      const double qi = v.qd(i);
      if (!(qi > 0.0) || v.qd(i - 1) > qi || v.qd(i + 1) > qi) continue;
      int j = i + 1;
      double lowest = qi;
      int at = i;
      for (; j <= last && v.qd(j) <= qi; ++j)
        if (v.qd(j) < lowest) {
          lowest = v.qd(j);
          at = j;
        }
      if (lowest < (1.0 - kInstabilityDrop) * qi &&
          c.mean_stress[static_cast<std::size_t>(at)] < c.mean_stress[static_cast<std::size_t>(i)]) {
        r.instability = make_point(v, i);
        if (c.mean_stress[static_cast<std::size_t>(i)] > 0.0)
          r.instability_ratio = qi / c.mean_stress[static_cast<std::size_t>(i)];
        break;
      }
      if (j > last) break;  // q never rose above this peak again and did not fall enough
      i = j - 1;
    }
  }
  // Skempton (1954), "The pore-pressure coefficients A and B", Geotechnique 4(4):
  // du = B [d s3 + A (d s1 - d s3)]; constant cell pressure, B = 1 taken: A_f = du_f / dq_f.
  if (st.shear == ShearType::cu && r.by_criterion.index >= 0) {
    const double dq = c.deviator_stress[static_cast<std::size_t>(r.by_criterion.index)] - c.deviator_stress[static_cast<std::size_t>(first)];
    const double du = c.excess_pore_pressure[static_cast<std::size_t>(r.by_criterion.index)] - c.excess_pore_pressure[static_cast<std::size_t>(first)];
    if (std::abs(dq) > 0.0) r.skempton_a = du / dq;
  }
  if (st.failure.given()) check_reported_failure(sp, k, r, warnings);
}

/// Why a regression in logs of a stress (x = ln of it) cannot determine its slope: too few points or
/// too narrow a span (kMinStressSpan); empty when it can. `what` names the stress.
std::string log_law_reason(const LineFit& f, const std::string& what) {
  if (f.n < 2) return "2 or more points with positive values are needed, found " + std::to_string(f.n);
  if (!(f.x_max - f.x_min >= std::log(kMinStressSpan)))
    return "the values of " + what + " span a factor " + fmt(std::exp(f.x_max - f.x_min)) + ", below " + fmt(kMinStressSpan) +
           ": the slope is not determined";
  return {};
}

/// The design line (kDesignLineRule) under the lower one-sided 95 % confidence bound of the s'-t
/// regression mean, t_L(s') = a + b s' - t_{n-2} s_e sqrt(1/n + (s' - s_mean)^2 / Sxx). t_L is concave
/// (a line minus a convex function), so a line under it at the smallest and the largest s' used is
/// under it in between.
void design_line(StrengthEnvelope& env) {
  const LineFit& f = env.st;
  if (f.n < 3 || !given(f.residual_sd)) {
    env.design_reason = std::to_string(f.n) + " failure points: the confidence bound needs 3 or more";
    return;
  }
  const double a = f.intercept, b = f.slope, tq = student_t95(f.n - 2);
  auto lower = [&](double x) {
    return a + b * x - tq * f.residual_sd * std::sqrt(1.0 / f.n + (x - f.x_mean) * (x - f.x_mean) / f.sxx);
  };
  const double x1 = f.x_min, x2 = f.x_max;
  // The chord of t_L between the ends, no steeper than the best fit: a steeper chord (points not
  // symmetric about their mean) would give a larger phi' than the regression's.
  double bd = (lower(x2) - lower(x1)) / (x2 - x1);
  double ad = lower(x1) - bd * x1;
  if (bd > b) {
    bd = b;
    ad = std::min(lower(x1) - b * x1, lower(x2) - b * x2);
  }
  if (ad >= 0.0 && a >= 0.0) {
    if (!(bd > 0.0)) {
      env.design_reason = "the lower bound does not rise with s' (slope " + fmt(bd) + "): no friction angle";
      return;
    }
    env.design_form = DesignLineForm::lower_bound;
  } else {
    // A negative intercept of the regression or of the line under its bound: no cohesion (a line
    // under the bound can have a positive intercept when the regression's is negative; the data do
    // not support that cohesion). Secant from the origin to t_L at the largest s' used: under
    // any envelope through the origin that is concave (the usual cause of the negative intercept)
    // and passes above t_L there.
    const double t2 = lower(x2);
    if (!(t2 > 0.0)) {
      env.design_reason = "the lower bound at the largest s' used (" + fmt(x2) + " kPa) is " + fmt(t2) + " kPa, not positive";
      return;
    }
    bd = std::min(b, t2 / x2);
    ad = 0.0;
    env.design_form = DesignLineForm::origin_secant;
  }
  const double phi = std::asin(bd);
  env.design_phi = radians_to_degrees(phi);
  env.design_cohesion = ad / std::cos(phi);
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
    u.shear_stage = r.shear_stage;
    u.s = f.s;
    u.t = f.t;
    if (!r.left_out.empty()) {
      u.reason = "left out: " + r.left_out;
    } else if (r.failure_values_only && !f.reported) {
      u.reason = "failure values only (the lab's criterion: " + (r.reported_criterion.empty() ? std::string("not reported") : r.reported_criterion) +
                 "): the " + to_string(crit) + " point cannot be recomputed from them";
    } else if ((f.index < 0 && !f.reported) || !given(f.s)) {
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
  if (!given(env.st.slope)) {
    env.note = "the failure points in the stress range all have the same s': no slope";
    return env;
  }
  if (!(env.st.slope > 0.0 && env.st.slope < 1.0)) {
    env.note = "the s'-t slope tan alpha = " + fmt(env.st.slope) + " is outside (0, 1): no friction angle";
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
  }
  design_line(env);
  if (given(o.design_stress)) {
    // kSecantAtDesignRule: tau_f(sigma'_d) = c' + sigma'_d tan phi', tan phi'_sec = tau_f / sigma'_d.
    auto secant = [&](double c, double phi_deg) {
      const double tau = c + o.design_stress * std::tan(degrees_to_radians(phi_deg));
      return tau > 0.0 ? radians_to_degrees(std::atan(tau / o.design_stress)) : kNotGiven;
    };
    env.secant_phi_at_design = secant(env.cohesion, env.phi);
    if (given(env.design_phi)) env.design_secant_phi_at_design = secant(env.design_cohesion, env.design_phi);
  }
  if (o.origin_regression) {
    // kOriginRegressionRule.
    double sst = 0, sss = 0, mt = 0;
    for (std::size_t i = 0; i < s.size(); ++i) {
      sst += s[i] * t[i];
      sss += s[i] * s[i];
      mt += t[i];
    }
    mt /= static_cast<double>(t.size());
    const double b0 = sss > 0.0 ? sst / sss : kNotGiven;
    if (!(b0 > 0.0 && b0 < 1.0)) {
      env.origin_reason = "the slope through the origin tan alpha_0 = " + fmt(b0) + " is outside (0, 1): no friction angle";
    } else {
      double sse = 0, syy = 0;
      for (std::size_t i = 0; i < s.size(); ++i) {
        sse += (t[i] - b0 * s[i]) * (t[i] - b0 * s[i]);
        syy += (t[i] - mt) * (t[i] - mt);
      }
      const double phi0 = std::asin(b0);
      env.origin_phi = radians_to_degrees(phi0);
      env.origin_r2 = syy > 0.0 ? 1.0 - sse / syy : 1.0;
      const double se_b = std::sqrt(sse / static_cast<double>(s.size() - 1) / sss);
      env.origin_se_phi = radians_to_degrees(se_b / std::cos(phi0));
    }
  }
  if (env.cohesion < 0.0)
    warnings.push_back("envelope (" + to_string(crit) + "): negative cohesion intercept c' = " + fmt(env.cohesion) +
                       " kPa; the points do not support a cohesion (the design line is taken through the origin)");
  if (pc.size() < 2) {
    env.pq_reason = std::to_string(pc.size()) + " compression failure point(s) in the stress range: the p'-q line needs 2";
  } else {
    env.pq = fit_line(pc, qc);
    // p'-q: q = d + M p'; sin phi' = 3M/(6+M), c' = d (3 - sin phi')/(6 cos phi') (triaxial compression).
    const double mm = env.pq.slope;
    const double sp = 3.0 * mm / (6.0 + mm);
    if (!given(mm))
      env.pq_reason = "the compression failure points all have the same p': no slope";
    else if (!(mm > 0.0 && sp < 1.0))
      env.pq_reason = "the p'-q slope M = " + fmt(mm) + " is outside (0, 3): no friction angle";
    else {
      env.phi_pq = radians_to_degrees(std::asin(sp));
      env.cohesion_pq = env.pq.intercept * (3.0 - sp) / (6.0 * std::cos(std::asin(sp)));
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
    env.power_reason = log_law_reason(f, "s'");
    if (env.power_reason.empty() && !(f.slope > 0.0))
      env.power_reason = "the exponent b = " + fmt(f.slope) + " is not positive (t must rise with s')";
    if (env.power_reason.empty()) {
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
  law.reason = log_law_reason(f, "s3'");
  if (law.reason.empty() && f.slope < 0.0)
    law.reason = "the exponent m = " + fmt(f.slope) + " is negative (the stiffness falls with s3')";
  if (law.reason.empty()) {
    law.reference = std::exp(f.intercept);
    law.exponent = f.slope;
    law.r2 = f.r2;
  }
  return law;
}

/// lambda or kappa: minus the slope of e against the log of a stress (x holds the logs); NaN and the
/// reason when the points cannot determine it (too few, too narrow a span, not positive).
double compressibility_slope(const std::vector<double>& x, const std::vector<double>& y, std::size_t min_points,
                             const std::string& branch, const std::string& stress, const std::string& name, std::string& reason,
                             double* e_at_1 = nullptr, double* from = nullptr, double* to = nullptr) {
  if (x.size() < min_points) {
    reason = std::to_string(x.size()) + " point(s) with a void ratio on the " + branch + ": " + name + " needs " +
             std::to_string(min_points) + " or more";
    return kNotGiven;
  }
  const LineFit f = fit_line(x, y);
  reason = log_law_reason(f, stress);
  if (!reason.empty()) return kNotGiven;
  if (!(-f.slope > 0.0)) {
    reason = name + " = " + fmt(-f.slope) + " is not positive (e must fall as " + stress + " rises)";
    return kNotGiven;
  }
  if (e_at_1) *e_at_1 = f.intercept;
  if (from) *from = std::exp(f.x_min);
  if (to) *to = std::exp(f.x_max);
  return -f.slope;
}

/// lambda, kappa and the constrained modulus of an oedometer stage (see the note in interpret()).
Interpretation::Compressibility interpret_oedometer(const Specimen& sp, int k, double stress) {
  Interpretation::Compressibility cm;
  cm.specimen = sp.id;
  cm.stage = k;
  cm.basis = "oedometer: e - ln s_a' (s_a' as a proxy of p')";
  cm.constrained_modulus_stress = stress;
  const auto [first, last] = sp.stage_points(k);
  if (last - first + 1 < 2) {
    cm.lambda_reason = cm.kappa_reason = cm.constrained_modulus_reason =
        std::to_string(std::max(0, last - first + 1)) + " point(s) in the stage";
    return cm;
  }
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
      if (sa[at(i)] >= 0.25 * smax && sa[at(i)] > 0.0 && given(e[at(i)])) {
        x.push_back(std::log(sa[at(i)]));
        y.push_back(e[at(i)]);
      }
    }
    cm.lambda = compressibility_slope(x, y, 2, "first loading at s_a' >= s_a'max / 4", "s_a'", "lambda", cm.lambda_reason,
                                      &cm.lambda_e_at_1, &cm.lambda_from, &cm.lambda_to);
  }
  if (top < last) {
    std::vector<double> x, y;
    for (int i = top; i <= last && (i == top || sa[at(i)] < sa[at(i - 1)]); ++i)
      if (sa[at(i)] > 0.0 && given(e[at(i)])) {
        x.push_back(std::log(sa[at(i)]));
        y.push_back(e[at(i)]);
      }
    cm.kappa = compressibility_slope(x, y, 2, "first unloading", "s_a'", "kappa", cm.kappa_reason, &cm.kappa_e_at_1,
                                     &cm.kappa_from, &cm.kappa_to);
  } else {
    cm.kappa_reason = "no unloading in the stage";
  }
  cm.constrained_modulus_reason = "the first loading does not pass s_a' = " + fmt(stress) + " kPa with a rise in axial strain";
  for (int i = first; i < top; ++i) {
    const double a = sa[at(i)], b = sa[at(i + 1)];
    if (a > 0.0 && a < stress && stress <= b && ea[at(i + 1)] > ea[at(i)]) {
      cm.constrained_modulus = stress * std::log(b / a) / (ea[at(i + 1)] - ea[at(i)]);
      cm.constrained_modulus_reason.clear();
      break;
    }
  }
  cm.compression_index = cm.lambda * std::log(10.0);
  cm.swelling_index = cm.kappa * std::log(10.0);
  return cm;
}

/// Depth z (m) from the specimen's free-text depth: "5.2", "5.2 m" or a range "5.0-5.4 m" (its
/// middle); NaN for anything else (another unit, words).
double depth_in_metres(const std::string& text) {
  const char* p = text.c_str();
  char* end = nullptr;
  const double a = std::strtod(p, &end);
  if (end == p || !std::isfinite(a)) return kNotGiven;
  double z = a;
  std::string rest(end);
  auto trim = [](std::string& r) {
    const auto b = r.find_first_not_of(' ');
    r = b == std::string::npos ? std::string() : r.substr(b);
    while (!r.empty() && r.back() == ' ') r.pop_back();
  };
  trim(rest);
  if (!rest.empty() && rest[0] == '-') {
    const char* q = rest.c_str() + 1;
    char* end2 = nullptr;
    const double b = std::strtod(q, &end2);
    if (end2 == q || !std::isfinite(b) || b < a) return kNotGiven;
    z = 0.5 * (a + b);
    rest = end2;
    trim(rest);
  }
  return rest.empty() || rest == "m" ? z : kNotGiven;
}

/// The user's choice (only / left_out) checked against the series, as LeftOut entries per specimen
/// (shear_stage 0: all of it). Throws InputError for an id or a stage the series does not have.
std::vector<LeftOut> chosen_out(const TestSeries& series, const InterpretOptions& o) {
  auto find = [&](const std::string& id) -> const Specimen* {
    for (const Specimen& sp : series.specimens)
      if (sp.id == id) return &sp;
    return nullptr;
  };
  auto ids = [&] {
    std::string list;
    for (const Specimen& sp : series.specimens) list += (list.empty() ? "'" : ", '") + sp.id + "'";
    return list;
  };
  for (const std::string& id : o.only)
    if (!find(id)) throw InputError(series.source + ": only: no specimen '" + id + "' (found: " + ids() + ")");
  std::vector<LeftOut> out;
  for (const LeftOut& l : o.left_out) {
    const Specimen* sp = find(l.specimen);
    if (!sp) throw InputError(series.source + ": left out: no specimen '" + l.specimen + "' (found: " + ids() + ")");
    const int n = static_cast<int>(sp->shear_stages().size());
    if (l.shear_stage > n)
      throw InputError(series.source + ": left out: specimen '" + l.specimen + "' has " + std::to_string(n) +
                       " shear stage(s), not a stage " + std::to_string(l.shear_stage));
    out.push_back(l);
  }
  if (!o.only.empty()) {
    std::string list;
    for (const std::string& id : o.only) list += (list.empty() ? "" : ", ") + id;
    for (const Specimen& sp : series.specimens)
      if (std::find(o.only.begin(), o.only.end(), sp.id) == o.only.end())
        out.push_back({sp.id, 0, "not among the specimens chosen (" + list + ")"});
  }
  return out;
}

/// The reason a specimen's shear stage (1, 2, 3; 0: the specimen's other stages) is left out, or "".
std::string left_out_reason(const std::vector<LeftOut>& out, const std::string& id, int shear_stage) {
  for (const LeftOut& l : out)
    if (l.specimen == id && (l.shear_stage == 0 || l.shear_stage == shear_stage)) return l.reason;
  return {};
}

}  // namespace

std::vector<ReportedFailureCheck> check_reported_failures(const TestSeries& series) {
  std::vector<ReportedFailureCheck> out;
  const InterpretOptions o;
  for (const Specimen& sp : series.specimens) {
    if (sp.failure_values_only()) continue;
    int number = 0;
    for (int k : sp.shear_stages()) {
      ++number;
      const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
      const auto [first, last] = sp.stage_points(k);
      if (!st.failure.given() || last < first) continue;
      StageInterpretation r;
      std::vector<std::string> ignored;  // the stage's other findings belong to interpret
      interpret_stage(sp, k, o, r, ignored);
      out.push_back(compare_reported_failure(sp, k, r));
      out.back().shear_stage = number;
    }
  }
  return out;
}

std::string reported_failure_table(const std::vector<ReportedFailureCheck>& checks) {
  if (checks.empty()) return {};
  int w = 8;
  for (const ReportedFailureCheck& c : checks) w = std::max(w, static_cast<int>(c.specimen.size()));
  auto num = [](double v) {
    if (!given(v)) return std::string("-");
    char b[32];
    std::snprintf(b, sizeof b, "%.1f", v);
    return std::string(b);
  };
  std::string out;
  char line[512];
  std::snprintf(line, sizeof line, "  %-*s %5s  %-16s %10s %10s %10s %10s %8s  %s\n", w, "specimen", "stage", "criterion", "q_f rep.",
                "q_f curve", "u_f rep.", "u_f curve", "tol.", "check");
  out += line;
  for (const ReportedFailureCheck& c : checks) {
    std::snprintf(line, sizeof line, "  %-*s %5d  %-16s %10s %10s %10s %10s %8s  %s\n", w, c.specimen.c_str(), c.shear_stage,
                  to_string(c.criterion).c_str(), num(c.q_reported).c_str(), num(c.q_curve).c_str(), num(c.u_reported).c_str(),
                  num(c.u_curve).c_str(), num(c.tolerance).c_str(),
                  !given(c.q_curve) ? "no failure point on the curve" : c.warnings.empty() ? "ok" : "DIFFERS (warning)");
    out += line;
  }
  out += "  (kPa; the lab's values at failure against the point recomputed from its curve by the lab's criterion; tolerance 2 % of "
         "the reported q_f, 2 kPa floor: our rule, no source)\n";
  return out;
}

SecantModulus secant_modulus_50(const std::vector<double>& ea, const std::vector<double>& qd) {
  SecantModulus r;
  const std::size_t n = std::min(ea.size(), qd.size());
  if (n == 0) {
    r.reason = "no points";
    return r;
  }
  std::size_t peak = 0;
  for (std::size_t i = 1; i < n; ++i)
    if (qd[i] > qd[peak]) peak = i;
  const double q0 = qd[0];
  if (!(qd[peak] > q0)) {
    r.reason = "the deviator stress never rises above its value at the stage start";
    return r;
  }
  const double q50 = q0 + 0.5 * (qd[peak] - q0);
  r.reason = "no point below 50 % of the peak deviator stress before the peak";
  for (std::size_t i = 1; i <= peak; ++i)
    if (qd[i] >= q50 && qd[i - 1] < q50) {
      const double w = (q50 - qd[i - 1]) / (qd[i] - qd[i - 1]);
      const double e50 = ea[i - 1] + w * (ea[i] - ea[i - 1]);
      if (e50 > 0.0) {
        r.value = (q50 - q0) / e50;
        r.reason.clear();
      } else {
        r.reason = "50 % of the peak deviator stress is reached at axial strain " + fmt(e50) + ", not positive";
      }
      break;
    }
  return r;
}

Interpretation interpret(const TestSeries& series, const InterpretOptions& o) {
  o.validate();
  Interpretation res;
  res.series = series.source;
  res.options = o;
  const std::vector<LeftOut> out = chosen_out(series, o);
  for (const Specimen& sp : series.specimens) {
    if (!o.material.empty() && sp.material != o.material) continue;
    for (const LeftOut& l : out)
      if (l.specimen == sp.id) res.left_out.push_back(l);
    if (std::find(res.materials.begin(), res.materials.end(), sp.material) == res.materials.end())
      res.materials.push_back(sp.material);
    const bool all_out = !left_out_reason(out, sp.id, 0).empty();
    if (given(sp.b_value) && !all_out) res.b_values.push_back({sp.id, sp.b_value});
    int number = 0;
    for (int k : sp.shear_stages()) {
      StageInterpretation r;
      interpret_stage(sp, k, o, r, res.warnings);
      r.shear_stage = ++number;
      r.left_out = left_out_reason(out, sp.id, number);
      r.depth = depth_in_metres(sp.depth);
      res.stages.push_back(r);
    }
    if (all_out) continue;
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
      if (xl.size() + xu.size() < 2) continue;  // no e - ln p' data in this stage
      cm.lambda = compressibility_slope(xl, yl, 3, "loading (p' at its largest so far)", "p'", "lambda", cm.lambda_reason,
                                        &cm.lambda_e_at_1, &cm.lambda_from, &cm.lambda_to);
      if (xu.empty()) {
        cm.kappa_reason = "no unloading in the stage";
      } else {
        // The unloading branch starts at the largest p' reached.
        xu.insert(xu.begin(), std::log(pmax));
        yu.insert(yu.begin(), yl.back());
        cm.kappa = compressibility_slope(xu, yu, 2, "unloading", "p'", "kappa", cm.kappa_reason, &cm.kappa_e_at_1, &cm.kappa_from,
                                         &cm.kappa_to);
      }
      {
        cm.compression_index = cm.lambda * std::log(10.0);
        cm.swelling_index = cm.kappa * std::log(10.0);
        res.compressibility.push_back(cm);
      }
    }
    for (int k : sp.oedometer_stages()) {
      Interpretation::Compressibility cm = interpret_oedometer(sp, k, o.reference_pressure);
      res.compressibility.push_back(cm);
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
    std::vector<double> cu, z, cuz;
    for (const StageInterpretation& r : res.stages)
      if (r.test == ShearType::uu && r.left_out.empty() && given(r.undrained_strength)) {
        cu.push_back(r.undrained_strength);
        if (given(r.depth)) {
          z.push_back(r.depth);
          cuz.push_back(r.undrained_strength);
        }
      }
    res.uu_count = static_cast<int>(cu.size());
    if (!cu.empty()) {
      res.cu_mean = std::accumulate(cu.begin(), cu.end(), 0.0) / static_cast<double>(cu.size());
      res.cu_min = *std::min_element(cu.begin(), cu.end());
      res.cu_max = *std::max_element(cu.begin(), cu.end());
      res.notes.push_back("UU: c_u = (s1 - s3)_max / 2 per specimen, phi_u = 0 assumed (total stresses, common practice)");
    }
    if (o.cu_depth_trend) {
      res.cu_depth = fit_line(z, cuz);
      if (z.size() < 2)
        res.cu_depth_reason = std::to_string(z.size()) + " UU test(s) with a depth in metres: the trend needs 2 or more";
      else if (!given(res.cu_depth.slope))
        res.cu_depth_reason = "the UU tests all have the same depth: no slope";
      if (!res.cu_depth_reason.empty()) res.cu_depth.intercept = res.cu_depth.slope = kNotGiven;
      res.notes.push_back("c_u against depth: c_u = c_u0 + k z by least squares over the UU tests whose depth reads as metres "
                          "(a range a-b m taken at its middle; common practice, no source)");
    }
  }
  {
    bool any_reported = false;
    for (const StageInterpretation& r : res.stages) any_reported = any_reported || r.failure_values_only;
    if (any_reported)
      res.notes.push_back(
          "failure values only (stages without curves): effective stresses at failure s3' = cell - u_f, s1' = s3' + q_f "
          "(compression; s1' = cell - u_f, s3' = s1' - q_f in extension), c_u = q_f / 2, A_f = (u_f - u_0) / q_f; each point stands "
          "for the failure criterion the lab reported (shown per stage), the other criterion cannot be recomputed from failure values "
          "alone; no stiffness, dilatancy or end state");
  }
  // Envelopes: the declared criterion, then the other of the two common ones.
  res.envelopes.push_back(fit_envelope(res, o.criterion, o, res.warnings));
  for (FailureCriterion c : {FailureCriterion::max_deviator, FailureCriterion::max_stress_ratio})
    if (c != o.criterion) res.envelopes.push_back(fit_envelope(res, c, o, res.warnings));
  res.notes.push_back("envelope: t = a + s' tan(alpha) by least squares, s' = (s1'+s3')/2, t = (s1'-s3')/2; sin phi' = tan alpha, "
                      "c' = a / cos phi'; p'-q route on compression tests: sin phi' = 3M/(6+M), c' = d (3 - sin phi')/(6 cos phi')");
  res.notes.push_back(std::string("design line: ") + kDesignLineRule);
  {
    bool any_cd = false;
    for (const StageInterpretation& r : res.stages) any_cd = any_cd || r.test == ShearType::cd;
    if (any_cd)
      res.notes.push_back(
          "dilatancy (CD): local rates d = d eps_v/d eps_a in natural strains from the stage start (eps = -ln(1 - e)), each the "
          "least-squares slope over a window of axial strain centred at the point (moving-window regression, common practice, "
          "no source); the window width W = (12 h s^2 / 0.005^2)^(1/3) gives the slope a standard error of about 0.005 for "
          "the stage's median spacing h and the scatter s of eps_v about a smooth curve (from the residuals of each point "
          "against its neighbours), at least 4 spacings and at most a third of the stage; the peak rate is the least-squares slope over the "
          "stretch around the most negative local rate (of the windows within the data) where the local rates stay within "
          "two standard errors of it (our rule, no source); sin psi = -d / (2 - d) in compression, -d / (2 + d) in extension (Mohr-Coulomb flow "
          "rule, elastic strains neglected); Rowe (1962) R = K_cv D with D = 1 - d on points past 50 % of peak q (compression)");
  }
  // Normal effective stress on the failure plane and the design-stress flags (kDesignStressRule).
  {
    const StrengthEnvelope& env = res.envelopes.front();
    if (given(env.phi)) {
      const double sphi = std::sin(degrees_to_radians(env.phi));
      double lowest = std::numeric_limits<double>::infinity();
      for (StageInterpretation& r : res.stages) {
        const FailurePoint& f = r.by_criterion;
        if (r.test == ShearType::uu || f.index < 0 || !given(f.s)) continue;
        r.normal_stress_on_failure_plane = f.s - f.t * sphi;
        if (!given(o.design_stress)) continue;
        const double sn = r.normal_stress_on_failure_plane;
        r.design_stress_flag = sn > 2.0 * o.design_stress ? DesignStressFlag::above_twice
                               : sn > o.design_stress     ? DesignStressFlag::above
                                                          : DesignStressFlag::within;
        if (!r.left_out.empty()) continue;
        lowest = std::min(lowest, sn);
        if (r.design_stress_flag == DesignStressFlag::above_twice)
          res.warnings.push_back("specimen '" + r.specimen + "', stage " + std::to_string(r.shear_stage) +
                                 ": normal effective stress on the failure plane " + fmt(sn) + " kPa is above twice the design stress " +
                                 fmt(o.design_stress) + " kPa");
      }
      if (given(o.design_stress)) {
        if (lowest > o.design_stress && std::isfinite(lowest))
          res.warnings.push_back("no test reaches the design stress: the lowest normal effective stress on a failure plane is " +
                                 fmt(lowest) + " kPa, above " + fmt(o.design_stress) +
                                 " kPa; the envelope is extrapolated to the design range");
        res.notes.push_back("design stress " + fmt(o.design_stress) + " kPa: " + kDesignStressRule);
        res.notes.push_back(std::string("secant phi' at the design stress: ") + kSecantAtDesignRule);
      }
    }
    if (o.origin_regression) res.notes.push_back(std::string("regression through the origin: ") + kOriginRegressionRule);
  }
  // Stiffness laws: E = E_ref (s3'/p_ref)^m.
  {
    std::vector<double> s3, e50, s3ur, eur;
    for (const StageInterpretation& r : res.stages) {
      if (r.test != ShearType::cd || !r.left_out.empty()) continue;
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
      if (!r.left_out.empty()) continue;
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
    const double mm = spp > 0.0 ? sqp / spp : kNotGiven;
    if (res.cs_count == 0)
      res.critical_m_reason = "no compression stage ends in a steady state";
    else if (!given(mm))
      res.critical_m_reason = "the steady end states have no positive p'";
    else if (!(mm > 0.0 && mm < 3.0))
      res.critical_m_reason = "M = " + fmt(mm) + " is outside (0, 3): no critical-state angle";
    else {
      res.critical_m = mm;
      res.phi_cs = radians_to_degrees(std::asin(3.0 * mm / (6.0 + mm)));
    }
    res.csl = fit_line(lp, ee);
    res.csl_reason = log_law_reason(res.csl, "p' at the steady end states (with a void ratio)");
    if (res.csl_reason.empty() && !(res.csl.slope < 0.0))
      res.csl_reason = "lambda = " + fmt(-res.csl.slope) + " is not positive (e must fall as p' rises)";
    if (!res.csl_reason.empty()) res.csl.intercept = res.csl.slope = kNotGiven;
    // The power-law line over the same end states (ln p' in lp, e in ee).
    res.csl_exponent = o.csl_exponent;
    std::vector<double> x;
    for (double l : lp) x.push_back(std::pow(std::exp(l) / kAtmosphericPressure, o.csl_exponent));
    res.csl_power = fit_line(x, ee);
    const double span = lp.empty() ? 1.0 : std::exp(*std::max_element(lp.begin(), lp.end()) - *std::min_element(lp.begin(), lp.end()));
    if (x.size() < 2)
      res.csl_power_reason = "2 or more steady end states with a void ratio are needed, found " + std::to_string(x.size());
    else if (!(span >= kMinStressSpan))
      res.csl_power_reason = "p' at the steady end states spans a factor " + fmt(span) + ", below " + fmt(kMinStressSpan) +
                             ": the slope is not determined";
    else if (!(res.csl_power.slope < 0.0))
      res.csl_power_reason = "lambda_c = " + fmt(-res.csl_power.slope) + " is not positive (e must fall as p' rises)";
    if (!res.csl_power_reason.empty()) res.csl_power.intercept = res.csl_power.slope = kNotGiven;
    if (!cv.empty()) res.phi_cv_rowe = std::accumulate(cv.begin(), cv.end(), 0.0) / static_cast<double>(cv.size());
    else res.phi_cv_rowe_reason = "no drained compression stage gives phi_cv";
  }
  // Sand state (issue 17). The power-law critical-state line e_c = e_Gamma - lambda_c (p'/p_at)^xi
  // (Li & Wang 1998, the form of Dafalias & Manzari 2004; xi fixed) over the same steady end states,
  // then psi = e - e_c(p') at the start of each shear stage (Been & Jefferies 1985), from the power
  // line when determined, else from the e - ln p' line.
  {
    if (res.csl_power_reason.empty()) res.psi_line = "power";
    else if (res.csl_reason.empty()) res.psi_line = "log";
    else res.psi_reason = "no critical-state line (" + res.csl_power_reason + ")";
    std::vector<double> psi_a, phi_a, psi_d, d_d;
    for (StageInterpretation& r : res.stages) {
      if (res.psi_line.empty() || !given(r.start_void_ratio) || !(r.start_p > 0.0)) continue;
      const double ec = res.psi_line == "power"
                            ? res.csl_power.intercept + res.csl_power.slope * std::pow(r.start_p / kAtmosphericPressure, o.csl_exponent)
                            : res.csl.intercept + res.csl.slope * std::log(r.start_p);
      r.state_parameter = r.start_void_ratio - ec;
      if (!r.left_out.empty()) continue;
      if (given(r.peak_friction_angle)) {
        psi_a.push_back(r.state_parameter);
        phi_a.push_back(r.peak_friction_angle);
      }
      if (r.test == ShearType::cd && r.direction == ShearDirection::compression && given(r.max_dilation_rate)) {
        psi_d.push_back(r.state_parameter);
        d_d.push_back(-r.max_dilation_rate);
      }
    }
    const auto trend = [&](const std::vector<double>& px, const std::vector<double>& py, LineFit& f, std::string& why) {
      f = fit_line(px, py);
      if (!res.psi_reason.empty()) why = res.psi_reason;
      else if (f.n < 2) why = "2 or more CD compression stages with a state parameter are needed, found " + std::to_string(f.n);
      else if (!(f.x_max - f.x_min >= kMinPsiSpan))
        why = "the state parameters span " + fmt(f.x_max - f.x_min) + ", below " + fmt(kMinPsiSpan) + ": the slope is not determined";
      if (!why.empty()) f.intercept = f.slope = kNotGiven;
    };
    trend(psi_a, phi_a, res.peak_angle_vs_psi, res.peak_angle_vs_psi_reason);
    trend(psi_d, d_d, res.dilation_vs_psi, res.dilation_vs_psi_reason);
  }
  return res;
}

}  // namespace triaxcal
