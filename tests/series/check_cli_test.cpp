// `triaxcal check` on bad input: every case asserts its exit code and its exact message.
#include <catch2/catch.hpp>

#include "cli_run.hpp"
#include "series_fixture.hpp"

using namespace triaxcal::test;
using nlohmann::json;

namespace {

struct Case {
  std::string series;
  CliResult result;
};

Case run_check(const std::string& tag, const json& specimens, const std::string& csv) {
  const auto dir = scratch_dir("check_" + tag);
  Case c;
  c.series = write_series(dir, series_of(specimens), csv);
  c.result = run_cli("check " + c.series, "check_" + tag);
  return c;
}

std::string data_file(const Case& c) { return c.series.substr(0, c.series.size() - 11) + "data.csv"; }

}  // namespace

TEST_CASE("check accepts a valid CU specimen, prints its end state and exits 0", "[series][check]") {
  const Case c = run_check("ok", json::array({cu_specimen("CU-1", "data.csv")}), cu_csv());
  CHECK(c.result.exit_code == 0);
  CHECK(c.result.out.find("CU-1") != std::string::npos);
  CHECK(c.result.out.find("no errors") != std::string::npos);
  CHECK(c.result.err.empty());
}

TEST_CASE("check exits 2 when a declared column is not in the header", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["data"]["columns"]["pore_pressure"]["header"] = "pwp";
  const Case c = run_check("missing_column", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": line 1: column 'pwp' (for pore_pressure) is not in the header (found: ea, q, u, cell; delimiter ,)") !=
        std::string::npos);
}

TEST_CASE("check exits 2 on an unknown column quantity", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["data"]["columns"]["porepressure"] = {{"header", "u"}, {"unit", "kPa"}};
  const Case c = run_check("unknown_column", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(c.series + ": specimens[0].data.columns.porepressure: unknown quantity 'porepressure' for reduced data (expected one of: stage, "
                          "axial_strain, deviator_stress, pore_pressure, excess_pore_pressure, volumetric_strain, volume_change, cell_pressure, axial_stress, void_ratio)") !=
        std::string::npos);
}

TEST_CASE("check exits 2 when a column's unit is not declared", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["data"]["columns"]["deviator_stress"].erase("unit");
  const Case c = run_check("no_unit", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(c.series + ": specimens[0].data.columns.deviator_stress.unit: missing (declare the unit of column 'q')") !=
        std::string::npos);
}

TEST_CASE("check exits 2 on a non-numeric cell and names line and column", "[series][check]") {
  std::string csv = cu_csv();
  csv.replace(csv.find("305"), 3, "3O5");
  const Case c = run_check("non_numeric", json::array({cu_specimen("CU-1", "data.csv")}), csv);
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": line 3, column 3 (pore_pressure): '3O5' is not a number") != std::string::npos);
}

TEST_CASE("check exits 2 on a NaN cell", "[series][check]") {
  std::string csv = cu_csv() + "0.1,nan,350,400\n";
  const Case c = run_check("nan", json::array({cu_specimen("CU-1", "data.csv")}), csv);
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": line 12, column 2 (deviator_stress): 'nan' (NaN) is not a measured value; remove the row or give a number") !=
        std::string::npos);
}

TEST_CASE("check exits 2 when a shear stage has fewer than 5 points", "[series][check]") {
  const std::string csv = "ea,q,u,cell\n0,0,300,400\n0.01,10,302,400\n0.02,20,304,400\n";
  const Case c = run_check("few_points", json::array({cu_specimen("CU-1", "data.csv")}), csv);
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": specimen 'CU-1', stages[2] (shear): 3 data points, at least 5 are needed") != std::string::npos);
}

TEST_CASE("check exits 2 when the axial strain goes back outside a declared loop", "[series][check]") {
  std::string csv = cu_csv();
  const auto pos = csv.find("0.050000");
  csv.replace(pos, 8, "0.035000");
  const Case c = run_check("backwards", json::array({cu_specimen("CU-1", "data.csv")}), csv);
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": line 7 (axial_strain): the axial strain goes back from 0.04 to 0.035 outside a declared unload-reload "
                          "loop (declare it in specimens[0].stages[2].unload_reload)") != std::string::npos);
  // The same file with the loop declared is accepted.
  json sp = cu_specimen("CU-1", "data.csv");
  sp["stages"][2]["unload_reload"] = json::array({json::array({0.03, 0.065})});
  const Case ok = run_check("backwards_loop", json::array({sp}), csv);
  CHECK(ok.result.exit_code == 0);
}

TEST_CASE("check exits 2 on a negative effective stress", "[series][check]") {
  std::string csv = cu_csv() + "0.1,200,405,400\n";
  const Case c = run_check("negative", json::array({cu_specimen("CU-1", "data.csv")}), csv);
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(data_file(c) + ": line 12: negative effective stress (s_r' = -5 kPa, s_a' = 195 kPa from cell pressure 400 kPa, pore "
                          "pressure 405 kPa, q 200 kPa)") != std::string::npos);
}

TEST_CASE("check warns, without failing, on a B-value below 0.95 for a CU test", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["stages"][0]["b_value"] = 0.9;
  const Case c = run_check("low_b", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 0);
  CHECK(c.result.out.find("warning: " + c.series + ": specimens[0]: B-value 0.9 is below 0.95 for a CU test; pore pressures may be underestimated") !=
        std::string::npos);
}

TEST_CASE("check warns with both values when the file's consolidation stress disagrees with the declared one", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["stages"][1]["effective_stress"] = 120;
  const Case c = run_check("consolidation", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 0);
  CHECK(c.result.out.find("warning: " + data_file(c) + ": line 2: effective radial stress at the start of shear is 100 kPa in the file, declared "
                          "consolidation radial stress 120 kPa (specimens[0].stages[1])") != std::string::npos);
}

TEST_CASE("check exits 2 on a specimen with no shear stage", "[series][check]") {
  json sp = cu_specimen("CU-1", "data.csv");
  sp["stages"].erase(2);
  const Case c = run_check("no_shear", json::array({sp}), cu_csv());
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(c.series + ": specimens[0].stages: specimen 'CU-1' has no shear stage (at least one stage of type \"shear\" is "
                          "required, or a single \"oedometer\" stage)") != std::string::npos);
}

TEST_CASE("check exits 2 on duplicate specimen ids", "[series][check]") {
  const Case c = run_check("duplicate", json::array({cu_specimen("CU-1", "data.csv"), cu_specimen("CU-1", "data.csv")}), cu_csv());
  CHECK(c.result.exit_code == 2);
  CHECK(c.result.err.find(c.series + ": specimens[1].id: duplicate specimen id 'CU-1' (also specimens[0].id)") != std::string::npos);
}

TEST_CASE("check runs on the invented Kestrel Bay example without errors", "[series][check][example]") {
  const CliResult r = run_cli("check " + source_path("examples/kestrel_bay/kestrel_bay_series.json"), "check_example");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("13 specimen(s) read") != std::string::npos);
  CHECK(r.out.find("no errors") != std::string::npos);
  // Stages for people (issue 15): the multi-stage specimen's shear stages are 1, 2, 3 as interpret
  // numbers them (the file's stages[] index them 2, 4, 6 behind saturation and consolidation stages).
  for (const char* row : {"C-MS-1     1     CU", "C-MS-1     2     CU", "C-MS-1     3     CU", "C-OED-1    1 "}) {
    INFO(row);
    CHECK(r.out.find(row) != std::string::npos);
  }
}
