// Monte Carlo coverage of the 95 % intervals (issue 12, "Honest intervals"): many noisy copies of
// the same tests, noise on every measured column (axial strain included), one local fit a copy
// from a perturbed start; each identifiable parameter's interval must hold the truth in 88-99 % of
// the copies, and the spread of the estimates must match the reported standard errors. Curves come
// from a reference run with fixed increments 100x finer than the measured points (the fit's
// simulations are error-controlled, with records on the measured points).

#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <string>
#include <vector>

#include "coverage_support.hpp"
#include "synthetic.hpp"
#include "tolerances.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/error.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// Copies a model. With 95 % intervals the number of misses is Binomial(n, 0.05); at n = 100 the
// bounds below fail a correct method with probability about 1 % a parameter (P(misses >= 13) =
// 0.2 %, P(no miss) = 0.6 %), where at n = 40 "at most 99 %" would fail it 13 % of the time.
// TRIAXCAL_COVERAGE_COPIES overrides it when exploring (e.g. 1000 for a sharper estimate).
int copies() {
  const char* env = std::getenv("TRIAXCAL_COVERAGE_COPIES");
  return env != nullptr && std::atoi(env) > 0 ? std::atoi(env) : 100;
}
// Acceptance of the coverage and of spread / standard error (issue 12). The ratio's own sampling
// error is about 1/sqrt(2 n) = 7 % at n = 100, so 0.75-1.33 is a real test of the SE, not noise.
constexpr double kCoverageLow = 0.88, kCoverageHigh = 0.99;
constexpr double kSpreadLow = 0.75, kSpreadHigh = 1.33;

// Lab precision of the noise (kStressNoise 0.5 kPa, kStrainNoise 1e-4 in synthetic.hpp; common
// practice, no source) on q, u, the volumetric strain and the axial strain.

CalibrationOptions local_fit() {
  CalibrationOptions o;
  o.global = GlobalAlgorithm::none;
  o.local = LocalAlgorithm::bobyqa;
  o.local_evaluations = 3000;
  o.threads = 1;  // the copies run side by side instead
  o.record_history = false;
  return o;
}

// Start of free parameter k of copy `copy`: the truth moved by +-10 % (the sign pattern changes
// with the copy), so the local stage does the work without a global search.
double perturbed(double truth, int copy, int k) { return truth * (((copy >> k) & 1) != 0 ? 1.1 : 0.9); }

void check_coverage(const std::vector<ParameterCoverage>& tally, const std::vector<std::string>& failures) {
  const std::string table = coverage_table(tally);
  WARN(table);
  INFO(table);
  for (const std::string& f : failures) INFO(f);
  CHECK(failures.empty());
  for (const ParameterCoverage& c : tally) {
    INFO(c.name);
    CHECK(c.copies() == copies());
    CHECK(c.coverage() >= kCoverageLow);
    CHECK(c.coverage() <= kCoverageHigh);
    CHECK(c.spread_ratio() >= kSpreadLow);
    CHECK(c.spread_ratio() <= kSpreadHigh);
  }
}

}  // namespace

TEST_CASE("Mohr-Coulomb from three noisy CD tests gives 95 % intervals that hold the truth in 88 to 99 % of copies",
          "[calibrate][coverage][mohr_coulomb]") {
  // Invented "true" parameters of a fictional dense sand (demo values).
  const std::vector<std::pair<std::string, double>> truth = {{"youngs_modulus", 30000.0},
                                                             {"poissons_ratio", 0.28},
                                                             {"cohesion", 5.0},
                                                             {"friction_angle", 33.0},
                                                             {"dilation_angle", 6.0}};
  CalibrationProblem base = problem_for("mohr_coulomb");
  const auto model = base.create(values_by_name(*base.model, {truth.begin(), truth.end()}));
  std::vector<CleanTest> clean;
  for (double p0 : {50.0, 100.0, 200.0}) {
    const std::string id = "CD-" + std::to_string(static_cast<int>(p0));
    clean.push_back(reference_test(id, consolidated_shear(id, p0, Drainage::drained, 0.10, 80), *model,
                                   {Quantity::deviator_stress, Quantity::volumetric_strain}, equally_spaced(80, 0.10),
                                   base.driver));
  }
  auto make = [&](int copy) {
    CalibrationProblem p = base;
    Noise noise(1000 + static_cast<std::uint64_t>(copy));
    for (const CleanTest& c : clean) p.tests.push_back(noisy_copy(c, noise, kStressNoise, kStrainNoise));
    p.parameters = {
        free_parameter("youngs_modulus", 5000.0, 200000.0, perturbed(30000.0, copy, 0), ParameterScale::log),
        free_parameter("poissons_ratio", 0.05, 0.45, perturbed(0.28, copy, 1)),
        free_parameter("cohesion", 0.0, 30.0, perturbed(5.0, copy, 2)),
        free_parameter("friction_angle", 20.0, 45.0, perturbed(33.0, copy, 3)),
        free_parameter("dilation_angle", 0.0, 20.0, perturbed(6.0, copy, 4)),
        fixed_parameter("tensile_strength", 0.0),
    };
    p.constraints = {"dilation_angle <= friction_angle"};
    return p;
  };
  std::vector<std::string> failures;
  const auto tally = run_coverage(copies(), make, local_fit(), truth, 2, failures);
  check_coverage(tally, failures);
}

namespace {

// Invented "true" parameters of a fictional soft clay (demo values).
const std::vector<std::pair<std::string, double>> kClay = {
    {"lambda", 0.20}, {"kappa", 0.04}, {"critical_state_ratio", 1.2}, {"poissons_ratio", 0.25}};

// MCC from CU tests at OCR 1, 2 and 6 (p' 100 kPa, e 1.1), q and u against the axial strain, 80
// points to 15 %. `fixed_increments` > 0: the fit simulates with that many fixed increments a test
// and the reference has 20x as many; 0: the fit uses the default error control, records on the
// measured points, and the reference 100 fixed increments a measured interval.
std::vector<ParameterCoverage> clay_coverage(int fixed_increments, std::vector<std::string>& failures) {
  CalibrationProblem base = problem_for("modified_cam_clay");
  const auto model = base.create(values_by_name(*base.model, {kClay.begin(), kClay.end()}));
  constexpr int points = 80;
  std::vector<CleanTest> clean;
  for (double ocr : {1.0, 2.0, 6.0}) {
    const std::string id = "CU-OCR" + std::to_string(static_cast<int>(ocr));
    TestProtocol protocol =
        consolidated_shear(id, 100.0, Drainage::undrained, 0.15, fixed_increments > 0 ? fixed_increments : points, 1.1);
    protocol.initial.overconsolidation_ratio = ocr;
    clean.push_back(reference_test(id, protocol, *model, {Quantity::deviator_stress, Quantity::excess_pore_pressure},
                                   equally_spaced(points, 0.15), base.driver,
                                   fixed_increments > 0 ? 20 * fixed_increments / points : 100));
  }
  base.driver.fixed_steps = fixed_increments > 0;
  auto make = [&](int copy) {
    CalibrationProblem p = base;
    Noise noise(2000 + static_cast<std::uint64_t>(copy));
    for (const CleanTest& c : clean) p.tests.push_back(noisy_copy(c, noise, kStressNoise, kStrainNoise));
    p.parameters = {
        free_parameter("lambda", 0.05, 0.5, perturbed(0.20, copy, 0), ParameterScale::log),
        free_parameter("kappa", 0.005, 0.1, perturbed(0.04, copy, 1), ParameterScale::log),
        free_parameter("critical_state_ratio", 0.6, 1.8, perturbed(1.2, copy, 2)),
        free_parameter("poissons_ratio", 0.05, 0.45, perturbed(0.25, copy, 3)),
    };
    p.constraints = {"kappa <= 0.9 * lambda"};
    return p;
  };
  return run_coverage(copies(), make, local_fit(), kClay, 2, failures);
}

}  // namespace

TEST_CASE("Modified Cam-Clay from noisy CU tests at OCR 1, 2 and 6 fitted with 2400 fixed increments gives 95 % intervals that hold the truth in 88 to 99 % of copies",
          "[calibrate][coverage][modified_cam_clay]") {
  // 2400 increments: the fit's own first-order error moves lambda and kappa by about 0.4 standard
  // errors (1200 increments: 0.9, coverage of kappa 85 %), measured against the 48000-increment
  // reference.
  std::vector<std::string> failures;
  const auto tally = clay_coverage(2400, failures);
  check_coverage(tally, failures);
}

// With the default error control (records on the measured points, every record a substep end;
// before c9f391a records inside a substep escaped the error estimate and this coverage was near 0 %
// for lambda, kappa and nu: u at 3.75 % axial strain of the OCR-6 test was 60.4 kPa against 53.8).
TEST_CASE("Modified Cam-Clay from noisy CU tests at OCR 1, 2 and 6 with the default error control gives 95 % intervals that hold the truth in 88 to 99 % of copies",
          "[calibrate][coverage][modified_cam_clay]") {
  std::vector<std::string> failures;
  const auto tally = clay_coverage(0, failures);
  check_coverage(tally, failures);
}

TEST_CASE("the noise model's options are read from the calibration file and bad values give exact messages",
          "[calibrate][coverage][errors]") {
  // The smallest calibration file the parser accepts (the series is not read here).
  auto file = [](const std::string& options) {
    return R"({"format": "triaxcal-calibration", "version": 1, "series": "s.json", "model": "mohr_coulomb",
               "tests": [{"specimen": "CD-50", "curves": ["deviator_stress"]}],
               "parameters": {"friction_angle": {"status": "free", "lower": 20, "upper": 45}},
               "options": )" + options + "}";
  };
  auto message = [&](const std::string& options) {
    try {
      (void)parse_calibration_file(file(options), "cal.json");
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const CalibrationFile f =
      parse_calibration_file(file(R"({"stress_precision": 2, "strain_precision": 5e-5, "noise_from_residuals": false})"), "cal.json");
  CHECK(f.options.stress_precision == 2.0);
  CHECK(f.options.strain_precision == 5e-5);
  CHECK_FALSE(f.options.noise_from_residuals);
  const CalibrationFile d = parse_calibration_file(file("{}"), "cal.json");
  CHECK(d.options.stress_precision == 0.5);
  CHECK(d.options.strain_precision == 1e-4);
  CHECK(d.options.noise_from_residuals);
  CHECK(message(R"({"stress_precision": 0})") == "cal.json: calibration options: stress_precision = 0 must be a positive number of kPa");
  CHECK(message(R"({"strain_precision": 0.5})") == "cal.json: calibration options: strain_precision = 0.5 must be in (0, 0.1)");
  CHECK(message(R"({"noise_from_residuals": 1})") == "cal.json: options.noise_from_residuals: expected true or false, found 1");
}

TEST_CASE("declared precisions are taken as they are without noise_from_residuals and scale the standard errors",
          "[calibrate][coverage]") {
  // One noisy copy of the Mohr-Coulomb tests: with the level from the residuals the standard errors
  // do not depend on the declared precisions' common scale; taken as declared they grow with it
  // (Omega is proportional to the precisions squared, so se to the precisions).
  CalibrationProblem base = problem_for("mohr_coulomb");
  const auto model = base.create(values_by_name(
      *base.model, {{"youngs_modulus", 30000.0}, {"poissons_ratio", 0.28}, {"cohesion", 5.0}, {"friction_angle", 33.0}, {"dilation_angle", 6.0}}));
  CalibrationProblem p = base;
  Noise noise(77);
  for (double p0 : {50.0, 100.0, 200.0}) {
    const std::string id = "CD-" + std::to_string(static_cast<int>(p0));
    const CleanTest c = reference_test(id, consolidated_shear(id, p0, Drainage::drained, 0.10, 80), *model,
                                       {Quantity::deviator_stress, Quantity::volumetric_strain}, equally_spaced(80, 0.10), base.driver);
    p.tests.push_back(noisy_copy(c, noise, kStressNoise, kStrainNoise));
  }
  p.parameters = {free_parameter("youngs_modulus", 5000.0, 200000.0, 27000.0, ParameterScale::log),
                  free_parameter("poissons_ratio", 0.05, 0.45, 0.3),
                  free_parameter("cohesion", 0.0, 30.0, 5.5),
                  free_parameter("friction_angle", 20.0, 45.0, 30.0),
                  free_parameter("dilation_angle", 0.0, 20.0, 6.6),
                  fixed_parameter("tensile_strength", 0.0)};
  CalibrationOptions o = local_fit();
  auto se = [&](double scale, bool from_residuals) {
    o.stress_precision = kStressNoise * scale;
    o.strain_precision = kStrainNoise * scale;
    o.noise_from_residuals = from_residuals;
    const CalibrationSummary s = calibrate(o, p);
    REQUIRE(s.usable());
    return parameter_named(s, "youngs_modulus").standard_error;
  };
  const double level = se(1.0, true);
  CHECK(close(se(3.0, true), level, 1e-6, 0.0));
  const double declared = se(1.0, false);
  CHECK(close(se(3.0, false), 3.0 * declared, 1e-6, 0.0));
  // Declared at the true noise, the level from the residuals is close to 1: the two agree within
  // the sampling error of one copy's scatter (about 1/sqrt(2 n) = 8 % for 80 points a curve).
  CHECK(close(level, declared, 0.25, 0.0));
}
