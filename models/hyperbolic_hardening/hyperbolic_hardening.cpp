#include "hyperbolic_hardening/hyperbolic_hardening.hpp"

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>
#include <limits>

#include "hyperbolic_hardening/dual.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

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

using hyperbolic::Dual;
using hyperbolic::larger;
using hyperbolic::smaller;
using hyperbolic::value;
constexpr int kUnknowns = 5;  // three principal stresses and at most two multipliers
using D5 = Dual<kUnknowns>;

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

// Hardening state at the start of the increment.
struct History {
  double gamma;   // gamma_p
  double pp;      // p_p (kPa)
  double pp_pow;  // (p_p / p_ref)^(1 - m)
  History(const HyperbolicHardening::Constants& k, double gamma_n, double pp_n)
      : gamma(gamma_n), pp(pp_n), pp_pow(k.m == 0.5 ? std::sqrt(pp_n / k.p_ref) : std::pow(pp_n / k.p_ref, 1.0 - k.m)) {}
};

// x^m, with the common m = 0.5 as a square root.
template <class T>
T power(const T& x, double m) {
  using std::pow;
  using std::sqrt;
  return m == 0.5 ? sqrt(x) : pow(x, m);
}

// p_p after a cap plastic volumetric strain eps: d p_p = H_ref (p_p/p_ref)^m d eps, integrated exactly.
template <class T>
T hardened_cap(const HyperbolicHardening::Constants& k, const History& h, const T& eps) {
  using std::exp;
  using std::pow;
  const double e = 1.0 - k.m;
  if (e < 1e-9) return h.pp * exp(eps * (k.h_ref / k.p_ref));
  const T base = larger(h.pp_pow + eps * (e * k.h_ref / k.p_ref), T(1e-300));
  if (e == 0.5) return k.p_ref * (base * base);
  return k.p_ref * pow(base, 1.0 / e);
}

// Evaluate the surfaces at principal stress `sig` with multipliers dl (shear, cap, tension) from
// hardening state (gamma_n, pp_n). Symmetric in the three principal values: no ordering needed.
template <class T>
void evaluate(const HyperbolicHardening::Constants& k, const T sig[3], const T dl[3], bool cap_active,
              const History& h, Point<T>& o) {
  using std::pow;
  using std::sqrt;
  const T p = (sig[0] + sig[1] + sig[2]) / 3.0;
  const T s[3] = {sig[0] - p, sig[1] - p, sig[2] - p};
  const T j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]);
  const double pv = value(p);
  const double c1 = 0.5 * (1.0 + k.delta);
  const double c2 = 2.25 * (k.delta - 1.0);
  T q(0.0), x(0.0), qt2(0.0);
  T dq[3], dx[3], qt_dqt[3];
  if (value(j2) > kIsotropic * (pv * pv + 1.0)) {
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
  const T ratio = power(larger(shifted, T(k.floor)) / (k.p_ref + k.c_cot), k.m);
  const T a = 2.0 / ((2.0 * k.e50_ref / (2.0 - k.rf)) * ratio);  // 2 / E_i
  const T b = 2.0 / (k.eur_ref * ratio);                          // 2 / E_ur
  const T qf = k.kf * shifted;
  o.gamma = h.gamma + dl[0];
  T qy = qf;
  if (value(qf) > 0.0) {
    const T qa = qf / k.rf;
    const T bb = a - b + o.gamma / qa;
    const T qh = 2.0 * o.gamma / (bb + sqrt(bb * bb + 4.0 * b * o.gamma / qa));
    qy = smaller(qf, qh);
  }
  o.f[0] = q - qy;

  // Mobilised friction and Rowe's dilatancy.
  const T denom = 2.0 * shifted + q;  // s1 + s3 + 2 c cot phi
  T sphm = value(denom) > 0.0 ? q / denom : T(k.sin_phi);
  sphm = smaller(sphm, T(k.sin_phi));
  T spsi(0.0);
  if (k.rule != 2) {
    spsi = (sphm - k.sin_cv) / (1.0 - sphm * k.sin_cv);
    if (k.rule == 1) spsi = larger(spsi, T(0.0));
  }
  o.sin_phi_m = sphm;
  o.sin_psi_m = spsi;
  for (int i = 0; i < 3; ++i) o.n[0][i] = dq[i] * (0.5 - 0.5 * spsi) - spsi * ds3[i];

  // Cap.
  const T big_f = sqrt(qt2 * (1.0 / k.alpha2) + p * p);
  const T inv_f = 1.0 / big_f;
  for (int i = 0; i < 3; ++i) o.n[1][i] = (qt_dqt[i] * (1.0 / k.alpha2) + p * (1.0 / 3.0)) * inv_f;
  o.cap_strain = dl[1] * p * inv_f;
  o.pp = cap_active ? hardened_cap(k, h, o.cap_strain) : T(h.pp);
  o.f[1] = big_f - o.pp;

  // Tension cut-off.
  o.f[2] = -s3 - k.tension;
  for (int i = 0; i < 3; ++i) o.n[2][i] = -ds3[i];
}

// Smooth stress measures of a general stress vector (see the header).
struct Measures {
  double p, q, x, s3, qt;
};

Measures measures(const Vec6& stress, double delta) {
  Measures m{};
  m.p = mean_stress(stress);
  const double j2 = j2_invariant(stress);
  if (j2 > kIsotropic * (m.p * m.p + 1.0)) {
    m.q = std::sqrt(3.0 * j2);
    m.x = j3_invariant(stress) / j2;
  }
  m.s3 = m.p - 0.5 * m.q + 0.75 * m.x;
  m.qt = 0.5 * (1.0 + delta) * m.q - 2.25 * (delta - 1.0) * m.x;
  return m;
}

double stiffness_ratio(const HyperbolicHardening::Constants& k, double s3) {
  return power(std::max(s3 + k.c_cot, k.floor) / (k.p_ref + k.c_cot), k.m);
}

// f_bar of the paper (eq. 8) without gamma_p: the plastic shear strain that puts the shear
// locus through a stress with deviator q and minor stress s3 (q < q_f).
double shear_locus(const HyperbolicHardening::Constants& k, double q, double s3) {
  const double ratio = stiffness_ratio(k, s3);
  const double ei = 2.0 * k.e50_ref / (2.0 - k.rf) * ratio;
  const double eur = k.eur_ref * ratio;
  const double qa = k.kf * (s3 + k.c_cot) / k.rf;
  return 2.0 * q / (ei * (1.0 - q / qa)) - 2.0 * q / eur;
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

  const double phi = degrees_to_radians(v[friction_angle]);
  k_.e50_ref = v[secant_stiffness_ref];
  k_.eur_ref = v[unloading_stiffness_ref];
  k_.m = v[stress_exponent];
  k_.p_ref = v[reference_pressure];
  k_.nu = v[poissons_ratio_ur];
  k_.rf = v[failure_ratio];
  k_.c_cot = v[cohesion] / std::tan(phi);
  k_.sin_phi = std::sin(phi);
  k_.sin_cv = std::sin(degrees_to_radians(v[critical_state_friction_angle]));
  k_.kf = 2.0 * k_.sin_phi / (1.0 - k_.sin_phi);
  k_.tension = std::min(v[tensile_strength], k_.c_cot);
  k_.rule = static_cast<int>(v[dilatancy_rule]);
  k_.delta = (3.0 + k_.sin_phi) / (3.0 - k_.sin_phi);
  k_.floor = kStiffnessFloor * (k_.p_ref + k_.c_cot);

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
  const double kk = v[k0_normally_consolidated];
  const double s1 = k_.p_ref;
  const double s3 = kk * s1;
  const double q = s1 - s3;
  const double p = (s1 + 2.0 * s3) / 3.0;
  const double qf = k_.kf * (s3 + k_.c_cot);
  if (!(q < qf))
    throw InputError(head + "k0_normally_consolidated = " + format_number(kk) + " puts the normally consolidated state at or beyond "
                     "failure (deviator " + format_number(q) + " kPa >= q_f = " + format_number(qf) +
                     " kPa at s1' = reference_pressure); it must exceed " +
                     format_number((1.0 - k_.sin_phi) / (1.0 + k_.sin_phi)) + " for c' = 0");
  k_.alpha2 = 1.0;  // not used by the shear surface
  k_.h_ref = 1.0;
  const double gamma0 = shear_locus(k_, q, s3);
  D5 sig[3] = {D5::variable(s1, 0), D5::variable(s3, 1), D5::variable(s3, 2)};
  D5 dl[3] = {D5::variable(0.0, 3), D5(0.0), D5(0.0)};
  Point<D5> pt;
  evaluate(k_, sig, dl, false, History(k_, gamma0, p), pt);
  const double dfs_ds = pt.f[0].d[0] + kk * (pt.f[0].d[1] + pt.f[0].d[2]);
  const double dfs_dg = pt.f[0].d[3];
  const double dl_s = dfs_dg < 0.0 ? std::max(0.0, -dfs_ds / dfs_dg) : 0.0;
  const double eur = k_.eur_ref * stiffness_ratio(k_, s3);
  const double e1 = (1.0 - 2.0 * k_.nu * kk) / eur;
  const double er = (kk - k_.nu * (1.0 + kk)) / eur;
  const double eoed = v[oedometer_stiffness_ref];
  const double axial = 1.0 / eoed - e1 - dl_s * pt.n[0][0].v;  // cap plastic strain needed, axial
  const double radial = -(er + dl_s * pt.n[0][1].v);           // and each radial
  if (!(axial > 0.0))
    throw InputError(head + "oedometer_stiffness_ref = " + format_number(eoed) + " kPa is too stiff for k0_normally_consolidated = " +
                     format_number(kk) + ": elastic and shear-hardening strains alone give a tangent of " +
                     format_number(1.0 / (e1 + dl_s * pt.n[0][0].v)) +
                     " kPa at s1' = reference_pressure; give a smaller value");
  if (!(axial > radial) || !(axial + 2.0 * radial > 0.0))
    throw InputError(head + "k0_normally_consolidated = " + format_number(kk) + " and oedometer_stiffness_ref = " +
                     format_number(eoed) + " kPa cannot both be matched by the cap (it would need a negative "
                     "alpha^2); try a smaller k0_normally_consolidated or a smaller oedometer_stiffness_ref");
  const double u = (axial - radial) * p / (3.0 * (0.5 * axial + radial));
  k_.alpha2 = q / u;
  const double big_f = std::sqrt(q * u + p * p);
  const double nc1 = (u + p / 3.0) / big_f;
  const double dl_c = axial / nc1;
  const double nc_ds = (u * (1.0 - kk) + p / 3.0 * (1.0 + 2.0 * kk)) / big_f;
  const double h = nc_ds / (dl_c * p / big_f);
  k_.h_ref = h / std::pow(big_f / k_.p_ref, k_.m);
  alpha_ = std::sqrt(k_.alpha2);
  cap_h_ref_ = k_.h_ref;
}

void HyperbolicHardening::initialise(const InitialConditions& c, MaterialState& state) const {
  state = MaterialState{};
  state.stress = c.stress;
  const Measures m = measures(c.stress, k_.delta);
  const std::string head = std::string(kName) + ": ";
  if (!(m.s3 + k_.c_cot > 0.0))
    throw InputError(head + "the initial effective stress must be compressive: minor principal stress + c' cot phi' = " +
                     format_number(m.s3 + k_.c_cot) + " kPa, expected > 0");
  double ocr = 1.0;
  if (!std::isnan(c.preconsolidation_pressure)) {
    if (!(c.preconsolidation_pressure >= m.p * (1.0 - 1e-12)))
      throw InputError(head + "preconsolidation_pressure = " + format_number(c.preconsolidation_pressure) +
                       " kPa is below the initial mean effective stress p' = " + format_number(m.p) + " kPa");
    ocr = std::max(1.0, c.preconsolidation_pressure / m.p);
  } else if (!std::isnan(c.overconsolidation_ratio)) {
    if (!(c.overconsolidation_ratio >= 1.0))
      throw InputError(head + "ocr = " + format_number(c.overconsolidation_ratio) + " must be at least 1");
    ocr = c.overconsolidation_ratio;
  }
  const double qf = k_.kf * (m.s3 + k_.c_cot);
  if (!(m.q < qf))
    throw InputError(head + "the initial deviator stress q = " + format_number(m.q) +
                     " kPa is at or beyond failure (q_f = " + format_number(qf) + " kPa)");
  state.internal[shear_hardening] = m.q > 0.0 ? std::max(0.0, shear_locus(k_, m.q, m.s3)) : 0.0;
  state.internal[cap_pressure] = ocr * std::sqrt(m.qt * m.qt / k_.alpha2 + m.p * m.p);
  state.internal[cap_volumetric_strain] = 0.0;
  const double sphm = std::min(k_.sin_phi, m.q / (2.0 * (m.s3 + k_.c_cot) + m.q));
  state.internal[mobilised_friction] = radians_to_degrees(std::asin(sphm));
  state.internal[mobilised_dilation] = 0.0;
  state.internal[active_surfaces] = 0.0;
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
double hardened_cap_slope(const HyperbolicHardening::Constants& k, const History& h, double eps, double& slope) {
  const double e = 1.0 - k.m;
  if (e < 1e-9) {
    const double pp = h.pp * std::exp(eps * (k.h_ref / k.p_ref));
    slope = pp * (k.h_ref / k.p_ref);
    return pp;
  }
  const double rate = e * k.h_ref / k.p_ref;
  double base = h.pp_pow + eps * rate;
  double base_slope = rate;
  if (!(base >= 1e-300)) {
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
void evaluate_derivatives(const HyperbolicHardening::Constants& k, const double sig[3], const double dl[3], int mask,
                          const History& h, Point<double>& o, LocalDerivatives& d) {
  constexpr double third = 1.0 / 3.0;
  const double p = (sig[0] + sig[1] + sig[2]) / 3.0;
  const double s[3] = {sig[0] - p, sig[1] - p, sig[2] - p};
  const double j2 = 0.5 * (s[0] * s[0] + s[1] * s[1] + s[2] * s[2]);
  const double c1 = 0.5 * (1.0 + k.delta);
  const double c2 = 2.25 * (k.delta - 1.0);
  double q = 0.0, x = 0.0, qt2 = 0.0;
  double dq[3], dx[3], qt_dqt[3];
  double hq[3][3], hx[3][3], hqt[3][3];  // d2q, d2X, d(qt_dqt_i)/d sigma_k
  if (j2 > kIsotropic * (p * p + 1.0)) {
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
  const bool above_floor = shifted >= k.floor;
  const double ratio = power((above_floor ? shifted : k.floor) * (1.0 / (k.p_ref + k.c_cot)), k.m);
  const double dlog_ratio = above_floor ? k.m / shifted : 0.0;  // d ln(ratio) / d shifted
  const double inv_ratio = 1.0 / ratio;
  const double a = ((2.0 - k.rf) / k.e50_ref) * inv_ratio;  // 2 / E_i
  const double b = (2.0 / k.eur_ref) * inv_ratio;           // 2 / E_ur
  const double a_s = -a * dlog_ratio, b_s = -b * dlog_ratio;
  const double qf = k.kf * shifted;
  o.gamma = h.gamma + dl[0];
  double qy = qf, qy_s = k.kf, qy_g = 0.0;
  if (qf > 0.0) {
    const double inv_qf = 1.0 / qf;
    const double u_g = k.rf * inv_qf;  // 1 / q_a
    const double u = o.gamma * u_g;    // gamma / q_a
    const double u_s = -u * k.kf * inv_qf;
    const double bb = a - b + u;
    const double disc = std::sqrt(bb * bb + 4.0 * b * u);
    const double den = bb + disc;
    const double inv_den = 1.0 / den;
    const double qh = 2.0 * o.gamma * inv_den;
    if (!(qf <= qh)) {
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
  if (denom > 0.0) {
    const double inv_denom = 1.0 / denom;
    sphm = q * inv_denom;
    const double c = 2.0 * inv_denom * inv_denom;
    for (int i = 0; i < 3; ++i) dsphm[i] = c * (shifted * dq[i] - q * ds3[i]);
  }
  if (!(sphm <= k.sin_phi)) {
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
    if (k.rule == 1 && !(spsi >= 0.0)) {
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
    o.pp = hardened_cap_slope(k, h, o.cap_strain, slope);
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
  template <int N>
  bool factor(const double (&m)[kUnknowns][kUnknowns], double* b = nullptr) {
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
  void inverse_block(double (&inverse3)[3][3]) const {
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
void copy_values(const Point<Dual<N>>& a, Point<double>& b) {
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
template <class T>
void residual(const Point<T>& pt, const T sig[3], const T dl[3], const double trial[3], const int active[2], int na,
              double lame, double two_g, T res[kUnknowns]) {
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
  const HyperbolicHardening::Constants& k;
  const double* trial;
  const History& h;
  double lame, two_g;
  int active[2];
  int na;
  int mask;

  LocalEquations(const HyperbolicHardening::Constants& kk, const double* tr, const History& hh, double l, double g2,
                 int m)
      : k(kk), trial(tr), h(hh), lame(l), two_g(g2), active{0, 0}, na(0), mask(m) {
    for (int s = 0; s < 3; ++s)
      if (mask & (1 << s)) active[na++] = s;
  }

  template <Method method, int N>
  void system(const double x[kUnknowns], Point<double>& pt, double rv[kUnknowns],
              double (&jac)[kUnknowns][kUnknowns]) const {
    constexpr int n = N;
    if constexpr (method == Method::automatic) {
      D5 sig[3];
      for (int i = 0; i < 3; ++i) sig[i] = D5::variable(x[i], i);
      D5 dl[3] = {D5(0.0), D5(0.0), D5(0.0)};
      for (int j = 0; j < na; ++j) dl[active[j]] = D5::variable(x[3 + j], 3 + j);
      Point<D5> ad;
      evaluate(k, sig, dl, (mask & 2) != 0, h, ad);
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
      evaluate_derivatives(k, sig, dl, mask, h, pt, d);
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
  return integrate_impl<LocalJacobian::hand_written>(in, de, out, tangent);
}

IntegrationResult HyperbolicHardening::integrate_with(LocalJacobian method, const MaterialState& in, const Vec6& de,
                                                      MaterialState& out, Mat6& tangent) const {
  if (method == LocalJacobian::automatic) return integrate_impl<LocalJacobian::automatic>(in, de, out, tangent);
  return integrate_impl<LocalJacobian::hand_written>(in, de, out, tangent);
}

HyperbolicHardening::LocalSystem HyperbolicHardening::local_system(LocalJacobian method, const double principal[3],
                                                                   const double multipliers[3], int mask,
                                                                   double gamma_n, double pp_n, double eur,
                                                                   const double trial[3]) const {
  const History history(k_, gamma_n, pp_n);
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

template <HyperbolicHardening::LocalJacobian method>
IntegrationResult HyperbolicHardening::integrate_impl(const MaterialState& in, const Vec6& de, MaterialState& out,
                                                      Mat6& tangent) const {
  out = in;
  // Elasticity with E_ur at the stress at the start of the increment.
  const Measures m0 = measures(in.stress, k_.delta);
  const double eur = k_.eur_ref * stiffness_ratio(k_, m0.s3);
  const double bulk = eur / (3.0 * (1.0 - 2.0 * k_.nu));
  const double shear_mod = eur / (2.0 * (1.0 + k_.nu));
  const double lame = bulk - 2.0 * shear_mod / 3.0;
  const double diag = bulk + 4.0 * shear_mod / 3.0;  // as isotropic_elastic_stiffness
  Vec6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + diag * de[i] + lame * (de[(i + 1) % 3] + de[(i + 2) % 3]);
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + shear_mod * de[i];
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

  const double zero[3] = {0.0, 0.0, 0.0};
  Point<double> at_trial;
  const History history(k_, gamma_n, pp_n);
  evaluate(k_, principal, zero, false, history, at_trial);
  const double ytol = kYieldTolerance * scale;
  int violated = 0;
  for (int s = 0; s < 3; ++s)
    if (at_trial.f[s] > ytol) violated |= 1 << s;
  if (violated == 0) {
    out.stress = trial;
    tangent = isotropic_elastic_stiffness(bulk, shear_mod);
    out.internal[mobilised_friction] = radians_to_degrees(std::asin(at_trial.sin_phi_m));
    out.internal[mobilised_dilation] = radians_to_degrees(std::asin(at_trial.sin_psi_m));
    out.internal[active_surfaces] = 0.0;
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
  out.internal[shear_hardening] = r.point.gamma;
  out.internal[cap_pressure] = r.point.pp;
  out.internal[cap_volumetric_strain] = in.internal[cap_volumetric_strain] + r.point.cap_strain;
  out.internal[mobilised_friction] = radians_to_degrees(std::asin(r.point.sin_phi_m));
  out.internal[mobilised_dilation] = radians_to_degrees(std::asin(r.point.sin_psi_m));
  out.internal[active_surfaces] = accepted;
  const double inv_norm = strain_norm > 0.0 ? 1.0 / strain_norm : 0.0;
  out.internal[shear_rate] = r.dl[shear] * inv_norm;
  out.internal[cap_rate] = r.dl[cap] * inv_norm;
  return {Status::ok, std::max(1, iterations)};
}

}  // namespace triaxcal
