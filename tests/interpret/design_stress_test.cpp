// The design stress and the choice of tests: sigma'_nf = s' - t sin phi' per test, the flags above
// the design stress and above twice it, the secant phi' with c' = 0 at the design stress, the
// regression through the origin, tests left out with their reason, stages numbered 1, 2, 3, and
// `interpret` asking for a material instead of pooling. Every expected value is a hand calculation
// written beside it; the specimens are invented for these tests.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdio>
#include <fstream>

#include "../support/cli_run.hpp"
#include "synthetic_specimen.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

constexpr double kExact = 1e-9;  // exact arithmetic on exact data, rounding only

/// A CD specimen whose deviator stress rises linearly to 2 t at 2 % axial strain and stays there,
/// consolidated to s3' = s - t: both criteria pick the failure point (s', t) at 2 % (the first point
/// of the plateau).
Specimen failing_at(const std::string& id, double s, double t) {
  DrainedCurve d;
  for (int i = 0; i <= 40; ++i) {
    const double x = 0.001 * i;
    d.x.push_back(x);
    d.y.push_back(0.2 * x);
    d.q.push_back(2.0 * t * std::min(1.0, x / 0.02));
  }
  return drained_specimen(id, s - t, d, nullptr);
}

/// Failure points exactly on t = 10 + 0.5 s': tan alpha = 0.5, so phi' = asin(0.5) = 30 deg and
/// c' = 10 / cos 30 = 11.547 kPa (hand calculation); a fourth, far off the line, to be left out.
TestSeries series_on_a_line() {
  TestSeries series;
  series.source = "invented.json";
  series.specimens.push_back(failing_at("A", 100.0, 60.0));
  series.specimens.push_back(failing_at("B", 200.0, 110.0));
  series.specimens.push_back(failing_at("C", 300.0, 160.0));
  series.specimens.push_back(failing_at("X", 150.0, 130.0));
  return series;
}

InterpretOptions without_x() {
  InterpretOptions o;
  o.left_out.push_back({"X", 0, "cracked before shear (invented)"});
  return o;
}

const StageInterpretation& stage_of(const Interpretation& r, const std::string& id) {
  for (const StageInterpretation& s : r.stages)
    if (s.specimen == id) return s;
  FAIL("no stage of " << id);
  return r.stages.front();
}

}  // namespace

TEST_CASE("sigma'_nf = s' - t sin phi' of each test matches the hand calculation", "[interpret][design_stress]") {
  InterpretOptions o = without_x();
  const Interpretation r = interpret(series_on_a_line(), o);
  const StrengthEnvelope& e = r.envelopes.front();
  REQUIRE(e.phi == Approx(30.0).epsilon(kExact));
  REQUIRE(e.cohesion == Approx(10.0 / std::cos(degrees_to_radians(30.0))).epsilon(kExact));
  // sin 30 = 0.5: A 100 - 60 x 0.5 = 70, B 200 - 110 x 0.5 = 145, C 300 - 160 x 0.5 = 220 kPa.
  CHECK(stage_of(r, "A").normal_stress_on_failure_plane == Approx(70.0).epsilon(kExact));
  CHECK(stage_of(r, "B").normal_stress_on_failure_plane == Approx(145.0).epsilon(kExact));
  CHECK(stage_of(r, "C").normal_stress_on_failure_plane == Approx(220.0).epsilon(kExact));
  // The tangent point of the Mohr circle on the envelope tau = c' + sigma' tan phi' (hand
  // calculation, the same number another way): A's circle centre 100, radius 60 touches it at
  // sigma' = 100 - 60 sin 30 = 70, where tau = 60 cos 30 = 51.96 = 11.547 + 70 tan 30.
  CHECK(60.0 * std::cos(degrees_to_radians(30.0)) ==
        Approx(e.cohesion + 70.0 * std::tan(degrees_to_radians(30.0))).epsilon(kExact));
  // A test left out still shows its own sigma'_nf (X: 150 - 130 x 0.5 = 85 kPa).
  CHECK(stage_of(r, "X").normal_stress_on_failure_plane == Approx(85.0).epsilon(kExact));
  // No design stress: no flag.
  CHECK(stage_of(r, "A").design_stress_flag == DesignStressFlag::not_checked);
}

TEST_CASE("tests above the design stress are flagged at two levels: above it and above twice it", "[interpret][design_stress]") {
  InterpretOptions o = without_x();
  o.design_stress = 100.0;  // A 70 <= 100; B 145 in (100, 200]; C 220 > 200
  const Interpretation r = interpret(series_on_a_line(), o);
  CHECK(stage_of(r, "A").design_stress_flag == DesignStressFlag::within);
  CHECK(stage_of(r, "B").design_stress_flag == DesignStressFlag::above);
  CHECK(stage_of(r, "C").design_stress_flag == DesignStressFlag::above_twice);
  int twice = 0;
  for (const std::string& w : r.warnings) twice += w.find("above twice the design stress") != std::string::npos;
  CHECK(twice == 1);  // C only (X is left out)
  bool rule = false;
  for (const std::string& n : r.notes) rule = rule || n.find(kDesignStressRule) != std::string::npos;
  CHECK(rule);
  const auto j = nlohmann::json::parse(interpretation_json(r));
  CHECK(j["version"] == 2);
  CHECK(j["stages"][1]["design_stress_flag"] == "above");
  CHECK(j["stages"][2]["design_stress_flag"] == "above twice");
  CHECK(j["stages"][2]["normal_stress_on_failure_plane"]["value"].get<double>() == Approx(220.0).epsilon(kExact));
  CHECK(j["stages"][2]["normal_stress_on_failure_plane"]["unit"] == "kPa");
  // At the boundary: a design stress of 145 puts B at it (at or below) and C (220 <= 290) above once.
  o.design_stress = 145.0;
  const Interpretation r2 = interpret(series_on_a_line(), o);
  CHECK(stage_of(r2, "B").design_stress_flag == DesignStressFlag::within);
  CHECK(stage_of(r2, "C").design_stress_flag == DesignStressFlag::above);
  // Every test above it: the series is flagged.
  o.design_stress = 50.0;
  const Interpretation r3 = interpret(series_on_a_line(), o);
  bool none = false;
  for (const std::string& w : r3.warnings) none = none || w.find("no test reaches the design stress") != std::string::npos;
  CHECK(none);
}

TEST_CASE("the secant phi' with c' = 0 at the design stress and the line through the origin match hand values",
          "[interpret][design_stress]") {
  InterpretOptions o = without_x();
  o.design_stress = 100.0;
  o.origin_regression = true;
  const Interpretation r = interpret(series_on_a_line(), o);
  const StrengthEnvelope& e = r.envelopes.front();
  // tan phi'_sec = (c' + 100 tan 30) / 100 = (11.5470 + 57.7350) / 100 = 0.692820 -> 34.7150 deg.
  CHECK(e.secant_phi_at_design == Approx(34.7150).margin(1e-4));
  // The points lie on a line, so the design line is the regression itself (zero residuals).
  CHECK(e.design_secant_phi_at_design == Approx(e.secant_phi_at_design).epsilon(1e-9));
  // Through the origin: tan alpha_0 = (100 x 60 + 200 x 110 + 300 x 160) / (100^2 + 200^2 + 300^2)
  // = 76000 / 140000 = 0.5428571, phi'_0 = asin(0.5428571) = 32.8783 deg.
  CHECK(e.origin_phi == Approx(32.8783).margin(1e-4));
  CHECK(e.origin_reason.empty());
  const auto j = nlohmann::json::parse(interpretation_json(r));
  CHECK(j["effective_strength"][0]["secant_phi_at_design_stress"]["phi"]["value"].get<double>() == Approx(34.7150).margin(1e-4));
  CHECK(j["effective_strength"][0]["secant_phi_at_design_stress"]["rule"] == kSecantAtDesignRule);
  CHECK(j["effective_strength"][0]["origin_regression"]["rule"] == kOriginRegressionRule);
  // Not asked for: not computed, not in the JSON.
  o.origin_regression = false;
  const Interpretation r2 = interpret(series_on_a_line(), o);
  CHECK(std::isnan(r2.envelopes.front().origin_phi));
  CHECK_FALSE(nlohmann::json::parse(interpretation_json(r2))["effective_strength"][0].contains("origin_regression"));
}

TEST_CASE("a test left out by the user is kept out of the envelope and its reason repeated", "[interpret][choice]") {
  // With X the line is off; without it exact (see series_on_a_line).
  const Interpretation all = interpret(series_on_a_line(), InterpretOptions{});
  CHECK(all.envelopes.front().phi != Approx(30.0).margin(0.5));
  const Interpretation r = interpret(series_on_a_line(), without_x());
  CHECK(r.envelopes.front().phi == Approx(30.0).epsilon(kExact));
  CHECK(stage_of(r, "X").left_out == "cracked before shear (invented)");
  REQUIRE(r.left_out.size() == 1);
  CHECK(r.left_out[0].specimen == "X");
  bool listed = false;
  for (const UsedPoint& u : r.envelopes.front().points)
    if (u.specimen == "X") listed = !u.used && u.reason == "left out: cracked before shear (invented)";
  CHECK(listed);
  const auto j = nlohmann::json::parse(interpretation_json(r));
  CHECK(j["left_out"][0]["reason"] == "cracked before shear (invented)");
  CHECK(j["stages"][3]["used"] == false);
  CHECK(j["stages"][3]["left_out"] == "cracked before shear (invented)");
  CHECK(interpretation_text(r).find("left out: cracked before shear (invented)") != std::string::npos);
  // Only: the others are left out, each with the reason.
  InterpretOptions only;
  only.only = {"A", "B", "C"};
  const Interpretation r2 = interpret(series_on_a_line(), only);
  CHECK(r2.envelopes.front().phi == Approx(30.0).epsilon(kExact));
  CHECK(stage_of(r2, "X").left_out == "not among the specimens chosen (A, B, C)");
}

TEST_CASE("choosing an unknown specimen or stage is an input error naming what the series has", "[interpret][choice]") {
  InterpretOptions o;
  o.left_out.push_back({"Q", 0, "why"});
  REQUIRE_THROWS_WITH(interpret(series_on_a_line(), o), "invented.json: left out: no specimen 'Q' (found: 'A', 'B', 'C', 'X')");
  o.left_out = {{"A", 2, "why"}};
  REQUIRE_THROWS_WITH(interpret(series_on_a_line(), o), "invented.json: left out: specimen 'A' has 1 shear stage(s), not a stage 2");
  o.left_out = {{"A", 1, ""}};
  REQUIRE_THROWS_WITH(interpret(series_on_a_line(), o), "interpret options: left_out 'A': give the reason (the outputs repeat it)");
  InterpretOptions p;
  p.only = {"A", "Z"};
  REQUIRE_THROWS_WITH(interpret(series_on_a_line(), p), "invented.json: only: no specimen 'Z' (found: 'A', 'B', 'C', 'X')");
}

TEST_CASE("interpret asks for a material when the series holds several, listing them", "[interpret][cli][choice]") {
  const std::string out = "interpret_materials.json";
  std::remove(out.c_str());
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") + " --out " + out,
                              "interpret_materials");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find("kestrel_bay_series.json: the specimens belong to 2 materials ('sand S', 'clay C'): choose one with --material") !=
        std::string::npos);
  CHECK_FALSE(std::ifstream(out).good());  // nothing written
}

TEST_CASE("stages are numbered 1, 2, 3 and a multi-stage stage left out on the command line keeps its reason",
          "[interpret][cli][choice]") {
  const std::string out = "interpret_multistage.json";
  std::remove(out.c_str());
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") +
                                  " --material 'clay C' --leave-out 'C-MS-1@3=membrane leak (invented)' --out " + out,
                              "interpret_multistage");
  REQUIRE(r.exit_code == 0);
  const auto j = nlohmann::json::parse(slurp(out));
  std::vector<int> numbers;
  for (const auto& s : j["stages"])
    if (s["specimen"] == "C-MS-1") {
      numbers.push_back(s["shear_stage"].get<int>());
      CHECK(s["used"] == (s["shear_stage"] != 3));
    }
  CHECK(numbers == std::vector<int>{1, 2, 3});
  CHECK(r.out.find("C-MS-1 stage 3: membrane leak (invented)") != std::string::npos);
  CHECK(r.out.find("ea,st: engineering axial strain from the start of the stage, the stage strain") != std::string::npos);
  // Bad choices: exit 2 with the option named.
  const CliResult bad = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") +
                                    " --material 'clay C' --leave-out C-MS-1@x=why",
                                "interpret_multistage_bad");
  CHECK(bad.exit_code == 2);
  CHECK(bad.err.find("--leave-out: 'C-MS-1@x=why': stage 'x' is not 1, 2, 3 ...") != std::string::npos);
}

TEST_CASE("c_u against depth: the depth text read as metres and the trend c_u0 + k z on request", "[interpret][undrained]") {
  // UU specimens (invented) with c_u = 20 + 4 z at z = 2.5 (a range 2.0-3.0 m), 5 and 7.5 m: 30, 40, 50 kPa;
  // one in feet, which is not read as a depth.
  TestSeries series;
  series.source = "invented_uu.json";
  const char* depths[] = {"2.0-3.0 m", "5 m", "7.5", "20 ft"};
  const double cu[] = {30.0, 40.0, 50.0, 45.0};
  for (int k = 0; k < 4; ++k) {
    std::vector<double> ea, q;
    for (int i = 0; i <= 20; ++i) {
      ea.push_back(0.005 * i);
      q.push_back(2.0 * cu[k] * std::min(1.0, i / 10.0));
    }
    Specimen sp = make_specimen("U" + std::to_string(k), ShearType::uu, 100.0 * (k + 1), ea, q, {}, {});
    sp.depth = depths[k];
    series.specimens.push_back(sp);
  }
  InterpretOptions o;
  o.cu_depth_trend = true;
  const Interpretation r = interpret(series, o);
  CHECK(r.stages[0].depth == Approx(2.5).epsilon(kExact));
  CHECK(r.stages[1].depth == Approx(5.0).epsilon(kExact));
  CHECK(r.stages[2].depth == Approx(7.5).epsilon(kExact));
  CHECK(std::isnan(r.stages[3].depth));
  REQUIRE(r.cu_depth_reason.empty());
  CHECK(r.cu_depth.n == 3);
  CHECK(r.cu_depth.intercept == Approx(20.0).epsilon(kExact));
  CHECK(r.cu_depth.slope == Approx(4.0).epsilon(kExact));
  const auto j = nlohmann::json::parse(interpretation_json(r));
  CHECK(j["undrained"]["depth_trend"]["k"]["unit"] == "kPa/m");
  CHECK(j["stages"][0]["depth"]["value"].get<double>() == Approx(2.5).epsilon(kExact));
}

TEST_CASE("interpret writes its results and its report together or not at all", "[interpret][cli][outputs]") {
  // The report cannot be written (its folder does not exist): the results file is not left behind
  // alone, and an earlier results file of that name does not survive either (no mixed set).
  const std::string out = "interpret_together.json";
  {
    std::ofstream earlier(out);
    earlier << "{}";
  }
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") +
                                  " --material 'sand S' --out " + out + " --report no_such_folder_for_it/report.html",
                              "interpret_together");
  CHECK(r.exit_code != 0);
  CHECK(r.err.find("no_such_folder_for_it/report.html") != std::string::npos);
  CHECK_FALSE(std::ifstream(out).good());
  // Both written when both can be.
  const CliResult ok = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") +
                                   " --material 'sand S' --out " + out + " --report interpret_together.html",
                               "interpret_together_ok");
  CHECK(ok.exit_code == 0);
  CHECK(std::ifstream(out).good());
  CHECK(std::ifstream("interpret_together.html").good());
  std::remove(out.c_str());
  std::remove("interpret_together.html");
}
