#include "modified_cam_clay/modified_cam_clay.hpp"

#include <Eigen/LU>

#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Largest M_c for which the Lode shape of Sheng, Sloan & Yu (2000) stays convex
// (phi_cs = 48.59 deg, sin phi_cs = 0.75, M_c = 2).
constexpr double kConvexLimit = 2.0;

// Local Newton of the return mapping: bounds and tolerances.
constexpr int kMaxIterations = 40;
constexpr double kYieldTolerance = 1e-12;     // f / p'_c^2 at which a trial state counts as elastic
constexpr double kStrainTolerance = 1e-15;    // |r1| (a strain), absolute part
constexpr double kRelativeTolerance = 1e-12;  // |r1| relative to |x|, and |r2| (dimensionless)
constexpr double kMaxExponent = 600.0;        // keeps exp() finite

// exp(t) for the Newton corrections of the return: a Taylor polynomial where |t| < 1e-3 (truncation
// t^5/120 < 1e-17, below round-off), else the library function. Most corrections after the first
// are that small, and exp dominated the cost of a plastic step.
// Largest warm-start guess of d eps_v^p: the Newton step limit (a factor e^0.5 in p' or p'_c).
inline double step_limit_guess(double a, double b) { return 0.5 / std::max(a, b); }

inline double exp_correction(double t) {
  if (std::abs(t) < 1e-3) return 1.0 + t * (1.0 + t * (0.5 + t * (1.0 / 6.0 + t * (1.0 / 24.0))));
  return std::exp(t);
}

// phi(d) = (1 - exp(-d))/d and its derivative phi'(d) = (exp(-d) - phi)/d, the chord factor of
// 1 + e over an increment of natural volumetric strain d (header comment). Below |d| = 1e-4 both
// from their Taylor series, phi = 1 - d/2 + d^2/6 - d^3/24 (next term d^4/120 < 1e-18) and
// phi' = -1/2 + d/3 - d^2/8 (next term d^3/30 < 4e-14, the tangent only), where the closed form of
// phi' would lose digits to cancellation; d = 0 (every undrained increment) exactly.
inline double chord_factor(double d, double& slope) {
  if (d == 0.0) {
    slope = -0.5;
    return 1.0;
  }
  if (std::abs(d) < 1e-4) {
    slope = -0.5 + d * (1.0 / 3.0 - d * (1.0 / 8.0));
    return 1.0 + d * (-0.5 + d * (1.0 / 6.0 - d * (1.0 / 24.0)));
  }
  const double em1 = std::expm1(-d);  // exp(-d) - 1, exact to round-off also for small d
  const double inv_d = 1.0 / d;
  const double phi = -em1 * inv_d;
  slope = (1.0 + em1 - phi) * inv_d;
  return phi;
}

// 2 G P: deviatoric projection of an engineering strain increment to stress (Voigt).
Mat6 deviatoric_stiffness(double shear) {
  Mat6 d = Mat6::Zero();
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) d(i, j) = 2.0 * shear * ((i == j ? 1.0 : 0.0) - 1.0 / 3.0);
  for (int i = 3; i < 6; ++i) d(i, i) = shear;
  return d;
}

// q^2 = (3/2) s:s of a deviator held in Voigt stress form.
double q_squared(const Vec6& s) {
  return 1.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2] + 2.0 * (s[3] * s[3] + s[4] * s[4] + s[5] * s[5]));
}

// sin 3theta = -(3 sqrt3 / 2) J3 / J2^1.5 of a deviator s and its gradient with respect to the
// Voigt stress components (each shear component counted once). Convention of conventions.hpp.
double sin3theta_and_gradient(const Vec6& s, Vec6& gradient) {
  const double j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]) + s[3] * s[3] + s[4] * s[4] + s[5] * s[5];
  const double j3 = s[0] * s[1] * s[2] + 2.0 * s[3] * s[4] * s[5] - s[0] * s[4] * s[4] - s[1] * s[5] * s[5] -
                    s[2] * s[3] * s[3];
  // (s s) of the symmetric tensor [[s0 s3 s5] [s3 s1 s4] [s5 s4 s2]].
  Vec6 ss;
  ss[0] = s[0] * s[0] + s[3] * s[3] + s[5] * s[5];
  ss[1] = s[3] * s[3] + s[1] * s[1] + s[4] * s[4];
  ss[2] = s[5] * s[5] + s[4] * s[4] + s[2] * s[2];
  ss[3] = s[0] * s[3] + s[3] * s[1] + s[5] * s[4];
  ss[4] = s[3] * s[5] + s[1] * s[4] + s[4] * s[2];
  ss[5] = s[5] * s[0] + s[4] * s[3] + s[2] * s[5];
  Vec6 dj2;
  Vec6 dj3;
  for (int i = 0; i < 3; ++i) {
    dj2[i] = s[i];
    dj3[i] = ss[i] - 2.0 * j2 / 3.0;
  }
  for (int i = 3; i < 6; ++i) {
    dj2[i] = 2.0 * s[i];
    dj3[i] = 2.0 * ss[i];
  }
  const double c = -1.5 * std::sqrt(3.0);
  const double j2_15 = j2 * std::sqrt(j2);
  const double value = c * j3 / j2_15;
  gradient = c * (dj3 / j2_15 - 1.5 * j3 / (j2_15 * j2) * dj2);
  if (value >= 1.0 || value <= -1.0) gradient.setZero();  // an extreme of the Lode angle
  return std::clamp(value, -1.0, 1.0);
}

}  // namespace

namespace {

// M and phi_cs are one quantity given in either form, M = 6 sin phi_cs/(3 - sin phi_cs) in triaxial
// compression (Wood 1990); the model's strength is its critical state, c' = 0 and phi' = phi_cs.
ImpliedValue cam_clay_implied(ParameterRole role, const std::vector<double>& v) {
  using P = ModifiedCamClay::Parameter;
  if (v.size() <= static_cast<std::size_t>(P::critical_state_friction_angle)) return {};
  const double m_given = v[P::critical_state_ratio], phi_given = v[P::critical_state_friction_angle];
  double phi = kNaN, m = kNaN;
  if (m_given > 0.0) {
    m = m_given;
    phi = radians_to_degrees(std::asin(3.0 * m / (6.0 + m)));
  } else if (phi_given > 0.0) {
    phi = phi_given;
    const double s = std::sin(degrees_to_radians(phi));
    m = 6.0 * s / (3.0 - s);
  }
  const char* strength_note =
      "the model's strength is its critical state (c' = 0, phi' = phi_cs); a peak envelope of overconsolidated "
      "specimens lies above it by definition";
  switch (role) {
    case ParameterRole::critical_state_friction_angle:
      if (m_given > 0.0) return {phi, "critical_state_ratio M: sin phi_cs = 3 M/(6 + M)", ""};
      return {};
    case ParameterRole::critical_state_ratio:
      if (!(m_given > 0.0) && phi_given > 0.0) return {m, "critical_state_friction_angle: M = 6 sin phi_cs/(3 - sin phi_cs)", ""};
      return {};
    case ParameterRole::friction_angle: return {phi, "critical state: phi' = phi_cs", strength_note};
    case ParameterRole::cohesion: return {std::isfinite(phi) ? 0.0 : kNaN, "critical state: c' = 0", strength_note};
    default: return {};
  }
}

// M and phi_cs: the one given (> 0) is used, the other is 0; a constant shear modulus (> 0)
// replaces the Poisson's ratio.
bool cam_clay_unused(std::size_t index, const std::vector<double>& v) {
  using P = ModifiedCamClay::Parameter;
  if (v.size() <= static_cast<std::size_t>(P::shear_modulus)) return false;
  switch (index) {
    case P::critical_state_ratio: return !(v[P::critical_state_ratio] > 0.0);
    case P::critical_state_friction_angle: return !(v[P::critical_state_friction_angle] > 0.0);
    case P::poissons_ratio: return v[P::shear_modulus] > 0.0;
    case P::shear_modulus: return !(v[P::shear_modulus] > 0.0);
    default: return false;
  }
}

}  // namespace

const ModelInfo& ModifiedCamClay::model_info() {
  static const ModelInfo info{
      "modified_cam_clay",
      "Modified Cam-Clay (Roscoe & Burland 1968): elliptical yield surface, isotropic hardening with void ratio",
      {
          {"lambda", "-", kNaN, 0.0, inf, true, true,
           "slope of the normal compression line in e-ln p' (natural log)", ParameterRole::compression_index},
          {"kappa", "-", kNaN, 0.0, inf, true, true,
           "slope of unloading-reloading lines in e-ln p'; elastic K = (1 + e) p'/kappa with the current e; "
           "kappa < lambda", ParameterRole::swelling_index},
          {"critical_state_ratio", "-", 0.0, 0.0, 3.0, false, true,
           "M = q/p' at critical state in triaxial compression; 0 = from critical_state_friction_angle",
           ParameterRole::critical_state_ratio},
          {"critical_state_friction_angle", "deg", 0.0, 0.0, 90.0, false, true,
           "critical-state friction angle phi_cs, M = 6 sin(phi_cs)/(3 - sin(phi_cs)); 0 = use critical_state_ratio (give one)",
           ParameterRole::critical_state_friction_angle},
          {"poissons_ratio", "-", 0.3, -1.0, 0.5, true, true,
           "Poisson's ratio nu' of the elastic part, G = 3 (1 - 2 nu') K / (2 (1 + nu')); ignored when shear_modulus > 0",
           ParameterRole::poissons_ratio},
          {"shear_modulus", "kPa", 0.0, 0.0, inf, false, true,
           "constant elastic shear modulus G; 0 = pressure-dependent G from poissons_ratio",
           ParameterRole::shear_modulus},
          {"lode_dependence", "-", 0.0, 0.0, 1.0, false, false,
           "0 = M the same in every direction; 1 = M(Lode angle) of Sheng, Sloan & Yu (2000): "
           "6 sin(phi_cs)/(3 + sin(phi_cs)) in extension", ParameterRole::none},
      },
      {"preconsolidation_pressure", "void_ratio", "plastic_rate", "multiplier_rate"},
      {{"critical_friction_angle", "critical_state_friction_angle"}},
      cam_clay_implied,
      cam_clay_unused,
  };
  return info;
}

std::unique_ptr<Model> ModifiedCamClay::create(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  const std::string prefix = where + ": modified_cam_clay: ";
  if (v.size() != info.parameters.size())
    throw InputError(prefix + "expected " + std::to_string(info.parameters.size()) + " parameter values, found " +
                     std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  if (v[kappa] >= v[lambda])
    throw InputError(prefix + "kappa = " + format_number(v[kappa]) + " must be smaller than lambda = " +
                     format_number(v[lambda]));
  const bool has_m = v[critical_state_ratio] > 0.0;
  const bool has_phi = v[critical_state_friction_angle] > 0.0;
  if (!has_m && !has_phi)
    throw InputError(prefix + "give critical_state_ratio (M > 0) or critical_state_friction_angle (phi_cs > 0); both are 0");
  if (has_m && has_phi)
    throw InputError(prefix + "give only one of critical_state_ratio = " + format_number(v[critical_state_ratio]) +
                     " and critical_state_friction_angle = " + format_number(v[critical_state_friction_angle]) +
                     " deg (set the other to 0)");
  if (v[lode_dependence] != 0.0 && v[lode_dependence] != 1.0)
    throw InputError(prefix + "lode_dependence = " + format_number(v[lode_dependence]) +
                     " must be 0 (M the same in every direction) or 1 (M depends on the Lode angle)");
  if (v[lode_dependence] == 1.0) {
    double m = v[critical_state_ratio];
    if (has_phi) {
      const double s = std::sin(degrees_to_radians(v[critical_state_friction_angle]));
      m = 6.0 * s / (3.0 - s);
    }
    if (m > kConvexLimit)
      throw InputError(prefix + "with lode_dependence = 1 the critical state ratio M = " + format_number(m) +
                       " must not exceed 2 (phi_cs = 48.59 deg), where the yield surface stops being convex");
  }
  return std::make_unique<ModifiedCamClay>(v);
}

ModifiedCamClay::ModifiedCamClay(const ParameterValues& v)
    : inv_kappa_(1.0 / v[kappa]), inv_plastic_(1.0 / (v[lambda] - v[kappa])), nu_(v[poissons_ratio]),
      shear_(v[shear_modulus]), lode_(v[lode_dependence] == 1.0) {
  double sphi;
  if (v[critical_state_ratio] > 0.0) {
    m_compression_ = v[critical_state_ratio];
    sphi = 3.0 * m_compression_ / (6.0 + m_compression_);
  } else {
    sphi = std::sin(degrees_to_radians(v[critical_state_friction_angle]));
    m_compression_ = 6.0 * sphi / (3.0 - sphi);
  }
  const double a = (3.0 - sphi) / (3.0 + sphi);
  alpha4_ = lode_ ? a * a * a * a : 1.0;
}

double ModifiedCamClay::ratio_and_slope(double sin3theta, double& slope) const {
  if (!lode_) {
    slope = 0.0;
    return m_compression_;
  }
  // Sheng, Sloan & Yu (2000): g = [2 a^4 / (1 + a^4 + (1 - a^4) sin 3theta)]^(1/4), with the sign
  // of sin 3theta turned to our convention (-1 in compression, where g = 1).
  const double den = 1.0 + alpha4_ + (1.0 - alpha4_) * sin3theta;
  const double g = std::sqrt(std::sqrt(2.0 * alpha4_ / den));
  slope = -0.25 * m_compression_ * g * (1.0 - alpha4_) / den;
  return m_compression_ * g;
}

double ModifiedCamClay::critical_state_ratio_at(const Vec6& stress) const {
  const Vec6 s = stress_deviator(stress);
  if (!lode_ || q_squared(s) <= 1e-24 * std::max(1.0, mean_stress(stress) * mean_stress(stress)))
    return m_compression_;
  Vec6 gradient;
  double slope;
  return ratio_and_slope(sin3theta_and_gradient(s, gradient), slope);
}

double ModifiedCamClay::extension_ratio() const {
  double slope;
  return ratio_and_slope(1.0, slope);
}

void ModifiedCamClay::initialise(const InitialConditions& c, MaterialState& state) const {
  const std::string prefix = "modified_cam_clay: ";
  if (std::isnan(c.void_ratio))
    throw InputError(prefix + "initial.void_ratio is required (the void ratio e0 at the start of the protocol)");
  if (!(c.void_ratio > 0.0) || !std::isfinite(c.void_ratio))
    throw InputError(prefix + "initial.void_ratio = " + format_number(c.void_ratio) + " must be positive");
  const double p0 = mean_stress(c.stress);
  if (!(p0 > 0.0))
    throw InputError(prefix + "the initial mean effective stress p' = " + format_number(p0) +
                     " kPa must be positive");
  const bool has_pc = !std::isnan(c.preconsolidation_pressure);
  const bool has_ocr = !std::isnan(c.overconsolidation_ratio);
  if (has_pc && has_ocr)
    throw InputError(prefix + "give initial.preconsolidation_pressure or initial.ocr, not both");
  const double m = critical_state_ratio_at(c.stress);
  const double q0 = von_mises_stress(c.stress);
  // The yield surface through the initial stress: p'_c = p' + q^2 / (M^2 p').
  const double on_surface = p0 + q0 * q0 / (m * m * p0);
  double pc = on_surface;
  auto outside = [&](const std::string& what) {
    throw InputError(prefix + what + " puts the initial stress (p' = " + format_number(p0) + " kPa, q = " +
                     format_number(q0) + " kPa) outside the yield surface; p'_c must be at least " +
                     format_number(on_surface) + " kPa");
  };
  if (has_pc) {
    pc = c.preconsolidation_pressure;
    if (!(pc > 0.0) || !std::isfinite(pc))
      throw InputError(prefix + "initial.preconsolidation_pressure = " + format_number(pc) +
                       " kPa must be positive");
    if (pc < on_surface * (1.0 - 1e-9)) outside("initial.preconsolidation_pressure = " + format_number(pc) + " kPa");
    pc = std::max(pc, on_surface);
  } else if (has_ocr) {
    if (!(c.overconsolidation_ratio >= 1.0) || !std::isfinite(c.overconsolidation_ratio))
      throw InputError(prefix + "initial.ocr = " + format_number(c.overconsolidation_ratio) + " must be at least 1");
    pc = c.overconsolidation_ratio * p0;
    if (pc < on_surface * (1.0 - 1e-9))
      outside("initial.ocr = " + format_number(c.overconsolidation_ratio) + " (p'_c = " + format_number(pc) + " kPa)");
    pc = std::max(pc, on_surface);
  }
  state = MaterialState{};
  state.stress = c.stress;
  state.internal[preconsolidation_pressure] = pc;
  state.internal[void_ratio] = c.void_ratio;
}

IntegrationResult ModifiedCamClay::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                             Mat6& tangent) const {
  out = in;
  const double e_n = in.internal[void_ratio];
  const double pc_n = in.internal[preconsolidation_pressure];
  const double p_n = mean_stress(in.stress);
  if (!(p_n > 0.0) || !(pc_n > 0.0) || !(e_n > 0.0) || !de.allFinite() || !in.stress.allFinite())
    return {Status::invalid_input, 0};

  // Exact void ratio over the increment and the chord s of 1 + e (header comment).
  const double dev = de[0] + de[1] + de[2];
  double phi_slope;
  const double chord = (1.0 + e_n) * chord_factor(dev, phi_slope);
  const double chord_slope = (1.0 + e_n) * phi_slope;  // ds/dd
  const double e_new = e_n - chord * dev;
  // No pore space left: the parameters and e do not describe this stress range.
  if (!(e_new > 0.0)) return {Status::invalid_input, 0};
  const double a = chord * inv_kappa_;    // d ln p' / d eps_v^e
  const double b = chord * inv_plastic_;  // d ln p'_c / d eps_v^p
  const double bulk_n = (1.0 + e_n) * p_n * inv_kappa_;  // tangent K at the start of the increment
  const double shear = shear_ > 0.0 ? shear_ : 1.5 * (1.0 - 2.0 * nu_) / (1.0 + nu_) * bulk_n;

  if (std::abs(a * dev) > kMaxExponent) return {Status::numerical_issue, 0};
  const Vec6 s_n = stress_deviator(in.stress);
  Vec6 s_tr = s_n;
  for (int i = 0; i < 3; ++i) s_tr[i] += 2.0 * shear * (de[i] - dev / 3.0);
  for (int i = 3; i < 6; ++i) s_tr[i] += shear * de[i];
  const double p_tr = p_n * std::exp(a * dev);
  const double q_tr2 = q_squared(s_tr);
  const double q_tr = std::sqrt(q_tr2);

  // M at the trial Lode angle (the return is radial, so it is also the final one).
  double slope = 0.0;
  Vec6 grad3 = Vec6::Zero();
  double m = m_compression_;
  if (lode_ && q_tr > 1e-12 * p_tr) m = ratio_and_slope(sin3theta_and_gradient(s_tr, grad3), slope);
  const double m2 = m * m;

  const Vec6 one = identity_voigt();
  const Mat6 dev_stiffness = deviatoric_stiffness(shear);
  const double pc2 = pc_n * pc_n;
  const double f_tr = q_tr2 + m2 * p_tr * (p_tr - pc_n);

  out.internal[void_ratio] = e_new;

  const double a_slope = chord_slope * inv_kappa_;  // da/dd
  if (f_tr <= kYieldTolerance * pc2) {
    out.internal[plastic_rate] = out.internal[multiplier_rate] = 0.0;
    out.stress = s_tr + p_tr * one;
    tangent = ((a + a_slope * dev) * p_tr) * one * one.transpose() + dev_stiffness;
    return {Status::ok, 0};
  }

  // Backward-Euler return: unknowns x = d eps_v^p and dl = plastic multiplier, with
  //   p' = p'_n exp(a (d eps_v - x)),  p'_c = p'_c,n exp(b x),  q = q_tr / (1 + 6 G dl),
  //   r1 = x - dl M^2 (2 p' - p'_c) = 0            (flow rule, d eps_v^p = dl dg/dp')
  //   r2 = (q^2 + M^2 p' (p' - p'_c)) / p'_c,n^2 = 0 (consistency)
  // Warm start: the last plastic step's rates times this step's strain-increment norm (a smooth
  // path takes about one Newton step fewer); from zero after an elastic step.
  const double strain_norm = de.norm();
  double x = in.internal[plastic_rate] * strain_norm;
  double dl = std::max(0.0, in.internal[multiplier_rate] * strain_norm);
  if (!(std::abs(x) < step_limit_guess(a, b)) || !std::isfinite(dl)) x = dl = 0.0;
  double p = p_tr * std::exp(-a * x);
  double pc = pc_n * std::exp(b * x);
  double d = 1.0;
  double q = q_tr;
  Eigen::Matrix2d jac;
  int iterations = 0;
  bool converged = false;
  const double step_limit = step_limit_guess(a, b);  // at most a factor e^0.5 in p' or p'_c a step
  // p' and p'_c follow x multiplicatively: p' = p'_tr exp(-a x), p'_c = p'_c,n exp(b x).
  for (; iterations <= kMaxIterations; ++iterations) {
    d = 1.0 + 6.0 * shear * dl;
    q = q_tr / d;
    const double r1 = x - dl * m2 * (2.0 * p - pc);
    const double r2 = (q * q + m2 * p * (p - pc)) / pc2;
    if (!std::isfinite(r1) || !std::isfinite(r2)) return {Status::numerical_issue, iterations};
    if (iterations > 0 && std::abs(r1) <= kStrainTolerance + kRelativeTolerance * std::abs(x) &&
        std::abs(r2) <= kRelativeTolerance) {
      converged = true;
      break;
    }
    if (iterations == kMaxIterations) break;
    jac(0, 0) = 1.0 + dl * m2 * (2.0 * a * p + b * pc);
    jac(0, 1) = -m2 * (2.0 * p - pc);
    jac(1, 0) = m2 * (-a * p * (2.0 * p - pc) - b * p * pc) / pc2;
    jac(1, 1) = -12.0 * shear * q * q / d / pc2;
    const double det = jac.determinant();
    if (!std::isfinite(det) || det == 0.0) return {Status::numerical_issue, iterations};
    const Eigen::Vector2d step = jac.inverse() * Eigen::Vector2d(r1, r2);
    double dx = -step[0];
    double ddl = -step[1];
    // Damping: bounded change of the exponentials and a non-negative multiplier.
    const double scale = std::abs(dx) > step_limit ? step_limit / std::abs(dx) : 1.0;
    dx *= scale;
    ddl *= scale;
    x += dx;
    p *= exp_correction(-a * dx);
    pc *= exp_correction(b * dx);
    dl = dl + ddl >= 0.0 ? dl + ddl : 0.5 * dl;
  }
  if (!converged) return {Status::no_convergence, iterations};
  if (!(p > 0.0) || !(pc > 0.0)) return {Status::numerical_issue, iterations};

  const Vec6 s = s_tr / d;
  out.stress = s + p * one;
  out.internal[preconsolidation_pressure] = pc;
  const double inv_norm = strain_norm > 0.0 ? 1.0 / strain_norm : 0.0;
  out.internal[plastic_rate] = x * inv_norm;
  out.internal[multiplier_rate] = dl * inv_norm;

  // Consistent tangent: differentiate r(x, dl; d, q_tr, M) = 0 with respect to the strain increment,
  // d = m . d eps (through the exponent and the chord s(d): d ln p'/dd = a + a'(d - x),
  // d ln p'_c/dd = b' x), d q_tr = (3 G / q_tr) s_tr . d eps, d M = M' grad(sin 3theta) . 2GP d eps.
  jac(0, 0) = 1.0 + dl * m2 * (2.0 * a * p + b * pc);
  jac(0, 1) = -m2 * (2.0 * p - pc);
  jac(1, 0) = m2 * (-a * p * (2.0 * p - pc) - b * p * pc) / pc2;
  jac(1, 1) = -12.0 * shear * q * q / d / pc2;
  const Eigen::Matrix2d jinv = jac.inverse();
  const double lnp_d = a + a_slope * (dev - x);
  const double lnpc_d = chord_slope * inv_plastic_ * x;
  const Eigen::Vector2d r_v(-dl * m2 * (2.0 * p * lnp_d - pc * lnpc_d),
                            m2 * p * (lnp_d * (2.0 * p - pc) - pc * lnpc_d) / pc2);
  const Eigen::Vector2d r_q(0.0, 2.0 * q / d / pc2);
  const Eigen::Vector2d r_m(-2.0 * m * dl * (2.0 * p - pc), 2.0 * m * p * (p - pc) / pc2);
  Eigen::Matrix<double, 2, 6> rhs = r_v * one.transpose();
  if (q_tr > 0.0) rhs += r_q * ((3.0 * shear / q_tr) * s_tr.transpose());
  if (slope != 0.0) rhs += r_m * (slope * grad3.transpose() * dev_stiffness);
  const Eigen::Matrix<double, 2, 6> y = -jinv * rhs;  // rows: dx/d eps, d dl/d eps
  tangent = p * one * (lnp_d * one.transpose() - a * y.row(0)) + dev_stiffness / d -
            (6.0 * shear / (d * d)) * s_tr * y.row(1);
  return {Status::ok, iterations};
}

}  // namespace triaxcal
