#include "hyperbolic_hardening/hyperbolic_hardening.hpp"

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <type_traits>

#include "hyperbolic_hardening/dual.hpp"
#include "seeded_parameters.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

namespace {

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr const char* kName = "hyperbolic_hardening";

// Stiffness stress term floor, relative to p_ref + c cot phi: keeps E_ur positive near the apex.
constexpr double kStiffnessFloor = 1e-3;
// A stress whose J2 is below this (relative to p'^2 + 1 kPa^2) is treated as isotropic.
constexpr double kIsotropic = 1e-24;
// Local Newton: residual tolerance relative to the largest principal trial stress (floor 1 kPa),
// and the iteration bound.
constexpr double kLocalTolerance = 1e-11;
constexpr int kMaxLocalIterations = 40;
// A trial stress violates a surface when f > kYieldTolerance * scale.
constexpr double kYieldTolerance = 1e-10;

using hyperbolic::value;
constexpr int kUnknowns = 5;  // three principal stresses and at most two multipliers
using D5 = hyperbolic::Dual<kUnknowns>;
template <class S>
using Constants = HyperbolicHardening::Constants<S>;
template <class T>
using Vec6Of = Eigen::Matrix<T, 6, 1>;
template <class T>
using InternalOf = std::array<T, kMaxStateVariables>;

// The larger of two values as std::max(a, b) picks it (a unless a < b), derivative of the one chosen.
template <class T>
T max_of(const T& a, const T& b) {
  return value(a) < value(b) ? b : a;
}

// Degrees of an angle in radians, as radians_to_degrees; and the reverse.
template <class T>
T degrees(const T& rad) {
  return rad * 180.0 / std::numbers::pi;
}
template <class T>
T radians(const T& deg) {
  return deg * std::numbers::pi / 180.0;
}

// Everything the return mapping needs at one principal stress and set of multipliers.
template <class T>
struct Point {
  T f[3];        // yield functions: shear, cap, tension (kPa)
  T n[3][3];     // flow directions (principal, dimensionless)
  T gamma;       // new shear hardening gamma_p
  T pp;          // new cap pressure p_p (kPa)
  T cap_strain;  // plastic volumetric strain increment of the cap
  T sin_phi_m;
  T sin_psi_m;
};

// The discrete choices of one evaluation of the surfaces (evaluate, evaluate_derivatives), in the
// order they are met. The derivative version replays the choices the value Jacobian made at the
// converged point, so that its residual is differentiated on the same branch as that Jacobian
// (at the Mohr-Coulomb limit sin phi_m = sin phi' holds to round-off, and which side of the cap on
// sin phi_m the rounding lands on must not differ between the two).
enum Branch { anisotropic, above_floor, failure_positive, on_hyperbola, denominator_positive, capped, cut, floored,
              branch_count };

// Choices taken on the values (the double path; the compiler keeps nothing of the policy).
struct OnValues {
  bool operator()(Branch, bool on_values) const { return on_values; }
};
// Choices taken on the values and recorded.
struct Branches {
  bool taken[branch_count]{};
  bool operator()(Branch b, bool on_values) {
    taken[b] = on_values;
    return on_values;
  }
};
// Choices replayed from a record.
struct Replay {
  const Branches& record;
  bool operator()(Branch b, bool) const { return record.taken[b]; }
};

// x^y. With a constant exponent (double), the common y = 0.5 as a square root; an exponent that
// carries derivatives always goes through pow, whose derivative has the term x^y ln x dy.
template <class T, class Y>
T power(const T& x, const Y& y) {
  using std::pow;
  using std::sqrt;
  if constexpr (std::is_same_v<Y, double>)
    return y == 0.5 ? sqrt(x) : pow(x, y);
  else
    return pow(x, y);
}

// Hardening state at the start of the increment.
template <class S>
struct History {
  S gamma;   // gamma_p
  S pp;      // p_p (kPa)
  S pp_pow;  // (p_p / p_ref)^(1 - m)
  History(const Constants<S>& k, const S& gamma_n, const S& pp_n)
      : gamma(gamma_n), pp(pp_n), pp_pow(power(pp_n / k.p_ref, 1.0 - k.m)) {}
};

// p_p after a cap plastic volumetric strain eps: d p_p = H_ref (p_p/p_ref)^m d eps, integrated exactly.
template <class T, class S, class Decide>
T hardened_cap(const Constants<S>& k, const History<S>& h, const T& eps, Decide& decide) {
  using std::exp;
  using std::pow;
  const S e = 1.0 - k.m;
  if (value(e) < 1e-9) return h.pp * exp(eps * (k.h_ref / k.p_ref));
  const T raw = h.pp_pow + eps * (e * k.h_ref / k.p_ref);
  const T base = decide(floored, !(value(raw) >= 1e-300)) ? T(1e-300) : raw;
  if constexpr (std::is_same_v<S, double>)
    if (e == 0.5) return k.p_ref * (base * base);
  return k.p_ref * pow(base, 1.0 / e);
}

// Evaluate the surfaces at principal stress `sig` with multipliers dl (shear, cap, tension) from
// hardening state (gamma_n, pp_n). Symmetric in the three principal values: no ordering needed.
// T: the scalar of the unknowns (double, D5 for the local Jacobian, Dual); S: that of the
// constants and the history (double, or Dual in the derivative version); Decide: where the
// discrete choices come from (OnValues, Branches, Replay).
template <class T, class S, class Decide = const OnValues>
void evaluate(const Constants<S>& k, const T sig[3], const T dl[3], bool cap_active, const History<S>& h,
              Point<T>& o, Decide&& decide = OnValues{}) {
  using std::sqrt;
  const T p = (sig[0] + sig[1] + sig[2]) / 3.0;
  const T s[3] = {sig[0] - p, sig[1] - p, sig[2] - p};
  const T j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]);
  const double pv = value(p);
  const S c1 = 0.5 * (1.0 + k.delta);
  const S c2 = 2.25 * (k.delta - 1.0);
  T q(0.0), x(0.0), qt2(0.0);
  T dq[3], dx[3], qt_dqt[3];
  if (decide(anisotropic, value(j2) > kIsotropic * (pv * pv + 1.0))) {
    const T j3 = s[0] * s[1] * s[2];
    q = sqrt(3.0 * j2);
    const T inv_j2 = 1.0 / j2;
    const T inv_q = 1.0 / q;
    x = j3 * inv_j2;
    const T qt = c1 * q - c2 * x;
    qt2 = qt * qt;
    for (int i = 0; i < 3; ++i) {
      dq[i] = 1.5 * s[i] * inv_q;
      // dX/ds_i = (dJ3/ds_i - X s_i) / J2 with dJ3/ds_i = s_i^2 - 2 J2/3.
      dx[i] = (s[i] * s[i] - x * s[i]) * inv_j2 - 2.0 / 3.0;
      qt_dqt[i] = qt * (c1 * dq[i] - c2 * dx[i]);
    }
  } else {
    // Isotropic: q~^2 = 3 J2 (its compression value), exact to second order in the deviator.
    qt2 = 3.0 * j2;
    for (int i = 0; i < 3; ++i) {
      dq[i] = T(0.0);
      dx[i] = T(0.0);
      qt_dqt[i] = 1.5 * s[i];
    }
  }
  const T s3 = p - 0.5 * q + 0.75 * x;
  T ds3[3];
  for (int i = 0; i < 3; ++i) ds3[i] = 1.0 / 3.0 - 0.5 * dq[i] + 0.75 * dx[i];
  const T shifted = s3 + k.c_cot;  // s3 + c cot phi

  // Shear hardening surface.
  const T ratio =
      power((decide(above_floor, value(shifted) >= value(k.floor)) ? shifted : T(k.floor)) / (k.p_ref + k.c_cot), k.m);
  const T a = 2.0 / ((2.0 * k.e50_ref / (2.0 - k.rf)) * ratio);  // 2 / E_i
  const T b = 2.0 / (k.eur_ref * ratio);                          // 2 / E_ur
  const T qf = k.kf * shifted;
  o.gamma = h.gamma + dl[0];
  T qy = qf;
  if (decide(failure_positive, value(qf) > 0.0)) {
    const T qa = qf / k.rf;
    const T bb = a - b + o.gamma / qa;
    const T qh = 2.0 * o.gamma / (bb + sqrt(bb * bb + 4.0 * b * o.gamma / qa));
    if (decide(on_hyperbola, !(value(qf) <= value(qh)))) qy = qh;
  }
  o.f[0] = q - qy;

  // Mobilised friction and Rowe's dilatancy.
  const T denom = 2.0 * shifted + q;  // s1 + s3 + 2 c cot phi
  T sphm = decide(denominator_positive, value(denom) > 0.0) ? q / denom : T(k.sin_phi);
  if (decide(capped, !(value(sphm) <= value(k.sin_phi)))) sphm = T(k.sin_phi);
  T spsi(0.0);
  if (k.rule != 2) {
    spsi = (sphm - k.sin_cv) / (1.0 - sphm * k.sin_cv);
    if (k.rule == 1 && decide(cut, !(value(spsi) >= 0.0))) spsi = T(0.0);
  }
  o.sin_phi_m = sphm;
  o.sin_psi_m = spsi;
  for (int i = 0; i < 3; ++i) o.n[0][i] = dq[i] * (0.5 - 0.5 * spsi) - spsi * ds3[i];

  // Cap.
  const T big_f = sqrt(qt2 * (1.0 / k.alpha2) + p * p);
  const T inv_f = 1.0 / big_f;
  for (int i = 0; i < 3; ++i) o.n[1][i] = (qt_dqt[i] * (1.0 / k.alpha2) + p * (1.0 / 3.0)) * inv_f;
  o.cap_strain = dl[1] * p * inv_f;
  o.pp = cap_active ? hardened_cap(k, h, o.cap_strain, decide) : T(h.pp);
  o.f[1] = big_f - o.pp;

  // Tension cut-off.
  o.f[2] = -s3 - k.tension;
  for (int i = 0; i < 3; ++i) o.n[2][i] = -ds3[i];
}

// Smooth stress measures of a general stress vector (see the header).
template <class T>
struct Measures {
  T p, q, x, s3, qt;
};

// As mean_stress, j2_invariant and j3_invariant (conventions.hpp), operation for operation.
template <class T>
Measures<T> measures(const Vec6Of<T>& stress, const T& delta) {
  using std::sqrt;
  Measures<T> m{T(0.0), T(0.0), T(0.0), T(0.0), T(0.0)};
  m.p = (stress[0] + stress[1] + stress[2]) / 3.0;
  const T d0 = stress[0] - m.p, d1 = stress[1] - m.p, d2 = stress[2] - m.p;
  const T& d3 = stress[3];
  const T& d4 = stress[4];
  const T& d5 = stress[5];
  const T j2 = 0.5 * (d0 * d0 + d1 * d1 + d2 * d2) + d3 * d3 + d4 * d4 + d5 * d5;
  const double pv = value(m.p);
  if (value(j2) > kIsotropic * (pv * pv + 1.0)) {
    const T j3 = d0 * d1 * d2 + 2.0 * d3 * d4 * d5 - d0 * d4 * d4 - d1 * d5 * d5 - d2 * d3 * d3;
    m.q = sqrt(3.0 * j2);
    m.x = j3 / j2;
  }
  m.s3 = m.p - 0.5 * m.q + 0.75 * m.x;
  m.qt = 0.5 * (1.0 + delta) * m.q - 2.25 * (delta - 1.0) * m.x;
  return m;
}

template <class T, class S>
T stiffness_ratio(const Constants<S>& k, const T& s3) {
  return power(max_of(s3 + k.c_cot, T(k.floor)) / (k.p_ref + k.c_cot), k.m);
}

// f_bar of the paper (eq. 8) without gamma_p: the plastic shear strain that puts the shear
// locus through a stress with deviator q and minor stress s3 (q < q_f).
template <class S>
S shear_locus(const Constants<S>& k, const S& q, const S& s3) {
  const S ratio = stiffness_ratio(k, s3);
  const S ei = 2.0 * k.e50_ref / (2.0 - k.rf) * ratio;
  const S eur = k.eur_ref * ratio;
  const S qa = k.kf * (s3 + k.c_cot) / k.rf;
  return 2.0 * q / (ei * (1.0 - q / qa)) - 2.0 * q / eur;
}

// Isotropic elasticity with E_ur at the stress at the start of the increment.
template <class T>
struct Elasticity {
  T bulk, shear, lame, diag;
};

// Inlined (as before the templates): called out of line they cost the double integrate 2 % more instructions.
template <class T>
[[gnu::always_inline]] inline Elasticity<T> elasticity(const Constants<T>& k, const Vec6Of<T>& stress) {
  const Measures<T> m0 = measures(stress, k.delta);
  const T eur = k.eur_ref * stiffness_ratio(k, m0.s3);
  Elasticity<T> e{eur / (3.0 * (1.0 - 2.0 * k.nu)), eur / (2.0 * (1.0 + k.nu)), T(0.0), T(0.0)};
  e.lame = e.bulk - 2.0 * e.shear / 3.0;
  e.diag = e.bulk + 4.0 * e.shear / 3.0;  // as isotropic_elastic_stiffness
  return e;
}

// The elastic trial stress (engineering shear strains).
template <class T>
[[gnu::always_inline]] inline Vec6Of<T> elastic_trial(const Vec6Of<T>& stress, const Vec6Of<T>& de,
                                                      const Elasticity<T>& e) {
  Vec6Of<T> trial;
  for (int i = 0; i < 3; ++i) trial[i] = stress[i] + e.diag * de[i] + e.lame * (de[(i + 1) % 3] + de[(i + 2) % 3]);
  for (int i = 3; i < 6; ++i) trial[i] = stress[i] + e.shear * de[i];
  return trial;
}

// The internal variables after an elastic step (the others stay as they were).
template <class T>
void elastic_state(const Point<T>& at_trial, InternalOf<T>& out) {
  using std::asin;
  out[HyperbolicHardening::mobilised_friction] = degrees(asin(at_trial.sin_phi_m));
  out[HyperbolicHardening::mobilised_dilation] = degrees(asin(at_trial.sin_psi_m));
  out[HyperbolicHardening::active_surfaces] = T(0.0);
}

// The internal variables after a plastic step at the converged point `pt` with multipliers dl.
template <class T>
void plastic_state(const InternalOf<T>& in, const Point<T>& pt, const T dl[3], int accepted, const T& inv_norm,
                   InternalOf<T>& out) {
  using std::asin;
  out[HyperbolicHardening::shear_hardening] = pt.gamma;
  out[HyperbolicHardening::cap_pressure] = pt.pp;
  out[HyperbolicHardening::cap_volumetric_strain] = in[HyperbolicHardening::cap_volumetric_strain] + pt.cap_strain;
  out[HyperbolicHardening::mobilised_friction] = degrees(asin(pt.sin_phi_m));
  out[HyperbolicHardening::mobilised_dilation] = degrees(asin(pt.sin_psi_m));
  out[HyperbolicHardening::active_surfaces] = T(static_cast<double>(accepted));
  out[HyperbolicHardening::shear_rate] = dl[HyperbolicHardening::shear] * inv_norm;
  out[HyperbolicHardening::cap_rate] = dl[HyperbolicHardening::cap] * inv_norm;
}

}  // namespace

namespace {

// Where the model's definitions differ from the classical quantities of the same role (Schanz,
// Vermeer & Bonnier 1999, eqs. 1-3 and 14-16; the algebra in the header).
ImpliedValue hyperbolic_implied(ParameterRole role, const std::vector<double>&) {
  switch (role) {
    case ParameterRole::secant_stiffness_ref:
      return {kNotGiven, "",
              "secant_stiffness_ref is an input of the hardening law, not the E_50 of the model's curves: the hyperbola is "
              "written in the plastic shear strain gamma_p = eps_1^p - 2 eps_3^p, so a curve at s3' = reference_pressure has "
              "E_50 = secant_stiffness_ref only without plastic volume change; dilatancy (Rowe) and the cap's compaction "
              "change its axial strain, and the power law is in s3' + c' cot phi'. The E_50 rows per test compare curves by "
              "one rule"};
    case ParameterRole::critical_state_friction_angle:
      return {kNotGiven, "",
              "the model's phi_cv is the mobilised friction angle of zero dilation in Rowe's relation; at large strain the "
              "model stays at phi' (no softening to a critical state)"};
    default: return {};
  }
}

}  // namespace

const ModelInfo& HyperbolicHardening::model_info() {
  static const ModelInfo info{
      kName,
      "double-hardening model with hyperbolic shear hardening and a cap, after Schanz, Vermeer & Bonnier (1999)",
      // Strength, then stiffness, then the cap. Defaults are typical values from memory of Schanz,
      // Vermeer & Bonnier (1999) (p_ref 100 kPa, nu_ur 0.2, R_f 0.9, E_ur = 3 E50, E_oed = E50) and
      // a medium-dense sand of our own (phi' 33, phi_cv 30, K0 0.5); starting values, not design values.
      {
          {"friction_angle", "deg", 33.0, 0.0, 90.0, true, true, "effective friction angle phi' (Mohr-Coulomb failure)",
           ParameterRole::friction_angle},
          {"cohesion", "kPa", 0.0, 0.0, inf, false, true, "effective cohesion c'", ParameterRole::cohesion},
          {"tensile_strength", "kPa", 0.0, 0.0, inf, false, true,
           "largest tensile minor principal effective stress (tension cut-off); capped at c' cot phi'",
           ParameterRole::tensile_strength},
          {"critical_state_friction_angle", "deg", 30.0, 0.0, 90.0, true, true,
           "phi_cv of Rowe's stress-dilatancy (<= friction_angle); phi_cv = phi' gives no dilation",
           ParameterRole::critical_state_friction_angle},
          {"dilatancy_rule", "-", 1.0, 0.0, 2.0, false, false,
           "cut-off of Rowe's relation: \"rowe\" as is (contraction below phi_cv), \"rowe_no_contraction\" "
           "(psi_m >= 0), \"no_dilatancy\" (psi_m = 0)",
           ParameterRole::none, {"rowe", "rowe_no_contraction", "no_dilatancy"}},
          {"secant_stiffness_ref", "kPa", 20000.0, 0.0, inf, true, true,
           "E50 at the reference pressure: secant stiffness at 50 % of the failure deviator stress in drained "
           "triaxial compression at s3' = reference_pressure (s3' = minor principal effective stress)",
           ParameterRole::secant_stiffness_ref},
          {"unloading_stiffness_ref", "kPa", 60000.0, 0.0, inf, true, true,
           "Young's modulus E_ur for unloading and reloading at s3' = reference_pressure; must exceed "
           "2 E50/(2 - failure_ratio) (default 3 x the default E50: a first estimate from memory of Schanz et al. 1999)",
           ParameterRole::unload_reload_stiffness_ref},
          {"poissons_ratio_ur", "-", 0.2, -1.0, 0.5, true, true, "Poisson's ratio nu_ur for unloading and reloading",
           ParameterRole::poissons_ratio},
          {"stress_exponent", "-", 0.5, 0.0, 1.0, false, false,
           "m: stiffness ~ ((s3' + c' cot phi')/(reference_pressure + c' cot phi'))^m",
           ParameterRole::stiffness_exponent},
          {"reference_pressure", "kPa", 100.0, 0.0, inf, true, true, "reference pressure p_ref of the stiffness power law",
           ParameterRole::reference_pressure},
          {"failure_ratio", "-", 0.9, 0.0, 1.0, true, false,
           "R_f = q_f / q_a: failure deviator over the asymptote of the hyperbola", ParameterRole::none},
          {"oedometer_stiffness_ref", "kPa", 20000.0, 0.0, inf, true, true,
           "tangent oedometric stiffness d s1'/d eps_1 of a normally consolidated sample at s1' = reference_pressure "
           "(sets the cap's hardening)",
           ParameterRole::oedometer_stiffness_ref},
          {"k0_normally_consolidated", "-", 0.5, 0.0, 1.0, true, true,
           "K0 = s3'/s1' in normally consolidated oedometer loading (sets the cap's shape; common practice: "
           "1 - sin phi', Jaky 1944)",
           ParameterRole::earth_pressure_at_rest},
      },
      {"shear_hardening", "cap_pressure", "cap_volumetric_strain", "mobilised_friction_angle",
       "mobilised_dilation_angle", "active_surfaces", "shear_multiplier_rate", "cap_multiplier_rate"},
      {{"k0_nc", "k0_normally_consolidated"}},
      hyperbolic_implied,
  };
  return info;
}


namespace {

// The model's constants from its parameters (values in ModelInfo order), with the cap's shape
// alpha and modulus H_ref; throws InputError (prefixed `head`) where the cap cannot match the
// oedometer stiffness. S: double, or Dual for the derivative version (then the cap calibration's
// derivatives in sigma and the shear multiplier are hyperbolic::Dual<5, Dual>: first derivatives
// that carry their own derivatives with respect to the parameters).
template <class S>
Constants<S> make_constants(const std::array<S, HyperbolicHardening::parameter_count>& v, const std::string& head,
                            S& alpha, S& cap_h_ref) {
  using H = HyperbolicHardening;
  using std::pow;
  using std::sin;
  using std::sqrt;
  using std::tan;
  Constants<S> k{};
  const S phi = radians(v[H::friction_angle]);
  k.e50_ref = v[H::secant_stiffness_ref];
  k.eur_ref = v[H::unloading_stiffness_ref];
  k.m = v[H::stress_exponent];
  k.p_ref = v[H::reference_pressure];
  k.nu = v[H::poissons_ratio_ur];
  k.rf = v[H::failure_ratio];
  k.c_cot = v[H::cohesion] / tan(phi);
  k.sin_phi = sin(phi);
  k.sin_cv = sin(radians(v[H::critical_state_friction_angle]));
  k.kf = 2.0 * k.sin_phi / (1.0 - k.sin_phi);
  k.tension = value(k.c_cot) < value(v[H::tensile_strength]) ? k.c_cot : v[H::tensile_strength];  // std::min
  k.rule = static_cast<int>(value(v[H::dilatancy_rule]));
  k.delta = (3.0 + k.sin_phi) / (3.0 - k.sin_phi);
  k.floor = kStiffnessFloor * (k.p_ref + k.c_cot);

  // The cap from one element in oedometer loading on the normally consolidated line, at
  // s1' = p_ref, s3' = K0 p_ref, ds = (1, K0, K0) ds1 (Schanz et al. 1999 find alpha and beta by
  // simulating this test; here the element's rate equations are solved directly):
  //   radial:  e_r + dl_s n_s,r + dl_c n_c,r = 0           e = D^-1 ds (elastic, E_ur at s3')
  //   axial:   e_1 + dl_s n_s,1 + dl_c n_c,1 = 1 / E_oed   E_oed = oedometer_stiffness_ref here
  //   shear consistency: df_s/ds . ds + df_s/dgamma dl_s = 0   (alpha-independent)
  //   cap consistency:   n_c . ds = H dl_c tr(n_c)
  // With n_c ~ u (1, -1/2, -1/2) + p'/3 (1, 1, 1), u = q/alpha^2, the first two fix u and dl_c,
  // the last fixes H. With c' = 0 the whole response is homogeneous of degree m in stress, so the
  // match holds at every s1' on the K0 line; with c' > 0 it holds at s1' = p_ref.
  const S kk = v[H::k0_normally_consolidated];
  const S s1 = k.p_ref;
  const S s3 = kk * s1;
  const S q = s1 - s3;
  const S p = (s1 + 2.0 * s3) / 3.0;
  const S qf = k.kf * (s3 + k.c_cot);
  if (!(value(q) < value(qf)))
    throw InputError(head + "k0_normally_consolidated = " + format_number(value(kk)) +
                     " puts the normally consolidated state at or beyond "
                     "failure (deviator " + format_number(value(q)) + " kPa >= q_f = " + format_number(value(qf)) +
                     " kPa at s1' = reference_pressure); it must exceed " +
                     format_number(value((1.0 - k.sin_phi) / (1.0 + k.sin_phi))) + " for c' = 0");
  k.alpha2 = S(1.0);  // not used by the shear surface
  k.h_ref = S(1.0);
  const S gamma0 = shear_locus(k, q, s3);
  using DS = hyperbolic::Dual<kUnknowns, S>;
  DS sig[3] = {DS::variable(s1, 0), DS::variable(s3, 1), DS::variable(s3, 2)};
  DS dl[3] = {DS::variable(S(0.0), 3), DS(0.0), DS(0.0)};
  Point<DS> pt;
  evaluate(k, sig, dl, false, History<S>(k, gamma0, p), pt);
  const S dfs_ds = pt.f[0].d[0] + kk * (pt.f[0].d[1] + pt.f[0].d[2]);
  const S dfs_dg = pt.f[0].d[3];
  S dl_s(0.0);
  if (value(dfs_dg) < 0.0) {
    const S ratio = -dfs_ds / dfs_dg;
    if (0.0 < value(ratio)) dl_s = ratio;  // std::max(0.0, ratio)
  }
  const S eur = k.eur_ref * stiffness_ratio(k, s3);
  const S e1 = (1.0 - 2.0 * k.nu * kk) / eur;
  const S er = (kk - k.nu * (1.0 + kk)) / eur;
  const S eoed = v[H::oedometer_stiffness_ref];
  const S axial = 1.0 / eoed - e1 - dl_s * pt.n[0][0].v;  // cap plastic strain needed, axial
  const S radial = -(er + dl_s * pt.n[0][1].v);           // and each radial
  if (!(value(axial) > 0.0))
    throw InputError(head + "oedometer_stiffness_ref = " + format_number(value(eoed)) +
                     " kPa is too stiff for k0_normally_consolidated = " + format_number(value(kk)) +
                     ": elastic and shear-hardening strains alone give a tangent of " +
                     format_number(value(1.0 / (e1 + dl_s * pt.n[0][0].v))) +
                     " kPa at s1' = reference_pressure; give a smaller value");
  if (!(value(axial) > value(radial)) || !(value(axial + 2.0 * radial) > 0.0))
    throw InputError(head + "k0_normally_consolidated = " + format_number(value(kk)) +
                     " and oedometer_stiffness_ref = " + format_number(value(eoed)) +
                     " kPa cannot both be matched by the cap (it would need a negative "
                     "alpha^2); try a smaller k0_normally_consolidated or a smaller oedometer_stiffness_ref");
  const S u = (axial - radial) * p / (3.0 * (0.5 * axial + radial));
  k.alpha2 = q / u;
  const S big_f = sqrt(q * u + p * p);
  const S nc1 = (u + p / 3.0) / big_f;
  const S dl_c = axial / nc1;
  const S nc_ds = (u * (1.0 - kk) + p / 3.0 * (1.0 + 2.0 * kk)) / big_f;
  const S h = nc_ds / (dl_c * p / big_f);
  k.h_ref = h / pow(big_f / k.p_ref, k.m);
  alpha = sqrt(k.alpha2);
  cap_h_ref = k.h_ref;
  return k;
}

// The initial state from the conditions (HyperbolicHardening::initialise), in the scalar S of the
// constants: stress from the conditions, cap through the preconsolidation state, shear locus
// through the initial stress.
template <class S>
void initial_state(const Constants<S>& k, const InitialConditions& c, Vec6Of<S>& stress, InternalOf<S>& internal) {
  using H = HyperbolicHardening;
  using std::asin;
  using std::sqrt;
  for (int i = 0; i < 6; ++i) stress[i] = S(c.stress[i]);
  internal.fill(S(0.0));
  const Measures<S> m = measures(stress, k.delta);
  const std::string head = std::string(kName) + ": ";
  if (!(value(m.s3 + k.c_cot) > 0.0))
    throw InputError(head + "the initial effective stress must be compressive: minor principal stress + c' cot phi' = " +
                     format_number(value(m.s3 + k.c_cot)) + " kPa, expected > 0");
  const double p = value(m.p);  // of the given stress alone: no derivatives
  double ocr = 1.0;
  if (!std::isnan(c.preconsolidation_pressure)) {
    if (!(c.preconsolidation_pressure >= p * (1.0 - 1e-12)))
      throw InputError(head + "preconsolidation_pressure = " + format_number(c.preconsolidation_pressure) +
                       " kPa is below the initial mean effective stress p' = " + format_number(p) + " kPa");
    ocr = std::max(1.0, c.preconsolidation_pressure / p);
  } else if (!std::isnan(c.overconsolidation_ratio)) {
    if (!(c.overconsolidation_ratio >= 1.0))
      throw InputError(head + "ocr = " + format_number(c.overconsolidation_ratio) + " must be at least 1");
    ocr = c.overconsolidation_ratio;
  }
  const S qf = k.kf * (m.s3 + k.c_cot);
  if (!(value(m.q) < value(qf)))
    throw InputError(head + "the initial deviator stress q = " + format_number(value(m.q)) +
                     " kPa is at or beyond failure (q_f = " + format_number(value(qf)) + " kPa)");
  if (value(m.q) > 0.0) {
    const S locus = shear_locus(k, m.q, m.s3);
    if (0.0 < value(locus)) internal[H::shear_hardening] = locus;  // std::max(0.0, locus)
  }
  internal[H::cap_pressure] = ocr * sqrt(m.qt * m.qt / k.alpha2 + m.p * m.p);
  internal[H::cap_volumetric_strain] = S(0.0);
  const S ratio = m.q / (2.0 * (m.s3 + k.c_cot) + m.q);
  const S sphm = value(ratio) < value(k.sin_phi) ? ratio : k.sin_phi;  // std::min(sin_phi, ratio)
  internal[H::mobilised_friction] = degrees(asin(sphm));
  internal[H::mobilised_dilation] = S(0.0);
  internal[H::active_surfaces] = S(0.0);
}

}  // namespace

std::unique_ptr<Model> HyperbolicHardening::create(const ParameterValues& v, const std::string& where) {
  return std::make_unique<HyperbolicHardening>(v, where);
}

HyperbolicHardening::HyperbolicHardening(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  const std::string head = where + ": " + kName + ": ";
  if (v.size() != info.parameters.size())
    throw InputError(head + "expected " + std::to_string(info.parameters.size()) + " parameter values, found " +
                     std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  if (v[critical_state_friction_angle] > v[friction_angle])
    throw InputError(head + "critical_state_friction_angle = " + format_number(v[critical_state_friction_angle]) +
                     " deg must not exceed friction_angle = " + format_number(v[friction_angle]) + " deg");
  if (v[dilatancy_rule] != std::floor(v[dilatancy_rule]))
    throw InputError(head + "dilatancy_rule = " + format_number(v[dilatancy_rule]) + " must be the index of " +
                     word_list(info.parameters[dilatancy_rule]) + " (0, 1 or 2)");
  const double ei_ref = 2.0 * v[secant_stiffness_ref] / (2.0 - v[failure_ratio]);
  if (!(v[unloading_stiffness_ref] > ei_ref))
    throw InputError(head + "unloading_stiffness_ref = " + format_number(v[unloading_stiffness_ref]) +
                     " kPa must exceed the initial stiffness 2 secant_stiffness_ref / (2 - failure_ratio) = " +
                     format_number(ei_ref) + " kPa");
  std::copy(v.begin(), v.end(), values_.begin());
  k_ = make_constants(values_, head, alpha_, cap_h_ref_);
}

void HyperbolicHardening::initialise(const InitialConditions& c, MaterialState& state) const {
  state = MaterialState{};
  initial_state(k_, c, state.stress, state.internal);
}

namespace {

using Method = HyperbolicHardening::LocalJacobian;

// ---------------------------------------------------------------------------------------------
// The hand-written Jacobian. It mirrors evaluate<T> branch by branch (isotropic limit, stiffness
// floor, q_y = min(q_f, q_h), the caps on sin phi_m and the dilatancy cut-off, the cap hardening
// law), so that it equals the forward-AD derivative of the same residual (checked in the tests).
// Principal stresses sigma_k; P_ik = delta_ik - 1/3 = d s_i / d sigma_k; J2 = s.s/2, J3 = s1 s2 s3.
//   dq/dsigma_i = 3 s_i / (2 q)            d2q = (3/(2q)) (P_ik - s_i s_k / (2 J2))
//   dX/dsigma_i = A_i / J2 - 2/3,  A_i = s_i^2 - X s_i
//   d2X = [(2 s_i - X) delta_ik + X/3 - (s_i A_k + A_i s_k)/J2] / J2
// (with dJ3/dsigma_i = s_i^2 - 2 J2/3 for a deviator; common practice, no source). Everything else
// depends on sigma through q, X, s3 and p only.
// ---------------------------------------------------------------------------------------------

// Derivatives of the surfaces in the active set at one point.
struct LocalDerivatives {
  double dn[3][3][3];  // dn[s][i][k] = d n_{s,i} / d sigma_k
  double df[3][3];     // df[s][k] = d f_s / d sigma_k
  double df_dl[3];     // d f_s / d dl_s (no f_s depends on another surface's multiplier)
};

// p_p(eps) as hardened_cap, and d p_p / d eps.
template <class Record>
double hardened_cap_slope(const Constants<double>& k, const History<double>& h, double eps, double& slope,
                          Record& record) {
  const double e = 1.0 - k.m;
  if (e < 1e-9) {
    const double pp = h.pp * std::exp(eps * (k.h_ref / k.p_ref));
    slope = pp * (k.h_ref / k.p_ref);
    return pp;
  }
  const double rate = e * k.h_ref / k.p_ref;
  double base = h.pp_pow + eps * rate;
  double base_slope = rate;
  if (record(floored, !(base >= 1e-300))) {
    base = 1e-300;
    base_slope = 0.0;
  }
  if (e == 0.5) {
    slope = k.p_ref * 2.0 * base * base_slope;
    return k.p_ref * (base * base);
  }
  const double r = std::pow(base, 1.0 / e);
  slope = k.p_ref * (r / (e * base)) * base_slope;
  return k.p_ref * r;
}

// Values of all three surfaces at (sig, dl) into `o` (as evaluate<double>), and the derivatives of
// the surfaces in `mask` into `d`.
// Record: OnValues, or Branches to keep the choices (the derivative version replays them).
template <class Record>
void evaluate_derivatives(const Constants<double>& k, const double sig[3], const double dl[3], int mask,
                          const History<double>& h, Point<double>& o, LocalDerivatives& d, Record& record) {
  constexpr double third = 1.0 / 3.0;
  const double p = (sig[0] + sig[1] + sig[2]) / 3.0;
  const double s[3] = {sig[0] - p, sig[1] - p, sig[2] - p};
  const double j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]);
  const double c1 = 0.5 * (1.0 + k.delta);
  const double c2 = 2.25 * (k.delta - 1.0);
  double q = 0.0, x = 0.0, qt2 = 0.0;
  double dq[3], dx[3], qt_dqt[3];
  double hq[3][3], hx[3][3], hqt[3][3];  // d2q, d2X, d(qt_dqt_i)/d sigma_k
  if (record(anisotropic, j2 > kIsotropic * (p * p + 1.0))) {
    q = std::sqrt(3.0 * j2);
    const double inv_j2 = 1.0 / j2;
    const double inv_q = 1.0 / q;
    x = s[0] * s[1] * s[2] * inv_j2;
    const double qt = c1 * q - c2 * x;
    qt2 = qt * qt;
    double a[3], dqt[3];
    for (int i = 0; i < 3; ++i) {
      dq[i] = 1.5 * s[i] * inv_q;
      a[i] = s[i] * s[i] - x * s[i];
      dx[i] = a[i] * inv_j2 - 2.0 / 3.0;
      dqt[i] = c1 * dq[i] - c2 * dx[i];
      qt_dqt[i] = qt * dqt[i];
    }
    for (int i = 0; i < 3; ++i)
      for (int j = i; j < 3; ++j) {
        const double kron = i == j ? 1.0 : 0.0;
        hq[i][j] = hq[j][i] = 1.5 * inv_q * (kron - third - 0.5 * s[i] * s[j] * inv_j2);
        hx[i][j] = hx[j][i] = inv_j2 * ((2.0 * s[i] - x) * kron + x * third - (s[i] * a[j] + a[i] * s[j]) * inv_j2);
        hqt[i][j] = hqt[j][i] = dqt[i] * dqt[j] + qt * (c1 * hq[i][j] - c2 * hx[i][j]);
      }
  } else {
    // Isotropic: q~^2 = 3 J2, q = X = 0 with no derivatives (as evaluate<T>).
    qt2 = 3.0 * j2;
    for (int i = 0; i < 3; ++i) {
      dq[i] = dx[i] = 0.0;
      qt_dqt[i] = 1.5 * s[i];
      for (int j = 0; j < 3; ++j) {
        hq[i][j] = hx[i][j] = 0.0;
        hqt[i][j] = 1.5 * ((i == j ? 1.0 : 0.0) - third);
      }
    }
  }
  const double s3 = p - 0.5 * q + 0.75 * x;
  double ds3[3];
  for (int i = 0; i < 3; ++i) ds3[i] = third - 0.5 * dq[i] + 0.75 * dx[i];
  const double shifted = s3 + k.c_cot;

  // Shear hardening surface: q_y(shifted, gamma) and its two partial derivatives. (Reciprocals
  // are formed once: fewer divisions on the dependency chain than evaluate<T>, same values to
  // round-off.)
  const bool over_floor = record(above_floor, shifted >= k.floor);
  const double ratio = power((over_floor ? shifted : k.floor) * (1.0 / (k.p_ref + k.c_cot)), k.m);
  const double dlog_ratio = over_floor ? k.m / shifted : 0.0;  // d ln(ratio) / d shifted
  const double inv_ratio = 1.0 / ratio;
  const double a = ((2.0 - k.rf) / k.e50_ref) * inv_ratio;  // 2 / E_i
  const double b = (2.0 / k.eur_ref) * inv_ratio;           // 2 / E_ur
  const double a_s = -a * dlog_ratio, b_s = -b * dlog_ratio;
  const double qf = k.kf * shifted;
  o.gamma = h.gamma + dl[0];
  double qy = qf, qy_s = k.kf, qy_g = 0.0;
  if (record(failure_positive, qf > 0.0)) {
    const double inv_qf = 1.0 / qf;
    const double u_g = k.rf * inv_qf;  // 1 / q_a
    const double u = o.gamma * u_g;    // gamma / q_a
    const double u_s = -u * k.kf * inv_qf;
    const double bb = a - b + u;
    const double disc = std::sqrt(bb * bb + 4.0 * b * u);
    const double den = bb + disc;
    const double inv_den = 1.0 / den;
    const double qh = 2.0 * o.gamma * inv_den;
    if (record(on_hyperbola, !(qf <= qh))) {
      const double inv_disc = 1.0 / disc;
      const double bb_s = a_s - b_s + u_s;
      const double den_s = bb_s + (bb * bb_s + 2.0 * (b_s * u + b * u_s)) * inv_disc;
      const double den_g = u_g + (bb * u_g + 2.0 * b * u_g) * inv_disc;
      qy = qh;
      qy_s = -qh * den_s * inv_den;
      qy_g = (2.0 - qh * den_g) * inv_den;
    }
  }
  o.f[0] = q - qy;

  // Mobilised friction and Rowe's dilatancy, with their gradients.
  const double denom = 2.0 * shifted + q;
  double sphm = k.sin_phi;
  double dsphm[3] = {0.0, 0.0, 0.0};
  if (record(denominator_positive, denom > 0.0)) {
    const double inv_denom = 1.0 / denom;
    sphm = q * inv_denom;
    const double c = 2.0 * inv_denom * inv_denom;
    for (int i = 0; i < 3; ++i) dsphm[i] = c * (shifted * dq[i] - q * ds3[i]);
  }
  if (record(capped, !(sphm <= k.sin_phi))) {
    sphm = k.sin_phi;
    dsphm[0] = dsphm[1] = dsphm[2] = 0.0;
  }
  double spsi = 0.0;
  double dspsi[3] = {0.0, 0.0, 0.0};
  if (k.rule != 2) {
    const double inv_den = 1.0 / (1.0 - sphm * k.sin_cv);
    spsi = (sphm - k.sin_cv) * inv_den;
    const double slope = (1.0 - k.sin_cv * k.sin_cv) * inv_den * inv_den;
    for (int i = 0; i < 3; ++i) dspsi[i] = slope * dsphm[i];
    if (k.rule == 1 && record(cut, !(spsi >= 0.0))) {
      spsi = 0.0;
      dspsi[0] = dspsi[1] = dspsi[2] = 0.0;
    }
  }
  o.sin_phi_m = sphm;
  o.sin_psi_m = spsi;
  const double half_c = 0.5 - 0.5 * spsi;
  for (int i = 0; i < 3; ++i) o.n[0][i] = dq[i] * half_c - spsi * ds3[i];
  if (mask & 1) {
    for (int i = 0; i < 3; ++i) {
      d.df[0][i] = dq[i] - qy_s * ds3[i];
      for (int j = 0; j < 3; ++j)
        d.dn[0][i][j] = (hq[i][j] * half_c - spsi * (-0.5 * hq[i][j] + 0.75 * hx[i][j])) -
                        (0.5 * dq[i] + ds3[i]) * dspsi[j];
    }
    d.df_dl[0] = -qy_g;
  }

  // Cap.
  const double inv_a2 = 1.0 / k.alpha2;
  const double big_f = std::sqrt(qt2 * inv_a2 + p * p);
  const double inv_f = 1.0 / big_f;
  for (int i = 0; i < 3; ++i) o.n[1][i] = (qt_dqt[i] * inv_a2 + p * third) * inv_f;
  o.cap_strain = dl[1] * p * inv_f;
  if (mask & 2) {
    double slope = 0.0;
    o.pp = hardened_cap_slope(k, h, o.cap_strain, slope, record);
    for (int i = 0; i < 3; ++i) {
      const double deps = dl[1] * (third - p * o.n[1][i] * inv_f) * inv_f;  // d eps_v^pc / d sigma_i
      d.df[1][i] = o.n[1][i] - slope * deps;
      for (int j = 0; j < 3; ++j)
        d.dn[1][i][j] = (hqt[i][j] * inv_a2 + third * third - o.n[1][i] * o.n[1][j]) * inv_f;
    }
    d.df_dl[1] = -slope * p * inv_f;
  } else {
    o.pp = h.pp;
  }
  o.f[1] = big_f - o.pp;

  // Tension cut-off.
  o.f[2] = -s3 - k.tension;
  for (int i = 0; i < 3; ++i) o.n[2][i] = -ds3[i];
  if (mask & 4) {
    for (int i = 0; i < 3; ++i) {
      d.df[2][i] = -ds3[i];
      for (int j = 0; j < 3; ++j) d.dn[2][i][j] = 0.5 * hq[i][j] - 0.75 * hx[i][j];
    }
    d.df_dl[2] = 0.0;
  }
}

// LU with partial pivoting of an N x N matrix (N = 4 or 5: three stresses and one or two
// multipliers); the reciprocals of the pivots are kept, so that a solve has no division.
struct SmallLu {
  double a[kUnknowns][kUnknowns];
  double inv[kUnknowns];
  int piv[kUnknowns];

  /// Factors m; with b given, also overwrites b with m^-1 b (the elimination of b runs with the
  /// factorisation).
  // Inlined into integrate, as before the derivative version called them too.
  template <int N>
  [[gnu::always_inline]] bool factor(const double (&m)[kUnknowns][kUnknowns], double* b = nullptr) {
    for (int r = 0; r < N; ++r)
      for (int c = 0; c < N; ++c) a[r][c] = m[r][c];
    for (int c = 0; c < N; ++c) {
      int best = c;
      for (int r = c + 1; r < N; ++r)
        if (std::abs(a[r][c]) > std::abs(a[best][c])) best = r;
      piv[c] = best;
      if (!(std::abs(a[best][c]) > 0.0) || !std::isfinite(a[best][c])) return false;
      if (best != c) {
        for (int j = 0; j < N; ++j) std::swap(a[c][j], a[best][j]);
        if (b) std::swap(b[c], b[best]);
      }
      inv[c] = 1.0 / a[c][c];
      for (int r = c + 1; r < N; ++r) {
        const double f = a[r][c] * inv[c];
        a[r][c] = f;
        for (int j = c + 1; j < N; ++j) a[r][j] -= f * a[c][j];
        if (b) b[r] -= f * b[c];
      }
    }
    if (b) back_substitute<N>(b);
    return true;
  }
  /// b := m^-1 b with the factors of m.
  template <int N>
  void solve(double* b) const {
    for (int c = 0; c < N; ++c)
      if (piv[c] != c) std::swap(b[c], b[piv[c]]);
    for (int c = 0; c < N; ++c)
      for (int r = c + 1; r < N; ++r) b[r] -= a[r][c] * b[c];
    back_substitute<N>(b);
  }
  template <int N>
  void back_substitute(double* b) const {
    for (int r = N - 1; r >= 0; --r) {
      double v = b[r];
      for (int j = r + 1; j < N; ++j) v -= a[r][j] * b[j];
      b[r] = v * inv[r];
    }
  }
  /// The leading 3 x 3 block of the inverse, inverse3[i][j] = (J^-1)_ij: three right-hand sides
  /// e_j solved together, so that their substitution chains interleave.
  template <int N>
  [[gnu::always_inline]] void inverse_block(double (&inverse3)[3][3]) const {
    double b[kUnknowns][3];  // b[row][rhs]
    for (int r = 0; r < N; ++r)
      for (int m = 0; m < 3; ++m) b[r][m] = r == m ? 1.0 : 0.0;
    for (int c = 0; c < N; ++c)
      if (piv[c] != c)
        for (int m = 0; m < 3; ++m) std::swap(b[c][m], b[piv[c]][m]);
    for (int c = 0; c < N; ++c)
      for (int r = c + 1; r < N; ++r)
        for (int m = 0; m < 3; ++m) b[r][m] -= a[r][c] * b[c][m];
    for (int r = N - 1; r >= 0; --r) {
      for (int j = r + 1; j < N; ++j)
        for (int m = 0; m < 3; ++m) b[r][m] -= a[r][j] * b[j][m];
      for (int m = 0; m < 3; ++m) b[r][m] *= inv[r];
    }
    for (int i = 0; i < 3; ++i)
      for (int m = 0; m < 3; ++m) inverse3[i][m] = b[i][m];
  }
};

struct LocalSolve {
  double sig[3];
  double dl[3];
  Point<double> point;
  double jac[kUnknowns][kUnknowns];  // leading (3 + na) block used
  SmallLu lu;                        // factors of jac when `factored`
  bool factored;
  int iterations;
};

template <int N>
void copy_values(const Point<hyperbolic::Dual<N>>& a, Point<double>& b) {
  for (int s = 0; s < 3; ++s) {
    b.f[s] = a.f[s].v;
    for (int i = 0; i < 3; ++i) b.n[s][i] = a.n[s][i].v;
  }
  b.gamma = a.gamma.v;
  b.pp = a.pp.v;
  b.cap_strain = a.cap_strain.v;
  b.sin_phi_m = a.sin_phi_m.v;
  b.sin_psi_m = a.sin_psi_m.v;
}

// Residual R = [sigma - trial + D_p sum dl_k n_k ; f_k (active)] at a point already evaluated.
// T: the scalar of the unknowns; U: that of the trial stress and the elastic constants.
template <class T, class U>
void residual(const Point<T>& pt, const T sig[3], const T dl[3], const U trial[3], const int active[2], int na,
              const U& lame, const U& two_g, T res[kUnknowns]) {
  for (int i = 0; i < 3; ++i) res[i] = sig[i] - trial[i];
  for (int j = 0; j < na; ++j) {
    const int s = active[j];
    const T tr = pt.n[s][0] + pt.n[s][1] + pt.n[s][2];
    for (int i = 0; i < 3; ++i) res[i] += dl[s] * (lame * tr + two_g * pt.n[s][i]);
    res[3 + j] = pt.f[s];
  }
}

// The local equations at x = (sigma, multipliers of the active surfaces): the point's values into
// `pt`, R into `rv`, dR/dx into the leading (3 + na) block of `jac`.
struct LocalEquations {
  const Constants<double>& k;
  const double* trial;
  const History<double>& h;
  double lame, two_g;
  int active[2];
  int na;
  int mask;

  LocalEquations(const Constants<double>& kk, const double* tr, const History<double>& hh, double l, double g2,
                 int m)
      : k(kk), trial(tr), h(hh), lame(l), two_g(g2), active{0, 0}, na(0), mask(m) {
    for (int s = 0; s < 3; ++s)
      if (mask & (1 << s)) active[na++] = s;
  }

  // Record: OnValues, or Branches to keep the discrete choices made at x.
  template <Method method, int N, class Record = const OnValues>
  void system(const double x[kUnknowns], Point<double>& pt, double rv[kUnknowns], double (&jac)[kUnknowns][kUnknowns],
              Record&& record = OnValues{}) const {
    constexpr int n = N;
    if constexpr (method == Method::automatic) {
      D5 sig[3];
      for (int i = 0; i < 3; ++i) sig[i] = D5::variable(x[i], i);
      D5 dl[3] = {D5(0.0), D5(0.0), D5(0.0)};
      for (int j = 0; j < na; ++j) dl[active[j]] = D5::variable(x[3 + j], 3 + j);
      Point<D5> ad;
      evaluate(k, sig, dl, (mask & 2) != 0, h, ad, record);
      D5 res[kUnknowns];
      residual(ad, sig, dl, trial, active, na, lame, two_g, res);
      for (int i = 0; i < n; ++i) {
        rv[i] = res[i].v;
        for (int j = 0; j < n; ++j) jac[i][j] = res[i].d[j];
      }
      copy_values(ad, pt);
    } else {
      const double sig[3] = {x[0], x[1], x[2]};
      double dl[3] = {0.0, 0.0, 0.0};
      for (int j = 0; j < na; ++j) dl[active[j]] = x[3 + j];
      LocalDerivatives d;
      evaluate_derivatives(k, sig, dl, mask, h, pt, d, record);
      residual(pt, sig, dl, trial, active, na, lame, two_g, rv);
      // Stress rows: delta_ik + sum_s dl_s (lame tr(dn_s/dsigma_k) + 2G dn_{s,i}/dsigma_k); then
      // the column of each multiplier, lame tr(n_s) + 2G n_s,i.
      for (int i = 0; i < 3; ++i)
        for (int c = 0; c < 3; ++c) jac[i][c] = i == c ? 1.0 : 0.0;
      for (int j = 0; j < n - 3; ++j) {
        const int s = active[j];
        const double tr = pt.n[s][0] + pt.n[s][1] + pt.n[s][2];
        for (int c = 0; c < 3; ++c) {
          const double dtr = d.dn[s][0][c] + d.dn[s][1][c] + d.dn[s][2][c];
          for (int i = 0; i < 3; ++i) jac[i][c] += dl[s] * (lame * dtr + two_g * d.dn[s][i][c]);
        }
        for (int i = 0; i < 3; ++i) jac[i][3 + j] = lame * tr + two_g * pt.n[s][i];
        for (int c = 0; c < 3; ++c) jac[3 + j][c] = d.df[s][c];
        for (int c = 0; c < n - 3; ++c) jac[3 + j][3 + c] = c == j ? d.df_dl[s] : 0.0;
      }
    }
  }
};

// Newton on R = 0 for the surfaces in `mask`, from the guess dl = guess[k] with
// sigma = trial - sum guess_k D_p n_k(trial). On success r.jac is dR/dx at the solution, or at the
// last iterate when that iterate was already within kQuadratic (quadratic convergence then puts
// the solution within round-off, and the Jacobian within |dx| of the exact one); r.lu holds its
// factors when r.factored.
constexpr double kQuadratic = 1e-6;

template <Method method, int N>
bool solve_local(const LocalEquations& eq, const Point<double>& at_trial, const double guess[3], double scale,
                 LocalSolve& r) {
  constexpr int na = N - 3;
  constexpr int n = N;
  const double* trial = eq.trial;
  double x[kUnknowns] = {trial[0], trial[1], trial[2], 0.0, 0.0};
  for (int j = 0; j < na; ++j) {
    const int s = eq.active[j];
    const double g = guess[s];
    if (!(g > 0.0)) continue;
    x[3 + j] = g;
    const double tr = at_trial.n[s][0] + at_trial.n[s][1] + at_trial.n[s][2];
    for (int i = 0; i < 3; ++i) x[i] -= g * (eq.lame * tr + eq.two_g * at_trial.n[s][i]);
  }
  const double tol = kLocalTolerance * scale;
  auto finish = [&](int it) {
    for (int i = 0; i < 3; ++i) r.sig[i] = x[i];
    r.dl[0] = r.dl[1] = r.dl[2] = 0.0;
    for (int j = 0; j < na; ++j) r.dl[eq.active[j]] = x[3 + j];
    r.iterations = it;
  };
  for (int it = 0; it < kMaxLocalIterations; ++it) {
    double rv[kUnknowns];
    eq.system<method, N>(x, r.point, rv, r.jac);
    double worst = 0.0;
    for (int i = 0; i < n; ++i) {
      if (!std::isfinite(rv[i])) return false;
      worst = std::max(worst, std::abs(rv[i]));
    }
    if (worst <= tol) {
      finish(it);
      r.factored = false;
      return true;
    }
    if (!r.lu.factor<N>(r.jac, rv)) return false;
    for (int i = 0; i < n; ++i) {
      x[i] -= rv[i];
      if (!std::isfinite(x[i])) return false;
    }
    if (worst <= kQuadratic * scale) {
      // Check the new iterate with a plain evaluation; keep this Jacobian if it has converged.
      finish(it + 1);
      evaluate(eq.k, r.sig, r.dl, (eq.mask & 2) != 0, eq.h, r.point);
      double rd[kUnknowns];
      residual(r.point, r.sig, r.dl, trial, eq.active, na, eq.lame, eq.two_g, rd);
      double w = 0.0;
      for (int i = 0; i < n; ++i) w = std::max(w, std::abs(rd[i]));
      if (w <= tol) {
        r.factored = true;
        return true;
      }
    }
  }
  return false;
}

}  // namespace

IntegrationResult HyperbolicHardening::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                                 Mat6& tangent) const {
  return integrate_impl<LocalJacobian::hand_written>(in, de, out, tangent, nullptr);
}

IntegrationResult HyperbolicHardening::integrate_with(LocalJacobian method, const MaterialState& in, const Vec6& de,
                                                      MaterialState& out, Mat6& tangent) const {
  if (method == LocalJacobian::automatic) return integrate_impl<LocalJacobian::automatic>(in, de, out, tangent, nullptr);
  return integrate_impl<LocalJacobian::hand_written>(in, de, out, tangent, nullptr);
}

HyperbolicHardening::LocalSystem HyperbolicHardening::local_system(LocalJacobian method, const double principal[3],
                                                                   const double multipliers[3], int mask,
                                                                   double gamma_n, double pp_n, double eur,
                                                                   const double trial[3]) const {
  const History<double> history(k_, gamma_n, pp_n);
  const double bulk = eur / (3.0 * (1.0 - 2.0 * k_.nu));
  const double shear_mod = eur / (2.0 * (1.0 + k_.nu));
  const LocalEquations eq(k_, trial, history, bulk - 2.0 * shear_mod / 3.0, 2.0 * shear_mod, mask & 7);
  double x[kUnknowns] = {principal[0], principal[1], principal[2], 0.0, 0.0};
  for (int j = 0; j < eq.na; ++j) x[3 + j] = multipliers[eq.active[j]];
  Point<double> pt;
  LocalSystem s;
  s.size = 3 + eq.na;
  if (method == LocalJacobian::automatic) {
    if (eq.na == 1)
      eq.system<LocalJacobian::automatic, 4>(x, pt, s.residual, s.jacobian);
    else
      eq.system<LocalJacobian::automatic, 5>(x, pt, s.residual, s.jacobian);
  } else {
    if (eq.na == 1)
      eq.system<LocalJacobian::hand_written, 4>(x, pt, s.residual, s.jacobian);
    else
      eq.system<LocalJacobian::hand_written, 5>(x, pt, s.residual, s.jacobian);
  }
  return s;
}

struct HyperbolicHardening::Decision {
  int accepted = 0;              // active set (bits 1 shear, 2 cap, 4 tension); 0 = elastic
  double x[kUnknowns]{};         // converged principal stresses, then the multipliers of the active set
  double principal[3]{};         // principal trial stresses (kPa)
  Mat3 axes = Mat3::Identity();  // their directions (columns)
  double scale = 1.0;            // largest trial stress magnitude, floor 1 kPa
};

template <HyperbolicHardening::LocalJacobian method>
IntegrationResult HyperbolicHardening::integrate_impl(const MaterialState& in, const Vec6& de, MaterialState& out,
                                                      Mat6& tangent, Decision* decision) const {
  out = in;
  // Elasticity with E_ur at the stress at the start of the increment.
  const Elasticity<double> elastic = elasticity(k_, in.stress);
  const double bulk = elastic.bulk;
  const double shear_mod = elastic.shear;
  const double lame = elastic.lame;
  const Vec6 trial = elastic_trial(in.stress, de, elastic);
  if (!trial.allFinite()) return {Status::numerical_issue, 0};
  const double gamma_n = in.internal[shear_hardening];
  const double pp_n = in.internal[cap_pressure];

  // Principal values and directions of the trial stress; triaxial states need no decomposition.
  const double scale = std::max(1.0, trial.cwiseAbs().maxCoeff());
  const bool diagonal = std::abs(trial[3]) + std::abs(trial[4]) + std::abs(trial[5]) <= 1e-14 * scale;
  double principal[3];
  Mat3 axes = Mat3::Identity();
  if (diagonal) {
    for (int i = 0; i < 3; ++i) principal[i] = trial[i];
  } else {
    Mat3 t;
    t << trial[0], trial[3], trial[5], trial[3], trial[1], trial[4], trial[5], trial[4], trial[2];
    Eigen::SelfAdjointEigenSolver<Mat3> es(t);
    if (es.info() != Eigen::Success) return {Status::numerical_issue, 0};
    for (int i = 0; i < 3; ++i) principal[i] = es.eigenvalues()[i];
    axes = es.eigenvectors();
  }
  if (decision) {
    decision->accepted = 0;
    for (int i = 0; i < 3; ++i) decision->principal[i] = principal[i];
    decision->axes = axes;
    decision->scale = scale;
  }

  const double zero[3] = {0.0, 0.0, 0.0};
  Point<double> at_trial;
  const History<double> history(k_, gamma_n, pp_n);
  evaluate(k_, principal, zero, false, history, at_trial);
  const double ytol = kYieldTolerance * scale;
  int violated = 0;
  for (int s = 0; s < 3; ++s)
    if (at_trial.f[s] > ytol) violated |= 1 << s;
  if (violated == 0) {
    out.stress = trial;
    tangent = isotropic_elastic_stiffness(bulk, shear_mod);
    elastic_state(at_trial, out.internal);
    return {Status::ok, 0};
  }

  // Active sets to try: last step's, the violated set, then the rest (at most two surfaces).
  int candidates[8];
  int nc = 0;
  auto add = [&](int mask) {
    if (mask <= 0 || mask == 7) return;
    for (int i = 0; i < nc; ++i)
      if (candidates[i] == mask) return;
    candidates[nc++] = mask;
  };
  const int previous = static_cast<int>(in.internal[active_surfaces]);
  if (previous & violated) add(previous);
  add(violated);
  for (int mask : {1, 2, 4})
    if (mask & violated) add(mask);
  for (int mask : {3, 5, 6})
    if (mask & violated) add(mask);
  for (int mask : {1, 2, 4, 3, 5, 6}) add(mask);

  // Warm start: the multipliers per unit strain increment of the last plastic step.
  const double strain_norm = de.norm();
  const double guess[3] = {in.internal[shear_rate] * strain_norm, in.internal[cap_rate] * strain_norm, 0.0};
  LocalSolve r;
  int accepted = -1;
  int n_unknowns = 0;
  int iterations = 0;
  for (int ci = 0; ci < nc && accepted < 0; ++ci) {
    const int mask = candidates[ci];
    const LocalEquations eq(k_, principal, history, lame, 2.0 * shear_mod, mask);
    const bool solved = eq.na == 1 ? solve_local<method, 4>(eq, at_trial, guess, scale, r)
                                   : solve_local<method, 5>(eq, at_trial, guess, scale, r);
    if (!solved) continue;
    iterations += r.iterations;
    bool ok = true;
    for (int s = 0; s < 3; ++s) {
      if (mask & (1 << s))
        ok = ok && r.dl[s] >= -1e-14;
      else
        ok = ok && r.point.f[s] <= ytol;
    }
    if (ok) {
      accepted = mask;
      n_unknowns = 3 + eq.na;
    }
  }
  if (accepted < 0) return {Status::no_convergence, iterations};

  // d sigma / d trial (principal) = leading 3 x 3 block of J^-1 (columns J^-1 e_j), then times D_p.
  if (!r.factored && !(n_unknowns == 4 ? r.lu.factor<4>(r.jac) : r.lu.factor<5>(r.jac)))
    return {Status::numerical_issue, iterations};
  double dsig[3][3];
  if (n_unknowns == 4)
    r.lu.inverse_block<4>(dsig);
  else
    r.lu.inverse_block<5>(dsig);
  // dp = dsig D_p with D_p = lame 1 1^T + 2G I.
  Mat3 dp;
  for (int i = 0; i < 3; ++i) {
    const double row = lame * (dsig[i][0] + dsig[i][1] + dsig[i][2]);
    for (int j = 0; j < 3; ++j) dp(i, j) = row + 2.0 * shear_mod * dsig[i][j];
  }
  if (!dp.allFinite()) return {Status::numerical_issue, iterations};

  // Consistent tangent of an isotropic tensor function (de Souza Neto, Peric & Owen 2008,
  // eq. A.46); for coincident trial values the limit from the principal tangent.
  double coef[3];  // pairs (0,1), (1,2), (0,2)
  const int pair_a[3] = {0, 1, 0};
  const int pair_b[3] = {1, 2, 2};
  for (int k = 0; k < 3; ++k) {
    const int a = pair_a[k];
    const int b = pair_b[k];
    const double gap = principal[a] - principal[b];
    if (std::abs(gap) > 1e-9 * scale)
      coef[k] = 2.0 * shear_mod * (r.sig[a] - r.sig[b]) / gap;
    else
      coef[k] = 0.5 * (dp(a, a) - dp(a, b) + dp(b, b) - dp(b, a));
  }
  if (diagonal) {
    for (int i = 0; i < 3; ++i) {
      out.stress[i] = r.sig[i];
      out.stress[3 + i] = 0.0;
    }
    for (int j = 0; j < 6; ++j)
      for (int i = 0; i < 6; ++i) tangent(i, j) = i < 3 && j < 3 ? dp(i, j) : 0.0;
    tangent(voigt::xy, voigt::xy) = 0.5 * coef[0];
    tangent(voigt::yz, voigt::yz) = 0.5 * coef[1];
    tangent(voigt::zx, voigt::zx) = 0.5 * coef[2];
  } else {
    Vec6 nv[3];
    for (int i = 0; i < 3; ++i) nv[i] = symmetric_dyad(axes.col(i), axes.col(i));
    out.stress = r.sig[0] * nv[0] + r.sig[1] * nv[1] + r.sig[2] * nv[2];
    tangent.setZero();
    for (int a = 0; a < 3; ++a)
      for (int b = 0; b < 3; ++b) tangent.noalias() += dp(a, b) * nv[a] * nv[b].transpose();
    for (int k = 0; k < 3; ++k) {
      const Vec6 sv = symmetric_dyad(axes.col(pair_a[k]), axes.col(pair_b[k]));
      tangent.noalias() += 2.0 * coef[k] * sv * sv.transpose();
    }
  }
  const double inv_norm = strain_norm > 0.0 ? 1.0 / strain_norm : 0.0;
  plastic_state(in.internal, r.point, r.dl, accepted, inv_norm, out.internal);
  if (decision) {
    decision->accepted = accepted;
    for (int i = 0; i < 3; ++i) decision->x[i] = r.sig[i];
    int j = 3;
    for (int s = 0; s < 3; ++s)
      if (accepted & (1 << s)) decision->x[j++] = r.dl[s];
  }
  return {Status::ok, std::max(1, iterations)};
}

// ---------------------------------------------------------------------------------------------
// The derivative version. Its integrate runs in two passes over the same code:
// 1. values: the double integrate itself (the decisions - elastic or plastic, the active set -,
//    the local Newton solve to convergence, the consistent tangent), so that the values and the
//    tangent are exactly those of the double model;
// 2. derivatives: the increment's arithmetic again on Dual (elastic constants, trial stress,
//    principal trial stresses, surfaces, residual, state update: the same templates as pass 1).
//    The local solution x = (principal stresses, multipliers) solves R(x; inputs) = 0. Its
//    derivatives follow from the implicit function theorem at the converged x: one Newton
//    correction dx = -J^-1 R(x; inputs) with R evaluated on Dual at the converged x (held
//    constant) and J = dR/dx the value Jacobian there (the hand-written one, refactored at x):
//    the value part of the correction is the converged residual (below the local tolerance, and
//    not applied: x keeps the values of pass 1), its derivative part is exactly
//    -J^-1 dR/d(inputs), whatever the iterations that led to x. The quantities of the converged
//    point (gamma_p, p_p, eps_v^pc, mobilised angles) are then evaluated on Dual at x with these
//    derivatives.
// The stress in the general frame is sum_a sigma_a n_a n_a; its derivative has, besides
// sum_a d sigma_a n_a n_a, the rotation of the principal axes with the trial stress A:
//   sum_{a<b} 2 c_ab (n_a . dA . n_b) sym(n_a n_b),  c_ab = (sigma_a - sigma_b) / (lambda_a - lambda_b)
// (the same coefficients as the consistent tangent, de Souza Neto, Peric & Owen 2008, eq. A.46,
// with the same limit for coincident trial values), and d lambda_a = n_a . dA . n_a.
// ---------------------------------------------------------------------------------------------

namespace {

// u . A . v for a stress-type Voigt vector A (tensor shear components) and unit vectors u, v.
template <class T>
T contract(const Vec6Of<T>& a, const Vec3& u, const Vec3& v) {
  const Vec6 s = symmetric_dyad(u, v);
  return s[0] * a[0] + s[1] * a[1] + s[2] * a[2] + 2.0 * (s[3] * a[3] + s[4] * a[4] + s[5] * a[5]);
}

// Sets the value of x, keeping its derivatives.
void set_value(Dual& x, double v) { x.a = v; }

}  // namespace

class HyperbolicHardeningDual final : public DualModel {
 public:
  HyperbolicHardeningDual(const HyperbolicHardening& model,
                          const std::array<Dual, HyperbolicHardening::parameter_count>& parameters)
      : model_(model) {
    Dual alpha, cap_h_ref;
    k_ = make_constants(parameters, std::string(kName) + ": ", alpha, cap_h_ref);
  }

  void initialise(const InitialConditions& conditions, DualState& state) const override {
    state = DualState{};
    initial_state(k_, conditions, state.stress, state.internal);
    MaterialState values;
    model_.initialise(conditions, values);
    for (int i = 0; i < 6; ++i) set_value(state.stress[i], values.stress[i]);
    for (std::size_t i = 0; i < state.internal.size(); ++i) set_value(state.internal[i], values.internal[i]);
  }

  IntegrationResult integrate(const DualState& in, const DualVec6& de, DualState& out, Mat6& tangent) const override {
    using H = HyperbolicHardening;
    using std::sqrt;
    // Pass 1: values, decisions and tangent.
    const MaterialState in_values = value_of(in);
    Vec6 de_values;
    for (int i = 0; i < 6; ++i) de_values[i] = de[i].a;
    MaterialState out_values;
    H::Decision d;
    const IntegrationResult result =
        model_.integrate_impl<H::LocalJacobian::hand_written>(in_values, de_values, out_values, tangent, &d);
    if (result.status != Status::ok) return result;

    // Pass 2: derivatives.
    out = in;
    const Elasticity<Dual> elastic = elasticity(k_, in.stress);
    const DualVec6 trial = elastic_trial(in.stress, de, elastic);
    Dual principal[3];
    for (int a = 0; a < 3; ++a) {
      principal[a] = contract(trial, d.axes.col(a), d.axes.col(a));
      set_value(principal[a], d.principal[a]);
    }
    const History<Dual> history(k_, in.internal[H::shear_hardening], in.internal[H::cap_pressure]);
    if (d.accepted == 0) {
      out.stress = trial;
      // The choices of the value pass at the trial stress, replayed.
      const double zero_values[3] = {0.0, 0.0, 0.0};
      const History<double> hv(model_.k_, in_values.internal[H::shear_hardening], in_values.internal[H::cap_pressure]);
      Point<double> pv;
      Branches branches;
      evaluate(model_.k_, d.principal, zero_values, false, hv, pv, branches);
      const Dual zero[3] = {Dual(0.0), Dual(0.0), Dual(0.0)};
      Point<Dual> at_trial;
      evaluate(k_, principal, zero, false, history, at_trial, Replay{branches});
      elastic_state(at_trial, out.internal);
    } else {
      const Status s = plastic_derivatives(in, de, elastic, trial, principal, history, in_values, d, out);
      if (s != Status::ok) return {s, result.iterations};
    }
    for (int i = 0; i < 6; ++i) set_value(out.stress[i], out_values.stress[i]);
    for (std::size_t i = 0; i < out.internal.size(); ++i) set_value(out.internal[i], out_values.internal[i]);
    return result;
  }

 private:
  Status plastic_derivatives(const DualState& in, const DualVec6& de, const Elasticity<Dual>& elastic,
                             const DualVec6& trial, const Dual principal[3], const History<Dual>& history,
                             const MaterialState& in_values, const HyperbolicHardening::Decision& d,
                             DualState& out) const {
    using H = HyperbolicHardening;
    using std::sqrt;
    const Constants<double>& kv = model_.k_;
    const int mask = d.accepted;
    const bool cap_active = (mask & 2) != 0;
    // The value Jacobian at the converged point, as pass 1 builds it.
    const Elasticity<double> ev = elasticity(kv, in_values.stress);
    const History<double> hv(kv, in_values.internal[H::shear_hardening], in_values.internal[H::cap_pressure]);
    const LocalEquations eq(kv, d.principal, hv, ev.lame, 2.0 * ev.shear, mask);
    const int n = 3 + eq.na;
    Point<double> pv;
    double rv[kUnknowns];
    double jac[kUnknowns][kUnknowns];
    SmallLu lu;
    Branches branches;  // the Jacobian's discrete choices, replayed below
    if (n == 4) {
      eq.system<Method::hand_written, 4>(d.x, pv, rv, jac, branches);
      if (!lu.factor<4>(jac)) return Status::numerical_issue;
    } else {
      eq.system<Method::hand_written, 5>(d.x, pv, rv, jac, branches);
      if (!lu.factor<5>(jac)) return Status::numerical_issue;
    }
    // R on Dual at the converged x (held constant): its derivatives are dR/d(inputs).
    Dual sig[3], dl[3] = {Dual(0.0), Dual(0.0), Dual(0.0)};
    for (int i = 0; i < 3; ++i) sig[i] = Dual(d.x[i]);
    for (int j = 0; j < eq.na; ++j) dl[eq.active[j]] = Dual(d.x[3 + j]);
    Point<Dual> pt;
    evaluate(k_, sig, dl, cap_active, history, pt, Replay{branches});
    const Dual two_g = 2.0 * elastic.shear;
    Dual res[kUnknowns];
    residual(pt, sig, dl, principal, eq.active, eq.na, elastic.lame, two_g, res);
    // dx = -J^-1 dR/d(inputs), lane by lane.
    for (int lane = 0; lane < kDualLanes; ++lane) {
      double b[kUnknowns];
      for (int i = 0; i < n; ++i) b[i] = -res[i].v[lane];
      if (n == 4)
        lu.solve<4>(b);
      else
        lu.solve<5>(b);
      for (int i = 0; i < 3; ++i) sig[i].v[lane] = b[i];
      for (int j = 0; j < eq.na; ++j) dl[eq.active[j]].v[lane] = b[3 + j];
    }
    for (int i = 0; i < n; ++i)
      if (!std::isfinite(i < 3 ? sig[i].v.sum() : dl[eq.active[i - 3]].v.sum())) return Status::numerical_issue;
    // The converged point's quantities with these derivatives.
    evaluate(k_, sig, dl, cap_active, history, pt, Replay{branches});

    // Stress: principal values along the fixed axes, then the rotation of the axes.
    for (int i = 0; i < 6; ++i) out.stress[i] = Dual(0.0);
    for (int a = 0; a < 3; ++a) {
      const Vec6 nv = symmetric_dyad(d.axes.col(a), d.axes.col(a));
      for (int i = 0; i < 6; ++i) out.stress[i] += sig[a] * nv[i];
    }
    double dsig[3][3];
    if (n == 4)
      lu.inverse_block<4>(dsig);
    else
      lu.inverse_block<5>(dsig);
    const int pair_a[3] = {0, 1, 0};
    const int pair_b[3] = {1, 2, 2};
    for (int k = 0; k < 3; ++k) {
      const int a = pair_a[k];
      const int b = pair_b[k];
      const double gap = d.principal[a] - d.principal[b];
      const double c = std::abs(gap) > 1e-9 * d.scale ? (d.x[a] - d.x[b]) / gap
                                                       : 0.5 * (dsig[a][a] - dsig[a][b] + dsig[b][b] - dsig[b][a]);
      const Vec6 sv = symmetric_dyad(d.axes.col(a), d.axes.col(b));
      const Dual w = contract(trial, d.axes.col(a), d.axes.col(b));
      for (int i = 0; i < 6; ++i) out.stress[i].v += (2.0 * c * sv[i]) * w.v;
    }

    // Internal variables.
    Dual norm2(0.0);
    for (int i = 0; i < 6; ++i) norm2 += de[i] * de[i];
    const Dual inv_norm = norm2.a > 0.0 ? 1.0 / sqrt(norm2) : Dual(0.0);
    plastic_state(in.internal, pt, dl, mask, inv_norm, out.internal);
    return Status::ok;
  }

  HyperbolicHardening model_;
  Constants<Dual> k_{};
};

std::unique_ptr<DualModel> HyperbolicHardening::with_derivatives(std::span<const double> seeds) const {
  return std::make_unique<HyperbolicHardeningDual>(*this, seeded_parameters(kName, values_, seeds));
}

}  // namespace triaxcal
