#pragma once
// Internal: sensitivities of the compared values to the free parameters, by finite differences.
// One routine for the local least-squares stage and for the uncertainty at the optimum.

#include <Eigen/Core>

#include <functional>
#include <vector>

#include "engine.hpp"

namespace triaxcal::detail {

/// Runs task(job, evaluator) for jobs 0..k-1; each job gets an evaluator no other running job uses.
using JobRunner = std::function<void(int, const std::function<void(int, Evaluator&)>&)>;

enum class Differences { forward, central };

/// The residuals d = y_sim - y_meas of every compared point (tests and curves in order) of an
/// evaluator's last simulation; false when a test was not simulated.
bool residuals(const Prepared& p, const Evaluator& ev, Eigen::VectorXd& d);

/// J(i, k) = d d_i / d u_k at the unit coordinates `unit` (d0: the residuals there), by finite
/// differences of step h in the unit box: central (d(u + h) - d(u - h)) / 2h, or forward
/// (d(u + h) - d0) / h; one-sided where a bound or a failed simulation leaves one side only. The
/// perturbed simulations replay the substeps that `plans` recorded at `unit` (Evaluator::simulate):
/// finite differences on a frozen substep sequence, smooth in the parameters and consistent with
/// the values, not exact derivatives. A column that cannot be computed is zero and have[k] false.
/// Returns the number of simulations made.
int jacobian(const Prepared& p, const std::vector<double>& unit, const Eigen::VectorXd& d0, double h,
             Differences scheme, const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J,
             std::vector<bool>& have);

/// J(i, k) = d d_i / d u_k exactly: the model's derivative version (Model::with_derivatives) runs
/// every test on dual numbers along the substeps `plans` recorded at `unit` (driver.hpp), ceil(n /
/// kDualLanes) passes of all tests, and the curves are interpolated with their derivatives. Tied
/// parameters take the derivatives of their expressions by central differences of the expression
/// (step 1e-6 of the unit box; the one part that is not exact). `d0` = the residuals at `unit`,
/// against which the dual runs' values are checked. Returns the number of passes (each about
/// 1 + kDualLanes simulations' work), or -1 where the model has no derivative version, a dual run
/// failed or its values left d0 (the caller then takes finite differences).
int exact_jacobian(const Prepared& p, const std::vector<double>& unit, const Eigen::VectorXd& d0,
                   const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J);

/// What take_jacobian did: the simulations it made (a dual pass counts as one) and whether the
/// Jacobian is exact.
struct JacobianTaken {
  int simulations = 0;
  bool exact = false;
};

/// The Jacobian as `sensitivities` asks: exact_jacobian where it can be taken, else jacobian()
/// (finite differences of `scheme`, step h, on the same plans); `have` all true for an exact one.
JacobianTaken take_jacobian(const Prepared& p, Sensitivities sensitivities, const std::vector<double>& unit,
                            const Eigen::VectorXd& d0, double h, Differences scheme,
                            const std::vector<SubstepPlan>* plans, const JobRunner& run, Eigen::MatrixXd& J,
                            std::vector<bool>& have);

}  // namespace triaxcal::detail
