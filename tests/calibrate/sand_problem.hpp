#pragma once
// The sand model's calibration problem of the round trip (tests/calibrate/sand_state_bounding_fit_test.cpp)
// and of the benchmarks (benchmarks/bench_problems.hpp): six triaxial tests on an INVENTED sand (the
// parameter set of the invented Gannet Reach demo, examples/gannet_reach/generate_data.py; no real
// soil), simulated noise-free by synthetic_test at a tolerance 1000x tighter than the fit's:
//   CD dense (e 0.69) at p' 50 and 200 kPa and CD loose (e 0.85) at 100 kPa, to 20 % axial strain;
//   CU dense at 100 kPa and CU loose at 50 and 200 kPa, to 15 %;
// q and the volumetric strain (CD) or the excess pore pressure (CU) against the axial strain, at
// lab-like readings (every 0.1 % to 1 %, 0.5 % to 5 %, 1 % beyond).
//
// Ten free parameters. Fixed, as not identifiable from monotonic triaxial compression tests:
// - fabric_max, fabric_rate: the fabric term A0 (1 + <z:n>) stays A0 while the sand is loaded
//   monotonically (z grows against n during dilation, so <z:n> = 0; Dafalias & Manzari 2004 introduce
//   it for reversals of loading, from memory);
// - extension_ratio: acts through the Lode angle, which stays at compression in these tests;
// - csl_exponent and yield_cone_size: not judged here (the exponent trades with csl_lambda over three
//   stress levels; the narrow cone shows only in the first 1e-4 of strain); fixed at their true values.

#include <cmath>
#include <string>
#include <vector>

#include "synthetic.hpp"

namespace triaxcal::test {

/// A parameter of the invented sand: its true value and its free-parameter box (empty box: fixed).
struct SandTruth {
  const char* name;
  double value;
  double start = 0.0;  ///< the round trip's start (free parameters)
  double lower = 0.0, upper = 0.0;
  ParameterScale scale = ParameterScale::linear;
  bool free() const { return upper > lower; }
};

/// The invented sand (generate_data.py of examples/gannet_reach), in the model's parameter order.
inline std::vector<SandTruth> sand_truths() {
  return {{"critical_state_ratio", 1.30, 1.2, 1.0, 1.6},
          {"extension_ratio", 0.75},
          {"csl_void_ratio_ref", 0.86, 0.89, 0.6, 1.1},
          {"csl_lambda", 0.025, 0.03, 0.005, 0.1, ParameterScale::log},
          {"csl_exponent", 0.7},
          {"shear_modulus_constant", 110.0, 90.0, 30.0, 400.0, ParameterScale::log},
          {"poissons_ratio", 0.1, 0.15, 0.0, 0.35},
          {"yield_cone_size", 0.02},
          {"hardening_constant", 6.0, 7.5, 1.0, 30.0, ParameterScale::log},
          {"hardening_density_factor", 0.95, 0.9, 0.5, 1.1},
          {"bounding_exponent", 1.3, 1.1, 0.2, 4.0},
          {"dilatancy_constant", 0.8, 0.65, 0.1, 3.0, ParameterScale::log},
          {"dilatancy_exponent", 2.5, 2.9, 0.5, 8.0},
          {"fabric_max", 3.0},
          {"fabric_rate", 500.0}};
}

/// Record fractions (of the stage's natural axial strain) at lab-like readings up to `end`.
inline std::vector<double> sand_readings(double end) {
  std::vector<double> xs;
  for (int i = 1; i <= 10; ++i) xs.push_back(0.001 * i);
  for (int i = 1; i <= 8; ++i) xs.push_back(0.01 + 0.005 * i);
  for (double x = 0.06; x < end - 1e-9; x += 0.01) xs.push_back(x);
  xs.push_back(end);
  std::vector<double> fractions;
  for (double x : xs) fractions.push_back(std::log(1.0 - x) / std::log(1.0 - end));
  fractions.back() = 1.0;
  return fractions;
}

inline TestProtocol sand_test(const std::string& id, double p0, double e0, Drainage drainage) {
  const double end = drainage == Drainage::drained ? 0.20 : 0.15;
  TestProtocol p = consolidated_shear(id, p0, drainage, end, 1, e0);
  p.stages.front().record_at = sand_readings(end);
  p.stages.front().steps = static_cast<int>(p.stages.front().record_at.size());
  return p;
}

/// The six tests and the parameters; the free ones start at SandTruth::start: 8 to 25 % off the
/// truth, the CSL's void ratio 0.03 off (a state parameter 0.03 off at every state) and c_h 5 % off
/// (c_h e near 1 makes the plastic modulus vanish: a start there is a different sand).
inline CalibrationProblem sand_problem() {
  CalibrationProblem p = problem_for("sand_state_bounding");
  ParameterValues truth;
  for (const SandTruth& t : sand_truths()) truth.push_back(t.value);
  const auto model = p.create(truth);
  constexpr double kDense = 0.69, kLoose = 0.85;
  struct Spec {
    const char* id;
    double p0, e0;
    Drainage drainage;
  };
  const Spec specs[] = {{"CD-dense-50", 50.0, kDense, Drainage::drained},    {"CD-dense-200", 200.0, kDense, Drainage::drained},
                        {"CD-loose-100", 100.0, kLoose, Drainage::drained},  {"CU-dense-100", 100.0, kDense, Drainage::undrained},
                        {"CU-loose-50", 50.0, kLoose, Drainage::undrained},  {"CU-loose-200", 200.0, kLoose, Drainage::undrained}};
  for (const Spec& s : specs) {
    const Quantity second = s.drainage == Drainage::drained ? Quantity::volumetric_strain : Quantity::excess_pore_pressure;
    p.tests.push_back(synthetic_test(s.id, sand_test(s.id, s.p0, s.e0, s.drainage), *model, {Quantity::deviator_stress, second}, 0, nullptr));
  }
  for (const SandTruth& t : sand_truths())
    p.parameters.push_back(t.free() ? free_parameter(t.name, t.lower, t.upper, t.start, t.scale) : fixed_parameter(t.name, t.value));
  return p;
}

}  // namespace triaxcal::test
