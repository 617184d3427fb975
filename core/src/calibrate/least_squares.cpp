#include "least_squares.hpp"

#include <ceres/ceres.h>
#include <glog/logging.h>

#include <memory>
#include <mutex>

namespace triaxcal::detail {

namespace {

// The simulation behind every residual block, cached by parameter vector: Ceres asks each block in
// turn at the same point, and asks for the Jacobian only at points whose values it has.
struct Shared {
  const LeastSquaresCalls* calls = nullptr;
  std::size_t n = 0;
  std::vector<double> at_values, at_jacobian;
  Eigen::VectorXd d;
  bool values_ok = false;
  Eigen::MatrixXd J;

  bool same(const std::vector<double>& cached, const double* u) const {
    if (cached.size() != n) return false;
    for (std::size_t k = 0; k < n; ++k)
      if (cached[k] != u[k]) return false;
    return true;
  }

  bool values(const double* u) {
    if (!same(at_values, u)) {
      at_values.assign(u, u + n);
      at_jacobian.clear();
      values_ok = calls->values(at_values, d);
    }
    return values_ok;
  }

  bool jacobian(const double* u) {
    if (!values(u)) return false;
    if (!same(at_jacobian, u)) {
      calls->jacobian(at_values, d, J);
      at_jacobian = at_values;
    }
    return true;
  }
};

// One compared point: e = d_i / range.
class PointCost final : public ceres::CostFunction {
 public:
  PointCost(Shared& shared, Eigen::Index index, double inverse_range)
      : shared_(shared), index_(index), inverse_range_(inverse_range) {
    set_num_residuals(1);
    mutable_parameter_block_sizes()->push_back(static_cast<int>(shared.n));
  }

  bool Evaluate(double const* const* parameters, double* residuals, double** jacobians) const override {
    const double* u = parameters[0];
    const bool want_jacobian = jacobians != nullptr && jacobians[0] != nullptr;
    if (!(want_jacobian ? shared_.jacobian(u) : shared_.values(u))) return false;
    residuals[0] = shared_.d[index_] * inverse_range_;
    if (want_jacobian)
      for (std::size_t k = 0; k < shared_.n; ++k)
        jacobians[0][k] = shared_.J(index_, static_cast<Eigen::Index>(k)) * inverse_range_;
    return true;
  }

 private:
  Shared& shared_;
  Eigen::Index index_;
  double inverse_range_;
};

class StopCheck final : public ceres::IterationCallback {
 public:
  explicit StopCheck(const LeastSquaresCalls& calls) : calls_(calls) {}
  ceres::CallbackReturnType operator()(const ceres::IterationSummary&) override {
    return calls_.stop() ? ceres::SOLVER_ABORT : ceres::SOLVER_CONTINUE;
  }

 private:
  const LeastSquaresCalls& calls_;
};

ceres::LossFunction* base_loss(const CalibrationOptions& o) {
  switch (o.loss) {
    case Loss::linear: return nullptr;
    case Loss::soft_l1: return new ceres::SoftLOneLoss(o.loss_scale);
    case Loss::huber: return new ceres::HuberLoss(o.loss_scale);
  }
  return nullptr;
}

// Ceres reports a failed start (a point that cannot be simulated) through glog's error log even
// with logging_type = SILENT; the calibration reports it in its own words, so glog keeps quiet
// below FATAL. glog's level is process-wide: a host program that uses glog itself sees this.
void quiet_glog() {
  static std::once_flag once;
  std::call_once(once, [] { FLAGS_minloglevel = google::GLOG_FATAL; });
}

}  // namespace

LocalResult least_squares(const Prepared& p, const CalibrationOptions& options, std::vector<double>& u,
                          const LeastSquaresCalls& calls) {
  quiet_glog();
  Shared shared;
  shared.calls = &calls;
  shared.n = u.size();
  for (double& v : u) v = std::clamp(v, 0.0, 1.0);
  ceres::Problem problem;
  Eigen::Index i = 0;
  for (const PreparedTest& t : p.tests)
    for (const PreparedCurve& c : t.curves)
      for (std::size_t j = 0; j < c.xs.size(); ++j, ++i) {
        if (!(c.weight > 0.0)) continue;
        problem.AddResidualBlock(new PointCost(shared, i, 1.0 / c.range),
                                 new ceres::ScaledLoss(base_loss(options), c.weight, ceres::TAKE_OWNERSHIP), u.data());
      }
  LocalResult result;
  if (problem.NumResidualBlocks() == 0) {
    result.message = "no compared point has a weight above 0";
    return result;
  }
  for (std::size_t k = 0; k < u.size(); ++k) {
    problem.SetParameterLowerBound(u.data(), static_cast<int>(k), 0.0);
    problem.SetParameterUpperBound(u.data(), static_cast<int>(k), 1.0);
  }
  StopCheck stop(calls);
  ceres::Solver::Options so;
  so.minimizer_type = ceres::TRUST_REGION;
  so.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
  so.linear_solver_type = ceres::DENSE_QR;
  so.max_num_iterations = 1000;  // the evaluation budget ends it first (StopCheck)
  so.function_tolerance = options.relative_tolerance;
  so.parameter_tolerance = options.x_tolerance;
  so.gradient_tolerance = 1e-12;
  so.num_threads = 1;  // the simulations are parallel already
  so.logging_type = ceres::SILENT;
  so.minimizer_progress_to_stdout = false;
  so.callbacks.push_back(&stop);
  ceres::Solver::Summary summary;
  ceres::Solve(so, &problem, &summary);
  result.iterations = static_cast<int>(summary.iterations.size());
  result.message = summary.message;
  switch (summary.termination_type) {
    case ceres::CONVERGENCE:
    case ceres::USER_SUCCESS: result.end = LocalEnd::converged; break;
    case ceres::NO_CONVERGENCE:
    case ceres::USER_FAILURE: result.end = LocalEnd::stopped; break;
    case ceres::FAILURE: result.end = LocalEnd::failed; break;
  }
  return result;
}

}  // namespace triaxcal::detail
