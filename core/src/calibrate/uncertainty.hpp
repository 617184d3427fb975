#pragma once
// Internal: parameter standard errors, intervals, correlations and identifiability warnings at the
// optimum of a calibration (see uncertainty.cpp for the method and its sources).

#include <Eigen/Core>

#include <functional>
#include <vector>

#include "engine.hpp"

namespace triaxcal::detail {

/// What the covariance needs from a calibration run.
struct UncertaintyContext {
  const Prepared& prepared;
  const CalibrationOptions& options;
  const std::vector<double>& best_unit;  ///< the optimum, unit coordinates of the free parameters
  int threads;                           ///< how many lanes may run side by side
  /// Runs task(lane, evaluator) for lanes 0..k-1 side by side, each lane with its own serial
  /// evaluator (none of them the caller's).
  std::function<void(int, const std::function<void(int, Evaluator&)>&)> on_lanes;
  CalibrationSummary& summary;
};

/// Residuals y_sim - y_meas of the evaluator's last simulation, all tests, curves in order; false
/// when a test was not simulated.
bool residuals(const Prepared& p, const Evaluator& ev, Eigen::VectorXd& d);

/// Fills the summary's covariance, correlation, standard errors, intervals and warnings. `d0` are
/// the residuals at the optimum.
void uncertainty(const UncertaintyContext& run, const ParameterValues& best_values, const Eigen::VectorXd& d0);

}  // namespace triaxcal::detail
