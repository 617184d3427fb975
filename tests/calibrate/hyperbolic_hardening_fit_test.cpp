// hyperbolic_hardening round trip: three CD tests (one with an unload-reload loop) and one oedometer
// test with unloading, generated with simulate() from invented parameters at a tolerance 1000x
// tighter than the fit's (synthetic.hpp); the stiffness parameters, the stress exponent and phi'
// recovered by a global search and a local polish (round_trip_test.cpp: the local stage alone from
// a nearer start).

#include <catch2/catch.hpp>

#include <chrono>

#include "synthetic.hpp"
#include "tolerances.hpp"
#include "triaxcal/calibrate.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// Invented "true" parameters of a fictional medium-dense sand (demo values, not from any real soil).
constexpr double kSecant = 25000, kOedometer = 22000, kUnloading = 80000, kExponent = 0.55, kPhi = 35, kPhiCv = 31;

TestProtocol cd_with_loop(const std::string& id, double p0, bool loop) {
  TestProtocol p;
  p.name = id;
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = 0.6;
  p.initial.overconsolidation_ratio = 1.0;
  Stage s;
  s.type = StageType::shear;
  s.drainage = Drainage::drained;
  s.axial_strain = loop ? 0.015 : 0.10;
  s.steps = loop ? 30 : 120;
  p.stages.push_back(s);
  if (loop) {
    Stage u;
    u.type = StageType::unload_reload;
    u.target_deviator = 0.1 * p0;
    u.steps = 15;
    p.stages.push_back(u);
    s.axial_strain = 0.085;
    s.steps = 90;
    p.stages.push_back(s);
  }
  return p;
}

TestProtocol oedometer(const std::string& id) {
  TestProtocol p;
  p.name = id;
  p.initial.stress = triaxial_stress(20.0, 10.0);
  p.initial.void_ratio = 0.6;
  p.initial.overconsolidation_ratio = 1.0;
  Stage load;
  load.type = StageType::oedometer;
  load.target_axial = 400.0;
  load.steps = 60;
  p.stages.push_back(load);
  Stage unload = load;
  unload.target_axial = 100.0;
  unload.steps = 30;
  p.stages.push_back(unload);
  return p;
}

CalibrationProblem hh_problem() {
  CalibrationProblem problem = problem_for("hyperbolic_hardening");
  const double k0 = 1.0 - std::sin(degrees_to_radians(kPhi));  // Jaky (1944), common practice
  const auto truth =
      problem.create({kPhi, 0.0, 0.0, kPhiCv, 1.0, kSecant, kUnloading, 0.2, kExponent, 100.0, 0.9, kOedometer, k0});
  const std::vector<Quantity> cd{Quantity::deviator_stress, Quantity::volumetric_strain};
  problem.tests.push_back(synthetic_test("CD-50", cd_with_loop("CD-50", 50.0, false), *truth, cd, 0, nullptr));
  problem.tests.push_back(synthetic_test("CD-100", cd_with_loop("CD-100", 100.0, true), *truth, cd, 0, nullptr));
  problem.tests.push_back(synthetic_test("CD-200", cd_with_loop("CD-200", 200.0, false), *truth, cd, 0, nullptr));
  problem.tests.push_back(synthetic_test("OED", oedometer("OED"), *truth, {Quantity::axial_stress}, 0, nullptr));
  problem.parameters = {
      free_parameter("secant_stiffness_ref", 5000, 100000, 18000, ParameterScale::log),
      free_parameter("oedometer_stiffness_ref", 5000, 100000, 17000, ParameterScale::log),
      free_parameter("unloading_stiffness_ref", 20000, 300000, 60000, ParameterScale::log),
      free_parameter("stress_exponent", 0.3, 0.9, 0.5),
      free_parameter("friction_angle", 28, 42, 33),
      free_parameter("critical_state_friction_angle", 25, 35, 29),
      fixed_parameter("k0_normally_consolidated", k0),
  };
  problem.constraints = {"critical_state_friction_angle <= friction_angle",
                         "unloading_stiffness_ref >= 2 * secant_stiffness_ref"};
  return problem;
}

}  // namespace

TEST_CASE("noise-free hyperbolic_hardening round trip from three CD and one oedometer test recovers stiffnesses, m and phi' within 2 %",
          "[calibrate][hyperbolic_hardening]") {
  CalibrationOptions o;
  // The model rejects stiffness combinations that its cap cannot reproduce (penalised
  // evaluations), so one local run from the start stalls; a short global stage finds the basin.
  o.global = GlobalAlgorithm::crs2;
  o.global_evaluations = 800;
  o.local = LocalAlgorithm::bobyqa;
  o.local_evaluations = 3000;
  o.threads = 2;
  const CalibrationProblem problem = hh_problem();
  const CalibrationSummary s = calibrate(o, problem);
  INFO(s.full());
  REQUIRE(s.usable());
  CHECK(worst_relative_rmse(s) < kCurveRange);
  for (const auto& [name, truth] : {std::pair<const char*, double>{"secant_stiffness_ref", kSecant},
                                    {"oedometer_stiffness_ref", kOedometer},
                                    {"unloading_stiffness_ref", kUnloading},
                                    {"stress_exponent", kExponent},
                                    {"friction_angle", kPhi}}) {
    INFO(name);
    CHECK(close(value_named(s, name), truth, 0.02, 0.0));
  }
}
