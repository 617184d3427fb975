// The invented Gannet Reach example (examples/gannet_reach): its series and calibration files read,
// and the twelve "measured" tests are what generate_data.py says they are: the sand model with the
// invented generating parameters, simulated through the series (specimen_protocol: set-up at 10 kPa,
// consolidation, shear) at the fit's default tolerance, follows every curve within the added noise
// (sd 0.4 kPa on q, 0.3 kPa on u, 2e-5 on the volumetric strain; rounding 0.01 kPa, 1e-6). A series
// or generator that drifted apart (a changed void ratio, back pressure, strain origin) fails here
// long before anyone runs the three-minute fit.

#include <catch2/catch.hpp>

#include <cmath>
#include <map>
#include <string>

#include "cli_run.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

TEST_CASE("Gannet Reach example: the generating parameters reproduce all twelve tests within the added noise",
          "[example]") {
  CalibrationFile f = read_calibration_file(source_path("examples/gannet_reach/sand_G_state_bounding.json"));
  const TestSeries series = read_test_series(f.series);
  const ModelEntry& entry = find_model(f.model);
  seed_from_interpretation(f, series, entry.info());
  CalibrationProblem problem = build_calibration_problem(
      f, series, entry.info(), [&entry](const ParameterValues& values) { return entry.create(values, "example"); });
  REQUIRE(problem.tests.size() == 12);
  // The invented parameters of examples/gannet_reach/generate_data.py (PARAMS).
  const std::map<std::string, double> generating{
      {"critical_state_ratio", 1.30}, {"extension_ratio", 0.75},  {"csl_void_ratio_ref", 0.86},
      {"csl_lambda", 0.025},          {"csl_exponent", 0.7},      {"shear_modulus_constant", 110.0},
      {"poissons_ratio", 0.1},        {"yield_cone_size", 0.02},  {"hardening_constant", 6.0},
      {"hardening_density_factor", 0.95}, {"bounding_exponent", 1.3}, {"dilatancy_constant", 0.8},
      {"dilatancy_exponent", 2.5},    {"fabric_max", 3.0},        {"fabric_rate", 500.0}};
  for (ParameterSpec& p : problem.parameters) {
    REQUIRE(generating.count(p.name) == 1);
    if (p.status == ParameterStatus::free) {
      p.start = generating.at(p.name);
    } else {
      p.status = ParameterStatus::fixed;
      p.value = generating.at(p.name);
    }
  }
  CalibrationOptions o;
  o.local = LocalAlgorithm::none;  // the start point and one design point (an engine needs a stage)
  o.design_points = 1;
  o.uncertainty = false;
  o.threads = 2;
  const CalibrationSummary s = calibrate(o, problem);
  REQUIRE(s.tests.size() == 12);
  REQUIRE(s.objective == s.start_objective);  // the summary is the start point's
  for (const TestFit& t : s.tests) {
    INFO(t.id);
    REQUIRE(t.simulated);
    for (const CurveFit& c : t.curves) {
      INFO(to_string(c.y) << ": RMSE " << c.rmse << ", R^2 " << c.r_squared);
      // Twice the noise's standard deviation: the noise itself, the rounding and the fit
      // tolerance's 0.1 % of the range stay below it.
      const double noise = c.y == Quantity::volumetric_strain ? 2e-5 : c.y == Quantity::deviator_stress ? 0.4 : 0.3;
      CHECK(c.rmse < 2.0 * noise + 1e-3 * c.range);
      CHECK(c.r_squared > 0.99);
    }
  }
}
