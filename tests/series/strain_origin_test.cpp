// The lab strain convention in the series reader (shear-stage strains relative to the specimen at
// the stage's start) and the protocol of a multi-stage specimen (each later stage from its measured
// start). Invented numbers, checked by hand.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>

#include "series_fixture.hpp"
#include "tolerances.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;

namespace {

/// Saturation (cell 310, back 300), consolidation to 100 kPa (end strains given), then the stages in
/// `later` (shear stages marked by data_stage), a volumetric_strain and a stage column.
json two_stage_cd(const json& later) {
  json sp = cu_specimen("MS-CD", "data.csv");
  sp["stages"] = json::array({json{{"type", "saturation"}, {"b_value", 0.97}, {"cell_pressure", 310}, {"back_pressure", 300}},
                              json{{"type", "consolidation"},
                                   {"path", "isotropic"},
                                   {"effective_stress", 100},
                                   {"end_axial_strain", 0.01},
                                   {"end_volumetric_strain", 0.03}}});
  for (const json& st : later) sp["stages"].push_back(st);
  sp["data"]["columns"] = {{"stage", {{"header", "stage"}, {"unit", "-"}}},
                           {"axial_strain", {{"header", "ea"}, {"unit", "decimal"}}},
                           {"volumetric_strain", {{"header", "ev"}, {"unit", "decimal"}}},
                           {"deviator_stress", {{"header", "q"}, {"unit", "kPa"}}},
                           {"cell_pressure", {{"header", "cell"}, {"unit", "kPa"}}}};
  return sp;
}

json cd_stage(int data_stage) { return json{{"type", "shear"}, {"test", "CD"}, {"data_stage", data_stage}}; }

std::string row(int stage, double ea, double ev, double q, double cell) {
  char b[200];
  std::snprintf(b, sizeof b, "%d,%.17g,%.17g,%.17g,%.17g\n", stage, ea, ev, q, cell);
  return b;
}

/// Continuous strains from the start of stage 1: stage 1 e_a = 0.01 i, e_v = 0.002 i (i = 0..4);
/// stage 2 starts at `ea2`, `ev2` and adds the same.
std::string continuous_csv(double ea2, double ev2, double cell2) {
  std::string csv = "stage,ea,ev,q,cell\n";
  for (int i = 0; i < 5; ++i) csv += row(1, 0.01 * i, 0.002 * i, 30.0 * i, 400);
  for (int i = 0; i < 5; ++i) csv += row(2, ea2 + 0.01 * i, ev2 + 0.002 * i, 5.0 + 40.0 * i, cell2);
  return csv;
}

/// The same rows with the strains of stage 2 relative to its start, computed as the lab does:
/// dL / L_k0 = (eps - eps_k0) / (1 - eps_k0).
std::string per_stage_csv(double ea2, double ev2, double cell2) {
  std::string csv = "stage,ea,ev,q,cell\n";
  for (int i = 0; i < 5; ++i) csv += row(1, 0.01 * i, 0.002 * i, 30.0 * i, 400);
  for (int i = 0; i < 5; ++i)
    csv += row(2, (ea2 + 0.01 * i - ea2) / (1.0 - ea2), (ev2 + 0.002 * i - ev2) / (1.0 - ev2), 5.0 + 40.0 * i, cell2);
  return csv;
}

}  // namespace

TEST_CASE("continuous strains are converted to stage strains exactly and agree with a per-stage file, void ratios included",
          "[series][strain_origin]") {
  // Two CD stages back to back (no reconsolidation between): stage 2 starts where stage 1 ended.
  json cont = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  cont["data"]["strain_origin"] = "data_start";
  const json per = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  const TestSeries a = read_test_series(write_series(scratch_dir("origin_cont"), series_of(json::array({cont})), continuous_csv(0.04, 0.008, 400)));
  const TestSeries b = read_test_series(write_series(scratch_dir("origin_stage"), series_of(json::array({per})), per_stage_csv(0.04, 0.008, 400)));
  const ReducedCurves& ca = a.specimens[0].curves;
  const ReducedCurves& cb = b.specimens[0].curves;
  REQUIRE(ca.size() == 10);
  REQUIRE(cb.size() == 10);
  // Hand computation: row 7 (stage 2, i = 2) has e_a = 0.06, e_v = 0.012 from the data zero;
  // relative to the stage start: (0.06 - 0.04) / 0.96 = 0.0208333..., (0.012 - 0.008) / 0.992 = 0.0040322...
  CHECK(ca.axial_strain[7] == Approx(0.02 / 0.96).epsilon(kRoundOff));
  CHECK(ca.volumetric_strain[7] == Approx(0.004 / 0.992).epsilon(kRoundOff));
  CHECK(ca.axial_strain[5] == 0.0);
  CHECK(ca.axial_strain[4] == Approx(0.04).epsilon(kRoundOff));  // the data zero's stage keeps the file's strains
  // e_ref = 0.9 - 1.9 * 0.03 = 0.843 after the consolidation; row 7: e = 0.843 - 1.843 * 0.012 = 0.820884.
  CHECK(ca.void_ratio[7] == Approx(0.820884).epsilon(kRoundOff));
  for (std::size_t i = 0; i < 10; ++i) {
    INFO("row " << i);
    CHECK(close(ca.axial_strain[i], cb.axial_strain[i], kRoundOff, kStrainFloor));
    CHECK(close(ca.volumetric_strain[i], cb.volumetric_strain[i], kRoundOff, kStrainFloor));
    CHECK(close(ca.void_ratio[i], cb.void_ratio[i], kRoundOff, kStrainFloor));
    CHECK(ca.stage[i] == cb.stage[i]);
  }
}

TEST_CASE("with a reconsolidation between the stages the per-stage file cannot give void ratios after it, the continuous one can",
          "[series][strain_origin]") {
  const json later = json::array({cd_stage(1), json{{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", 200}},
                                  cd_stage(2)});
  json cont = two_stage_cd(later);
  cont["data"]["strain_origin"] = "data_start";
  const TestSeries a = read_test_series(write_series(scratch_dir("gap_cont"), series_of(json::array({cont})), continuous_csv(0.05, 0.02, 500)));
  const TestSeries b = read_test_series(write_series(scratch_dir("gap_stage"), series_of(json::array({two_stage_cd(later)})),
                                                     per_stage_csv(0.05, 0.02, 500)));
  const ReducedCurves& ca = a.specimens[0].curves;
  const ReducedCurves& cb = b.specimens[0].curves;
  // e = 0.843 - 1.843 * 0.024 at row 7 of the continuous file (the reconsolidation's 0.012 included).
  CHECK(ca.void_ratio[7] == Approx(0.843 - 1.843 * 0.024).epsilon(kRoundOff));
  CHECK(std::isnan(cb.void_ratio[7]));
  CHECK(cb.void_ratio[4] == Approx(ca.void_ratio[4]).epsilon(kRoundOff));
  for (std::size_t i = 0; i < 10; ++i) CHECK(close(ca.axial_strain[i], cb.axial_strain[i], kRoundOff, kStrainFloor));
}

TEST_CASE("unload-reload loops declared in continuous strains become stage strains", "[series][strain_origin]") {
  json cont = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  cont["data"]["strain_origin"] = "data_start";
  cont["stages"][3]["unload_reload"] = json::array({json::array({0.055, 0.075})});
  std::string csv = "stage,ea,ev,q,cell\n";
  for (int i = 0; i < 5; ++i) csv += row(1, 0.01 * i, 0.002 * i, 30.0 * i, 400);
  const double ea[] = {0.04, 0.05, 0.06, 0.07, 0.065, 0.06, 0.065, 0.07, 0.08};
  const double q[] = {5, 45, 85, 120, 100, 80, 100, 120, 140};
  for (int i = 0; i < 9; ++i) csv += row(2, ea[i], 0.008, q[i], 400);
  const TestSeries s = read_test_series(write_series(scratch_dir("origin_loop"), series_of(json::array({cont})), csv));
  const SpecimenStage& st = s.specimens[0].stages[3];
  REQUIRE(st.loops.size() == 1);
  CHECK(st.loops[0].from_strain == Approx(0.015 / 0.96).epsilon(kRoundOff));
  CHECK(st.loops[0].to_strain == Approx(0.035 / 0.96).epsilon(kRoundOff));
  // The protocol: first stage, then stage 2 to its loop top (0.07 - 0.04) / 0.96, the loop, and on to
  // 0.08: ((0.04 / 0.96) - (0.03 / 0.96)) / (1 - 0.03 / 0.96) relative to the segment start.
  const SpecimenProtocol p = specimen_protocol_with_map(s.specimens[0], 200);
  const auto [first, last] = p.stages_of(3);
  REQUIRE(last - first == 2);
  CHECK(p.protocol.stages[static_cast<std::size_t>(first)].axial_strain == Approx(0.03 / 0.96).epsilon(kRoundOff));
  CHECK(p.protocol.stages[static_cast<std::size_t>(first + 1)].type == StageType::unload_reload);
  CHECK(p.protocol.stages[static_cast<std::size_t>(first + 1)].target_deviator == Approx(80.0));
  const double top = 0.03 / 0.96, end = 0.04 / 0.96;
  CHECK(p.protocol.stages[static_cast<std::size_t>(last)].axial_strain == Approx((end - top) / (1.0 - top)).epsilon(kRoundOff));
}

TEST_CASE("a multi-stage protocol reconsolidates to the stresses measured at each later stage's start", "[series][strain_origin][protocol]") {
  // Stage 2's first row: cell 512 kPa, back 300 (drained), q 5 kPa -> s_r' = 212, s_a' = 217 kPa,
  // against a declared reconsolidation to 200 kPa.
  const json later = json::array({cd_stage(1), json{{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", 200}},
                                  cd_stage(2)});
  const TestSeries s = read_test_series(write_series(scratch_dir("measured_start"), series_of(json::array({two_stage_cd(later)})),
                                                     per_stage_csv(0.05, 0.02, 512)));
  const SpecimenProtocol p = specimen_protocol_with_map(s.specimens[0], 200);
  REQUIRE(p.protocol.stages.size() == 4);
  CHECK(p.origin == std::vector<int>{1, 2, 3, 4});
  // The first consolidation keeps its declared target (the stress history the lab applied).
  CHECK(p.protocol.stages[0].type == StageType::isotropic_consolidation);
  CHECK(p.protocol.stages[0].target_p == 100.0);
  CHECK(p.protocol.stages[1].axial_strain == Approx(0.04).epsilon(kRoundOff));
  CHECK(p.protocol.stages[2].type == StageType::anisotropic_consolidation);
  CHECK(p.protocol.stages[2].drainage == Drainage::drained);
  CHECK(p.protocol.stages[2].target_axial == Approx(217.0).epsilon(kRoundOff));
  CHECK(p.protocol.stages[2].target_radial == Approx(212.0).epsilon(kRoundOff));
  CHECK(p.protocol.stages[3].axial_strain == Approx(0.04 / 0.95).epsilon(kRoundOff));
  CHECK(p.data_zero_stage == 1);
  CHECK(p.stages_of(4) == std::pair<int, int>{3, 3});
  CHECK(p.stages_of(0) == std::pair<int, int>{0, -1});
}

TEST_CASE("strain conventions are strict: each bad input names file, key or line, the value and what was expected", "[series][strain_origin]") {
  const auto dir = scratch_dir("origin_errors");
  const std::string series_path = (dir / "series.json").string();
  const std::string data_path = (dir / "data.csv").string();
  json bad = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  bad["data"]["strain_origin"] = "continuous";
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({bad})), continuous_csv(0.04, 0.008, 400))),
                      series_path + ": specimens[0].data.strain_origin: expected \"stage_start\" (strains relative to the start of each "
                                    "row's stage) or \"data_start\" (continuous from the start of the first stage with rows), found \"continuous\"");
  // A continuous file read with the default convention: stage 2 starts at 4 %.
  const json per = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({per})), continuous_csv(0.04, 0.008, 400))),
                      data_path + ": line 7 (axial_strain): stages[3] starts at axial strain 0.04, but with strains relative to each "
                                  "stage's start (specimens[0].data.strain_origin \"stage_start\", the default) a stage starts within "
                                  "0.005 of zero; if the file's strains run on from the first stage with rows, declare \"strain_origin\": "
                                  "\"data_start\"");
  // Continuous strains that leave no specimen.
  json cont = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  cont["data"]["strain_origin"] = "data_start";
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({cont})), continuous_csv(1.0, 0.008, 400))),
                      data_path + ": line 7: stages[3] starts at axial strain 1, volumetric strain 0.008 from the data zero; a "
                                  "specimen's strains must stay below 1");
  // Rows of a stage must be together.
  std::string mixed = "stage,ea,ev,q,cell\n";
  for (int i = 0; i < 5; ++i) mixed += row(1, 0.01 * i, 0.0, 30.0 * i, 400);
  mixed += row(2, 0.0, 0.0, 5.0, 400) + row(1, 0.05, 0.0, 150.0, 400);
  for (int i = 1; i < 5; ++i) mixed += row(2, 0.01 * i, 0.0, 5.0 + 40.0 * i, 400);
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({per})), mixed)),
                      data_path + ": line 8 (stage): stage 1 after rows of stage 2 (the rows of each stage must be together, the "
                                  "stages in the order of specimens[0].stages)");
  // Several shear stages without a stage column need continuous strains.
  json nostage = two_stage_cd(json::array({cd_stage(1), cd_stage(2)}));
  nostage["data"]["columns"].erase("stage");
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({nostage})), continuous_csv(0.04, 0.008, 400))),
                      series_path + ": specimens[0].data: several shear stages and no stage column: rows are assigned to stages by "
                                    "their continuous axial strain, so declare \"strain_origin\": \"data_start\" (and each shear "
                                    "stage's strain_range), or add a stage column");
  // Raw readings are continuous by nature.
  json raw = cu_specimen("RAW", "data.csv");
  raw["data"] = {{"file", "data.csv"},
                 {"kind", "raw"},
                 {"strain_origin", "stage_start"},
                 {"columns", {{"axial_load", {{"header", "F"}, {"unit", "kN"}}}, {"axial_displacement", {{"header", "d"}, {"unit", "mm"}}}}}};
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({raw})), "F,d\n")),
                      series_path + ": specimens[0].data.strain_origin: only for reduced data (raw readings are continuous; strains "
                                    "are computed from the first row)");
  // Volume changes relative to each stage's start after a reconsolidation without rows.
  json vc = two_stage_cd(json::array({cd_stage(1), json{{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", 200}},
                                      cd_stage(2)}));
  vc["data"]["columns"].erase("volumetric_strain");
  vc["data"]["columns"]["volume_change"] = {{"header", "ev"}, {"unit", "mm3"}};
  REQUIRE_THROWS_WITH(read_test_series(write_series(dir, series_of(json::array({vc})), per_stage_csv(0.05, 0.02, 500))),
                      data_path + ": line 7 (volume_change): the volume at the start of stages[4] is unknown (a consolidation without "
                                  "rows comes before it and the volume changes are relative to each stage's start); give a "
                                  "volumetric_strain column or continuous volume changes with \"strain_origin\": \"data_start\"");
}
