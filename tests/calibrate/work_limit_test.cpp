// The search's work limit (CalibrationOptions::max_substeps_per_record): a simulation of the search
// that runs away far from the data is ended after a bounded number of substeps and counts as a
// failed simulation; the fitted set's own simulation keeps the driver's limit; usable fits are
// unchanged by it.
//
// The runaway: the invented sand of sand_problem.hpp (no real soil) at another invented parameter
// set, one of the Latin-hypercube starts of the default multi-start on the benchmark's sand problem
// (rounded). With it the dense drained test at 50 kPa hardens without bound (q about 3 p', p' to
// 250 MPa at 20 % axial strain) and the driver's error control takes about 190,000 substeps for its
// 34 records, where a parameter set near the data takes at most about 16 a record.

#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include "sand_problem.hpp"
#include "synthetic.hpp"
#include "triaxcal/calibrate.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// The dense drained test of sand_problem.hpp (generated with the invented sand's own values), to be
// fitted from the runaway set with one free parameter.
CalibrationProblem runaway_problem(long driver_max_substeps) {
  CalibrationProblem full = sand_problem();
  CalibrationProblem p = problem_for("sand_state_bounding");
  p.tests = {full.tests.front()};
  p.driver.max_substeps = driver_max_substeps;
  p.parameters = {fixed_parameter("critical_state_ratio", 1.354),
                  fixed_parameter("extension_ratio", 0.75),
                  fixed_parameter("csl_void_ratio_ref", 0.6394),
                  fixed_parameter("csl_lambda", 0.01668),
                  fixed_parameter("csl_exponent", 0.7),
                  fixed_parameter("shear_modulus_constant", 182.6),
                  free_parameter("poissons_ratio", 0.2, 0.23, 0.2138),
                  fixed_parameter("yield_cone_size", 0.02),
                  fixed_parameter("hardening_constant", 18.43),
                  fixed_parameter("hardening_density_factor", 0.8869),
                  fixed_parameter("bounding_exponent", 1.598),
                  fixed_parameter("dilatancy_constant", 0.6521),
                  fixed_parameter("dilatancy_exponent", 5.455),
                  fixed_parameter("fabric_max", 3.0),
                  fixed_parameter("fabric_rate", 500.0)};
  return p;
}

}  // namespace

TEST_CASE("a runaway simulation of the search ends at the work limit and counts as failed; the fitted set's own "
          "simulation keeps the driver's limit",
          "[calibrate][work_limit]") {
  // Driver limit 8000 substeps; the search's limit max(5000, 100 x 34 records) = 5000 (the floor).
  const CalibrationProblem problem = runaway_problem(8000);
  REQUIRE(problem.tests.front().id == "CD-dense-50");
  CalibrationOptions o;
  o.starts = 1;
  o.uncertainty = false;
  o.threads = 1;
  o.max_substeps_per_record = 100;
  const CalibrationSummary s = calibrate(o, problem);
  INFO(s.full());
  // The start and the local run's first evaluation (the same point) both end at the work limit;
  // the local run could not simulate its start and ended there.
  CHECK(s.evaluations == 2);
  CHECK(s.failed_simulations == 2);
  CHECK(s.work_limited_simulations == 2);
  CHECK(s.failed_starts == 1);
  CHECK(s.jacobian_evaluations == 0);
  CHECK(s.outcome == CalibrationOutcome::failed);
  CHECK(s.full().find("2 failed test simulations (2 ended by the work limit, max_substeps_per_record)") != std::string::npos);
  // The fitted set's own simulation ran to the driver's limit (8000), not the search's (5000), and
  // says so in the driver's words.
  REQUIRE(s.simulations.size() == 1);
  CHECK(s.simulations.front().substeps + s.simulations.front().rejected_substeps == 8000);
  CHECK(s.tests.front().message.find("used all 8000 substeps of max_substeps") != std::string::npos);

  // Without the work limit every simulation runs to the driver's limit, and none is counted at the
  // work limit.
  o.max_substeps_per_record = 0;
  const CalibrationSummary unlimited = calibrate(o, problem);
  CHECK(unlimited.failed_simulations == 2);
  CHECK(unlimited.work_limited_simulations == 0);
  CHECK(unlimited.failed_starts == 1);
}

TEST_CASE("the work limit leaves a fit whose simulations stay below it unchanged, bit for bit", "[calibrate][work_limit]") {
  // The sand problem's round trip from its near start (sand_state_bounding_fit_test.cpp): at most
  // about 16 substeps a record in every evaluation, far below 200.
  const CalibrationProblem problem = sand_problem();
  CalibrationOptions o;
  o.starts = 1;
  o.uncertainty = false;
  o.threads = 2;
  o.local_evaluations = 3;  // the first iterations are enough to compare the paths
  const CalibrationSummary limited = calibrate(o, problem);
  o.max_substeps_per_record = 0;
  const CalibrationSummary unlimited = calibrate(o, problem);
  CHECK(limited.work_limited_simulations == 0);
  CHECK(limited.objective == unlimited.objective);
  CHECK(limited.evaluations == unlimited.evaluations);
  CHECK(limited.jacobian_evaluations == unlimited.jacobian_evaluations);
  REQUIRE(limited.values.size() == unlimited.values.size());
  for (std::size_t i = 0; i < limited.values.size(); ++i) CHECK(limited.values[i] == unlimited.values[i]);
}

TEST_CASE("max_substeps_per_record outside [0, 1000000] is refused with its rule", "[calibrate][work_limit]") {
  CalibrationOptions o;
  o.max_substeps_per_record = -1;
  CHECK_THROWS_WITH(o.validate(), "calibration options: max_substeps_per_record = -1 must be in [0, 1000000] (0 = no work limit)");
}
