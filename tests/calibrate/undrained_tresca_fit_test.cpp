// Undrained Tresca round trip: three UU tests generated with simulate() from invented parameters (at
// a tolerance 1000x tighter than the fit's, engineering strains: synthetic.hpp), fitted from a
// perturbed start. phi_u = 0: the three confining stresses give one q_max = 2 c_u.

#include <catch2/catch.hpp>

#include <cmath>

#include "synthetic.hpp"
#include "tolerances.hpp"
#include "triaxcal/calibrate.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// Invented "true" parameters of a fictional soft clay (demo values, not from any real soil).
constexpr double kCu = 35.0, kEu = 14000.0, kNu = 0.495;

CalibrationProblem tresca_problem(Noise* noise) {
  CalibrationProblem problem = problem_for("undrained_tresca");
  const auto truth = problem.create({kCu, kEu, kNu});
  for (double p0 : {80.0, 160.0, 320.0}) {
    const std::string id = "UU-" + std::to_string(static_cast<int>(p0));
    problem.tests.push_back(synthetic_test(id, consolidated_shear(id, p0, Drainage::undrained, 0.08, 120), *truth,
                                           {Quantity::deviator_stress}, 0, noise));
  }
  problem.parameters = {
      free_parameter("undrained_shear_strength", 5.0, 200.0, 20.0),
      free_parameter("undrained_youngs_modulus", 1000.0, 100000.0, 5000.0, ParameterScale::log),
      fixed_parameter("undrained_poissons_ratio", kNu),
  };
  return problem;
}

}  // namespace

TEST_CASE("UU tests fitted with the undrained Tresca model recover c_u and E_u (and E_u / c_u) within 0.5 %",
          "[calibrate][undrained_tresca]") {
  const CalibrationProblem problem = tresca_problem(nullptr);
  CalibrationOptions o;
  o.local = LocalAlgorithm::bobyqa;
  o.local_evaluations = 2000;
  o.threads = 2;
  const CalibrationSummary s = calibrate(o, problem);
  INFO(s.full());
  REQUIRE(s.usable());
  CHECK(worst_relative_rmse(s) < kCurveRange);
  CHECK(close(value_named(s, "undrained_shear_strength"), kCu, 0.005, 0.0));
  CHECK(close(value_named(s, "undrained_youngs_modulus"), kEu, 0.005, 0.0));
  CHECK(close(value_named(s, "undrained_youngs_modulus") / value_named(s, "undrained_shear_strength"), kEu / kCu, 0.01, 0.0));
  CHECK(s.evaluations < 1000);  // two parameters: a few dozen measured; slack for a convergence regression
  CHECK(s.failed_simulations == 0);
}
