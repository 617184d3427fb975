// AGS4 import with the lab's curve files (issue 16): curve files attached by a curve map (by specimen id and by a
// file-name pattern of AGS4 keys), the reported failure values compared with the failure point recomputed from the
// curves (a deliberately wrong reported value warned about by import, check and interpret; values within the
// tolerance not), curve-map errors exit 2 with nothing written, and the import's files written together or not at
// all. Data: the invented Hollowmere Reach site (tests/ags/data, a fictional site; the curve files say so).
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

#include "cli_run.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& tag) {
  const fs::path dir = fs::temp_directory_path() / ("triaxcal_ags_curves_" + tag);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  return std::string((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
}

void write(const fs::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

std::string data(const std::string& name) { return test::source_path("tests/ags/data/" + name); }

/// The invented AGS4 file with `from` replaced by `to` (once), written into `dir`.
std::string edited_ags(const fs::path& dir, const std::string& from, const std::string& to) {
  std::string text = read(data("hollowmere_reach.ags"));
  const std::size_t at = text.find(from);
  REQUIRE(at != std::string::npos);
  text.replace(at, from.size(), to);
  write(dir / "site.ags", text);
  return (dir / "site.ags").string();
}

test::CliResult import(const std::string& ags, const fs::path& out, const std::string& curves, const std::string& tag) {
  return test::run_cli("import " + ags + " --out " + out.string() + " --materials " + data("hollowmere_reach_materials.json") +
                           (curves.empty() ? "" : " --curves " + curves),
                       "ags_curves_" + tag);
}

std::vector<std::string> names_in(const fs::path& dir) {
  std::vector<std::string> out;
  for (const auto& e : fs::directory_iterator(dir)) out.push_back(e.path().filename().string());
  std::sort(out.begin(), out.end());
  return out;
}

// The second CU specimen's reported q_f, 300.00 kPa in the file (TRET line 53).
const char* const kReported = "\"500\",\"300\",\"9.0\",\"300.00\"";

}  // namespace

TEST_CASE("curve files attach to the imported specimens by id and by a key pattern; reported values within the tolerance give no warning",
          "[ags][curves]") {
  const fs::path dir = scratch("attach");
  const test::CliResult r = import(data("hollowmere_reach.ags"), dir / "series.json", data("hollowmere_reach_curves.json"), "attach");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  // No failure-value warning: 160.0 = 160, 303.0 - 300 = 3 < 6 kPa, 60.0 = 60; u 340 = 340, 371 - 370 = 1 < 6 kPa. The two CU
  // specimens with curves are warned about what the AGS4 groups read do not give (the volume change in consolidation).
  const std::string no_volume = ": the consolidation before the data declares no end_volumetric_strain; the area correction uses the "
                                "set-up dimensions and void ratios are not reported";
  const std::string series = (dir / "series.json").string();
  CHECK(r.err.find("triaxcal: warning: " + series + ": specimens[4]" + no_volume +
                   " (specimen BH01/5.00/3/1: its curves are BH01_5.00_3_1.curves.csv, the import's copy of " +
                   data("curves/bh01_5.10_cu.csv") + ")\ntriaxcal: warning: " + series + ": specimens[5]" + no_volume +
                   " (specimen BH01/5.00/3/2: its curves are BH01_5.00_3_2.curves.csv, the import's copy of " +
                   data("curves/bh01_5.30_cu.csv") + ")\ntriaxcal: warning: " + series + ": specimens[6]" + no_volume) == 0);
  CHECK(r.err.find("recomputed from the curve") == std::string::npos);
  CHECK(r.out.find("  curve files (" + data("hollowmere_reach_curves.json") + "): 4 attached\n") != std::string::npos);
  CHECK(r.out.find("  BH01/2.00/1/1  " + (fs::path(data("")) / "curves/BH01_2.10.csv").string() + "  ->  BH01_2.00_1_1.curves.csv\n") !=
        std::string::npos);  // by the pattern curves/{LOCA_ID}_{SPEC_DPTH}.csv
  CHECK(r.out.find("data file written: " + (dir / "BH01_5.00_3_2.curves.csv").string() + "\n") != std::string::npos);
  CHECK(names_in(dir) == std::vector<std::string>{"BH01_2.00_1_1.curves.csv", "BH01_5.00_3_1.curves.csv", "BH01_5.00_3_2.curves.csv",
                                                  "BH01_5.00_3_3.curves.csv", "BH03_3.00_1_1.csv", "series.json"});
  // The copy is the lab's file as it was.
  CHECK(read(dir / "BH01_5.00_3_1.curves.csv") == read(data("curves/bh01_5.10_cu.csv")));
  const TestSeries s = read_test_series((dir / "series.json").string());
  CHECK(s.warnings.size() == 3);
  const Specimen& cu = s.specimens[4];
  REQUIRE(cu.id == "BH01/5.00/3/1");
  CHECK_FALSE(cu.failure_values_only());  // both: curves and the reported values
  CHECK(cu.stages[2].failure.deviator_stress == 160.0);
  CHECK(cu.curves.size() == 16);
  CHECK(s.specimens[1].failure_values_only());  // BH01/4.00/2/1: no file matches the pattern
  const std::vector<ReportedFailureCheck> checks = check_reported_failures(s);
  REQUIRE(checks.size() == 6);
  // The invented curves' peaks (their first lines say so): 60.0, 160.0 and 303.0 kPa; u there 340.0 and 371.0 kPa.
  CHECK(checks[0].specimen == "BH01/2.00/1/1");
  CHECK(checks[0].q_curve == Approx(60.0).margin(1e-9));
  CHECK(std::isnan(checks[0].u_curve));  // UU: no pore pressure
  CHECK(checks[1].q_curve == Approx(160.0).margin(1e-9));
  CHECK(checks[1].u_curve == Approx(340.0).margin(1e-9));
  CHECK(checks[2].q_curve == Approx(303.0).margin(1e-9));
  CHECK(checks[2].q_reported == 300.0);
  CHECK(checks[2].u_curve == Approx(371.0).margin(1e-9));
  CHECK(checks[2].tolerance == Approx(6.0).margin(1e-12));  // 2 % of 300 kPa
  // The multi-stage specimen's three files of one stage each, merged: peaks 190.0, 320.0, 460.0 kPa, u 325.0, 360.0,
  // 390.0 kPa there (the files' first lines).
  for (int k = 0; k < 3; ++k) {
    CHECK(checks[3 + k].specimen == "BH01/5.00/3/3");
    CHECK(checks[3 + k].shear_stage == k + 1);
    CHECK(checks[3 + k].q_curve == Approx(std::vector<double>{190.0, 320.0, 460.0}[k]).margin(1e-9));
    CHECK(checks[3 + k].u_curve == Approx(std::vector<double>{325.0, 360.0, 390.0}[k]).margin(1e-9));
  }
  const Specimen& ms = s.specimens[6];
  REQUIRE(ms.shear_stages().size() == 3);
  for (int k : ms.shear_stages()) {
    const auto [first, last] = ms.stage_points(k);
    CHECK(last - first + 1 == 9);
  }
  for (const ReportedFailureCheck& c : checks) CHECK(c.warnings.empty());
  CHECK(r.out.find("  BH01/5.00/3/2     1  max-deviator          300.0      303.0      370.0      371.0      6.0  ok\n") !=
        std::string::npos);
}

TEST_CASE("a reported deviator stress the curve does not give is warned about by import, check and interpret", "[ags][curves]") {
  const fs::path dir = scratch("wrong");
  // The lab's arithmetic, deliberately wrong: 280 kPa reported, the curve peaks at 303 kPa.
  const std::string ags = edited_ags(dir, kReported, "\"500\",\"300\",\"9.0\",\"280.00\"");
  const fs::path out = dir / "out";
  fs::create_directories(out);
  const test::CliResult r = import(ags, out / "series.json", data("hollowmere_reach_curves.json"), "wrong");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const std::string warning =
      "specimen 'BH01/5.00/3/2', stages[2]: the deviator stress at failure (max-deviator) recomputed from the curve is 303 kPa, the lab "
      "reported 280 kPa (difference 23 kPa, tolerance 5.6 kPa: 2 % of the reported value, 2 kPa floor)";
  CHECK(r.err.find("triaxcal: warning: " + warning + "\n") != std::string::npos);
  CHECK(r.err.find("recomputed from the curve") == r.err.rfind("recomputed from the curve"));  // that one only
  CHECK(r.out.find("280.0      303.0      370.0      371.0      5.6  DIFFERS (warning)\n") != std::string::npos);
  const test::CliResult c = test::run_cli("check " + (out / "series.json").string(), "ags_curves_check");
  CHECK(c.exit_code == 0);
  CHECK(c.out.find("  warning: " + warning + "\n") != std::string::npos);
  CHECK(c.out.find("DIFFERS (warning)") != std::string::npos);
  const test::CliResult i = test::run_cli("interpret " + (out / "series.json").string() + " --material \"clay A\"", "ags_curves_interpret");
  CHECK(i.exit_code == 0);
  CHECK(i.out.find("  warning: " + warning + "\n") != std::string::npos);
}

TEST_CASE("a curve map that does not fit the AGS4 file is exit 2 with its exact message and nothing is written", "[ags][curves]") {
  const fs::path dir = scratch("bad");
  const std::string lab = (dir / "lab.csv").string();
  write(lab, read(data("curves/bh01_5.10_cu.csv")));
  struct Case {
    const char* what;
    std::string map;
    std::string message;  // after "triaxcal: error: "
  };
  const std::string head = R"({"format": "triaxcal-curve-map", "version": 1, "layout": {"kind": "reduced", "skip_rows": 1, "columns": {)"
                           R"("axial_strain": {"header": "Axial strain", "unit": "%"}, "deviator_stress": {"header": "Deviator stress", "unit": "kPa"}}}, )";
  const std::string map = (dir / "curves.json").string();
  const std::vector<Case> cases = {
      {"unknown specimen", head + R"("curves": [{"specimen": "BH01/5.00/3/9", "file": "lab.csv"}]})",
       map + ": curves[0].specimen: 'BH01/5.00/3/9' is not a specimen of the AGS4 file (triaxial specimens: BH01/2.00/1/1, BH01/4.00/2/1, "
             "BH02/6.00/1/1, BH02/8.00/2/1, BH01/5.00/3/1, BH01/5.00/3/2, BH01/5.00/3/3, BH02/12.00/3/1, BH02/12.00/3/2, BH02/12.00/3/3)"},
      {"oedometer specimen", head + R"("curves": [{"specimen": "BH03/3.00/1/1", "file": "lab.csv"}]})",
       map + ": curves[0].specimen: 'BH03/3.00/1/1' is an oedometer specimen (its data come from CONS); curve files attach to triaxial "
             "specimens"},
      {"a specimen named twice", head + R"("curves": [{"specimen": "BH01/5.00/3/1", "file": "lab.csv"}, {"specimen": "BH01/5.00/3/1", "file": "lab.csv"}]})",
       map + ": curves[1]: the whole specimen of 'BH01/5.00/3/1' already has a file (curves[0], the whole specimen)"},
      {"unknown pattern key", head + R"("pattern": "{LOCA_ID}_{DEPTH}.csv"})",
       map + ": pattern: '{DEPTH}' is not a specimen key (expected a file name with keys in braces, e.g. \"{LOCA_ID}_{SPEC_DPTH}.csv\"; "
             "keys: LOCA_ID, SAMP_TOP, SAMP_REF, SAMP_TYPE, SAMP_ID, SPEC_REF, SPEC_DPTH; TESN for one file a stage)"},
      {"layout with a file", R"({"format": "triaxcal-curve-map", "version": 1, "layout": {"file": "x.csv"}, "pattern": "{LOCA_ID}.csv"})",
       map + ": layout.file: not allowed here (the file comes from curves[].file or pattern)"},
      {"missing file", head + R"("curves": [{"specimen": "BH01/5.00/3/1", "file": "none.csv"}]})",
       map + ": curves[0].file (specimen BH01/5.00/3/1): " + (dir / "none.csv").string() + ": cannot open the file"},
      {"stage that is not a TESN", head + R"("curves": [{"specimen": "BH01/5.00/3/3", "stage": 4, "file": "lab.csv"}]})",
       map + ": curves[0].stage: 4 is not a TRET_TESN of 'BH01/5.00/3/3' (found: 1, 2, 3)"},
      {"stages without their files", head + R"("curves": [{"specimen": "BH01/5.00/3/3", "stage": 2, "file": "lab.csv"}]})",
       map + ": curves[0].file (specimen BH01/5.00/3/3): files of one stage each need a file for every stage: TRET_TESN 1, 3 have none"},
      {"a whole file and a stage file", head + R"("curves": [{"specimen": "BH01/5.00/3/3", "file": "lab.csv"}, )"
                                              R"({"specimen": "BH01/5.00/3/3", "stage": 2, "file": "lab.csv"}]})",
       map + ": curves[1]: stage 2 of 'BH01/5.00/3/3' already has a file (curves[0], the whole specimen)"},
      {"stage files without a delimiter", head + R"("curves": [{"specimen": "BH01/5.00/3/3", "stage": 1, "file": "lab.csv"}, )"
                                                 R"({"specimen": "BH01/5.00/3/3", "stage": 2, "file": "lab.csv"}, )"
                                                 R"({"specimen": "BH01/5.00/3/3", "stage": 3, "file": "lab.csv"}]})",
       map + ": curves[0].file (specimen BH01/5.00/3/3): files of one stage each are merged with a stage column: the layout must give "
             "its delimiter (comma, semicolon or tab), found none"},
      // The CU curve file has no pore-pressure column: the series read back from the import fails; the message names the
      // copy where it would have been and the lab's file it copies.
      {"curves that do not read", head + R"("curves": [{"specimen": "BH01/5.00/3/1", "file": "lab.csv"}]})",
       (dir / "out" / "series.json").string() + ": specimens[4].data.columns: a CU test needs a pore_pressure or excess_pore_pressure "
           "column (specimen BH01/5.00/3/1: its curves are BH01_5.00_3_1.curves.csv, the import's copy of " + lab + "); nothing was written"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    write(map, c.map);
    const fs::path out = dir / "out";
    fs::remove_all(out);
    fs::create_directories(out);
    write(out / "series.json", "an earlier series (invented)");
    const test::CliResult r = import(data("hollowmere_reach.ags"), out / "series.json", map, "bad");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + c.message + "\n");
    CHECK(r.out.empty());
    CHECK(names_in(out) == std::vector<std::string>{"series.json"});  // no copy, no oedometer file, no staging folder
    CHECK(read(out / "series.json") == "an earlier series (invented)");
  }
}

TEST_CASE("import writes the series and its data files together: a second import replaces the whole set", "[ags][curves]") {
  const fs::path dir = scratch("whole");
  REQUIRE(import(data("hollowmere_reach.ags"), dir / "series.json", data("hollowmere_reach_curves.json"), "whole1").exit_code == 0);
  CHECK(names_in(dir).size() == 6);
  // Without the curve map the copies are not part of the run: they are removed with the run's other names only when
  // the run writes them, so the folder keeps them; the series no longer names them.
  const test::CliResult r = import(data("hollowmere_reach.ags"), dir / "series.json", "", "whole2");
  REQUIRE(r.exit_code == 0);
  const TestSeries s = read_test_series((dir / "series.json").string());
  for (const Specimen& sp : s.specimens)
    if (!sp.is_oedometer()) CHECK(sp.failure_values_only());
  // An output folder that does not exist is named, and nothing is made.
  const test::CliResult m = import(data("hollowmere_reach.ags"), dir / "none" / "series.json", "", "whole3");
  CHECK(m.exit_code == 2);
  CHECK(m.err == "triaxcal: error: --out: '" + (dir / "none" / "series.json").string() + "': the folder " + (dir / "none").string() +
                     " does not exist (create it first)\n");
  CHECK_FALSE(fs::exists(dir / "none"));
}

TEST_CASE("check and interpret tables widen for AGS-style ids: every row's columns line up", "[ags][curves]") {
  const fs::path dir = scratch("wide");
  REQUIRE(import(data("hollowmere_reach.ags"), dir / "series.json", data("hollowmere_reach_curves.json"), "wide").exit_code == 0);
  // The widest id, BH02/12.00/3/1, is 14 characters: the id column is 14 wide, shorter ids padded to it.
  const test::CliResult c = test::run_cli("check " + (dir / "series.json").string(), "ags_curves_wide_check");
  REQUIRE(c.exit_code == 0);
  CHECK(c.out.find("\n  specimen       stage test dir  points ") != std::string::npos);
  CHECK(c.out.find("\n  BH01/5.00/3/1  1     CU   comp     16 ") != std::string::npos);
  CHECK(c.out.find("\n  oedometer      stage points ") != std::string::npos);
  CHECK(c.out.find("\n  BH03/3.00/1/1  1          8 ") != std::string::npos);
  CHECK(c.out.find("\n  reported       stage test curves ") != std::string::npos);
  CHECK(c.out.find("\n  BH01/5.00/3/3  1     CU   yes         400.0 ") != std::string::npos);
  CHECK(c.out.find("\n  BH01/4.00/2/1  1     UU   no           80.0 ") != std::string::npos);
  CHECK(c.out.find("\n  BH02/12.00/3/1 1     CD   no          350.0 ") != std::string::npos);
  const test::CliResult i =
      test::run_cli("interpret " + (dir / "series.json").string() + " --material \"sand B\"", "ags_curves_wide_interpret");
  REQUIRE(i.exit_code == 0);
  CHECK(i.out.find("\n  specimen       stage test dir  s3'c[kPa] |") != std::string::npos);
  CHECK(i.out.find("\n                                           |                  max-deviator |") != std::string::npos);
  CHECK(i.out.find("\n  BH02/12.00/3/1     1 CD   comp      50.0 |") != std::string::npos);
  const test::CliResult k =
      test::run_cli("interpret " + (dir / "series.json").string() + " --material \"clay A\"", "ags_curves_wide_interpret_clay");
  REQUIRE(k.exit_code == 0);
  CHECK(k.out.find("\n  specimen      stage test dir  s3'c[kPa] |") != std::string::npos);  // 13 wide
  CHECK(k.out.find("\n  BH01/5.00/3/3     3 CU   comp     300.0 |") != std::string::npos);
}

TEST_CASE("a pattern with {TESN} finds one file a stage and merges them with a stage column; a stage without its file is an error",
          "[ags][curves]") {
  const fs::path dir = scratch("tesn");
  for (int k : {1, 3})
    write(dir / ("BH01_5.50_" + std::to_string(k) + ".csv"), read(data("curves/bh01_5.50_cu_stage" + std::to_string(k) + ".csv")));
  write(dir / "map.json", R"({"format": "triaxcal-curve-map", "version": 1, "pattern": "{LOCA_ID}_{SPEC_DPTH}_{TESN}.csv",
    "layout": {"kind": "reduced", "delimiter": "comma", "skip_rows": 1, "columns": {
      "axial_strain": {"header": "Axial strain", "unit": "%"}, "deviator_stress": {"header": "Deviator stress", "unit": "kPa"},
      "pore_pressure": {"header": "Pore pressure", "unit": "kPa"}}}})");
  fs::create_directories(dir / "out");
  // Stage 2 has no file yet.
  const test::CliResult bad = import(data("hollowmere_reach.ags"), dir / "out" / "series.json", (dir / "map.json").string(), "tesn_bad");
  CHECK(bad.exit_code == 2);
  CHECK(bad.err == "triaxcal: error: " + (dir / "map.json").string() + ": pattern '{LOCA_ID}_{SPEC_DPTH}_{TESN}.csv' (specimen BH01/5.00/3/3): "
                   "files of one stage each need a file for every stage: TRET_TESN 2 has none\n");
  CHECK(fs::is_empty(dir / "out"));
  write(dir / "BH01_5.50_2.csv", read(data("curves/bh01_5.50_cu_stage2.csv")));
  const test::CliResult r = import(data("hollowmere_reach.ags"), dir / "out" / "series.json", (dir / "map.json").string(), "tesn");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("): 1 attached\n") != std::string::npos);
  const std::string merged = read(dir / "out" / "BH01_5.00_3_3.curves.csv");
  CHECK(merged.find("Axial strain,Deviator stress,Pore pressure,stage\n0.00,0.0,300.0,1\n") != std::string::npos);
  CHECK(merged.find("5.00,187.0,325.5,1\n0.00,0.0,300.0,2\n") != std::string::npos);  // stage 1's last row, then stage 2's first
  const TestSeries s = read_test_series((dir / "out" / "series.json").string());
  const std::vector<ReportedFailureCheck> checks = check_reported_failures(s);
  REQUIRE(checks.size() == 3);
  CHECK(checks[0].q_curve == Approx(190.0).margin(1e-9));
  CHECK(checks[2].shear_stage == 3);
  CHECK(checks[2].q_curve == Approx(460.0).margin(1e-9));
  CHECK(checks[2].u_curve == Approx(390.0).margin(1e-9));
}
