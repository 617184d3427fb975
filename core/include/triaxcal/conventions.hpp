#pragma once
// The conventions every part of triaxcal follows. One header, so nobody has to guess.
//
// - Compression is positive, for stresses and strains alike.
// - Stresses in kPa; strains are dimensionless decimals (0.01 = 1 %). Files declare their own units;
//   conversion happens once, where a file is read.
// - Models see effective stresses only; the driver keeps the pore pressure (total = effective + u).
// - Voigt order [11, 22, 33, 12, 23, 31]. Stress vectors hold tensor components; strain vectors hold
//   engineering shear strains (gamma_ij = 2 eps_ij), so sigma . eps is the work density.
// - In a triaxial test the axial direction is 1 and the radial directions are 2 and 3.
// - Triaxial invariants: p' = (s_a' + 2 s_r')/3, q = s_a' - s_r' (signed: negative in extension).
//   In general q = sqrt(3 J2); the Lode angle theta (below) tells compression from extension.

#include <Eigen/Core>

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

namespace triaxcal {

using Vec6 = Eigen::Matrix<double, 6, 1>;
using Mat6 = Eigen::Matrix<double, 6, 6>;
using Vec3 = Eigen::Vector3d;
using Mat3 = Eigen::Matrix3d;

namespace voigt {
inline constexpr int xx = 0;  ///< axial (1)
inline constexpr int yy = 1;  ///< radial (2)
inline constexpr int zz = 2;  ///< radial (3)
inline constexpr int xy = 3;
inline constexpr int yz = 4;
inline constexpr int zx = 5;
}  // namespace voigt

/// Unit vector m = [1 1 1 0 0 0]: m . sigma = 3 p, m . eps = volumetric strain.
inline Vec6 identity_voigt() {
  Vec6 m;
  m << 1.0, 1.0, 1.0, 0.0, 0.0, 0.0;
  return m;
}

inline constexpr double degrees_to_radians(double deg) { return deg * std::numbers::pi / 180.0; }
inline constexpr double radians_to_degrees(double rad) { return rad * 180.0 / std::numbers::pi; }

/// Mean effective stress p' = tr(sigma)/3 (kPa).
inline double mean_stress(const Vec6& s) { return (s[0] + s[1] + s[2]) / 3.0; }

/// Volumetric strain eps_v = tr(eps), compression positive.
inline double volumetric_strain(const Vec6& e) { return e[0] + e[1] + e[2]; }

// Strain measures. The driver integrates natural (logarithmic) strain increments, additive over a
// protocol: eps = ln(L0 / L) axially, ln(V0 / V) volumetrically (compression positive). Laboratories
// report engineering strains relative to the specimen at the start of a stage (dL / L_start,
// dV / V_start); every strain a user sees or a measured curve is compared with is engineering.

/// Engineering strain (compression positive) of a natural strain increment: 1 - exp(-eps_nat).
inline double engineering_strain(double natural) { return -std::expm1(-natural); }
/// Natural strain of an engineering strain (compression positive, below 1): -ln(1 - eps_eng).
inline double natural_strain(double engineering) { return -std::log1p(-engineering); }

/// Deviatoric part of a stress vector (tensor shear components).
inline Vec6 stress_deviator(const Vec6& s) {
  Vec6 d = s;
  const double p = mean_stress(s);
  d[0] -= p;
  d[1] -= p;
  d[2] -= p;
  return d;
}

/// Second invariant of the stress deviator, J2 = s:s/2.
inline double j2_invariant(const Vec6& s) {
  const Vec6 d = stress_deviator(s);
  return 0.5 * (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]) + d[3] * d[3] + d[4] * d[4] + d[5] * d[5];
}

/// Third invariant J3 = det(s) of the stress deviator.
inline double j3_invariant(const Vec6& s) {
  const Vec6 d = stress_deviator(s);
  return d[0] * d[1] * d[2] + 2.0 * d[3] * d[4] * d[5] - d[0] * d[4] * d[4] - d[1] * d[5] * d[5] -
         d[2] * d[3] * d[3];
}

/// Generalised deviator stress q = sqrt(3 J2) >= 0 (kPa).
inline double von_mises_stress(const Vec6& s) { return std::sqrt(3.0 * j2_invariant(s)); }

/// Lode angle theta in [-pi/6, pi/6] with sin(3 theta) = -(3 sqrt 3 / 2) J3 / J2^1.5.
/// With compression positive, theta = -pi/6 in triaxial compression (s_a > s_r) and +pi/6 in
/// triaxial extension (s_a < s_r). Zero deviator returns 0.
inline double lode_angle(const Vec6& s) {
  const double j2 = j2_invariant(s);
  if (j2 <= 1e-30) return 0.0;
  double arg = -1.5 * std::sqrt(3.0) * j3_invariant(s) / std::pow(j2, 1.5);
  arg = std::clamp(arg, -1.0, 1.0);
  return std::asin(arg) / 3.0;
}

/// Triaxial invariants of an axisymmetric state (axial 1, radial 2 = 3).
struct TriaxialInvariants {
  double axial;   ///< s_a' (kPa)
  double radial;  ///< s_r' = (s_22' + s_33')/2 (kPa)
  double p;       ///< p' = (s_a' + 2 s_r')/3 (kPa)
  double q;       ///< q = s_a' - s_r', signed (kPa)
};

inline TriaxialInvariants triaxial_invariants(const Vec6& s) {
  const double radial = 0.5 * (s[1] + s[2]);
  return {s[0], radial, (s[0] + 2.0 * radial) / 3.0, s[0] - radial};
}

/// Stress vector of an axisymmetric state from axial and radial effective stress.
inline Vec6 triaxial_stress(double axial, double radial) {
  Vec6 s = Vec6::Zero();
  s[0] = axial;
  s[1] = radial;
  s[2] = radial;
  return s;
}

/// Stress vector from p' and signed q in triaxial conditions.
inline Vec6 triaxial_stress_from_pq(double p, double q) {
  return triaxial_stress(p + 2.0 * q / 3.0, p - q / 3.0);
}

/// Voigt (stress-type) vector of the symmetric dyad sym(u v^T) = (u v^T + v u^T)/2; with unit
/// principal directions n_a, sum_a s_a sym(n_a n_a) is the stress in the general frame.
inline Vec6 symmetric_dyad(const Vec3& u, const Vec3& v) {
  Vec6 r;
  r << u[0] * v[0], u[1] * v[1], u[2] * v[2], 0.5 * (u[0] * v[1] + u[1] * v[0]), 0.5 * (u[1] * v[2] + u[2] * v[1]),
      0.5 * (u[2] * v[0] + u[0] * v[2]);
  return r;
}

/// Isotropic linear elastic stiffness in Voigt form with engineering shear strains.
inline Mat6 isotropic_elastic_stiffness(double bulk_modulus, double shear_modulus) {
  Mat6 d = Mat6::Zero();
  const double a = bulk_modulus + 4.0 * shear_modulus / 3.0;
  const double b = bulk_modulus - 2.0 * shear_modulus / 3.0;
  for (int i = 0; i < 3; ++i)
    for (int j = 0; j < 3; ++j) d(i, j) = (i == j) ? a : b;
  for (int i = 3; i < 6; ++i) d(i, i) = shear_modulus;
  return d;
}

}  // namespace triaxcal
