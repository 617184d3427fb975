// Modified Cam-Clay round trip: CU tests at OCR 1, 2 and 6 plus one CD test generated with
// simulate() from invented parameters at a tolerance 1000x tighter than the fit's (synthetic.hpp);
// lambda, kappa and M recovered from a perturbed start. The strict bias checks of each test type
// alone are in round_trip_test.cpp.

#include <catch2/catch.hpp>

#include "synthetic.hpp"
#include "tolerances.hpp"
#include "triaxcal/calibrate.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// Invented "true" parameters of a fictional soft clay (demo values, not from any real soil).
constexpr double kLambda = 0.20, kKappa = 0.04, kM = 1.2, kNu = 0.25;

TestProtocol clay_shear(const std::string& id, double p0, double ocr, Drainage drainage) {
  TestProtocol p = consolidated_shear(id, p0, drainage, 0.15, 150, 1.1);
  p.initial.overconsolidation_ratio = ocr;
  return p;
}

CalibrationProblem mcc_problem(Noise* noise) {
  CalibrationProblem problem = problem_for("modified_cam_clay");
  // lambda, kappa, M, phi_cs, nu, G, lode_dependence
  const auto truth = problem.create({kLambda, kKappa, kM, 0.0, kNu, 0.0, 0.0});
  for (double ocr : {1.0, 2.0, 6.0}) {
    const std::string id = "CU-OCR" + std::to_string(static_cast<int>(ocr));
    problem.tests.push_back(synthetic_test(id, clay_shear(id, 100.0, ocr, Drainage::undrained), *truth,
                                           {Quantity::deviator_stress, Quantity::excess_pore_pressure}, 0, noise));
  }
  problem.tests.push_back(synthetic_test("CD-OCR1", clay_shear("CD-OCR1", 100.0, 1.0, Drainage::drained), *truth,
                                         {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, noise));
  problem.parameters = {
      free_parameter("lambda", 0.05, 0.5, 0.15, ParameterScale::log),
      free_parameter("kappa", 0.005, 0.1, 0.025, ParameterScale::log),
      free_parameter("critical_state_ratio", 0.6, 1.8, 1.0),
      free_parameter("poissons_ratio", 0.05, 0.45, 0.3),
  };
  problem.constraints = {"kappa <= 0.9 * lambda"};
  return problem;
}

}  // namespace

TEST_CASE("noise-free MCC round trip from CU tests at OCR 1, 2, 6 and a CD test recovers lambda, kappa and M within 0.5 %",
          "[calibrate][modified_cam_clay]") {
  CalibrationOptions o;
  o.local = LocalAlgorithm::bobyqa;
  o.threads = 2;
  const CalibrationSummary s = calibrate(o, mcc_problem(nullptr));
  INFO(s.full());
  REQUIRE(s.usable());
  CHECK(worst_relative_rmse(s) < kCurveRange);
  CHECK(close(value_named(s, "lambda"), kLambda, 0.005, 0.0));
  CHECK(close(value_named(s, "kappa"), kKappa, 0.005, 0.0));
  CHECK(close(value_named(s, "critical_state_ratio"), kM, 0.005, 0.0));
  CHECK(s.evaluations < 2000);
}

TEST_CASE("noisy MCC fits keep the true lambda, kappa and M inside the 95 % intervals over three seeds",
          "[calibrate][modified_cam_clay][uncertainty]") {
  int misses = 0;
  for (std::uint64_t seed = 11; seed <= 13; ++seed) {
    Noise noise(seed);
    CalibrationOptions o;
    o.threads = 2;
    const CalibrationSummary s = calibrate(o, mcc_problem(&noise));
    INFO("seed " << seed << "\n" << s.full());
    REQUIRE(s.usable());
    CHECK(worst_relative_rmse(s) < 0.02);
    for (const auto& [name, truth] :
         {std::pair<const char*, double>{"lambda", kLambda}, {"kappa", kKappa}, {"critical_state_ratio", kM}}) {
      const FittedParameter& p = parameter_named(s, name);
      if (!(p.interval_low <= truth && truth <= p.interval_high)) ++misses;
    }
  }
  // 9 checks of 95 % intervals: P(>= 2 misses) = 7 %, P(>= 3) = 0.8 %.
  CHECK(misses <= 2);
}
