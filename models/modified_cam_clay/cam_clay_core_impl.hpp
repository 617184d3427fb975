#pragma once
// The definitions of CamClayCore<T> (cam_clay_core.hpp) and the helpers they use, included by the
// two translation units that instantiate them: modified_cam_clay.cpp (T = double) and
// modified_cam_clay_derivatives.cpp (T = Dual). Kept apart so that the compiler sees one caller of
// each helper in the double model's unit and inlines it as before (with both instantiations in one
// unit, g++ 12 outlined the Eigen expressions of the tangent assembly: 4 % slower per increment).
// Helpers have internal linkage (each unit its own copy).

#include <Eigen/LU>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>
#include <type_traits>

#include "modified_cam_clay/modified_cam_clay.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

namespace {

// Local Newton of the return mapping: bounds and tolerances.
constexpr int kMaxIterations = 40;
constexpr double kYieldTolerance = 1e-12;     // f / p'_c^2 at which a trial state counts as elastic
constexpr double kStrainTolerance = 1e-15;    // |r1| (a strain), absolute part
constexpr double kRelativeTolerance = 1e-12;  // |r1| relative to |x|, and |r2| (dimensionless)
constexpr double kMaxExponent = 600.0;        // keeps exp() finite

// Largest warm-start guess of d eps_v^p: the Newton step limit (a factor e^0.5 in p' or p'_c).
inline double step_limit_guess(double a, double b) { return 0.5 / std::max(a, b); }

// exp(t) for the Newton corrections of the return: a Taylor polynomial where |t| < 1e-3 (truncation
// t^5/120 < 1e-17, below round-off), else the library function. Most corrections after the first
// are that small, and exp dominated the cost of a plastic step.
inline double exp_correction(double t) {
  if (std::abs(t) < 1e-3) return 1.0 + t * (1.0 + t * (0.5 + t * (1.0 / 6.0 + t * (1.0 / 24.0))));
  return std::exp(t);
}

// The value part and the derivative part of a number (T = double or Dual), for code templated on
// the scalar (cam_clay_core.hpp).
inline const Vec6& values(const Vec6& v) { return v; }
inline Vec6 values(const DualVec6& v) {
  Vec6 r;
  for (int i = 0; i < 6; ++i) r[i] = v[i].a;
  return r;
}
inline double derivative_part(double) { return 0.0; }
inline Dual derivative_part(const Dual& x) {
  Dual d = x;
  d.a = 0.0;
  return d;
}
// `x` with its value replaced by `value` (derivatives kept).
inline double with_value(double value, double) { return value; }
inline Dual with_value(double value, const Dual& x) {
  Dual d = x;
  d.a = value;
  return d;
}
template <class T>
inline constexpr bool kDerivatives = !std::is_same_v<T, double>;

// phi(d) = (1 - exp(-d))/d and its derivative phi'(d) = (exp(-d) - phi)/d (a value: the tangent's),
// the chord factor of 1 + e over an increment of natural volumetric strain d (header comment).
// Below |d| = 1e-4 both from their Taylor series, phi = 1 - d/2 + d^2/6 - d^3/24 (next term
// d^4/120 < 1e-18) and phi' = -1/2 + d/3 - d^2/8 (next term d^3/30 < 4e-14, the tangent only),
// where the closed form of phi' would lose digits to cancellation; d = 0 (every undrained
// increment) exactly, 1 - d/2 there keeping the derivative of phi.
template <class T>
T chord_factor(const T& d, double& slope) {
  using std::expm1;
  const double dv = value_of(d);
  if (dv == 0.0) {
    slope = -0.5;
    return 1.0 + slope * d;
  }
  if (std::abs(dv) < 1e-4) {
    slope = -0.5 + dv * (1.0 / 3.0 - dv * (1.0 / 8.0));
    return 1.0 + d * (-0.5 + d * (1.0 / 6.0 - d * (1.0 / 24.0)));
  }
  const T em1 = expm1(-d);  // exp(-d) - 1, exact to round-off also for small d
  const T inv_d = 1.0 / d;
  const T phi = -em1 * inv_d;
  slope = (1.0 + value_of(em1) - value_of(phi)) * value_of(inv_d);
  return phi;
}

// 2 G P: deviatoric projection of an engineering strain increment to stress (Voigt).
inline Mat6 deviatoric_stiffness(double shear) {
  Mat6 d = Mat6::Zero();
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) d(i, j) = 2.0 * shear * ((i == j ? 1.0 : 0.0) - 1.0 / 3.0);
  for (int i = 3; i < 6; ++i) d(i, i) = shear;
  return d;
}

// Mean stress and deviator (conventions.hpp) on T.
template <class V>
typename V::Scalar mean_of(const V& s) {
  return (s[0] + s[1] + s[2]) / 3.0;
}
template <class V>
V deviator_of(const V& s) {
  V d = s;
  const typename V::Scalar p = mean_of(s);
  d[0] -= p;
  d[1] -= p;
  d[2] -= p;
  return d;
}

// q^2 = (3/2) s:s of a deviator held in Voigt stress form.
template <class V>
typename V::Scalar q_squared(const V& s) {
  return 1.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2] + 2.0 * (s[3] * s[3] + s[4] * s[4] + s[5] * s[5]));
}

// sin 3theta = -(3 sqrt3 / 2) J3 / J2^1.5 of a deviator s and its gradient (of the values) with
// respect to the Voigt stress components (each shear component counted once). Convention of
// conventions.hpp.
template <class V>
typename V::Scalar sin3theta_and_gradient(const V& s, Vec6& gradient) {
  using T = typename V::Scalar;
  using std::sqrt;
  const T j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]) + s[3] * s[3] + s[4] * s[4] + s[5] * s[5];
  const T j3 = s[0] * s[1] * s[2] + 2.0 * s[3] * s[4] * s[5] - s[0] * s[4] * s[4] - s[1] * s[5] * s[5] -
               s[2] * s[3] * s[3];
  const double c = -1.5 * std::sqrt(3.0);
  const T j2_15 = j2 * sqrt(j2);
  const T value = c * j3 / j2_15;
  // The gradient, of the values. (s s) of the symmetric tensor [[s0 s3 s5] [s3 s1 s4] [s5 s4 s2]].
  const Vec6 sv = values(s);
  const double j2v = value_of(j2), j3v = value_of(j3), j2_15v = value_of(j2_15);
  Vec6 ss;
  ss[0] = sv[0] * sv[0] + sv[3] * sv[3] + sv[5] * sv[5];
  ss[1] = sv[3] * sv[3] + sv[1] * sv[1] + sv[4] * sv[4];
  ss[2] = sv[5] * sv[5] + sv[4] * sv[4] + sv[2] * sv[2];
  ss[3] = sv[0] * sv[3] + sv[3] * sv[1] + sv[5] * sv[4];
  ss[4] = sv[3] * sv[5] + sv[1] * sv[4] + sv[4] * sv[2];
  ss[5] = sv[5] * sv[0] + sv[4] * sv[3] + sv[2] * sv[5];
  Vec6 dj2;
  Vec6 dj3;
  for (int i = 0; i < 3; ++i) {
    dj2[i] = sv[i];
    dj3[i] = ss[i] - 2.0 * j2v / 3.0;
  }
  for (int i = 3; i < 6; ++i) {
    dj2[i] = 2.0 * sv[i];
    dj3[i] = 2.0 * ss[i];
  }
  gradient = c * (dj3 / j2_15v - 1.5 * j3v / (j2_15v * j2v) * dj2);
  // An extreme of the Lode angle: sin 3theta held at +-1, its gradient and derivatives zero.
  if (value >= 1.0) {
    gradient.setZero();
    return T(1.0);
  }
  if (value <= -1.0) {
    gradient.setZero();
    return T(-1.0);
  }
  return value;
}

}  // namespace

template <class T>
CamClayCore<T>::CamClayCore(const std::array<T, kCamClayParameters>& v)
    : inv_kappa_(1.0 / v[ModifiedCamClay::kappa]),
      inv_plastic_(1.0 / (v[ModifiedCamClay::lambda] - v[ModifiedCamClay::kappa])),
      nu_(v[ModifiedCamClay::poissons_ratio]),
      shear_(v[ModifiedCamClay::shear_modulus]),
      lode_(value_of(v[ModifiedCamClay::lode_dependence]) == 1.0) {
  using std::sin;
  T sphi;
  if (value_of(v[ModifiedCamClay::critical_state_ratio]) > 0.0) {
    m_compression_ = v[ModifiedCamClay::critical_state_ratio];
    sphi = 3.0 * m_compression_ / (6.0 + m_compression_);
  } else {
    sphi = sin(v[ModifiedCamClay::critical_state_friction_angle] * std::numbers::pi / 180.0);
    m_compression_ = 6.0 * sphi / (3.0 - sphi);
  }
  const T a = (3.0 - sphi) / (3.0 + sphi);
  alpha4_ = lode_ ? T(a * a * a * a) : T(1.0);
}

template <class T>
T CamClayCore<T>::ratio_and_slope(const T& sin3theta, double& slope) const {
  using std::sqrt;
  if (!lode_) {
    slope = 0.0;
    return m_compression_;
  }
  // Sheng, Sloan & Yu (2000): g = [2 a^4 / (1 + a^4 + (1 - a^4) sin 3theta)]^(1/4), with the sign
  // of sin 3theta turned to our convention (-1 in compression, where g = 1).
  const T den = 1.0 + alpha4_ + (1.0 - alpha4_) * sin3theta;
  const T g = sqrt(sqrt(2.0 * alpha4_ / den));
  slope = value_of(-0.25 * m_compression_ * g * (1.0 - alpha4_) / den);
  return m_compression_ * g;
}

template <class T>
T CamClayCore<T>::critical_state_ratio_at(const Vec6& stress) const {
  const Vec6 s = stress_deviator(stress);
  if (!lode_ || q_squared(s) <= 1e-24 * std::max(1.0, mean_stress(stress) * mean_stress(stress)))
    return m_compression_;
  Vec6 gradient;
  double slope;
  return ratio_and_slope(T(sin3theta_and_gradient(s, gradient)), slope);
}

template <class T>
template <class State>
void CamClayCore<T>::initialise(const InitialConditions& c, State& state) const {
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
  const T m = critical_state_ratio_at(c.stress);
  const double q0 = von_mises_stress(c.stress);
  // The yield surface through the initial stress: p'_c = p' + q^2 / (M^2 p') (through M, the one
  // part of the initial state that depends on parameters).
  const T on_surface = p0 + q0 * q0 / (m * m * p0);
  T pc = on_surface;
  auto outside = [&](const std::string& what) {
    throw InputError(prefix + what + " puts the initial stress (p' = " + format_number(p0) + " kPa, q = " +
                     format_number(q0) + " kPa) outside the yield surface; p'_c must be at least " +
                     format_number(value_of(on_surface)) + " kPa");
  };
  // std::max on T: the larger value, with its derivatives.
  auto larger = [](const T& x, const T& y) { return x < y ? y : x; };
  if (has_pc) {
    const double given = c.preconsolidation_pressure;
    if (!(given > 0.0) || !std::isfinite(given))
      throw InputError(prefix + "initial.preconsolidation_pressure = " + format_number(given) +
                       " kPa must be positive");
    if (given < value_of(on_surface) * (1.0 - 1e-9))
      outside("initial.preconsolidation_pressure = " + format_number(given) + " kPa");
    pc = larger(T(given), on_surface);
  } else if (has_ocr) {
    if (!(c.overconsolidation_ratio >= 1.0) || !std::isfinite(c.overconsolidation_ratio))
      throw InputError(prefix + "initial.ocr = " + format_number(c.overconsolidation_ratio) + " must be at least 1");
    const double given = c.overconsolidation_ratio * p0;
    if (given < value_of(on_surface) * (1.0 - 1e-9))
      outside("initial.ocr = " + format_number(c.overconsolidation_ratio) + " (p'_c = " + format_number(given) +
              " kPa)");
    pc = larger(T(given), on_surface);
  }
  state = State{};
  for (int i = 0; i < 6; ++i) state.stress[i] = T(c.stress[i]);
  state.internal[ModifiedCamClay::preconsolidation_pressure] = pc;
  state.internal[ModifiedCamClay::void_ratio] = T(c.void_ratio);
}

template <class T>
template <class State>
IntegrationResult CamClayCore<T>::integrate(const State& in, const Vec& de, State& out, Mat6& tangent) const {
  using std::exp;
  constexpr int kPc = ModifiedCamClay::preconsolidation_pressure;
  constexpr int kE = ModifiedCamClay::void_ratio;
  constexpr int kPlasticRate = ModifiedCamClay::plastic_rate;
  constexpr int kMultiplierRate = ModifiedCamClay::multiplier_rate;
  out = in;
  const T& e_n = in.internal[kE];
  const T& pc_n = in.internal[kPc];
  const T p_n = mean_of(in.stress);
  const auto& de_v = values(de);  // de itself where T = double
  if (!(value_of(p_n) > 0.0) || !(value_of(pc_n) > 0.0) || !(value_of(e_n) > 0.0) || !de_v.allFinite() ||
      !values(in.stress).allFinite())
    return {Status::invalid_input, 0};

  // Exact void ratio over the increment and the chord s of 1 + e (header comment).
  const T dev = de[0] + de[1] + de[2];
  double phi_slope;
  const T chord = (1.0 + e_n) * chord_factor(dev, phi_slope);
  const double chord_slope = (1.0 + value_of(e_n)) * phi_slope;  // ds/dd (a value: the tangent's)
  const T e_new = e_n - chord * dev;
  // No pore space left: the parameters and e do not describe this stress range.
  if (!(value_of(e_new) > 0.0)) return {Status::invalid_input, 0};
  const T a = chord * inv_kappa_;    // d ln p' / d eps_v^e
  const T b = chord * inv_plastic_;  // d ln p'_c / d eps_v^p
  const T bulk_n = (1.0 + e_n) * p_n * inv_kappa_;  // tangent K at the start of the increment
  const T shear = value_of(shear_) > 0.0 ? shear_ : T(1.5 * (1.0 - 2.0 * nu_) / (1.0 + nu_) * bulk_n);
  // Values for the decisions, the local Newton iteration and the tangent.
  const double a_v = value_of(a), b_v = value_of(b), dev_v = value_of(dev), shear_v = value_of(shear);

  if (std::abs(a_v * dev_v) > kMaxExponent) return {Status::numerical_issue, 0};
  const Vec s_n = deviator_of(in.stress);
  Vec s_tr = s_n;
  for (int i = 0; i < 3; ++i) s_tr[i] += 2.0 * shear * (de[i] - dev / 3.0);
  for (int i = 3; i < 6; ++i) s_tr[i] += shear * de[i];
  const T p_tr = p_n * exp(a * dev);
  const T q_tr2 = q_squared(s_tr);
  const double p_tr_v = value_of(p_tr);
  const double q_tr = std::sqrt(value_of(q_tr2));  // a value: q_tr enters the dual numbers only as q_tr^2

  // M at the trial Lode angle (the return is radial, so it is also the final one).
  double slope = 0.0;
  Vec6 grad3 = Vec6::Zero();
  T m = m_compression_;
  if (lode_ && q_tr > 1e-12 * p_tr_v) m = ratio_and_slope(sin3theta_and_gradient(s_tr, grad3), slope);
  const T m2 = m * m;
  const double m_v = value_of(m), m2_v = value_of(m2);

  const Vec6 one = identity_voigt();
  const Mat6 dev_stiffness = deviatoric_stiffness(shear_v);
  const T pc2 = pc_n * pc_n;
  const T f_tr = q_tr2 + m2 * p_tr * (p_tr - pc_n);

  out.internal[kE] = e_new;

  const double a_slope = chord_slope * value_of(inv_kappa_);  // da/dd
  if (value_of(f_tr) <= kYieldTolerance * value_of(pc2)) {
    out.internal[kPlasticRate] = out.internal[kMultiplierRate] = T(0.0);
    out.stress = s_tr + p_tr * one;
    tangent = ((a_v + a_slope * dev_v) * p_tr_v) * one * one.transpose() + dev_stiffness;
    return {Status::ok, 0};
  }

  // Backward-Euler return: unknowns x = d eps_v^p and dl = plastic multiplier, with
  //   p' = p'_n exp(a (d eps_v - x)),  p'_c = p'_c,n exp(b x),  q = q_tr / (1 + 6 G dl),
  //   r1 = x - dl M^2 (2 p' - p'_c) = 0            (flow rule, d eps_v^p = dl dg/dp')
  //   r2 = (q^2 + M^2 p' (p' - p'_c)) / p'_c,n^2 = 0 (consistency)
  // solved on the values. Warm start: the last plastic step's rates times this step's
  // strain-increment norm (a smooth path takes about one Newton step fewer); from zero after an
  // elastic step.
  const double pc_n_v = value_of(pc_n);
  const double pc2_v = value_of(pc2);
  const double strain_norm = de_v.norm();
  double x = value_of(in.internal[kPlasticRate]) * strain_norm;
  double dl = std::max(0.0, value_of(in.internal[kMultiplierRate]) * strain_norm);
  if (!(std::abs(x) < step_limit_guess(a_v, b_v)) || !std::isfinite(dl)) x = dl = 0.0;
  double p = p_tr_v * std::exp(-a_v * x);
  double pc = pc_n_v * std::exp(b_v * x);
  double d = 1.0;
  double q = q_tr;
  Eigen::Matrix2d jac;
  int iterations = 0;
  bool converged = false;
  const double step_limit = step_limit_guess(a_v, b_v);  // at most a factor e^0.5 in p' or p'_c a step
  // p' and p'_c follow x multiplicatively: p' = p'_tr exp(-a x), p'_c = p'_c,n exp(b x).
  for (; iterations <= kMaxIterations; ++iterations) {
    d = 1.0 + 6.0 * shear_v * dl;
    q = q_tr / d;
    const double r1 = x - dl * m2_v * (2.0 * p - pc);
    const double r2 = (q * q + m2_v * p * (p - pc)) / pc2_v;
    if (!std::isfinite(r1) || !std::isfinite(r2)) return {Status::numerical_issue, iterations};
    if (iterations > 0 && std::abs(r1) <= kStrainTolerance + kRelativeTolerance * std::abs(x) &&
        std::abs(r2) <= kRelativeTolerance) {
      converged = true;
      break;
    }
    if (iterations == kMaxIterations) break;
    jac(0, 0) = 1.0 + dl * m2_v * (2.0 * a_v * p + b_v * pc);
    jac(0, 1) = -m2_v * (2.0 * p - pc);
    jac(1, 0) = m2_v * (-a_v * p * (2.0 * p - pc) - b_v * p * pc) / pc2_v;
    jac(1, 1) = -12.0 * shear_v * q * q / d / pc2_v;
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
    p *= exp_correction(-a_v * dx);
    pc *= exp_correction(b_v * dx);
    dl = dl + ddl >= 0.0 ? dl + ddl : 0.5 * dl;
  }
  if (!converged) return {Status::no_convergence, iterations};
  if (!(p > 0.0) || !(pc > 0.0)) return {Status::numerical_issue, iterations};

  // The Jacobian dr/d(x, dl) at the converged point (the tangent's and the derivatives').
  jac(0, 0) = 1.0 + dl * m2_v * (2.0 * a_v * p + b_v * pc);
  jac(0, 1) = -m2_v * (2.0 * p - pc);
  jac(1, 0) = m2_v * (-a_v * p * (2.0 * p - pc) - b_v * p * pc) / pc2_v;
  jac(1, 1) = -12.0 * shear_v * q * q / d / pc2_v;
  const Eigen::Matrix2d jinv = jac.inverse();

  // The converged unknowns with their derivatives (implicit function theorem; cam_clay_core.hpp):
  // r(x, dl; inputs) = 0 at the converged values gives d(x, dl) = -J^-1 dr/d(inputs), the
  // derivative part of one Newton correction from the converged values with r on dual numbers
  // (its value part, ~0, is dropped: the values stay the double model's). p', p'_c and d then
  // carry the derivatives of their expressions in x and dl; their values stay those of the
  // iteration.
  T x_t(x), dl_t(dl), p_t(p), pc_t(pc), d_t(d);
  if constexpr (kDerivatives<T>) {
    const T p_r = p_tr * exp(-a * x);
    const T pc_r = pc_n * exp(b * x);
    const T d_r = 1.0 + 6.0 * shear * dl;
    const T r1 = x - dl * m2 * (2.0 * p_r - pc_r);
    const T r2 = (q_tr2 / (d_r * d_r) + m2 * p_r * (p_r - pc_r)) / pc2;
    x_t = x + derivative_part(-(jinv(0, 0) * r1 + jinv(0, 1) * r2));
    dl_t = dl + derivative_part(-(jinv(1, 0) * r1 + jinv(1, 1) * r2));
    p_t = with_value(p, p_tr * exp(-a * x_t));
    pc_t = with_value(pc, pc_n * exp(b * x_t));
    d_t = with_value(d, 1.0 + 6.0 * shear * dl_t);
  }

  out.stress = s_tr / d_t + p_t * one;
  out.internal[kPc] = pc_t;
  T inv_norm(0.0);
  if (strain_norm > 0.0) {
    if constexpr (kDerivatives<T>) {
      using std::sqrt;
      T squared(0.0);
      for (int i = 0; i < 6; ++i) squared += de[i] * de[i];
      inv_norm = 1.0 / with_value(strain_norm, sqrt(squared));
    } else {
      inv_norm = 1.0 / strain_norm;
    }
  }
  out.internal[kPlasticRate] = x_t * inv_norm;
  out.internal[kMultiplierRate] = dl_t * inv_norm;

  // Consistent tangent (of the values): differentiate r(x, dl; d, q_tr, M) = 0 with respect to the
  // strain increment, d = m . d eps (through the exponent and the chord s(d): d ln p'/dd =
  // a + a'(d - x), d ln p'_c/dd = b' x), d q_tr = (3 G / q_tr) s_tr . d eps,
  // d M = M' grad(sin 3theta) . 2GP d eps.
  const Vec6& s_tr_v = values(s_tr);
  const double lnp_d = a_v + a_slope * (dev_v - x);
  const double lnpc_d = chord_slope * value_of(inv_plastic_) * x;
  const Eigen::Vector2d r_v(-dl * m2_v * (2.0 * p * lnp_d - pc * lnpc_d),
                            m2_v * p * (lnp_d * (2.0 * p - pc) - pc * lnpc_d) / pc2_v);
  const Eigen::Vector2d r_q(0.0, 2.0 * q / d / pc2_v);
  const Eigen::Vector2d r_m(-2.0 * m_v * dl * (2.0 * p - pc), 2.0 * m_v * p * (p - pc) / pc2_v);
  Eigen::Matrix<double, 2, 6> rhs = r_v * one.transpose();
  if (q_tr > 0.0) rhs += r_q * ((3.0 * shear_v / q_tr) * s_tr_v.transpose());
  if (slope != 0.0) rhs += r_m * (slope * grad3.transpose() * dev_stiffness);
  const Eigen::Matrix<double, 2, 6> y = -jinv * rhs;  // rows: dx/d eps, d dl/d eps
  tangent = p * one * (lnp_d * one.transpose() - a_v * y.row(0)) + dev_stiffness / d -
            (6.0 * shear_v / (d * d)) * s_tr_v * y.row(1);
  return {Status::ok, iterations};
}

}  // namespace triaxcal
