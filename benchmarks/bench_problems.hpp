#pragma once
// The calibration problems of the benchmarks (synthetic tests, invented parameters, generated with
// simulate()): Mohr-Coulomb 5 free on 3 CD tests, MCC 4 free on 3 CU tests at OCR 1, 2, 6,
// hyperbolic_hardening 6 free on 3 CD + 1 oedometer test, sand_state_bounding 10 free on 6 CD and CU
// tests, dense and loose (the round trip's problem, tests/calibrate/sand_problem.hpp).

#include <cmath>
#include <string>

#include "../tests/calibrate/sand_problem.hpp"
#include "../tests/calibrate/synthetic.hpp"

namespace triaxcal::bench {

using namespace triaxcal::test;

inline CalibrationProblem mohr_coulomb() {
  CalibrationProblem p = problem_for("mohr_coulomb");
  const auto truth = p.create({30000.0, 0.28, 5.0, 33.0, 6.0, 0.0});
  for (double p0 : {50.0, 100.0, 200.0})
    p.tests.push_back(synthetic_test("CD-" + std::to_string(static_cast<int>(p0)), consolidated_shear("CD", p0, Drainage::drained, 0.15, 300), *truth,
                                     {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, nullptr));
  p.parameters = {free_parameter("youngs_modulus", 5000, 200000, 18000, ParameterScale::log),
                  free_parameter("poissons_ratio", 0.05, 0.45, 0.35), free_parameter("cohesion", 0, 30, 1),
                  free_parameter("friction_angle", 20, 45, 28), free_parameter("dilation_angle", 0, 20, 1)};
  p.constraints = {"dilation_angle <= friction_angle"};
  return p;
}

inline CalibrationProblem cam_clay() {
  CalibrationProblem p = problem_for("modified_cam_clay");
  const auto truth = p.create({0.2, 0.04, 1.2, 0.0, 0.25, 0.0, 0.0});
  for (double ocr : {1.0, 2.0, 6.0}) {
    TestProtocol t = consolidated_shear("CU", 100.0, Drainage::undrained, 0.15, 300, 1.1);
    t.initial.overconsolidation_ratio = ocr;
    p.tests.push_back(synthetic_test("CU-OCR" + std::to_string(static_cast<int>(ocr)), t, *truth, {Quantity::deviator_stress, Quantity::excess_pore_pressure}, 0, nullptr));
  }
  p.parameters = {free_parameter("lambda", 0.05, 0.5, 0.15, ParameterScale::log),
                  free_parameter("kappa", 0.005, 0.1, 0.025, ParameterScale::log),
                  free_parameter("critical_state_ratio", 0.6, 1.8, 1.0), free_parameter("poissons_ratio", 0.05, 0.45, 0.3)};
  p.constraints = {"kappa <= 0.9 * lambda"};
  return p;
}

inline CalibrationProblem hyperbolic() {
  CalibrationProblem p = problem_for("hyperbolic_hardening");
  const double k0 = 1.0 - std::sin(degrees_to_radians(35.0));
  const auto truth = p.create({35, 0, 0, 31, 1, 25000, 80000, 0.2, 0.55, 100, 0.9, 22000, k0});
  for (double p0 : {50.0, 100.0, 200.0}) {
    TestProtocol t = consolidated_shear("CD", p0, Drainage::drained, 0.10, 120, 0.6);
    t.initial.overconsolidation_ratio = 1.0;
    p.tests.push_back(synthetic_test("CD-" + std::to_string(static_cast<int>(p0)), t, *truth, {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, nullptr));
  }
  TestProtocol oed;
  oed.initial.stress = triaxial_stress(20.0, 10.0);
  oed.initial.void_ratio = 0.6;
  oed.initial.overconsolidation_ratio = 1.0;
  Stage load;
  load.type = StageType::oedometer;
  load.target_axial = 400.0;
  load.steps = 60;
  oed.stages.push_back(load);
  load.target_axial = 100.0;
  load.steps = 30;
  oed.stages.push_back(load);
  p.tests.push_back(synthetic_test("OED", oed, *truth, {Quantity::axial_stress}, 0, nullptr));
  p.parameters = {free_parameter("secant_stiffness_ref", 5000, 100000, 18000, ParameterScale::log),
                  free_parameter("oedometer_stiffness_ref", 5000, 100000, 17000, ParameterScale::log),
                  free_parameter("unloading_stiffness_ref", 20000, 300000, 60000, ParameterScale::log),
                  free_parameter("stress_exponent", 0.3, 0.9, 0.5), free_parameter("friction_angle", 28, 42, 33),
                  free_parameter("critical_state_friction_angle", 25, 35, 29), fixed_parameter("k0_normally_consolidated", k0)};
  p.constraints = {"critical_state_friction_angle <= friction_angle", "unloading_stiffness_ref >= 2 * secant_stiffness_ref"};
  return p;
}

inline CalibrationProblem sand() { return sand_problem(); }

}  // namespace triaxcal::bench
