#include "sand_state_bounding/sand_state_bounding.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <type_traits>

#include "hyperbolic_hardening/dual.hpp"
#include "seeded_parameters.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

using hyperbolic::value;
using D6 = hyperbolic::Dual<6>;  // six partials: d / d (strain increment), for the tangent
using Jet = triaxcal::Dual;     // the derivative version's dual numbers (sensitivity.hpp)

inline double value(const Jet& x) { return x.a; }

// The code below is templated on R, the scalar of the parameters and the state (double for the
// model, Jet for its derivative version), and A, the scalar of the quantities differentiated for the
// tangent: D6 for the model (its tangent by forward-mode differentiation over the strain
// increment), Jet for the derivative version (whose tangent is the double model's). `outer` is the R
// part of an A: the value of a D6, the Jet itself.
template <class A>
auto outer(const A& x) {
  if constexpr (std::is_same_v<A, D6>)
    return x.v;
  else
    return x;
}

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kPat = SandStateBounding::kReferencePressure;
constexpr double kSqrt23 = 0.81649658092772603;  // sqrt(2/3)
constexpr double kSqrt6 = 2.4494897427831781;
constexpr double kSqrt32 = 1.2247448713915890;   // sqrt(3/2)
// Smallest (alpha - alpha_in):n in h = b0 / ((alpha - alpha_in):n): at the start of a loading process
// (alpha = alpha_in) h is unbounded and the cone is dragged with the stress ratio without plastic
// strain; the floor keeps the numbers finite (common practice in implementations, no source).
constexpr double kReversalFloor = 1e-10;
// A state whose cone function f/p' = ||r - alpha|| - sqrt(2/3) m is above -kOnCone counts as on the
// cone (the drift correction puts it there to round-off; the driver's extrapolation may leave it
// off by the order of its tolerance).
constexpr double kOnCone = 1e-9;

constexpr double kLiquefiedPressure = SandStateBounding::kLiquefiedPressure;

const char* const kName = "sand_state_bounding";

template <class T>
using V6 = std::array<T, 6>;

// Tensors in Voigt stress form [11, 22, 33, 12, 23, 31] (tensor components).
template <class A, class B>
auto ddot(const V6<A>& a, const V6<B>& b) {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2] + 2.0 * (a[3] * b[3] + a[4] * b[4] + a[5] * b[5]);
}

// n n of the symmetric tensor [[n0 n3 n5] [n3 n1 n4] [n5 n4 n2]].
template <class T>
V6<T> square(const V6<T>& n) {
  return {n[0] * n[0] + n[3] * n[3] + n[5] * n[5], n[3] * n[3] + n[1] * n[1] + n[4] * n[4],
          n[5] * n[5] + n[4] * n[4] + n[2] * n[2], n[0] * n[3] + n[3] * n[1] + n[5] * n[4],
          n[3] * n[5] + n[1] * n[4] + n[4] * n[2], n[5] * n[0] + n[4] * n[3] + n[2] * n[5]};
}

template <class T>
T sqrt_of(const T& x) {
  using std::sqrt;
  return sqrt(x);
}

// Deviatoric tensors of the state: components 11, 22, 12, 23, 31 from `base`.
template <class State>
auto unpack(const State& s, int base) {
  using R = std::remove_cvref_t<decltype(s.internal[0])>;
  const R a11 = s.internal[base], a22 = s.internal[base + 1];
  return V6<R>{a11, a22, -a11 - a22, s.internal[base + 2], s.internal[base + 3], s.internal[base + 4]};
}
template <class R, class State>
void pack(const V6<R>& a, State& s, int base) {
  s.internal[base] = a[0];
  s.internal[base + 1] = a[1];
  s.internal[base + 2] = a[3];
  s.internal[base + 3] = a[4];
  s.internal[base + 4] = a[5];
}

// The stress ratio r = s/p' (deviatoric) of a stress.
template <class T>
V6<T> stress_ratio(const V6<T>& sigma, const T& p) {
  const T inv = 1.0 / p;
  return {(sigma[0] - p) * inv, (sigma[1] - p) * inv, (sigma[2] - p) * inv, sigma[3] * inv, sigma[4] * inv,
          sigma[5] * inv};
}

// Elastic increment of stress for an engineering strain increment de with moduli G, K.
template <class T, class U>
V6<T> elastic_increment(const T& shear, const T& bulk, const V6<U>& de) {
  const U dev = de[0] + de[1] + de[2];
  V6<T> ds;
  for (int i = 0; i < 3; ++i) ds[i] = 2.0 * shear * (de[i] - dev / 3.0) + bulk * dev;
  for (int i = 3; i < 6; ++i) ds[i] = shear * de[i];
  return ds;
}

template <class T>
struct PlasticStep {
  V6<T> stress;   // stress at the end of the increment
  V6<T> alpha;    // back-stress ratio at the end
  V6<T> fabric;   // z at the end
  V6<T> a;        // L = a . d eps / den (a acts on the engineering strain increment)
  V6<T> b;        // d sigma = D^e d eps - L b
  T den{};
  bool loading = false;   // L > 0
  bool reversed = false;  // (alpha - alpha_in):n < 0: alpha_in is reset to alpha (load reversal)
};

// One forward-Euler step of the elastoplastic rate equations from a stress on the cone with every
// coefficient at that stress and the loading direction n given (the caller takes it from the
// elastic trial state, see integrate) (Dafalias & Manzari 2004; equation numbers from memory).
// S: the type of the start stress (double where the step starts on the cone, else differentiated
// like T, the type of n and of the strain increment).
template <class R, class S, class T>
Status plastic_step(const SandStateBounding::ConstantsOf<R>& k, const V6<S>& sigma, const V6<T>& n,
                    const V6<R>& alpha, const V6<R>& z, const V6<R>& alpha_in, const R& e, const V6<T>& de,
                    PlasticStep<T>& o) {
  using std::exp;
  using std::pow;
  const S p = (sigma[0] + sigma[1] + sigma[2]) / 3.0;
  if (!(value(p) > 0.0)) return Status::invalid_input;
  const V6<S> r = stress_ratio(sigma, p);
  // Elasticity (eq. 2, from memory): G = G0 p_at (2.97 - e)^2/(1 + e) (p'/p_at)^0.5, K from nu.
  const S root = sqrt_of(p / kPat);
  const R density = (2.97 - e) * (2.97 - e) / (1.0 + e);
  const S shear = (k.g0 * kPat * density) * root;
  const S bulk = k.bulk_factor * shear;
  // State parameter psi = e - e_c with e_c = e_0 - lambda_c (p'/p_at)^xi (eq. 3, from memory).
  const S psi = e - (k.e0 - k.lambda_c * pow(p / kPat, k.xi));
  const S towards_bounding = exp(-k.n_b * psi);
  const S towards_dilatancy = exp(k.n_d * psi);
  // Lode angle cos 3theta = sqrt 6 tr n^3 (1 in triaxial compression with compression positive) and
  // g(theta, c) = 2c / ((1 + c) - (1 - c) cos 3theta) (eq. 9, from memory).
  const V6<T> n2 = square(n);
  const T tr3 = ddot(n, n2);
  T cos3 = kSqrt6 * tr3;
  if (value(cos3) > 1.0) cos3 = T(1.0);
  if (value(cos3) < -1.0) cos3 = T(-1.0);
  const T g = 2.0 * k.c / ((1.0 + k.c) - (1.0 - k.c) * cos3);
  // Bounding and dilatancy back-stress ratios alpha_b,d = sqrt(2/3) (g M exp(-+n psi) - m) n
  // (eqs. 18, 19, from memory); (alpha_b - alpha):n and (alpha_d - alpha):n.
  const T an = ddot(alpha, n);
  const T bounding = kSqrt23 * (g * k.m_c * towards_bounding - k.m);
  const T dilatancy = kSqrt23 * (g * k.m_c * towards_dilatancy - k.m);
  const T bn = bounding - an;
  const T dn = dilatancy - an;
  // h = b0 / ((alpha - alpha_in):n), b0 = G0 h0 (1 - c_h e)(p'/p_at)^-0.5 (eqs. 21, 22, from memory);
  // alpha_in = alpha where (alpha - alpha_in):n < 0 (a new loading process).
  T x = an - ddot(alpha_in, n);
  o.reversed = value(x) < 0.0;
  if (value(x) < kReversalFloor) x = T(kReversalFloor);
  const R density_factor = 1.0 - k.c_h * e;
  if (!(density_factor > 0.0)) return Status::invalid_input;
  const S b0 = (k.g0 * k.h0 * density_factor) / root;
  const T h = b0 / x;
  // Plastic modulus K_p = (2/3) p' h (alpha_b - alpha):n (eq. 20, from memory).
  const T kp = (2.0 / 3.0) * p * h * bn;
  // Dilatancy D = A_d (alpha_d - alpha):n, A_d = A0 (1 + <z:n>) (eqs. 24, 25, from memory).
  T zn = ddot(z, n);
  if (value(zn) < 0.0) zn = T(0.0);
  const T dil = k.a0 * (1.0 + zn) * dn;
  // Deviatoric flow R' = B n - C (n^2 - I/3), B = 1 + (3/2)(1 - c)/c g cos 3theta,
  // C = 3 sqrt(3/2) (1 - c)/c g (eq. 13, from memory; R' = n in triaxial compression and extension).
  const R lode = (1.0 - k.c) / k.c;
  const T bb = 1.0 + 1.5 * lode * g * cos3;
  const T cc = (3.0 * kSqrt32 * lode) * g;
  V6<T> rdev;
  for (int i = 0; i < 6; ++i) rdev[i] = bb * n[i] - cc * (n2[i] - (i < 3 ? 1.0 / 3.0 : 0.0));
  // Loading index L = (2G n:de - K n:r d eps_v) / (K_p + 2G (B - C tr n^3) - K D n:r) (eq. 26,
  // from memory; from the consistency condition n:ds - n:r dp - p' n:d alpha = 0).
  const T nr = ddot(n, r);
  o.den = kp + 2.0 * shear * (bb - cc * tr3) - bulk * dil * nr;
  if (!(value(o.den) > 0.0)) return Status::numerical_issue;
  T numerator = T(0.0);
  for (int i = 0; i < 3; ++i) {
    o.a[i] = 2.0 * shear * n[i] - bulk * nr;
    o.b[i] = 2.0 * shear * rdev[i] + bulk * dil;
  }
  for (int i = 3; i < 6; ++i) {
    o.a[i] = 2.0 * shear * n[i];
    o.b[i] = 2.0 * shear * rdev[i];
  }
  for (int i = 0; i < 6; ++i) numerator = numerator + o.a[i] * de[i];
  const T load = numerator / o.den;
  o.loading = value(load) > 0.0;
  if (!o.loading) return Status::ok;
  // d sigma = D^e (d eps - L R), R = R' + D I/3; d alpha = L (2/3) h (alpha_b - alpha) (eq. 17);
  // dz = -c_z <-d eps_v^p> (z_max n + z) with d eps_v^p = L D (eq. 27, from memory).
  const T dev = de[0] + de[1] + de[2];
  V6<T> ds;
  for (int i = 0; i < 3; ++i) ds[i] = 2.0 * shear * (de[i] - dev / 3.0) + bulk * dev;
  for (int i = 3; i < 6; ++i) ds[i] = shear * de[i];
  const T rate = load * (2.0 / 3.0) * h;
  const T dvp = load * dil;
  for (int i = 0; i < 6; ++i) {
    o.stress[i] = sigma[i] + ds[i] - load * o.b[i];
    o.alpha[i] = alpha[i] + rate * (bounding * n[i] - alpha[i]);
    o.fabric[i] = z[i];
    if (value(dvp) < 0.0) o.fabric[i] = z[i] + (k.c_z * dvp) * (k.z_max * n[i] + z[i]);
  }
  return Status::ok;
}

template <class R>
using Stress = Eigen::Matrix<R, 6, 1>;

template <class R>
R mean_of(const Stress<R>& s) {
  return (s[0] + s[1] + s[2]) / 3.0;  // mean_stress (conventions.hpp) on R
}

// Moves alpha radially in the deviatoric ratio plane so that the stress lies on the cone:
// alpha = r - sqrt(2/3) m (r - alpha)/||r - alpha||.
template <class R>
void onto_cone(const Stress<R>& stress, const R& radius, V6<R>& alpha) {
  const R p = mean_of(stress);
  const V6<R> sigma{stress[0], stress[1], stress[2], stress[3], stress[4], stress[5]};
  const V6<R> r = stress_ratio(sigma, p);
  V6<R> d;
  for (int i = 0; i < 6; ++i) d[i] = r[i] - alpha[i];
  const R norm = sqrt_of(ddot(d, d));
  if (!(norm > 0.0)) return;
  for (int i = 0; i < 6; ++i) alpha[i] = r[i] - radius * d[i] / norm;
}

// f/p' = ||r - alpha|| - sqrt(2/3) m.
template <class R>
R cone_function(const Stress<R>& stress, const R& radius, const V6<R>& alpha) {
  const R p = mean_of(stress);
  const V6<R> sigma{stress[0], stress[1], stress[2], stress[3], stress[4], stress[5]};
  const V6<R> r = stress_ratio(sigma, p);
  V6<R> d;
  for (int i = 0; i < 6; ++i) d[i] = r[i] - alpha[i];
  return sqrt_of(ddot(d, d)) - radius;
}

// The elastic stiffness on R (isotropic_elastic_stiffness, conventions.hpp).
template <class R>
Eigen::Matrix<R, 6, 6> elastic_stiffness(const R& bulk, const R& shear) {
  if constexpr (std::is_same_v<R, double>) {
    return isotropic_elastic_stiffness(bulk, shear);
  } else {
    Eigen::Matrix<R, 6, 6> d;
    for (int i = 0; i < 6; ++i)
      for (int j = 0; j < 6; ++j) d(i, j) = R(0.0);
    const R a = bulk + 4.0 * shear / 3.0;
    const R b = bulk - 2.0 * shear / 3.0;
    for (int i = 0; i < 3; ++i)
      for (int j = 0; j < 3; ++j) d(i, j) = (i == j) ? a : b;
    for (int i = 3; i < 6; ++i) d(i, i) = shear;
    return d;
  }
}

template <class R>
bool all_finite(const Stress<R>& s) {
  for (int i = 0; i < 6; ++i)
    if (!std::isfinite(value(s[i]))) return false;
  return true;
}

// The constants in the paper's symbols from the parameters in ModelInfo order.
template <class R>
SandStateBounding::ConstantsOf<R> constants_of(const std::array<R, SandStateBounding::kParameters>& v) {
  using P = SandStateBounding::Parameter;
  SandStateBounding::ConstantsOf<R> k;
  k.m_c = v[P::critical_state_ratio];
  k.c = v[P::extension_ratio];
  k.e0 = v[P::csl_void_ratio_ref];
  k.lambda_c = v[P::csl_lambda];
  k.xi = v[P::csl_exponent];
  k.g0 = v[P::shear_modulus_constant];
  k.nu = v[P::poissons_ratio];
  k.m = v[P::yield_cone_size];
  k.h0 = v[P::hardening_constant];
  k.c_h = v[P::hardening_density_factor];
  k.n_b = v[P::bounding_exponent];
  k.a0 = v[P::dilatancy_constant];
  k.n_d = v[P::dilatancy_exponent];
  k.z_max = v[P::fabric_max];
  k.c_z = v[P::fabric_rate];
  k.bulk_factor = 2.0 * (1.0 + k.nu) / (3.0 * (1.0 - 2.0 * k.nu));
  k.radius = kSqrt23 * k.m;
  return k;
}

// G = G0 p_at (2.97 - e)^2/(1 + e) (p'/p_at)^0.5.
template <class R>
R shear_modulus_of(const SandStateBounding::ConstantsOf<R>& k, const R& e, const R& p) {
  return k.g0 * kPat * (2.97 - e) * (2.97 - e) / (1.0 + e) * sqrt_of(p / kPat);
}

// One increment (SandStateBounding::integrate) on R; A as above. `tangent` is filled where given
// (A = D6 only).
template <class R, class A>
IntegrationResult integrate_sand(const SandStateBounding::ConstantsOf<R>& k, const StateOf<R>& in,
                                 const Stress<R>& de, StateOf<R>& out, Mat6* tangent);

}  // namespace

namespace {

// phi_cs from M in triaxial compression, sin phi_cs = 3 M/(6 + M); the model's only constant
// strength is its critical state (c' = 0, phi' = phi_cs): the peak ratio M exp(-n_b psi) depends on
// the state parameter psi (Dafalias & Manzari 2004, eq. for the bounding ratio).
ImpliedValue sand_implied(ParameterRole role, const std::vector<double>& v) {
  using P = SandStateBounding::Parameter;
  if (v.size() <= static_cast<std::size_t>(P::critical_state_ratio) || !(v[P::critical_state_ratio] > 0.0)) return {};
  const double m = v[P::critical_state_ratio];
  const double phi = radians_to_degrees(std::asin(3.0 * m / (6.0 + m)));
  const char* note =
      "the model's peak stress ratio M exp(-n_b psi) depends on the density and pressure (state parameter psi); "
      "its one constant strength is the critical state (c' = 0, phi' = phi_cs)";
  switch (role) {
    case ParameterRole::critical_state_friction_angle: return {phi, "critical_state_ratio M: sin phi_cs = 3 M/(6 + M)", ""};
    case ParameterRole::friction_angle: return {phi, "critical state: phi' = phi_cs", note};
    case ParameterRole::cohesion: return {0.0, "critical state: c' = 0", note};
    default: return {};
  }
}

// Without a fabric effect (fabric_max = 0) its rate takes no part.
bool sand_unused(std::size_t index, const std::vector<double>& v) {
  using P = SandStateBounding::Parameter;
  return index == static_cast<std::size_t>(P::fabric_rate) && v.size() > static_cast<std::size_t>(P::fabric_rate) &&
         v[P::fabric_max] == 0.0;
}

}  // namespace

const ModelInfo& SandStateBounding::model_info() {
  static const ModelInfo info{
      kName,
      "State-dependent bounding-surface sand model with fabric (Dafalias & Manzari 2004, J. Eng. Mech. 130(6))",
      {
          {"critical_state_ratio", "-", kNaN, 0.0, 3.0, true, true,
           "M = q/p' at critical state in triaxial compression (paper: M)", ParameterRole::critical_state_ratio},
          {"extension_ratio", "-", kNaN, 0.0, 1.0, true, false,
           "critical state ratio in extension over that in compression (paper: c)"},
          {"csl_void_ratio_ref", "-", kNaN, 0.0, inf, true, true,
           "void ratio of the critical state line at p' = 0, e_c = e_0 - lambda_c (p'/p_at)^xi (paper: e_0)",
           ParameterRole::csl_void_ratio_ref},
          {"csl_lambda", "-", kNaN, 0.0, inf, false, true,
           "slope of the critical state line against (p'/p_at)^xi (paper: lambda_c)", ParameterRole::csl_slope},
          {"csl_exponent", "-", kNaN, 0.0, 2.0, true, false, "exponent of the critical state line (paper: xi)",
           ParameterRole::csl_exponent},
          {"shear_modulus_constant", "-", kNaN, 0.0, inf, true, true,
           "G = G0 p_at (2.97 - e)^2/(1 + e) (p'/p_at)^0.5, p_at = 101.325 kPa (paper: G0)"},
          {"poissons_ratio", "-", kNaN, -1.0, 0.5, true, true, "Poisson's ratio of the elastic part (paper: nu)",
           ParameterRole::poissons_ratio},
          {"yield_cone_size", "-", kNaN, 0.0, inf, true, true,
           "opening of the yield cone, f = ||s - p' alpha|| - sqrt(2/3) m p'; smaller than c M (paper: m)"},
          {"hardening_constant", "-", kNaN, 0.0, inf, true, true,
           "plastic modulus constant, b0 = G0 h0 (1 - c_h e)(p'/p_at)^-0.5 (paper: h0)"},
          {"hardening_density_factor", "-", kNaN, 0.0, inf, false, true,
           "void ratio dependence of the plastic modulus through 1 - c_h e, c_h e < 1 (paper: c_h)"},
          {"bounding_exponent", "-", kNaN, 0.0, inf, false, true,
           "bounding stress ratio M exp(-n_b psi) (paper: n^b)"},
          {"dilatancy_constant", "-", kNaN, 0.0, inf, false, true,
           "dilatancy D = A0 (1 + <z:n>)(alpha_d - alpha):n (paper: A0)"},
          {"dilatancy_exponent", "-", kNaN, 0.0, inf, false, true,
           "dilatancy (phase transformation) stress ratio M exp(n_d psi) (paper: n^d)"},
          {"fabric_max", "-", 0.0, 0.0, inf, false, true,
           "largest fabric-dilatancy tensor norm; 0 = no fabric effect (paper: z_max)"},
          {"fabric_rate", "-", 0.0, 0.0, inf, false, true,
           "rate of fabric change during dilation, dz = -c_z <-d eps_v^p> (z_max n + z) (paper: c_z)"},
      },
      {"void_ratio", "back_stress_ratio_11", "back_stress_ratio_22", "back_stress_ratio_12", "back_stress_ratio_23",
       "back_stress_ratio_31", "fabric_11", "fabric_22", "fabric_12", "fabric_23", "fabric_31",
       "reversal_back_stress_ratio_11", "reversal_back_stress_ratio_22", "reversal_back_stress_ratio_12",
       "reversal_back_stress_ratio_23", "reversal_back_stress_ratio_31"},
      {},
      sand_implied,
      sand_unused,
  };
  return info;
}

std::unique_ptr<Model> SandStateBounding::create(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  const std::string head = where + ": " + kName + ": ";
  if (v.size() != info.parameters.size())
    throw InputError(head + "expected " + std::to_string(info.parameters.size()) + " parameter values, found " +
                     std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  const double cm = v[extension_ratio] * v[critical_state_ratio];
  if (!(v[yield_cone_size] < cm))
    throw InputError(head + "yield_cone_size = " + format_number(v[yield_cone_size]) +
                     " must be smaller than extension_ratio x critical_state_ratio = " + format_number(cm) +
                     " (the critical state must lie outside the yield cone in extension too)");
  return std::make_unique<SandStateBounding>(v);
}

SandStateBounding::SandStateBounding(const ParameterValues& v) {
  for (std::size_t i = 0; i < kParameters; ++i) values_[i] = v[i];
  k_ = constants_of(values_);
}

double SandStateBounding::critical_void_ratio(double p) const {
  return k_.e0 - k_.lambda_c * std::pow(p / kPat, k_.xi);
}

double SandStateBounding::shear_modulus(double e, double p) const {
  return shear_modulus_of(k_, e, p);
}

void SandStateBounding::initialise(const InitialConditions& c, MaterialState& state) const {
  const std::string head = std::string(kName) + ": ";
  if (std::isnan(c.void_ratio))
    throw InputError(head + "initial.void_ratio is required (the void ratio e0 at the start of the protocol)");
  if (!(c.void_ratio > 0.0) || !std::isfinite(c.void_ratio))
    throw InputError(head + "initial.void_ratio = " + format_number(c.void_ratio) + " must be positive");
  if (!(1.0 - k_.c_h * c.void_ratio > 0.0))
    throw InputError(head + "initial.void_ratio = " + format_number(c.void_ratio) +
                     " is too loose for hardening_density_factor = " + format_number(k_.c_h) +
                     " (the plastic modulus needs c_h e < 1, e < " + format_number(1.0 / k_.c_h) + ")");
  if (!c.stress.allFinite()) throw InputError(head + "the initial effective stress must be finite");
  const double p = mean_stress(c.stress);
  if (!(p >= kLiquefiedPressure))
    throw InputError(head + "the initial mean effective stress p' = " + format_number(p) + " kPa must be at least " +
                     format_number(kLiquefiedPressure) + " kPa (below it the model treats the sand as liquefied)");
  // The cone is centred on the initial stress ratio (alpha = r), the last load reversal there, no fabric.
  const V6<double> sigma{c.stress[0], c.stress[1], c.stress[2], c.stress[3], c.stress[4], c.stress[5]};
  const V6<double> r = stress_ratio(sigma, p);
  state = MaterialState{};
  state.stress = c.stress;
  state.internal[void_ratio] = c.void_ratio;
  pack(r, state, back_stress_ratio);
  pack(r, state, reversal_back_stress_ratio);
}

namespace {

template <class R, class A>
IntegrationResult integrate_sand(const SandStateBounding::ConstantsOf<R>& k_, const StateOf<R>& in,
                                 const Stress<R>& de, StateOf<R>& out, Mat6* tangent) {
  using std::exp;
  using Sand = SandStateBounding;
  out = in;
  const R e = in.internal[Sand::void_ratio];
  const R p = mean_of<R>(in.stress);
  if (!(p >= kLiquefiedPressure) || !(e > 0.0) || !all_finite(de) || !all_finite<R>(in.stress))
    return {Status::invalid_input, 0};
  // Void ratio after the increment of natural volumetric strain (the driver's measure).
  const R dev = de[0] + de[1] + de[2];
  const R e_new = (1.0 + e) * exp(-dev) - 1.0;
  if (!(e_new > 0.0)) return {Status::invalid_input, 0};

  V6<R> alpha = unpack(in, Sand::back_stress_ratio);
  V6<R> z = unpack(in, Sand::fabric);
  V6<R> alpha_in = unpack(in, Sand::reversal_back_stress_ratio);
  const R shear = shear_modulus_of(k_, e, p);
  const R bulk = k_.bulk_factor * shear;
  const Eigen::Matrix<R, 6, 6> elastic = elastic_stiffness(bulk, shear);
  const Stress<R> trial = in.stress + elastic * de;
  const R p_trial = mean_of(trial);
  if (!(p_trial >= kLiquefiedPressure)) return {Status::invalid_input, 0};

  // Plastic where the elastic trial stress lies outside the cone. The loading direction over the
  // step is that of the trial state, n = (r_trial - alpha)/||r_trial - alpha|| (backward Euler in the
  // direction, as the radial return of J2 plasticity): with the narrow cone, n turns towards the
  // strain-rate direction within some m p'/(2G) of strain (1e-5 here), and an explicit n (from the
  // start of the step) is unstable for larger steps (measured: the 22-33 asymmetry of a triaxial
  // test grew tenfold a step at 3e-4 axial strain a step).
  bool plastic = false;
  V6<R> direction{};
  if (cone_function(trial, k_.radius, alpha) > 0.0) {
    V6<A> d;
    for (int i = 0; i < 6; ++i) {
      if constexpr (std::is_same_v<A, D6>)
        d[i] = D6::variable(de[i], i);
      else
        d[i] = de[i];
    }
    const V6<A> ds = elastic_increment(A(shear), A(bulk), d);
    const V6<R> sigma{in.stress[0], in.stress[1], in.stress[2], in.stress[3], in.stress[4], in.stress[5]};
    V6<A> sigma_trial;
    for (int i = 0; i < 6; ++i) sigma_trial[i] = sigma[i] + ds[i];
    const A pt = (sigma_trial[0] + sigma_trial[1] + sigma_trial[2]) / 3.0;
    const V6<A> rt = stress_ratio(sigma_trial, pt);
    V6<A> n;
    for (int i = 0; i < 6; ++i) n[i] = rt[i] - alpha[i];
    const A norm = sqrt_of(ddot(n, n));
    for (int i = 0; i < 6; ++i) n[i] = n[i] / norm;
    // From inside the cone: elastic up to the crossing, at the fraction t of the increment where
    // ||u + t w|| = k (p' + t dp), u = s - p' alpha, w = ds - dp alpha (a quadratic in t; closed
    // form, so the derivative version differentiates it as it stands).
    A t(0.0);
    const bool from_inside = cone_function(in.stress, k_.radius, alpha) < -kOnCone;
    if (from_inside) {
      const A dp = (ds[0] + ds[1] + ds[2]) / 3.0;
      V6<A> u;
      V6<A> w;
      for (int i = 0; i < 6; ++i) {
        const double unit = i < 3 ? 1.0 : 0.0;
        u[i] = sigma[i] - p * unit - p * alpha[i];
        w[i] = ds[i] - dp * unit - dp * alpha[i];
      }
      const R k2 = k_.radius * k_.radius;
      const A qa = ddot(w, w) - k2 * dp * dp;
      const A qb = 2.0 * (ddot(u, w) - k2 * p * dp);
      const R qc = outer(ddot(u, u)) - k2 * p * p;  // < 0: inside
      const A disc = qb * qb - 4.0 * qa * qc;
      if (!(value(disc) >= 0.0)) return {Status::numerical_issue, 0};
      t = 2.0 * qc / (-1.0 * qb - sqrt_of(disc));
      if (!(value(t) >= 0.0 && value(t) <= 1.0)) return {Status::numerical_issue, 0};
    }
    PlasticStep<A> o;
    Status s;
    if (from_inside) {
      V6<A> start;
      V6<A> rest;
      for (int i = 0; i < 6; ++i) {
        start[i] = sigma[i] + t * ds[i];
        rest[i] = (1.0 - t) * d[i];
      }
      s = plastic_step(k_, start, n, alpha, z, alpha_in, e, rest, o);
    } else {
      s = plastic_step(k_, sigma, n, alpha, z, alpha_in, e, d, o);  // the start stress is not differentiated for the tangent
    }
    if (s != Status::ok) return {s, 0};
    if (o.loading) {
      plastic = true;
      if (o.reversed) alpha_in = alpha;
      for (int i = 0; i < 6; ++i) {
        out.stress[i] = outer(o.stress[i]);
        z[i] = outer(o.fabric[i]);
        direction[i] = outer(n[i]);
      }
      if constexpr (std::is_same_v<A, D6>) {
        for (int i = 0; i < 6; ++i)
          for (int j = 0; j < 6; ++j) (*tangent)(i, j) = o.stress[i].d[j];
      }
    }
  }
  if (!plastic) {
    out.stress = trial;
    if constexpr (std::is_same_v<R, double>) *tangent = elastic;
  }
  if (!(mean_of<R>(out.stress) >= kLiquefiedPressure) || !all_finite<R>(out.stress))
    return {Status::invalid_input, plastic ? 1 : 0};
  // The back-stress ratio: after a plastic step alpha = r - k n with the step's n (the cone through
  // the new stress; along n this is the hardening law's increment by the consistency condition);
  // after an elastic step that ends outside the cone (L <= 0 there), moved radially onto it.
  if (plastic) {
    const V6<R> sigma{out.stress[0], out.stress[1], out.stress[2], out.stress[3], out.stress[4], out.stress[5]};
    const V6<R> r = stress_ratio(sigma, mean_of<R>(out.stress));
    for (int i = 0; i < 6; ++i) alpha[i] = r[i] - k_.radius * direction[i];
  } else if (cone_function<R>(out.stress, k_.radius, alpha) > 0.0) {
    onto_cone<R>(out.stress, k_.radius, alpha);
  }
  out.internal[Sand::void_ratio] = e_new;
  pack(alpha, out, Sand::back_stress_ratio);
  pack(z, out, Sand::fabric);
  pack(alpha_in, out, Sand::reversal_back_stress_ratio);
  return {Status::ok, plastic ? 1 : 0};
}

/// The derivative version: the same increment on Jets (constants with the seeds' derivatives); the
/// tangent and the status are the double model's, whose integrate runs on the values alongside.
class SandStateBoundingDual final : public DualModel {
 public:
  SandStateBoundingDual(const SandStateBounding& model, const std::array<Jet, SandStateBounding::kParameters>& p)
      : model_(model), k_(constants_of(p)) {}  // a copy of the model: independent of its lifetime
  /// The double model's initial state: it depends on the conditions only (the stress, its ratio as
  /// the back-stress ratio, the void ratio), not on the parameters, so its derivatives are zero.
  void initialise(const InitialConditions& conditions, DualState& state) const override {
    MaterialState m;
    model_.initialise(conditions, m);
    state = DualState{};
    for (int i = 0; i < 6; ++i) state.stress[i] = Jet(m.stress[i]);
    for (std::size_t j = 0; j < m.internal.size(); ++j) state.internal[j] = Jet(m.internal[j]);
  }
  IntegrationResult integrate(const DualState& in, const DualVec6& de, DualState& out, Mat6& tangent) const override {
    MaterialState values;
    const IntegrationResult r = model_.integrate(value_of(in), values_of(de), values, tangent);
    if (r.status != Status::ok) return r;
    return integrate_sand<Jet, Jet>(k_, in, de, out, nullptr);
  }

 private:
  SandStateBounding model_;
  SandStateBounding::ConstantsOf<Jet> k_;
};

}  // namespace

IntegrationResult SandStateBounding::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                               Mat6& tangent) const {
  return integrate_sand<double, D6>(k_, in, de, out, &tangent);
}

std::unique_ptr<DualModel> SandStateBounding::with_derivatives(std::span<const double> seeds) const {
  return std::make_unique<SandStateBoundingDual>(*this, seeded_parameters(kName, values_, seeds));
}

}  // namespace triaxcal
