#pragma once
// The Mohr-Coulomb return mapping (mohr_coulomb.hpp) on a scalar T: double for the model, Dual
// (sensitivity.hpp) for its derivative version. One code for values and derivatives; every
// decision (elastic or not, which active set) is taken on values (Jet comparisons compare values),
// and the derivatives are those of the branch taken. Internal to models/.

#include <Eigen/LU>

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>
#include <type_traits>

#include "principal_space.hpp"
#include "seeded_parameters.hpp"

namespace triaxcal {

template <class T>
struct MohrCoulombReturn {
  using V3 = Eigen::Matrix<T, 3, 1>;
  using M3 = Eigen::Matrix<T, 3, 3>;
  using V6 = Eigen::Matrix<T, 6, 1>;

  MohrCoulombReturn() = default;
  /// `p` in MohrCoulomb::Parameter order: E, nu, c, phi (deg), psi (deg), tensile strength.
  explicit MohrCoulombReturn(const std::array<T, 6>& p);

  T bulk{};
  T shear{};
  T lame{};      // K - 2G/3
  T k_phi{};     // (1 + sin phi) / (1 - sin phi)
  T k_psi{};     // (1 + sin psi) / (1 - sin psi)
  T strength{};  // 2 c sqrt(k_phi): s_A - k_phi s_C <= strength
  T tension{};   // s_C >= -tension (effective, capped at the apex c cot phi)
  M3 elastic_principal = M3::Zero();
  Mat6 elastic = Mat6::Zero();  // values (the tangent is always a double)

  // The surfaces are planes and the elasticity is linear, so everything about an active set but
  // the multipliers is constant: prepared once in the constructor (for dual numbers, once per
  // with_derivatives, with the derivatives of the constants).
  static constexpr int kSurfaces = 6;
  static constexpr int kSets = 10;
  struct Plane {
    V3 a = V3::Zero();  // normal: a . s <= k
    T k{};
  };
  struct ActiveSet {
    int n = 0;
    int ids[3] = {-1, -1, -1};
    bool usable = false;          // linearly independent
    M3 inverse = M3::Zero();      // (a_j . D b_i)^-1
    M3 flow = M3::Zero();         // columns D b_i
    Mat3 tangent = Mat3::Zero();  // D - (D B) M^-1 (A^T D), values
  };
  Plane planes[kSurfaces];
  ActiveSet sets[kSets];

  bool admissible(const V3& s, double tol) const;
  template <int N>
  bool try_set(const ActiveSet& set, const V3& trial, double scale, double ftol, V3& stress, T& multiplier) const;
  /// Return in principal space (sorted trial values). Returns the number of active surfaces
  /// (0 = elastic) or -1 when no active set fits; `set` the index of the active set.
  int return_principal(const V3& trial, V3& stress, int& set, T& multiplier) const;
  IntegrationResult integrate(const StateOf<T>& in, const V6& de, StateOf<T>& out, Mat6& tangent) const;
};

namespace mohr_coulomb_detail {

enum SurfaceId { main_plane, compression_edge, extension_edge, tension_c, tension_b, tension_a };

// Active sets to try, smallest first. In sorted space the main plane (A-C) is the most critical
// Mohr-Coulomb plane and s_C the most critical for tension, so single-surface returns need only
// those two; edges, apex and tension corners follow.
inline constexpr int kCandidateSets[10][3] = {
    {main_plane, -1, -1},
    {tension_c, -1, -1},
    {main_plane, compression_edge, -1},
    {main_plane, extension_edge, -1},
    {main_plane, tension_c, -1},
    {tension_c, tension_b, -1},
    {main_plane, compression_edge, extension_edge},
    {main_plane, tension_c, tension_b},
    {main_plane, extension_edge, tension_c},
    {tension_c, tension_b, tension_a},
};

}  // namespace mohr_coulomb_detail

template <class T>
MohrCoulombReturn<T>::MohrCoulombReturn(const std::array<T, 6>& p) {
  using std::sin;
  using std::sqrt;
  using std::tan;
  const T e = p[0];
  const T nu = p[1];
  bulk = e / (3.0 * (1.0 - 2.0 * nu));
  shear = e / (2.0 * (1.0 + nu));
  const T sphi = sin(p[3] * std::numbers::pi / 180.0);
  const T spsi = sin(p[4] * std::numbers::pi / 180.0);
  k_phi = (1.0 + sphi) / (1.0 - sphi);
  k_psi = (1.0 + spsi) / (1.0 - spsi);
  strength = 2.0 * p[2] * sqrt(k_phi);
  const T apex = p[2] / tan(p[3] * std::numbers::pi / 180.0);
  tension = apex < p[5] ? apex : p[5];  // std::min(p[5], apex), decided on values
  lame = bulk - 2.0 * shear / 3.0;
  elastic_principal.setConstant(lame);
  elastic_principal.diagonal().array() += 2.0 * shear;
  elastic = isotropic_elastic_stiffness(value_of(bulk), value_of(shear));

  // Planes a . s <= k in sorted principal space (s_A >= s_B >= s_C), flow directions b.
  const T one(1.0), zero(0.0);
  const V3 normals[kSurfaces] = {V3(one, zero, -k_phi), V3(one, -k_phi, zero), V3(zero, one, -k_phi),
                                 V3(zero, zero, -one),  V3(zero, -one, zero),  V3(-one, zero, zero)};
  const V3 flows[kSurfaces] = {V3(one, zero, -k_psi), V3(one, -k_psi, zero), V3(zero, one, -k_psi),
                               V3(zero, zero, -one),  V3(zero, -one, zero),  V3(-one, zero, zero)};
  const T limits[kSurfaces] = {strength, strength, strength, tension, tension, tension};
  for (int i = 0; i < kSurfaces; ++i) planes[i] = {normals[i], limits[i]};
  const Mat3 elastic_values = values_of(elastic_principal);
  for (int c = 0; c < kSets; ++c) {
    ActiveSet& set = sets[c];
    set.n = 0;
    for (int id : mohr_coulomb_detail::kCandidateSets[c])
      if (id >= 0) set.ids[set.n++] = id;
    M3 m = M3::Identity();
    set.flow.setZero();
    for (int i = 0; i < set.n; ++i) set.flow.col(i) = elastic_principal * flows[set.ids[i]];
    for (int j = 0; j < set.n; ++j)
      for (int i = 0; i < set.n; ++i) m(j, i) = normals[set.ids[j]].dot(set.flow.col(i));
    // Linear independence and the inverse on values; for dual numbers the inverse's derivative is
    // d(M^-1) = -M^-1 dM M^-1, so its values are the double model's bit for bit.
    const Mat3 mv = values_of(m);
    Eigen::PartialPivLU<Mat3> lu(mv);
    set.usable = std::abs(lu.determinant()) > 1e-12 * std::pow(mv.cwiseAbs().maxCoeff(), set.n);
    if (!set.usable) continue;
    const Mat3 inverse = lu.inverse();
    if constexpr (std::is_same_v<T, double>) {
      set.inverse = inverse;
    } else {
      for (int i = 0; i < 3; ++i)
        for (int j = 0; j < 3; ++j) set.inverse(i, j) = T(inverse(i, j));
      for (int k = 0; k < kDualLanes; ++k) {
        Mat3 dm;
        for (int i = 0; i < 3; ++i)
          for (int j = 0; j < 3; ++j) dm(i, j) = m(i, j).v[k];
        const Mat3 dinv = -inverse * dm * inverse;
        for (int i = 0; i < 3; ++i)
          for (int j = 0; j < 3; ++j) set.inverse(i, j).v[k] = dinv(i, j);
      }
    }
    set.tangent = elastic_values;
    const Mat3 flow_values = values_of(set.flow);
    for (int i = 0; i < set.n; ++i)
      for (int j = 0; j < set.n; ++j)
        set.tangent -= inverse(i, j) * flow_values.col(i) *
                       (elastic_values * values_of(normals[set.ids[j]])).transpose();
  }
}

template <class T>
bool MohrCoulombReturn<T>::admissible(const V3& s, double tol) const {
  // The order first: it is what a single-plane return from a triaxial state (s_B = s_C) breaks,
  // and it is cheaper than the six planes.
  if (!(s[0] >= s[1] - tol && s[1] >= s[2] - tol)) return false;
  for (const Plane& f : planes)
    if (f.a.dot(s) - f.k > tol * (1.0 + k_phi)) return false;
  return true;
}

template <class T>
template <int N>
bool MohrCoulombReturn<T>::try_set(const ActiveSet& set, const V3& trial, double scale, double ftol, V3& stress,
                                   T& multiplier) const {
  // Sum_i (a_j . D b_i) lambda_i = a_j . trial - k_j for every active j; N is the size of the set,
  // a template argument so that the small loops unroll. The returns are linear in the trial stress
  // (no local iteration), so their dual numbers are exact derivatives as they stand.
  T f[N], lambda[N];
  for (int j = 0; j < N; ++j) f[j] = planes[set.ids[j]].a.dot(trial) - planes[set.ids[j]].k;
  for (int i = 0; i < N; ++i) {
    lambda[i] = T(0.0);
    for (int j = 0; j < N; ++j) lambda[i] += set.inverse(i, j) * f[j];
    if (!(lambda[i] >= -1e-14 * scale)) return false;
  }
  V3 s = trial;
  for (int i = 0; i < N; ++i) s -= lambda[i] * set.flow.col(i);
  if (!admissible(s, ftol)) return false;
  stress = s;
  multiplier = T(0.0);
  for (int i = 0; i < N; ++i) multiplier += lambda[i];
  return true;
}

template <class T>
int MohrCoulombReturn<T>::return_principal(const V3& trial, V3& stress, int& set, T& multiplier) const {
  double scale = 1.0;
  for (int i = 0; i < 3; ++i) scale = std::max(scale, std::abs(value_of(trial[i])));
  const double ftol = 1e-11 * scale;
  multiplier = T(0.0);
  set = -1;
  if (admissible(trial, ftol)) {
    stress = trial;
    return 0;
  }
  for (int c = 0; c < kSets; ++c) {
    const ActiveSet& candidate = sets[c];
    if (!candidate.usable) continue;
    bool found = false;
    switch (candidate.n) {
      case 1: found = try_set<1>(candidate, trial, scale, ftol, stress, multiplier); break;
      case 2: found = try_set<2>(candidate, trial, scale, ftol, stress, multiplier); break;
      case 3: found = try_set<3>(candidate, trial, scale, ftol, stress, multiplier); break;
    }
    if (!found) continue;
    set = c;
    return candidate.n;
  }
  return -1;
}

template <class T>
IntegrationResult MohrCoulombReturn<T>::integrate(const StateOf<T>& in, const V6& de, StateOf<T>& out,
                                                  Mat6& tangent) const {
  // Elastic trial D de, written out for the isotropic D (a third of the cost of the 6x6 product).
  const T lame_vol = lame * (de[0] + de[1] + de[2]);
  V6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + lame_vol + 2.0 * shear * de[i];
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + shear * de[i];
  out = in;

  // Principal values (sorted descending: A, B, C) and directions of the trial stress's value
  // (principal_space.hpp: no eigen-decomposition on triaxial paths).
  principal::Decomposition d;
  if constexpr (std::is_same_v<T, double>) {
    if (!trial.allFinite()) return {Status::numerical_issue, 0};
    if (!principal::decompose_sorted(trial, d)) return {Status::numerical_issue, 0};
  } else {
    const Vec6 trial_values = values_of(trial);
    if (!trial_values.allFinite()) return {Status::numerical_issue, 0};
    if (!principal::decompose_sorted(trial_values, d)) return {Status::numerical_issue, 0};
  }

  V3 returned;
  T multiplier;
  int set = -1;
  const int active = return_principal(principal::principal_values(d, trial), returned, set, multiplier);
  if (active < 0) return {Status::no_convergence, 0};
  if (active == 0) {
    out.stress = trial;
    tangent = elastic;
    out.internal[1] = T(0.0);
    return {Status::ok, 0};
  }

  out.internal[0] = in.internal[0] + multiplier;
  out.internal[1] = T(active);
  if constexpr (std::is_same_v<T, double>) {
    principal::assemble(d, returned, sets[set].tangent, shear, out.stress, tangent);
  } else {
    Vec6 stress_values;
    principal::assemble(d, values_of(returned), sets[set].tangent, shear.a, stress_values, tangent);
    principal::rotate_back(d, trial, returned, sets[set].tangent, shear.a, out.stress);
  }
  return {Status::ok, 1};
}

}  // namespace triaxcal
