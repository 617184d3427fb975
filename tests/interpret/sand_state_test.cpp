// Sand interpretation (issue 17): the power-law critical-state line e_c = e_Gamma - lambda_c (p'/p_at)^xi
// (the form of Dafalias & Manzari 2004) from steady end states, the state parameter psi = e - e_c(p') at
// the start of shear (Been & Jefferies 1985), the trend of phi'_peak against psi, and in CU tests the
// phase transformation (least p' followed by a rise) and instability (a peak of q followed by a fall).
// The specimens are invented for these tests; every expected value is a hand calculation beside it.
#include <catch2/catch.hpp>

#include <cmath>

#include "../support/cli_run.hpp"
#include "synthetic_specimen.hpp"
#include "triaxcal/interpret.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using namespace triaxcal::test::sand_hand;

namespace {

/// A CU specimen from its paths q(e_a) and p'(e_a): du = s3 + q/3 - p'.
Specimen cu(const std::string& id, double s3, const std::vector<double>& ea, const std::vector<double>& q,
            const std::vector<double>& p, double e0) {
  std::vector<double> du, e;
  for (std::size_t i = 0; i < ea.size(); ++i) {
    du.push_back(s3 + q[i] / 3.0 - p[i]);
    e.push_back(e0);  // undrained: constant volume
  }
  return make_specimen(id, ShearType::cu, s3, ea, q, {}, du, e);
}

}  // namespace

TEST_CASE("sand state: the power-law critical-state line, psi at the start of shear and phi'_peak against psi",
          "[interpret][sand]") {
  // psi_0 = e0 - e_c(s3') chosen as -0.10, -0.05, -0.02, and phi'_peak = 33 - 40 psi_0: 37, 35, 33.8 deg.
  TestSeries series;
  series.source = "invented_sand.json";
  const double s3[] = {60.0, 120.0, 240.0}, psi[] = {-0.10, -0.05, -0.02};
  for (int k = 0; k < 3; ++k)
    series.specimens.push_back(cd("D" + std::to_string(k), s3[k], csl(s3[k]) + psi[k], 33.0 - 40.0 * psi[k]));
  InterpretOptions o;
  o.csl_exponent = kXi;
  const Interpretation r = interpret(series, o);
  REQUIRE(r.cs_count == 3);
  // The end states lie on the line exactly: e_Gamma 0.90, lambda_c 0.03.
  REQUIRE(r.csl_power_reason.empty());
  CHECK(r.csl_power.n == 3);
  CHECK(r.csl_power.intercept == Approx(kEg).epsilon(1e-9));
  CHECK(-r.csl_power.slope == Approx(kLc).epsilon(1e-7));
  CHECK(r.psi_line == "power");
  REQUIRE(r.stages.size() == 3);
  for (int k = 0; k < 3; ++k) {
    CHECK(r.stages[static_cast<std::size_t>(k)].start_p == Approx(s3[k]));
    CHECK(r.stages[static_cast<std::size_t>(k)].state_parameter == Approx(psi[k]).margin(1e-9));
    // phi'_peak from the largest s1'/s3' = R: asin((R - 1)/(R + 1)) = phi_pk.
    CHECK(r.stages[static_cast<std::size_t>(k)].peak_friction_angle == Approx(33.0 - 40.0 * psi[k]).epsilon(1e-9));
  }
  REQUIRE(r.peak_angle_vs_psi_reason.empty());
  CHECK(r.peak_angle_vs_psi.intercept == Approx(33.0).epsilon(1e-9));
  CHECK(r.peak_angle_vs_psi.slope == Approx(-40.0).epsilon(1e-9));
  CHECK(r.dilation_vs_psi.n == 3);
  // M through the origin from q = M p' at the end: 1.2 (the critical state is unchanged by this work).
  CHECK(r.critical_m == Approx(kM).epsilon(1e-9));

  // Another exponent is another line through the same points: not exact any more, still determined.
  o.csl_exponent = 1.0;
  const Interpretation r1 = interpret(series, o);
  CHECK(r1.csl_power_reason.empty());
  CHECK(r1.csl_exponent == 1.0);
  CHECK_FALSE(r1.csl_power.intercept == Approx(kEg).epsilon(1e-6));
}

TEST_CASE("sand state: one steady end state gives no line and no psi, each with its reason", "[interpret][sand]") {
  TestSeries series;
  series.source = "invented_sand.json";
  series.specimens.push_back(cd("D0", 100.0, 0.80, 36.0));
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.csl_power_reason == "2 or more steady end states with a void ratio are needed, found 1");
  CHECK(r.psi_line.empty());
  CHECK(r.psi_reason.find("no critical-state line") == 0);
  CHECK(std::isnan(r.stages[0].state_parameter));
  CHECK(r.peak_angle_vs_psi_reason == r.psi_reason);
  CHECK(std::isnan(r.peak_angle_vs_psi.slope));
  // Two end states at the same p' cannot give a slope.
  series.specimens.push_back(cd("D1", 100.0, 0.75, 38.0));
  const Interpretation r2 = interpret(series, InterpretOptions{});
  CHECK(r2.csl_power_reason.find("spans a factor 1, below 1.25") != std::string::npos);
}

TEST_CASE("CU: the phase transformation of a dense specimen and the instability of a loose one", "[interpret][sand]") {
  TestSeries series;
  series.source = "invented_sand.json";
  // Dense: p' falls linearly from 100 to 70 kPa at 2 % axial strain, then rises to 190 kPa at 15 %;
  // q = 2000 e_a up to 2 %, then 40 + 900 (e_a - 0.02).
  // Phase transformation at e_a = 2 %: p' 70 kPa, q 40 kPa, q/p' = 0.5714.
  std::vector<double> ea, q, p;
  for (int i = 0; i <= 75; ++i) {
    const double x = 0.002 * i;
    ea.push_back(x);
    p.push_back(x <= 0.02 ? 100.0 - 1500.0 * x : 70.0 + 120.0 * (x - 0.02) / 0.13);
    q.push_back(x <= 0.02 ? 2000.0 * x : 40.0 + 900.0 * (x - 0.02));
  }
  series.specimens.push_back(cu("CD-dense", 100.0, ea, q, p, 0.70));
  // Loose: q peaks at 60 kPa at 1 % and falls to 20 kPa at 5 %, constant after; p' falls from 100 to
  // 80 kPa at 1 % and to 25 kPa at 5 %, constant after. Instability at 1 %: q/p' = 60/80 = 0.75; no
  // phase transformation (p' never rises).
  std::vector<double> ea2, q2, p2;
  for (int i = 0; i <= 75; ++i) {
    const double x = 0.002 * i;
    ea2.push_back(x);
    q2.push_back(x <= 0.01 ? 6000.0 * x : x <= 0.05 ? 60.0 - 1000.0 * (x - 0.01) : 20.0);
    p2.push_back(x <= 0.01 ? 100.0 - 2000.0 * x : x <= 0.05 ? 80.0 - 1375.0 * (x - 0.01) : 25.0);
  }
  series.specimens.push_back(cu("CU-loose", 100.0, ea2, q2, p2, 0.90));
  const Interpretation r = interpret(series, InterpretOptions{});
  REQUIRE(r.stages.size() == 2);
  const StageInterpretation& d = r.stages[0];
  CHECK(d.phase_transformation.axial_strain == Approx(0.02));
  CHECK(d.phase_transformation.p == Approx(70.0));
  CHECK(d.phase_transformation_ratio == Approx(40.0 / 70.0));
  CHECK(std::isnan(d.instability_ratio));  // q rises throughout
  const StageInterpretation& l = r.stages[1];
  CHECK(std::isnan(l.phase_transformation_ratio));
  CHECK(l.instability.axial_strain == Approx(0.01));
  CHECK(l.instability_ratio == Approx(0.75));
}

TEST_CASE("interpret prints the sand state and checks --csl-exponent", "[interpret][sand][cli]") {
  const CliResult bad = run_cli("interpret " + source_path("examples/gannet_reach/gannet_reach_series.json") + " --csl-exponent 0",
                                "interpret_csl_exponent_bad");
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("--csl-exponent") != std::string::npos);
  CHECK(bad.err.find("0: expected a finite number above 0 and at most 2") != std::string::npos);
  const CliResult ok = run_cli("interpret " + source_path("examples/gannet_reach/gannet_reach_series.json"), "interpret_csl_exponent_ok");
  REQUIRE(ok.exit_code == 0);
  CHECK(ok.out.find("critical-state line e = e_Gamma - lambda_c (p'/p_at)^xi, xi 0.70 fixed: e_Gamma ") != std::string::npos);
  CHECK(ok.out.find("State parameter psi = e - e_c(p') at the start of shear (Been & Jefferies 1985)") != std::string::npos);
}
