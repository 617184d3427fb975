#pragma once
// Exact sensitivities (forward-mode automatic differentiation) of a simulation with respect to model
// parameters: every value carries its derivatives along kDualLanes directions (Ceres Solver's Jet, a
// well-kept dual number with Eigen support), and a model that supports it integrates the same
// increment on such values (Model::with_derivatives). The driver then carries the derivatives along
// the same substeps as the values (simulate on dual numbers, driver.hpp), so that a calibration's
// Jacobian is the derivative of the very computation that gave the residuals, not a finite
// difference of it.

#include <Eigen/Dense>
#include <ceres/jet.h>

#include <array>
#include <memory>
#include <span>

#include "triaxcal/core_export.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal {

/// A value and its derivatives along kDualLanes directions: `.a` the value, `.v[k]` d value / d t_k.
using Dual = ceres::Jet<double, kDualLanes>;
using DualVec6 = Eigen::Matrix<Dual, 6, 1>;
using DualMat6 = Eigen::Matrix<Dual, 6, 6>;
using DualVec3 = Eigen::Matrix<Dual, 3, 1>;
using DualMat3 = Eigen::Matrix<Dual, 3, 3>;

/// The value of a dual number or of a double (for code templated on the scalar).
inline double value_of(double x) { return x; }
inline double value_of(const Dual& x) { return x.a; }

/// MaterialState on dual numbers.
struct DualState {
  DualVec6 stress = DualVec6::Zero();
  std::array<Dual, kMaxStateVariables> internal{};
};

/// The value part of a DualState.
inline MaterialState value_of(const DualState& s) {
  MaterialState m;
  for (int i = 0; i < 6; ++i) m.stress[i] = s.stress[i].a;
  for (int i = 0; i < kMaxStateVariables; ++i) m.internal[static_cast<std::size_t>(i)] = s.internal[static_cast<std::size_t>(i)].a;
  return m;
}

/// A model whose parameters carry derivatives (made by Model::with_derivatives). Its integrate is
/// Model::integrate on dual numbers: the values of `out` and `tangent` equal what the model's
/// double integrate returns from the values of `in` and `strain_increment` (to rounding), and the
/// derivatives of `out` are the exact derivatives of that computation with respect to the
/// directions carried by the parameters, `in` and `strain_increment` (chain rule; a local Newton
/// solve differentiated at its converged point by the implicit function theorem, not by its
/// iteration history). `tangent` is the consistent tangent of the values (double), as the driver
/// needs it for its own Newton iterations. Must not allocate.
class TRIAXCAL_CORE_EXPORT DualModel {
 public:
  virtual ~DualModel() = default;
  /// Model::initialise, with the derivatives of the initial state (a state derived from
  /// parameters, e.g. a preconsolidation pressure on a line the parameters place).
  virtual void initialise(const InitialConditions& conditions, DualState& state) const = 0;
  virtual IntegrationResult integrate(const DualState& in, const DualVec6& strain_increment, DualState& out,
                                      Mat6& tangent) const = 0;
};

}  // namespace triaxcal
