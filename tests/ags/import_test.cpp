// AGS4 import (issue 16): the invented Hollowmere Reach file (tests/ags/data, a fictional site marked
// invented in PROJ) imported and interpreted against hand calculations and against the same data typed in
// as a series; malformed files through the CLI (exit 2, exact message, nothing written); the bundled
// invented Kestrel Bay series written as an AGS4 file and imported again.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <string>

#include "cli_run.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& tag) {
  const fs::path dir = fs::temp_directory_path() / ("triaxcal_ags_" + tag);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

void write(const fs::path& p, const std::string& text) {
  std::ofstream out(p, std::ios::binary);
  out << text;
}

std::string ags_file() { return test::source_path("tests/ags/data/hollowmere_reach.ags"); }

/// Imports the invented file through the CLI into a scratch folder; returns the series path.
std::string import_hollowmere(const std::string& tag, test::CliResult& r) {
  const fs::path dir = scratch(tag);
  const std::string out = (dir / "series.json").string();
  r = test::run_cli("import " + ags_file() + " --out " + out + " --materials " +
                        test::source_path("tests/ags/data/hollowmere_reach_materials.json"),
                    "ags_" + tag);
  return out;
}

Interpretation interpret_material(const TestSeries& s, const std::string& material) {
  InterpretOptions o;
  o.material = material;
  o.cu_depth_trend = true;
  return interpret(s, o);
}

/// Equal, or both not a number.
bool same(double a, double b) { return a == b || (std::isnan(a) && std::isnan(b)); }

const StrengthEnvelope& max_deviator(const Interpretation& r) {
  REQUIRE(r.envelopes.front().criterion == FailureCriterion::max_deviator);
  return r.envelopes.front();
}

}  // namespace

TEST_CASE("import of the invented AGS4 file prints what it found and writes a series that reads back") {
  test::CliResult r;
  const std::string series = import_hollowmere("summary", r);
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("  project: HR-INV-01 - Hollowmere Reach (invented site)\n") != std::string::npos);
  CHECK(r.out.find("  locations: 3 (BH01, BH02, BH03)\n") != std::string::npos);
  CHECK(r.out.find("  specimens: 11: UU 4 (4 stages), CU 3 (5 stages), CD 3 (3 stages), oedometer 1 (8 increments)\n") != std::string::npos);
  CHECK(r.out.find("  depth range: 2.1 to 12.5 m\n") != std::string::npos);
  CHECK(r.out.find("  BH01/5.00/3/3      BH01       5.50  CU          3  clay A\n") != std::string::npos);
  CHECK(r.out.find("  BH02/12.00/3/1     BH02      12.10  CD          1  sand B\n") != std::string::npos);
  CHECK(r.out.find("  BH03/3.00/1/1      BH03       3.20  oedometer   8  clay C\n") != std::string::npos);
  CHECK(r.out.find("Caution: these parameters are for numerical analysis") != std::string::npos);
  CHECK(r.err.empty());  // no warning: the lab's m_v agree with the void ratios
  const TestSeries s = read_test_series(series);
  REQUIRE(s.specimens.size() == 11);
  CHECK(s.warnings.empty());
  const Specimen& ms = s.specimens[6];
  CHECK(ms.id == "BH01/5.00/3/3");
  CHECK(ms.failure_values_only());
  REQUIRE(ms.shear_stages().size() == 3);  // TRET_TESN 1, 2, 3
  CHECK(ms.stages[5].type == SpecimenStageType::consolidation);
  CHECK(ms.stages[5].radial_stress == 300.0);
  CHECK(ms.stages[6].failure.pore_pressure == 390.0);
  const Specimen& oed = s.specimens[10];
  CHECK(oed.is_oedometer());
  CHECK(oed.curves.size() == 8);
  // A failure-value specimen has nothing to simulate.
  CHECK_THROWS_WITH(specimen_protocol(s.specimens[0], 50),
                    "specimen 'BH01/2.00/1/1' is known by its reported failure values only (no data file): there are no curves to "
                    "simulate or compare with");
}

TEST_CASE("c_u, c_u against depth, s'-t parameters, A_f and C_c of the imported file equal the hand calculation") {
  test::CliResult r;
  const TestSeries s = read_test_series(import_hollowmere("hand", r));
  REQUIRE(r.exit_code == 0);
  const Interpretation clay = interpret_material(s, "clay A");
  // UU (hand calculation): c_u = TRIT_DEVF / 2 = 30, 42, 50, 62 kPa; mean 46 kPa. Against depth z = 2.1, 4.1, 6.1,
  // 8.1 m: z mean 5.1, Sxx = 9 + 1 + 1 + 9 = 20, Sxy = (-3)(-16) + (-1)(-4) + (1)(4) + (3)(16) = 104, slope 5.2 kPa/m,
  // intercept 46 - 5.2 x 5.1 = 19.48 kPa.
  CHECK(clay.uu_count == 4);
  CHECK(clay.cu_mean == Approx(46.0).epsilon(1e-12));
  CHECK(clay.cu_depth.slope == Approx(5.2).epsilon(1e-12));
  CHECK(clay.cu_depth.intercept == Approx(19.48).epsilon(1e-12));
  // CU (hand calculation): s3' = TRET_CELL - TRET_PWPF, t = TRET_DEVF / 2, s' = s3' + t:
  //   (s', t) = (60 + 80, 80), (130 + 150, 150), (75 + 95, 95), (140 + 160, 160), (210 + 230, 230);
  //   every point on t = 10 + 0.5 s', so tan alpha = 0.5, phi' = asin 0.5 = 30 deg, c' = 10 / cos 30 = 11.547 kPa.
  const StrengthEnvelope& e = max_deviator(clay);
  CHECK(e.st.n == 5);
  CHECK(e.phi == Approx(30.0).epsilon(1e-9));
  CHECK(e.cohesion == Approx(10.0 / std::cos(30.0 * M_PI / 180.0)).epsilon(1e-9));
  // The other criterion cannot be recomputed from failure values: every stage excluded with that reason.
  const StrengthEnvelope& other = clay.envelopes[1];
  REQUIRE(other.points.size() == 5);
  CHECK(other.points[0].reason ==
        "failure values only (the lab's criterion: Maximum deviator stress): the max-stress-ratio point cannot be recomputed from them");
  // A_f = (u_f - u_0) / q_f (hand calculation): (340 - 300) / 160 = 0.25 for the first CU specimen.
  bool found = false;
  for (const StageInterpretation& st : clay.stages)
    if (st.specimen == "BH01/5.00/3/1") {
      found = true;
      CHECK(st.skempton_a == Approx(0.25).epsilon(1e-12));
      CHECK(st.undrained_strength == Approx(80.0).epsilon(1e-12));
      CHECK(st.by_max_deviator.s1 == Approx(220.0).epsilon(1e-12));  // 60 + 160
      CHECK(st.by_max_deviator.s3 == Approx(60.0).epsilon(1e-12));
    }
  CHECK(found);
  // CD (hand calculation): (s', t) = (50 + 87.5, 87.5), (100 + 162.5, 162.5), (200 + 312.5, 312.5), on
  // t = 5 + 0.6 s': phi' = asin 0.6 = 36.870 deg, c' = 5 / 0.8 = 6.25 kPa.
  const Interpretation sand_result = interpret_material(s, "sand B");
  const StrengthEnvelope& sand = max_deviator(sand_result);
  CHECK(sand.st.n == 3);
  CHECK(sand.phi == Approx(std::asin(0.6) * 180.0 / M_PI).epsilon(1e-9));
  CHECK(sand.cohesion == Approx(6.25).epsilon(1e-9));
  // Oedometer (hand calculation): first loading at s_a' >= 800 / 4: e = 0.810, 0.719, 0.629 at 200, 400, 800 kPa,
  // equally spaced in log10, so C_c = (0.810 - 0.629) / log10 4 = 0.30063; unloading 800 -> 200 -> 50 kPa:
  // C_s = (0.672 - 0.629) / log10 16 = 0.035711; E_oed at 100 kPa over the step 50 -> 100 kPa with
  // e_a = (1.050 - e) / 2.050: 100 ln 2 / ((0.985 - 0.900) / 2.050) = 1671.7 kPa.
  const Interpretation oed = interpret_material(s, "clay C");
  REQUIRE(oed.compressibility.size() == 1);
  const auto& c = oed.compressibility.front();
  CHECK(c.compression_index == Approx(0.181 / std::log10(4.0)).epsilon(1e-9));
  CHECK(c.swelling_index == Approx(0.043 / std::log10(16.0)).epsilon(1e-9));
  CHECK(c.constrained_modulus == Approx(100.0 * std::log(2.0) / (0.085 / 2.05)).epsilon(1e-9));
}

TEST_CASE("the imported file and the same data typed in as a series give the same interpretation") {
  test::CliResult r;
  const TestSeries imported = read_test_series(import_hollowmere("same", r));
  REQUIRE(r.exit_code == 0);
  const TestSeries typed = read_test_series(test::source_path("tests/ags/data/hollowmere_reach_series.json"));
  for (const std::string material : {"clay A", "sand B", "clay C"}) {
    INFO(material);
    const Interpretation a = interpret_material(imported, material), b = interpret_material(typed, material);
    REQUIRE(a.stages.size() == b.stages.size());
    for (std::size_t i = 0; i < a.stages.size(); ++i) {
      CHECK(same(a.stages[i].by_max_deviator.s, b.stages[i].by_max_deviator.s));
      CHECK(same(a.stages[i].by_max_deviator.t, b.stages[i].by_max_deviator.t));
      CHECK(same(a.stages[i].undrained_strength, b.stages[i].undrained_strength));
      CHECK(same(a.stages[i].skempton_a, b.stages[i].skempton_a));
    }
    CHECK(a.uu_count == b.uu_count);
    if (a.uu_count > 0) {
      CHECK(a.cu_mean == b.cu_mean);
      CHECK(a.cu_depth.slope == Approx(b.cu_depth.slope).epsilon(1e-12));
    }
    for (std::size_t k = 0; k < a.envelopes.size(); ++k) {
      if (std::isnan(b.envelopes[k].phi)) {
        CHECK(std::isnan(a.envelopes[k].phi));
        continue;
      }
      CHECK(a.envelopes[k].phi == Approx(b.envelopes[k].phi).epsilon(1e-12));
      CHECK(a.envelopes[k].cohesion == Approx(b.envelopes[k].cohesion).epsilon(1e-12));
    }
    REQUIRE(a.compressibility.size() == b.compressibility.size());
    for (std::size_t k = 0; k < a.compressibility.size(); ++k) {
      CHECK(a.compressibility[k].compression_index == Approx(b.compressibility[k].compression_index).epsilon(1e-9));
      CHECK(a.compressibility[k].swelling_index == Approx(b.compressibility[k].swelling_index).epsilon(1e-9));
      // The typed-in strains carry 6 decimals of a percentage.
      CHECK(a.compressibility[k].constrained_modulus == Approx(b.compressibility[k].constrained_modulus).epsilon(1e-6));
    }
  }
}

TEST_CASE("a malformed AGS4 file is exit 2 with its exact message and nothing is written") {
  std::ifstream in(ags_file(), std::ios::binary);
  const std::string good((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  struct Case {
    const char* what;
    std::string from, to;
    std::string message;  // after "<file>: "
  };
  const std::vector<Case> cases = {
      {"wrong field count", "\"DATA\",\"BH01\",\"2.00\",\"1\",\"U\",\"BH01-U1\",\"1\",\"2.10\",\"1\",\"38.0\",\"76.0\",\"40\",\"60.00\",\"4.5\",\"30\",\"BRITTLE\"",
       "\"DATA\",\"BH01\",\"2.00\",\"1\",\"U\",\"BH01-U1\",\"1\",\"2.10\",\"1\",\"38.0\",\"76.0\",\"40\",\"60.00\",\"4.5\",\"30\"",
       "line 40, group TRIT: the DATA row has 14 fields, the HEADING row has 15"},
      {"missing UNIT row", "\"UNIT\",\"\",\"m\",\"\",\"\",\"\",\"\",\"m\",\"\",\"mm\",\"mm\",\"kPa\",\"kPa\",\"%\",\"kPa\",\"\"\r\n", "",
       "line 38, group TRIT: expected the UNIT row after HEADING, found \"TYPE\""},
      {"missing TYPE row", "\"TYPE\",\"ID\",\"2DP\",\"X\",\"PA\",\"ID\",\"X\",\"2DP\",\"X\",\"1DP\",\"1DP\",\"0DP\",\"2DP\",\"1DP\",\"0DP\",\"PA\"\r\n", "",
       "line 39, group TRIT: expected the TYPE row after UNIT, found \"DATA\""},
      {"value not matching TYPE", "\"40\",\"60.00\",\"4.5\"", "\"40\",\"60.0\",\"4.5\"",
       "line 40, group TRIT, heading TRIT_DEVF: '60.0' is not a 2DP value (expected a number with 2 decimal places)"},
      {"unknown unit", "\"UNIT\",\"\",\"m\",\"\",\"\",\"\",\"\",\"m\",\"\",\"mm\",\"mm\",\"kPa\"",
       "\"UNIT\",\"\",\"m\",\"\",\"\",\"\",\"\",\"m\",\"\",\"mm\",\"mm\",\"ksf\"",
       "line 38, group TRIT, heading TRIT_CELL: unit 'ksf' is not known (expected one of: kPa, MPa, Pa, %, m, cm, mm, m2/MN, m2/kN, "
       "m2/yr, Mg/m3, kg/m3, deg, a date pattern such as yyyy-mm-dd for DT, or none (\"\" or -))"},
      {"unresolved specimen key", "\"DATA\",\"BH01\",\"4.00\",\"2\",\"U\",\"BH01-U2\",\"1\",\"4.10\",\"1\"",
       "\"DATA\",\"BH01\",\"4.00\",\"2\",\"U\",\"BH01-U2\",\"7\",\"4.10\",\"1\"",
       "line 41, group TRIT, heading SPEC_REF: the key (LOCA_ID 'BH01', SAMP_TOP '4.00', SAMP_REF '2', SAMP_TYPE 'U', SAMP_ID "
       "'BH01-U2', SPEC_REF '7') does not resolve: no TRIG row has it"},
      {"unresolved sample key", "\"DATA\",\"BH03\",\"3.00\",\"1\",\"U\",\"BH03-U1\"", "\"DATA\",\"BH03\",\"3.50\",\"1\",\"U\",\"BH03-U1\"",
       "line 73, group CONG, heading SAMP_TOP: the key (LOCA_ID 'BH03', SAMP_TOP '3.00') does not resolve: no SAMP row has it"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    std::string text = good;
    const std::size_t at = text.find(c.from);
    REQUIRE(at != std::string::npos);
    text.replace(at, c.from.size(), c.to);
    const fs::path dir = scratch("bad");
    const fs::path ags = dir / "bad.ags";
    write(ags, text);
    const test::CliResult r = test::run_cli("import " + ags.string() + " --out " + (dir / "series.json").string(), "ags_bad");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + ags.string() + ": " + c.message + "\n");
    CHECK(r.out.empty());
    std::size_t files = 0;
    for (const auto& entry : fs::directory_iterator(dir)) files += entry.path().filename() != "bad.ags";
    CHECK(files == 0);
  }
}

TEST_CASE("a reported m_v that the void ratios do not give is a warning naming line, group and heading") {
  std::ifstream in(ags_file(), std::ios::binary);
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  const std::string from = "\"400\",\"0.719\",\"0.251\"";
  const std::size_t at = text.find(from);
  REQUIRE(at != std::string::npos);
  text.replace(at, from.size(), "\"400\",\"0.719\",\"0.300\"");
  const fs::path dir = scratch("mv");
  write(dir / "mv.ags", text);
  const test::CliResult r = test::run_cli("import " + (dir / "mv.ags").string() + " --out " + (dir / "series.json").string(), "ags_mv");
  CHECK(r.exit_code == 0);
  // Hand calculation: m_v = (0.810 - 0.719) / (1.810 x 200 kPa) x 1000 = 0.25138 m2/MN.
  CHECK(r.err == "triaxcal: warning: " + (dir / "mv.ags").string() +
                     ": line 83, group CONS, heading CONS_INMV: the lab reports m_v 0.3 m2/MN, the void ratios give 0.251381 m2/MN "
                     "(tolerance 5 %, 0.005 m2/MN floor)\n");
  CHECK(r.out.find("  BH03/3.00/1/1         5     400.0   0.719       0.3    0.2514\n") != std::string::npos);
}
