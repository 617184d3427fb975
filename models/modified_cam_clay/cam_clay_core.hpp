#pragma once
// Modified Cam-Clay's arithmetic on a scalar type T (internal to models/modified_cam_clay): T = double
// for the model itself, T = triaxcal::Dual (sensitivity.hpp) for its derivative version
// (Model::with_derivatives). One code path computes the values of both, so the derivatives are
// those of the very computation the double model does; the equations are in modified_cam_clay.hpp.
//
// Where T = Dual:
// - every discrete decision (elastic or plastic, the Lode-angle branch, a failure status, the
//   branch of the chord factor) is taken on the values, and the derivatives are those of the
//   branch taken;
// - the local Newton iteration of the return runs on the values only (plain doubles, the same
//   code as the double model, warm start included); at its converged point the implicit function
//   theorem gives the derivatives of the unknowns: one Newton correction with the residual on
//   dual numbers and the Jacobian of the values, whose value part (the converged residual,
//   discarded) is ~0 and whose derivative part is exactly -J^-1 dR/d(inputs). So the derivatives
//   depend on the converged point alone, never on the warm start or the iteration history;
// - `tangent` is the consistent tangent of the values, as the double model returns it.
// The definitions are in cam_clay_core_impl.hpp, included by the two translation units that
// instantiate them (modified_cam_clay.cpp for double, modified_cam_clay_derivatives.cpp for Dual).

#include <array>

#include <Eigen/Core>

#include "triaxcal/model.hpp"

namespace triaxcal {

/// Parameters of Modified Cam-Clay (ModelInfo order: lambda, kappa, critical_state_ratio,
/// critical_state_friction_angle, poissons_ratio, shear_modulus, lode_dependence).
inline constexpr std::size_t kCamClayParameters = 7;

template <class T>
class CamClayCore {
 public:
  using Vec = Eigen::Matrix<T, 6, 1>;

  /// Derived constants of the parameter values (ModelInfo order), checked by ModifiedCamClay::create.
  explicit CamClayCore(const std::array<T, kCamClayParameters>& parameters);

  /// M and dM/d(sin 3theta) (a value) at a deviatoric state.
  T ratio_and_slope(const T& sin3theta, double& slope) const;
  /// M at a stress state (the compression value when Lode dependence is off or q = 0).
  T critical_state_ratio_at(const Vec6& stress) const;
  const T& compression_ratio() const { return m_compression_; }

  /// Model::initialise; State is MaterialState (T = double) or DualState (T = Dual).
  template <class State>
  void initialise(const InitialConditions& conditions, State& state) const;
  /// Model::integrate, likewise.
  template <class State>
  IntegrationResult integrate(const State& in, const Vec& strain_increment, State& out, Mat6& tangent) const;

 private:
  T inv_kappa_{};     // 1 / kappa
  T inv_plastic_{};   // 1 / (lambda - kappa)
  T m_compression_{};
  T alpha4_{1.0};     // a^4 of the Lode shape (1 = circle)
  T nu_{0.3};
  T shear_{};         // constant G (kPa), 0 = from Poisson's ratio
  bool lode_ = false;
};

}  // namespace triaxcal
