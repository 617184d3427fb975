#pragma once
// Internal: the local stage as a bounded nonlinear least-squares solve (Ceres Solver,
// Levenberg-Marquardt trust region) in the unit box of the free parameters.

#include <Eigen/Core>

#include <functional>
#include <string>
#include <vector>

#include "engine.hpp"

namespace triaxcal::detail {

/// What the solve asks of the calibration run.
struct LeastSquaresCalls {
  /// Residuals d = y_sim - y_meas of every compared point at unit coordinates u (one objective
  /// evaluation); false when the point fails (a test not simulated, the model or a constraint
  /// rejects it): Ceres then takes the step as unsuccessful and shrinks its trust region.
  std::function<bool(const std::vector<double>& u, Eigen::VectorXd& d)> values;
  /// J = d d / d u at the u of the last successful values() call, whose residuals are d.
  std::function<void(const std::vector<double>& u, const Eigen::VectorXd& d, Eigen::MatrixXd& J)> jacobian;
  /// true: end the solve now (stop request, time limit, budget).
  std::function<bool()> stop;
};

enum class LocalEnd { converged, stopped, failed };

struct LocalResult {
  LocalEnd end = LocalEnd::failed;
  std::string message;  ///< Ceres's reason
  int iterations = 0;
};

/// Minimises 1/2 sum_points w rho(e^2), e = d / range (the objective of calibrate.hpp, halved)
/// from u (updated to the solution) within [0, 1]^n. Each point is a residual block of its own, so
/// that the robust loss applies per point: linear -> no loss, soft_l1 -> ceres::SoftLOneLoss,
/// huber -> ceres::HuberLoss, each at options.loss_scale and scaled by the point's weight
/// (ceres::ScaledLoss). The blocks share one simulation per parameter vector.
LocalResult least_squares(const Prepared& p, const CalibrationOptions& options, std::vector<double>& u,
                          const LeastSquaresCalls& calls);

}  // namespace triaxcal::detail
