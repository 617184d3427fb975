// Failure-value specimens in a test series (docs/test-series-format.md "Failure values", issue 16): the
// series keys and their messages, effective stresses at failure from cell, pore pressure and deviator
// stress, the lab's criterion, and the check of reported values against the curves. Invented values.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <string>

#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& tag) {
  const fs::path dir = fs::temp_directory_path() / ("triaxcal_ags_failure_" + tag);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

std::string write_series(const fs::path& dir, const json& specimens) {
  // A braced list of one specimen is that object to nlohmann: make it the list it stands for.
  const json list = specimens.is_array() ? specimens : json::array({specimens});
  const json root = {{"format", "triaxcal-test-series"}, {"version", 1}, {"name", "invented"}, {"specimens", list}};
  const std::string path = (dir / "series.json").string();
  std::ofstream(path) << root.dump(1);
  return path;
}

json cu_specimen(const std::string& id, double conp, double cell, const json& failure, const char* direction = "compression") {
  return {{"id", id}, {"height", 76}, {"diameter", 38},
          {"stages", {{{"type", "saturation"}, {"back_pressure", 300}},
                      {{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", conp}},
                      {{"type", "shear"}, {"test", "CU"}, {"direction", direction}, {"cell_pressure", cell}, {"failure", failure}}}}};
}

std::string message_of(const std::string& path) {
  try {
    read_test_series(path);
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("failure values in a series: missing or impossible values are exact errors") {
  const fs::path dir = scratch("errors");
  std::string p = write_series(dir, {cu_specimen("A", 100, 400, {{"deviator_stress", 160}})});
  CHECK(message_of(p) == p + ": specimens[0].stages[2].failure.pore_pressure: missing (a CU stage needs the pore pressure at failure, kPa)");
  p = write_series(dir, {cu_specimen("A", 100, 400, {{"deviator_stress", 160}, {"pore_pressure", 420}})});
  CHECK(message_of(p) == p + ": specimens[0].stages[2].failure.pore_pressure: 420 kPa is not below the cell pressure 400 kPa (the "
                             "effective radial stress at failure, cell - u_f, must be positive)");
  p = write_series(dir, {cu_specimen("A", 100, 400, {{"deviator_stress", -5}, {"pore_pressure", 340}})});
  CHECK(message_of(p) == p + ": specimens[0].stages[2].failure.deviator_stress: must be positive, found -5");
  p = write_series(dir, {cu_specimen("A", 100, 400, {{"deviator_stress", 160}, {"pore_pressure", 340}, {"peak", 1}})});
  CHECK(message_of(p) == p + ": specimens[0].stages[2].failure.peak: unknown key 'peak' (expected one of: deviator_stress, pore_pressure, "
                             "pore_pressure_start, axial_strain, volumetric_strain, criterion)");
  json no_failure = cu_specimen("A", 100, 400, {{"deviator_stress", 160}, {"pore_pressure", 340}});
  no_failure["stages"][2].erase("failure");
  p = write_series(dir, {no_failure});
  CHECK(message_of(p) == p + ": specimens[0].data: missing (the data file and its columns are required; a specimen without one needs "
                             "\"failure\" values on every shear stage, stages[2] has none)");
}

TEST_CASE("failure values: s3' = cell - u_f, s1' = s3' + q_f in compression and the reverse in extension; A_f from u_0") {
  const fs::path dir = scratch("stresses");
  const std::string p = write_series(
      dir, {cu_specimen("C", 100, 400, {{"deviator_stress", 160}, {"pore_pressure", 340}, {"pore_pressure_start", 300},
                                        {"criterion", "Maximum deviator stress"}}),
            cu_specimen("E", 100, 400, {{"deviator_stress", 100}, {"pore_pressure", 250}, {"pore_pressure_start", 300},
                                        {"criterion", "Maximum deviator stress"}}, "extension")});
  const Interpretation r = interpret(read_test_series(p), InterpretOptions{});
  REQUIRE(r.stages.size() == 2);
  const FailurePoint& c = r.stages[0].by_max_deviator;
  CHECK(c.reported);
  // Hand calculation: s3' = 400 - 340 = 60, s1' = 60 + 160 = 220, p' = 60 + 160/3, A_f = (340 - 300) / 160 = 0.25.
  CHECK(c.s3 == 60.0);
  CHECK(c.s1 == 220.0);
  CHECK(c.p == Approx(60.0 + 160.0 / 3.0).epsilon(1e-14));
  CHECK(c.excess_pore_pressure == 40.0);
  CHECK(r.stages[0].skempton_a == 0.25);
  CHECK(r.stages[0].consolidation_radial == 100.0);
  // Extension, cell pressure constant (hand calculation): s_r' = 400 - 250 = 150 is the major stress, s_a' = 150 - 100 = 50;
  // q = -100 (signed), p' = (50 + 2 x 150) / 3; A_f = (250 - 300) / 100 = -0.5.
  const FailurePoint& e = r.stages[1].by_max_deviator;
  CHECK(e.s1 == 150.0);
  CHECK(e.s3 == 50.0);
  CHECK(e.q == -100.0);
  CHECK(e.p == Approx(350.0 / 3.0).epsilon(1e-14));
  CHECK(r.stages[1].skempton_a == -0.5);
  CHECK(r.stages[1].undrained_strength == 50.0);
}

TEST_CASE("failure values stand for the lab's criterion only; an unrecognised criterion is a warning") {
  const fs::path dir = scratch("criterion");
  const std::string p = write_series(
      dir, {cu_specimen("R", 100, 400, {{"deviator_stress", 160}, {"pore_pressure", 340}, {"criterion", "Maximum principal stress ratio"}}),
            cu_specimen("U", 200, 500, {{"deviator_stress", 300}, {"pore_pressure", 370}, {"criterion", "peak"}}),
            cu_specimen("N", 300, 600, {{"deviator_stress", 460}, {"pore_pressure", 390}})});
  const Interpretation r = interpret(read_test_series(p), InterpretOptions{});
  REQUIRE(r.stages.size() == 3);
  CHECK(r.stages[0].by_max_deviator.index < 0);
  CHECK_FALSE(r.stages[0].by_max_deviator.reported);
  CHECK(r.stages[0].by_max_stress_ratio.reported);
  CHECK(r.stages[1].by_max_deviator.reported);
  REQUIRE(r.warnings.size() == 2);
  CHECK(r.warnings[0] == "specimen 'U', stages[2]: the failure criterion is reported as 'peak', not recognised; its failure values are "
                         "taken as max-deviator");
  CHECK(r.warnings[1] == "specimen 'N', stages[2]: the failure criterion is not reported; its failure values are taken as max-deviator");
  const StrengthEnvelope& dev = r.envelopes[0];
  REQUIRE(dev.points.size() == 3);
  CHECK_FALSE(dev.points[0].used);
  CHECK(dev.points[0].reason ==
        "failure values only (the lab's criterion: Maximum principal stress ratio): the max-deviator point cannot be recomputed from them");
  CHECK(dev.points[1].used);
  CHECK(dev.points[2].used);
  const std::string text = interpretation_text(r);
  CHECK(text.find("      R stage 1: lab's criterion 'Maximum principal stress ratio'\n") != std::string::npos);
  CHECK(text.find("      N stage 1: lab's criterion not reported\n") != std::string::npos);
  const json out = json::parse(interpretation_json(r));
  CHECK(out["stages"][0]["failure"]["max-deviator"].is_null());
  CHECK(out["stages"][0]["failure"]["max-stress-ratio"]["reported"] == true);
  CHECK(out["stages"][0]["failure_values_only"]["reported_criterion"] == "Maximum principal stress ratio");
}

TEST_CASE("reported failure values beside the curves are checked against the failure point recomputed from them") {
  // The invented Kestrel Bay series, its CU test C-CU-100 given the lab's reported values.
  const fs::path dir = scratch("beside");
  const fs::path src = fs::path(TRIAXCAL_SOURCE_DIR) / "examples/kestrel_bay";
  for (const auto& entry : fs::directory_iterator(src)) fs::copy(entry.path(), dir / entry.path().filename());
  const std::string path = (dir / "kestrel_bay_series.json").string();
  json root = json::parse(std::ifstream(path));
  const Interpretation plain = interpret(read_test_series(path), InterpretOptions{});
  const StageInterpretation* cu = nullptr;
  for (const auto& s : plain.stages)
    if (s.specimen == "C-CU-100") cu = &s;
  REQUIRE(cu != nullptr);
  const double q = cu->by_max_deviator.q;
  json* stage = nullptr;
  for (json& sp : root["specimens"])
    if (sp["id"] == "C-CU-100")
      for (json& st : sp["stages"])
        if (st["type"] == "shear") stage = &st;
  REQUIRE(stage != nullptr);
  const double back = read_test_series(path).specimens[3].back_pressure;
  const double u = cu->by_max_deviator.excess_pore_pressure + back;
  auto warnings_with = [&](double reported_q, double reported_u) {
    (*stage)["failure"] = {{"deviator_stress", reported_q}, {"pore_pressure", reported_u}, {"criterion", "Maximum deviator stress"}};
    std::ofstream(path) << root.dump(1);
    std::vector<std::string> found;
    for (const std::string& w : interpret(read_test_series(path), InterpretOptions{}).warnings)
      if (w.find("C-CU-100") != std::string::npos) found.push_back(w);
    return found;
  };
  // Within the tolerance (2 % of q_f, 2 kPa floor): no warning.
  CHECK(warnings_with(q * 1.01, u + 1.0).empty());
  // 10 % off: the recomputed and the reported value, and the tolerance, are named.
  const std::vector<std::string> w = warnings_with(q * 1.1, u + 30.0);
  REQUIRE(w.size() == 2);
  const double tol = std::max(2.0, 0.02 * q * 1.1);
  CHECK(w[0] == "specimen 'C-CU-100', stages[2]: the deviator stress at failure (max-deviator) recomputed from the curve is " +
                    format_number(q) + " kPa, the lab reported " + format_number(q * 1.1) + " kPa (difference " +
                    format_number(q - q * 1.1) + " kPa, tolerance " + format_number(tol) + " kPa: 2 % of the reported value, 2 kPa floor)");
  CHECK(w[1] == "specimen 'C-CU-100', stages[2]: the pore pressure at failure (max-deviator) from the curve is " + format_number(u) +
                    " kPa, the lab reported " + format_number(u + 30.0) + " kPa (difference " + format_number(u - (u + 30.0)) +
                    " kPa, tolerance " + format_number(tol) + " kPa)");
}
