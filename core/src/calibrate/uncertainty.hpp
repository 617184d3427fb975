#pragma once
// Internal: parameter standard errors, intervals, correlations and identifiability warnings at the
// optimum of a calibration (see uncertainty.cpp for the method and its sources).

#include <Eigen/Core>

#include <functional>
#include <vector>

#include "engine.hpp"
#include "jacobian.hpp"

namespace triaxcal::detail {

/// What the covariance needs from a calibration run.
struct UncertaintyContext {
  const Prepared& prepared;
  const CalibrationOptions& options;
  const std::vector<double>& best_unit;  ///< the optimum, unit coordinates of the free parameters
  /// Simulated at the optimum with PlanMode::record: the residuals, the noise model's slopes and
  /// the substeps the Jacobian's simulations replay.
  const Evaluator& at_optimum;
  JobRunner on_lanes;                    ///< for the Jacobian's simulations
  CalibrationSummary& summary;
  /// The least-squares stage's Jacobian (d residual / d unit coordinate, forward differences of
  /// step options.jacobian_step on frozen substeps) at best_unit, when its winning run ended with
  /// one there; null = compute it (central differences, the same step, frozen substeps).
  const Eigen::MatrixXd* unit_jacobian = nullptr;
};

/// Fills the summary's covariance, correlation, standard errors, intervals and warnings. `d0` are
/// the residuals at the optimum.
void uncertainty(const UncertaintyContext& run, const ParameterValues& best_values, const Eigen::VectorXd& d0);

}  // namespace triaxcal::detail
