// Reading test series: units, layouts, raw-data reduction and the protocol of a specimen.
#include <catch2/catch.hpp>

#include <cmath>

#include "series_fixture.hpp"
#include "tolerances.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/lab_csv.hpp"
#include "triaxcal/reduction.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;

TEST_CASE("right-cylinder area correction and strain from displacement match hand-computed values", "[series][reduction]") {
  // Hand computation (common practice, no source): H0 = 100 mm, D0 = 50 mm, A0 = pi 50^2 / 4 = 1963.4954 mm^2;
  // 5 mm shortening -> e_a = 0.05; e_v = 0.02 -> A = 1963.4954 * 0.98 / 0.95 = 2025.5005 mm^2;
  // 0.5 kN on it -> q = 500 / 2025.5005 * 1000 = 246.8526 kPa.
  CHECK(axial_strain_from_displacement(12.0, 7.0, 100.0) == Approx(0.05).epsilon(kRoundOff));
  const double a = corrected_area(1963.4954084936207, 0.02, 0.05);
  CHECK(a == Approx(2025.5005).epsilon(1e-7));
  CHECK(deviator_from_load(500.0, a) == Approx(246.8526).epsilon(1e-6));
  // Membrane (Henkel & Gilbert 1952 as in ASTM D4767): 4 * 1400 kPa * 0.3 mm * 0.05 / 50 mm = 1.68 kPa.
  CHECK(membrane_correction(1400.0, 0.3, 0.05, 50.0) == Approx(1.68).epsilon(kRoundOff));
  CHECK(void_ratio_after(0.8, 0.1) == Approx(0.62).epsilon(kRoundOff));
}

TEST_CASE("raw readings reduce to the hand-computed deviator stress with area and membrane corrections", "[series][reduction]") {
  const auto dir = scratch_dir("raw");
  json sp = cu_specimen("RAW-1", "raw.csv");
  sp["height"] = 100.0;
  sp["diameter"] = 50.0;
  sp["stages"][2]["test"] = "CD";
  sp["data"] = {{"file", "raw.csv"},
                {"kind", "raw"},
                {"columns",
                 {{"axial_load", {{"header", "F"}, {"unit", "kN"}}},
                  {"axial_displacement", {{"header", "d"}, {"unit", "mm"}}},
                  {"volume_gauge", {{"header", "V"}, {"unit", "cm3"}}},
                  {"cell_pressure", {{"header", "cell"}, {"unit", "kPa"}}}}},
                {"membrane", {{"thickness", 0.3}, {"modulus", 1400}}}};
  // Rows 0..5: displacement 2 + i mm (zero at row 0), gauge 10 + 0.78539816 i cm3 (e_v = 0.004 i).
  std::string csv = "F,d,V,cell\n";
  for (int i = 0; i <= 5; ++i)
    csv += std::to_string(0.1 * i) + "," + std::to_string(2.0 + i) + "," + std::to_string(10.0 + 0.78539816339744828 * i) + ",400\n";
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({sp})), csv, "raw.csv"));
  const ReducedCurves& c = s.specimens[0].curves;
  REQUIRE(c.size() == 6);
  // Row 5: e_a = 5/100 = 0.05, e_v = 0.02, A = 2025.5005 mm^2, q = 500 N / A - 1.68 kPa = 245.1726 kPa.
  CHECK(c.axial_strain[5] == Approx(0.05).epsilon(kRoundOff));
  CHECK(c.volumetric_strain[5] == Approx(0.02).epsilon(1e-7));
  CHECK(c.deviator_stress[5] == Approx(246.8526 - 1.68).epsilon(1e-6));
  // Drained: pore pressure = back pressure 300 kPa, s_r' = 400 - 300.
  CHECK(c.radial_stress[5] == Approx(100.0).epsilon(kRoundOff));
  CHECK(c.axial_stress[5] == Approx(100.0 + c.deviator_stress[5]).epsilon(kRoundOff));
}

TEST_CASE("decimal-comma semicolon files with % and MPa give the same curves as the point/comma kPa file", "[series][csv]") {
  const auto dir = scratch_dir("formats");
  std::string point = "ea,q,u,cell\n", comma = "\xEF\xBB\xBF" "export of an invented lab\r\nStrain;Dev;PWP;Cell\r\n";
  for (int i = 0; i < 8; ++i) {
    const double ea = 0.0125 * i, q = 17.25 * i, u = 300.0 + 4.5 * i;
    char a[200], b[200];
    std::snprintf(a, sizeof a, "%.6f,%.4f,%.3f,400\n", ea, q, u);
    std::snprintf(b, sizeof b, "%.4f;%.7f;%.6f;0,4\r\n", 100 * ea, q / 1000, u / 1000);
    std::string bb = b;
    for (std::size_t k = 0; k < bb.size(); ++k)
      if (bb[k] == '.') bb[k] = ',';
    point += a;
    comma += bb;
  }
  json sp1 = cu_specimen("P", "point.csv");
  json sp2 = cu_specimen("C", "comma.csv");
  sp2["data"] = {{"file", "comma.csv"},
                 {"kind", "reduced"},
                 {"delimiter", "semicolon"},
                 {"decimal", "comma"},
                 {"skip_rows", 1},
                 {"columns",
                  {{"axial_strain", {{"header", "Strain"}, {"unit", "%"}}},
                   {"deviator_stress", {{"header", "Dev"}, {"unit", "MPa"}}},
                   {"pore_pressure", {{"header", "PWP"}, {"unit", "MPa"}}},
                   {"cell_pressure", {{"header", "Cell"}, {"unit", "MPa"}}}}}};
  write_text(dir / "comma.csv", comma);
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({sp1, sp2})), point, "point.csv"));
  REQUIRE(s.specimens.size() == 2);
  const ReducedCurves& a = s.specimens[0].curves;
  const ReducedCurves& b = s.specimens[1].curves;
  REQUIRE(a.size() == 8);
  REQUIRE(b.size() == 8);
  for (std::size_t i = 0; i < 8; ++i) {
    CHECK(close(a.axial_strain[i], b.axial_strain[i], kRoundOff, kStrainFloor));
    CHECK(close(a.deviator_stress[i], b.deviator_stress[i], kRoundOff, kStressFloor));
    CHECK(close(a.excess_pore_pressure[i], b.excess_pore_pressure[i], kRoundOff, kStressFloor));
    CHECK(close(a.mean_stress[i], b.mean_stress[i], kRoundOff, kStressFloor));
  }
  CHECK(a.excess_pore_pressure[7] == Approx(31.5));
}

TEST_CASE("lab CSV cells are strict: the message names file, line, column and the cell", "[series][csv]") {
  const std::vector<CsvColumnRequest> cols{{"axial_strain", "ea", 1.0, "-"}, {"pore_pressure", "u", 1.0, "kPa"}};
  CsvLayout layout;
  REQUIRE_THROWS_WITH(parse_lab_csv("ea,u\n0.1,2\n0.2,3\n0.3,12.5x\n", "f.csv", layout, cols),
                      "f.csv: line 4, column 2 (pore_pressure): '12.5x' is not a number");
  CsvLayout semi{';', ',', 0, 0};
  REQUIRE_THROWS_WITH(parse_lab_csv("ea;u\n0,1;12,5x\n", "f.csv", semi, cols),
                      "f.csv: line 2, column 2 (pore_pressure): '12,5x' is not a number");
  REQUIRE_THROWS_WITH(parse_lab_csv("ea;u\n0,1;12.5\n", "f.csv", semi, cols),
                      "f.csv: line 2, column 2 (pore_pressure): '12.5' is not a number (the declared decimal separator is a comma)");
  REQUIRE_THROWS_WITH(parse_lab_csv("ea,u\n0.1,NaN\n", "f.csv", layout, cols),
                      "f.csv: line 2, column 2 (pore_pressure): 'NaN' (NaN) is not a measured value; remove the row or give a number");
  REQUIRE_THROWS_WITH(parse_lab_csv("ea,u\n0.1,\n", "f.csv", layout, cols),
                      "f.csv: line 2, column 2 (pore_pressure): empty cell (a number is expected)");
  REQUIRE_THROWS_WITH(parse_lab_csv("ea,pwp\n0.1,1\n", "f.csv", layout, cols),
                      "f.csv: line 1: column 'u' (for pore_pressure) is not in the header (found: ea, pwp; delimiter ,)");
  REQUIRE_THROWS_WITH(unit_factor(QuantityKind::stress, "kg", "s.json: x"),
                      "s.json: x: unit 'kg' is not a stress unit (expected one of: kPa, MPa, psi, bar)");
  // psi: 1 lbf / in^2 = 4.4482216152605 N / 645.16 mm^2 (exact definitions).
  CHECK(unit_factor(QuantityKind::stress, "psi", "") == Approx(4448.2216152605 / 645.16).epsilon(kRoundOff));
  CHECK(unit_factor(QuantityKind::volume, "ml", "") == 1000.0);
}

TEST_CASE("specimen protocol follows consolidation, shear to the measured strain and the unload-reload loop", "[series][protocol]") {
  const auto dir = scratch_dir("protocol");
  json sp = cu_specimen("L-1", "data.csv");
  sp["stages"][2]["test"] = "CD";
  sp["stages"][2]["unload_reload"] = json::array({json::array({0.025, 0.0405})});
  sp["data"]["columns"].erase("pore_pressure");
  sp["data"]["columns"]["volumetric_strain"] = {{"header", "ev"}, {"unit", "decimal"}};
  // 0, .01, .02, .03, .04 (top), .035, .03 (bottom q 60), .035, .04, .05, .06
  const double ea[] = {0, 0.01, 0.02, 0.03, 0.04, 0.035, 0.03, 0.035, 0.04, 0.05, 0.06};
  const double q[] = {0, 40, 70, 90, 100, 80, 60, 80, 100, 108, 112};
  std::string csv = "ea,ev,q,cell\n";
  for (int i = 0; i < 11; ++i) csv += std::to_string(ea[i]) + ",0.001," + std::to_string(q[i]) + ",400\n";
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({sp})), csv));
  const SpecimenProtocol p = specimen_protocol_with_map(s.specimens[0], 300);
  REQUIRE(p.protocol.stages.size() == 4);
  CHECK(p.protocol.back_pressure == 300.0);
  CHECK(p.protocol.initial.stress[0] == Approx(10.0));  // cell 310 - back 300 after saturation
  CHECK(p.protocol.stages[0].type == StageType::isotropic_consolidation);
  CHECK(p.protocol.stages[0].target_p == 100.0);
  CHECK(p.protocol.stages[1].type == StageType::shear);
  CHECK(p.protocol.stages[1].drainage == Drainage::drained);
  CHECK(p.protocol.stages[1].axial_strain == Approx(0.04));
  CHECK(p.protocol.stages[2].type == StageType::unload_reload);
  CHECK(p.protocol.stages[2].target_deviator == Approx(60.0));
  // After the loop: from its top 0.04 to 0.06 relative to the segment's start, (0.06 - 0.04) / (1 - 0.04).
  CHECK(p.protocol.stages[3].axial_strain == Approx(0.02 / 0.96).epsilon(kRoundOff));
  CHECK(p.protocol.stages[1].steps + p.protocol.stages[3].steps == 300);
  CHECK(p.data_zero_stage == 1);
  CHECK(p.origin == std::vector<int>{1, 2, 2, 2});
}

#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

TEST_CASE("every specimen protocol of the invented example runs to completion with Mohr-Coulomb", "[series][protocol][example]") {
  const TestSeries s = read_test_series(std::string(TRIAXCAL_SOURCE_DIR) + "/examples/kestrel_bay/kestrel_bay_series.json");
  const ModelEntry& entry = find_model("mohr_coulomb");
  const ParameterValues values = resolve_parameters(
      entry.info(), {{"youngs_modulus", 30000}, {"poissons_ratio", 0.3}, {"cohesion", 5}, {"friction_angle", 32}, {"dilation_angle", 4},
                     {"tensile_strength", 0}},
      "test");
  const auto model = entry.create(values, "test");
  for (const Specimen& sp : s.specimens) {
    INFO(sp.id);
    const SpecimenProtocol p = specimen_protocol_with_map(sp, 200);
    REQUIRE(p.data_zero_stage >= 0);
    REQUIRE(p.origin.size() == p.protocol.stages.size());
    const SimulationResult r = simulate(DriverOptions{}, *model, p.protocol);
    REQUIRE(r.ok());
    // Without loops, the simulated axial strain of the first shear stage, from the data zero, equals
    // the measured one at the stage's last row.
    if (sp.is_oedometer()) {
      // An oedometer ends at its last declared stress step.
      const auto& steps = sp.stages[static_cast<std::size_t>(sp.oedometer_stages().front())].stress_steps;
      CHECK(r.steps.back().axial_stress == Approx(steps.back()).epsilon(1e-7));
      continue;
    }
    const int shear = sp.shear_stages().front();
    if (!sp.stages[static_cast<std::size_t>(shear)].loops.empty()) continue;
    int last_stage = -1;
    for (std::size_t k = 0; k < p.origin.size(); ++k)
      if (p.origin[k] == shear) last_stage = static_cast<int>(k);
    const auto at = [](int i) { return static_cast<std::size_t>(i); };
    const double zero = r.steps[at(r.stages[at(p.data_zero_stage)].first - 1)].axial_strain;
    const double end = r.steps[at(r.stages[at(last_stage)].last)].axial_strain;
    const auto [first, last] = sp.stage_points(shear);
    (void)first;
    const double measured_end = sp.curves.axial_strain[at(last)];
    // Measured strains are relative to the shear stage's start (engineering); the records' are natural
    // strains from the protocol start.
    const double shear_start = r.steps[at(r.stages[at(last_stage)].first - 1)].axial_strain;
    CHECK(engineering_strain(end - shear_start) == Approx(measured_end).epsilon(1e-9));
    CHECK(r.steps[at(r.stages[at(last_stage)].last)].stage_axial_strain == Approx(measured_end).epsilon(1e-9));
    CHECK(zero <= shear_start + 1e-12);  // compression: the data zero is at or before the shear start
  }
}
