#pragma once
// Principal-space helpers shared by the models that return in principal stress space with isotropic
// elasticity (Mohr-Coulomb, undrained Tresca): the spectral decomposition of a trial stress, sorted
// s_A >= s_B >= s_C, and the consistent tangent of the resulting isotropic tensor function.
// Internal to models/ (not installed).

#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>
#include <utility>

#include "triaxcal/conventions.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal::principal {

/// Principal values and directions of a stress, sorted s_A >= s_B >= s_C.
struct Decomposition {
  Vec3 values = Vec3::Zero();  ///< s_A, s_B, s_C
  Mat3 axes;                   ///< columns: unit directions of A, B, C (not set when diagonal)
  int order[3] = {0, 1, 2};    ///< diagonal: coordinate index of A, B, C
  bool diagonal = false;       ///< no shear components: the axes are the coordinate axes
  double scale = 1.0;          ///< max(1, largest |component|) (kPa), for relative tolerances
};

/// Sorted spectral decomposition of `s`. When the shear components vanish (every triaxial path)
/// the axes are the coordinate axes and no eigen-decomposition is made. False when the
/// eigen-solver fails.
inline bool decompose_sorted(const Vec6& s, Decomposition& d) {
  d.scale = std::max(1.0, s.cwiseAbs().maxCoeff());
  d.diagonal = std::abs(s[3]) + std::abs(s[4]) + std::abs(s[5]) <= 1e-14 * d.scale;
  d.order[0] = 0;
  d.order[1] = 1;
  d.order[2] = 2;
  if (d.diagonal) {
    int* order = d.order;
    if (s[order[0]] < s[order[1]]) std::swap(order[0], order[1]);
    if (s[order[1]] < s[order[2]]) std::swap(order[1], order[2]);
    if (s[order[0]] < s[order[1]]) std::swap(order[0], order[1]);
    for (int i = 0; i < 3; ++i) d.values[i] = s[order[i]];
    return true;
  }
  Mat3 t;
  t << s[0], s[3], s[5], s[3], s[1], s[4], s[5], s[4], s[2];
  Eigen::SelfAdjointEigenSolver<Mat3> es(t);
  if (es.info() != Eigen::Success) return false;
  for (int i = 0; i < 3; ++i) {  // eigenvalues ascending
    d.values[i] = es.eigenvalues()[2 - i];
    d.axes.col(i) = es.eigenvectors().col(2 - i);
  }
  return true;
}

/// Column by column: g++ 12 turns a whole-matrix setZero of the 288-byte Mat6 into `rep stos`,
/// whose start-up cost was a fifth of a Mohr-Coulomb plastic increment; per column it is 18 vector stores.
inline void zero_columns(Mat6& m) {
  for (int j = 0; j < 6; ++j) m.col(j).setZero();
}

/// Voigt slot of the shear pair (i, j), i != j.
inline int shear_slot(int i, int j) {
  const int lo = std::min(i, j), hi = std::max(i, j);
  return lo == 0 ? (hi == 1 ? voigt::xy : voigt::zx) : voigt::yz;
}

/// Stress and consistent tangent from the principal return of the trial stress `d`: `returned` the
/// principal stresses, `dp` = d returned / d (principal strain increment), `shear` the elastic shear
/// modulus G. The tangent of an isotropic tensor function (de Souza Neto, Peric & Owen 2008,
/// "Computational Methods for Plasticity", eq. A.46): the principal tangent on the principal dyads,
/// plus 2 (s_a - s_b)/(e_a - e_b) on each sym(n_a n_b) pair, where e_a - e_b = (trial_a - trial_b)/2G;
/// for coincident trial values the limit from the principal tangent.
inline void assemble(const Decomposition& d, const Vec3& returned, const Mat3& dp, double shear, Vec6& stress,
                     Mat6& tangent) {
  const Vec3& principal = d.values;
  auto pair_coefficient = [&](int a, int b) {
    const double gap = principal[a] - principal[b];
    return std::abs(gap) > 1e-9 * d.scale ? 2.0 * shear * (returned[a] - returned[b]) / gap
                                          : 0.5 * (dp(a, a) - dp(a, b) + dp(b, b) - dp(b, a));
  };
  if (d.diagonal) {
    // Principal axes = coordinate axes: the same formula, written out without dyads.
    stress.setZero();
    zero_columns(tangent);
    for (int a = 0; a < 3; ++a) {
      stress[d.order[a]] = returned[a];
      for (int b = 0; b < 3; ++b) tangent(d.order[a], d.order[b]) = dp(a, b);
    }
    for (int a = 0; a < 3; ++a)
      for (int b = a + 1; b < 3; ++b) {
        // sym(e_i e_j) has 1/2 in the Voigt slot of the pair: 2 coef (1/2)^2 = coef / 2.
        const int slot = shear_slot(d.order[a], d.order[b]);
        tangent(slot, slot) = 0.5 * pair_coefficient(a, b);
      }
    return;
  }
  Vec6 n[3];
  for (int i = 0; i < 3; ++i) n[i] = symmetric_dyad(d.axes.col(i), d.axes.col(i));
  stress = returned[0] * n[0] + returned[1] * n[1] + returned[2] * n[2];
  zero_columns(tangent);
  for (int a = 0; a < 3; ++a)
    for (int b = 0; b < 3; ++b) tangent += dp(a, b) * n[a] * n[b].transpose();
  for (int a = 0; a < 3; ++a)
    for (int b = a + 1; b < 3; ++b) {
      const Vec6 s = symmetric_dyad(d.axes.col(a), d.axes.col(b));
      tangent += 2.0 * pair_coefficient(a, b) * s * s.transpose();
    }
}

// Derivative versions (sensitivity.hpp). The returned stress is an isotropic tensor function
// Y(X) = sum_a y_a(x) n_a n_a of the trial stress X; its directional derivative along dX (each lane of
// a dual trial stress) is, in the eigenbasis n_a of X's value (de Souza Neto, Peric & Owen 2008,
// eq. A.46 applied to a direction instead of assembled into a matrix):
//   dY = sum_a dy_a n_a n_a + sum_{a != b} c_ab (n_a . dX . n_b) n_a n_b,
//   dy_a = the derivative of the principal return at x_a + (n_a . dX . n_a),  c_ab = (y_a - y_b)/(x_a - x_b),
// and for coincident x_a = x_b the limit of c_ab from the principal tangent, as `assemble` takes it.
// The eigenvalue derivatives n_a . dX . n_a and the rotation n_a . dX . n_b come from the value's
// eigenvectors only: no derivative of an eigenvector is formed, so a triaxial state (two equal principal
// values, whose eigenvectors are not unique) is differentiated like any other.

/// n_a . X . n_b for the dual trial X (Voigt, tensor shear components) in the value's principal axes.
inline Dual rotated(const Decomposition& d, const DualVec6& x, int a, int b) {
  if (d.diagonal) {
    const int i = d.order[a], j = d.order[b];
    return i == j ? x[i] : x[shear_slot(i, j)];
  }
  const auto na = d.axes.col(a), nb = d.axes.col(b);
  Dual r = na[0] * nb[0] * x[0] + na[1] * nb[1] * x[1] + na[2] * nb[2] * x[2];
  r += (na[0] * nb[1] + na[1] * nb[0]) * x[voigt::xy];
  r += (na[1] * nb[2] + na[2] * nb[1]) * x[voigt::yz];
  r += (na[2] * nb[0] + na[0] * nb[2]) * x[voigt::zx];
  return r;
}

/// The sorted principal values of a trial stress: d.values for doubles; for dual numbers d.values
/// with the derivatives n_a . dX . n_a (first-order perturbation of the eigenvalues).
template <class T>
Eigen::Matrix<T, 3, 1> principal_values(const Decomposition& d, const Eigen::Matrix<T, 6, 1>& trial) {
  if constexpr (std::is_same_v<T, double>) {
    return d.values;
  } else {
    Eigen::Matrix<T, 3, 1> x;
    for (int a = 0; a < 3; ++a) {
      x[a] = rotated(d, trial, a, a);
      x[a].a = d.values[a];
    }
    return x;
  }
}

/// The dual stress of a principal return (the values as `assemble` gives them): `returned` the
/// dual principal stresses, `dp` the value principal tangent (as for `assemble`), `shear` the value of G.
inline void rotate_back(const Decomposition& d, const DualVec6& trial, const DualVec3& returned, const Mat3& dp,
                        double shear, DualVec6& stress) {
  // c_ab of the note above; `assemble`'s pair coefficient is 2G c_ab (it acts on strains).
  auto coefficient = [&](int a, int b) {
    const double gap = d.values[a] - d.values[b];
    return std::abs(gap) > 1e-9 * d.scale ? (returned[a].a - returned[b].a) / gap
                                          : 0.25 * (dp(a, a) - dp(a, b) + dp(b, b) - dp(b, a)) / shear;
  };
  // The off-diagonal n_a . dX . n_b: its value vanishes (to rounding) in the value's own axes.
  auto rotation = [&](int a, int b) {
    Dual r = rotated(d, trial, a, b);
    r.a = 0.0;
    return r;
  };
  if (d.diagonal) {
    for (int i = 0; i < 6; ++i) stress[i] = Dual(0.0);
    for (int a = 0; a < 3; ++a) stress[d.order[a]] = returned[a];
    for (int a = 0; a < 3; ++a)
      for (int b = a + 1; b < 3; ++b) stress[shear_slot(d.order[a], d.order[b])] = coefficient(a, b) * rotation(a, b);
    return;
  }
  Vec6 n[3];
  for (int i = 0; i < 3; ++i) n[i] = symmetric_dyad(d.axes.col(i), d.axes.col(i));
  for (int i = 0; i < 6; ++i) stress[i] = returned[0] * n[0][i] + returned[1] * n[1][i] + returned[2] * n[2][i];
  for (int a = 0; a < 3; ++a)
    for (int b = a + 1; b < 3; ++b) {
      const Vec6 s = symmetric_dyad(d.axes.col(a), d.axes.col(b));
      const Dual r = 2.0 * coefficient(a, b) * rotation(a, b);
      for (int i = 0; i < 6; ++i) stress[i] += r * s[i];
    }
}

}  // namespace triaxcal::principal
