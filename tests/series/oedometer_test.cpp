// Oedometer stages in test-series files: strict reading with exact messages, the reduction
// (e_v = e_a, e = e0 - (1 + e0) e_a), the protocol (one driver stage per loading / unloading branch)
// and the end state printed by `triaxcal check`.

#include <catch2/catch.hpp>

#include <cmath>

#include "cli_run.hpp"
#include "series_fixture.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;

namespace {

/// An invented oedometer specimen: steps 20 ... 320, unloading to 40, reloading to 160 kPa.
json oed_specimen(const std::string& file = "data.csv") {
  return json{{"id", "OED-1"},
              {"height", 20.0},
              {"diameter", 75.0},
              {"void_ratio", 1.0},
              {"stages", json::array({json{{"type", "oedometer"}, {"stress_steps", {20, 40, 80, 160, 320, 160, 80, 40, 80, 160}}}})},
              {"data",
               json{{"file", file},
                    {"kind", "reduced"},
                    {"columns",
                     json{{"axial_strain", {{"header", "ea"}, {"unit", "%"}}}, {"axial_stress", {{"header", "sv"}, {"unit", "kPa"}}}}}}}};
}

/// Rows at 10 (seating) and each step; strains in % (made up, monotone on loading, smaller on unloading).
std::string oed_csv() {
  return "ea,sv\n0,10\n1,20\n2,40\n3,80\n4,160\n5,320\n4.9,160\n4.8,80\n4.7,40\n4.8,80\n4.9,160\n";
}

std::string read_error(const json& specimen, const std::string& csv, const std::string& tag) {
  const auto dir = scratch_dir(tag);
  const std::string path = write_series(dir, series_of(json::array({specimen})), csv);
  try {
    read_test_series(path);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("an oedometer specimen reads in % and kPa, with e_v = e_a and e = e0 - (1 + e0) e_a", "[series][oedometer]") {
  const auto dir = scratch_dir("oed_read");
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({oed_specimen()})), oed_csv()));
  REQUIRE(s.specimens.size() == 1);
  const Specimen& sp = s.specimens.front();
  CHECK(sp.is_oedometer());
  CHECK(sp.shear_stages().empty());
  REQUIRE(sp.curves.size() == 11);
  CHECK(sp.data_zero_stage == 0);
  CHECK(sp.curves.axial_strain[5] == Approx(0.05));
  CHECK(sp.curves.volumetric_strain[5] == Approx(0.05));
  CHECK(sp.curves.axial_stress[5] == Approx(320.0));
  // Phase relation, hand computed: e = 1.0 - 2.0 * 0.05 = 0.9.
  CHECK(sp.curves.void_ratio[5] == Approx(0.9).epsilon(kExact));
  CHECK(std::isnan(sp.curves.deviator_stress[5]));
  CHECK(std::isnan(sp.curves.mean_stress[5]));
  CHECK(s.warnings.empty());
}

TEST_CASE("a void_ratio column of an oedometer file is taken as measured", "[series][oedometer]") {
  json sp = oed_specimen();
  sp["data"]["columns"]["void_ratio"] = {{"header", "e"}, {"unit", "-"}};
  const auto dir = scratch_dir("oed_e");
  std::string csv = "ea,sv,e\n";
  for (int i = 0; i < 6; ++i) csv += std::to_string(i) + "," + std::to_string(10 << i) + "," + std::to_string(1.0 - 0.03 * i) + "\n";
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({sp})), csv));
  CHECK(s.specimens.front().curves.void_ratio[3] == Approx(0.91));
  // The largest stress in the file (320) is the declared largest step: no warning. Here it is 320 too.
  CHECK(s.warnings.empty());
}

TEST_CASE("a file whose largest stress is off the largest declared step by more than 5 % is reported", "[series][oedometer]") {
  json sp = oed_specimen();
  sp["stages"][0]["stress_steps"] = {20, 40, 80, 160, 400};
  const auto dir = scratch_dir("oed_warn");
  const std::string path = write_series(dir, series_of(json::array({sp})), oed_csv());
  const TestSeries s = read_test_series(path);
  REQUIRE(s.warnings.size() == 1);
  CHECK(s.warnings.front().message == (dir / "data.csv").string() +
                                          ": the largest effective axial stress in the file is 320 kPa, the largest declared step "
                                          "400 kPa (specimens[0].stages[0].stress_steps)");
}

TEST_CASE("oedometer stages and data are strict: each bad input names file, path, value and expectation", "[series][oedometer]") {
  const std::string dir = scratch_dir("oed_bad_probe").string();
  const auto series = [](const std::string& tag) { return (scratch_path(tag) / "series.json").string(); };
  {
    json sp = oed_specimen();
    sp["stages"][0]["stress_steps"] = {20, 40, 40};
    CHECK(read_error(sp, oed_csv(), "oed_b1") ==
          series("oed_b1") + ": specimens[0].stages[0].stress_steps[2]: 40 kPa equals the previous step (each step changes the axial stress)");
  }
  {
    json sp = oed_specimen();
    sp["stages"][0]["stress_steps"] = {20, -40};
    CHECK(read_error(sp, oed_csv(), "oed_b2") ==
          series("oed_b2") + ": specimens[0].stages[0].stress_steps[1]: expected a positive effective axial stress (kPa), found -40");
  }
  {
    json sp = oed_specimen();
    sp["stages"][0].erase("stress_steps");
    CHECK(read_error(sp, oed_csv(), "oed_b3") ==
          series("oed_b3") + ": specimens[0].stages[0].stress_steps: missing (the effective axial stress at the end of each load step, kPa, in order)");
  }
  {
    json sp = oed_specimen();
    sp["stages"].insert(sp["stages"].begin(), json{{"type", "saturation"}, {"b_value", 0.97}});
    CHECK(read_error(sp, oed_csv(), "oed_b4") ==
          series("oed_b4") + ": specimens[0].stages[1]: an oedometer stage must be the specimen's only stage (found 2 stages; give the "
                             "triaxial stages a specimen of their own)");
  }
  {
    json sp = oed_specimen();
    sp["data"]["kind"] = "raw";
    sp["data"]["columns"] = {{"axial_load", {{"header", "F"}, {"unit", "N"}}}};
    CHECK(read_error(sp, "F\n1\n", "oed_b5") ==
          series("oed_b5") + ": specimens[0].data.kind: oedometer data must be \"reduced\" (axial strain and effective axial stress)");
  }
  {
    json sp = oed_specimen();
    sp["data"]["columns"]["deviator_stress"] = {{"header", "q"}, {"unit", "kPa"}};
    CHECK(read_error(sp, oed_csv(), "oed_b6") ==
          series("oed_b6") + ": specimens[0].data.columns.deviator_stress: an oedometer specimen takes stage, axial_strain, axial_stress and "
                             "void_ratio columns only");
  }
  {
    json sp = oed_specimen();
    sp["data"]["columns"].erase("axial_stress");
    CHECK(read_error(sp, oed_csv(), "oed_b7") ==
          series("oed_b7") + ": specimens[0].data.columns: oedometer data need an axial_stress column (effective axial stress)");
  }
  {
    std::string csv = oed_csv();
    csv.replace(csv.find("\n3,80\n"), 6, "\n3,-80\n");
    CHECK(read_error(oed_specimen(), csv, "oed_b8") ==
          (scratch_path("oed_b8") / "data.csv").string() +
              ": line 5 (axial_stress): -80 kPa, the effective axial stress must be positive");
  }
  {
    json sp = cu_specimen("CU-1", "data.csv");
    sp["data"]["columns"]["void_ratio"] = {{"header", "e"}, {"unit", "-"}};
    CHECK(read_error(sp, "ea,q,u,cell,e\n0,0,300,400,1\n", "oed_b9") ==
          series("oed_b9") + ": specimens[0].data.columns.void_ratio: only for oedometer specimens (triaxial stresses and void ratios are "
                             "reduced from the other columns)");
  }
  {
    CHECK(read_error(oed_specimen(), "ea,sv\n0,10\n1,20\n2,40\n", "oed_b10") ==
          (scratch_path("oed_b10") / "data.csv").string() +
              ": specimen 'OED-1', stages[0] (oedometer): 3 data points, at least 5 are needed");
  }
  (void)dir;
}

TEST_CASE("the oedometer protocol has one drained stage per loading or unloading branch, steps in proportion to |ln stress change|",
          "[series][oedometer][protocol]") {
  const auto dir = scratch_dir("oed_protocol");
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({oed_specimen()})), oed_csv()));
  const SpecimenProtocol p = specimen_protocol_with_map(s.specimens.front(), 300);
  // Starts isotropic at the first row's stress (10 kPa); branches 10 -> 320, 320 -> 40, 40 -> 160.
  CHECK(p.protocol.initial.stress[0] == Approx(10.0));
  CHECK(p.protocol.initial.stress[1] == Approx(10.0));
  REQUIRE(p.protocol.stages.size() == 3);
  CHECK(p.data_zero_stage == 0);
  const double total = std::log(32.0) + std::log(8.0) + std::log(4.0);
  const double targets[] = {320, 40, 160};
  const double shares[] = {std::log(32.0) / total, std::log(8.0) / total, std::log(4.0) / total};
  const char* names[] = {" loading", " unloading", " reloading"};
  for (std::size_t k = 0; k < 3; ++k) {
    const Stage& st = p.protocol.stages[k];
    CHECK(st.type == StageType::oedometer);
    CHECK(st.drainage == Drainage::drained);
    CHECK(st.target_axial == targets[k]);
    CHECK(st.steps == static_cast<int>(std::lround(shares[k] * 300)));
    CHECK(st.label == std::string("OED-1 stages[0]") + names[k]);
    CHECK(p.origin[k] == 0);
  }
  // initial_effective_stress, where given, is the start instead of the first row.
  json sp = oed_specimen();
  sp["initial_effective_stress"] = 5.0;
  const TestSeries s2 = read_test_series(write_series(scratch_dir("oed_protocol2"), series_of(json::array({sp})), oed_csv()));
  CHECK(specimen_protocol(s2.specimens.front(), 300).initial.stress[0] == Approx(5.0));
}

TEST_CASE("an oedometer protocol simulated with Modified Cam-Clay keeps zero radial strain and ends at each branch's stress",
          "[series][oedometer][protocol]") {
  const auto dir = scratch_dir("oed_simulate");
  const TestSeries s = read_test_series(write_series(dir, series_of(json::array({oed_specimen()})), oed_csv()));
  const SpecimenProtocol p = specimen_protocol_with_map(s.specimens.front(), 300);
  const ModelEntry& entry = find_model("modified_cam_clay");
  const auto model = entry.create(
      resolve_parameters(entry.info(), {{"lambda", 0.15}, {"kappa", 0.03}, {"critical_state_ratio", 1.2}, {"poissons_ratio", 0.25}}, "test"),
      "test");
  const SimulationResult r = simulate(DriverOptions{}, *model, p.protocol);
  REQUIRE(r.ok());
  const double targets[] = {320, 40, 160};
  for (std::size_t k = 0; k < 3; ++k) {
    const StepRecord& end = r.steps[static_cast<std::size_t>(r.stages[k].last)];
    CHECK(end.axial_stress == Approx(targets[k]).epsilon(kExact));
    CHECK(std::abs(end.radial_strain) < 1e-12);
  }
}

TEST_CASE("check prints the oedometer end state (strain, stress, largest stress, void ratio) and exits 0", "[series][oedometer][check]") {
  const auto dir = scratch_dir("oed_check");
  const std::string path = write_series(dir, series_of(json::array({oed_specimen()})), oed_csv());
  const CliResult r = run_cli("check " + path, "oed_check");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("  OED-1      1         11     0.0490      160.0      320.0    0.902") != std::string::npos);
  CHECK(r.out.find("no errors") != std::string::npos);
}
