// Bolton's relative dilatancy index where the relative density is given, and the measured
// phi'_max - phi_cv beside it (they were documented but no longer computed). Invented specimen.
#include <catch2/catch.hpp>

#include <cmath>

#include "synthetic_specimen.hpp"
#include "triaxcal/interpret.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

TEST_CASE("Bolton's I_R = I_D (10 - ln p') - 1 at the peak stress ratio and 3 I_R beside the measured phi' difference",
          "[interpret][dilatancy][bolton]") {
  // Mohr-Coulomb drained curve at s3' = 100 kPa, phi' 36, psi 8 (invented): peak q = (K_p - 1) 100.
  const DrainedCurve d = mohr_coulomb_drained(100.0, 40000.0, 0.3, 36.0, 0.0, 8.0, 0.08, 0.0005);
  Specimen sp = drained_specimen("D", 100.0, d, nullptr);
  sp.relative_density = 0.7;
  TestSeries series;
  series.specimens.push_back(sp);
  const Interpretation r = interpret(series, InterpretOptions{});
  const StageInterpretation& s = r.stages.front();
  // Hand calculation: K_p = (1 + sin 36)/(1 - sin 36) = 3.8518, q_f = 285.18 kPa, p' = 100 + q_f / 3 =
  // 195.06 kPa, I_R = 0.7 (10 - ln 195.06) - 1 = 0.7 x 4.7266 - 1 = 2.3086, 3 I_R = 6.926 deg.
  const double kp = (1.0 + std::sin(degrees_to_radians(36.0))) / (1.0 - std::sin(degrees_to_radians(36.0)));
  const double p = 100.0 + (kp - 1.0) * 100.0 / 3.0;
  CHECK(s.by_max_stress_ratio.p == Approx(p).epsilon(1e-6));
  CHECK(s.bolton_index == Approx(0.7 * (10.0 - std::log(p)) - 1.0).epsilon(1e-6));
  CHECK(s.bolton_index == Approx(2.3086).margin(1e-3));
  CHECK(s.bolton_phi_difference == Approx(3.0 * s.bolton_index).epsilon(1e-12));
  // Measured: phi'_max = 36 deg from the peak ratio, less phi_cv from Rowe.
  REQUIRE(std::isfinite(s.phi_cv_rowe));
  CHECK(s.measured_phi_difference == Approx(36.0 - s.phi_cv_rowe).margin(1e-6));
  // Without a relative density: none.
  series.specimens.front().relative_density = kNotGiven;
  CHECK(std::isnan(interpret(series, InterpretOptions{}).stages.front().bolton_index));
}
