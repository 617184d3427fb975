// Multi-stage specimens through the whole chain: a three-stage CU specimen generated with
// modified_cam_clay from invented parameters by a run 20x finer (tolerance 1000x tighter) than the
// fit's, written as a lab would (strains of each stage relative to its start, or continuous), read
// as a test series, turned into a calibration problem by the calibration file and fitted.

#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>

#include "../series/series_fixture.hpp"
#include "synthetic.hpp"
#include "tolerances.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/report_input.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;

namespace {

// Invented "true" parameters of a fictional soft clay (demo values, not from any real soil).
constexpr double kLambda = 0.18, kKappa = 0.035, kM = 1.05, kNu = 0.25;
constexpr double kVoidRatio = 1.25;   // after set-up
constexpr double kBack = 300.0;       // kPa
constexpr double kSaturation = 20.0;  // p' after saturation (cell 320 kPa)
// Consolidation targets (kPa, declared in the series as isotropic) and the engineering strain each
// CU stage is sheared to. The lab's reconsolidations before stages 2 and 3 keep a deviator stress:
// they end at s_a' = kKeptRatio s_r', which only the first rows of those stages show.
constexpr double kTargets[3] = {100.0, 200.0, 400.0};
constexpr double kKeptRatio = 1.2;
constexpr double kShearTo[3] = {0.04, 0.035, 0.05};
// Steps of the fit's simulation (CalibrationFile defaults) and the reference's refinement.
constexpr int kFitShearSteps = 200, kFitConsolidationSteps = 50, kFiner = 20;
constexpr int kRowEvery = 100;  // a row every 100 reference records: 41 rows a stage

std::unique_ptr<Model> true_model() {
  const ModelEntry& entry = find_model("modified_cam_clay");
  const ParameterValues v = resolve_parameters(
      entry.info(), {{"lambda", kLambda}, {"kappa", kKappa}, {"critical_state_ratio", kM}, {"poissons_ratio", kNu}}, "test");
  return entry.create(v, "test");
}

/// The reference run: isotropic consolidation to 100 kPa, CU, anisotropic reconsolidation to
/// s_r' = 200 kPa (s_a' = 240), CU, to s_r' = 400 kPa (s_a' = 480), CU.
SimulationResult reference_run() {
  TestProtocol p;
  p.name = "MS reference";
  p.back_pressure = kBack;
  p.initial.stress = triaxial_stress(kSaturation, kSaturation);
  p.initial.void_ratio = kVoidRatio;
  for (int k = 0; k < 3; ++k) {
    Stage c;
    c.type = k == 0 ? StageType::isotropic_consolidation : StageType::anisotropic_consolidation;
    c.target_p = kTargets[k];
    c.target_axial = k == 0 ? kNotGiven : kKeptRatio * kTargets[k];
    c.target_radial = k == 0 ? kNotGiven : kTargets[k];
    c.steps = kFitConsolidationSteps * kFiner;
    p.stages.push_back(c);
    Stage s;
    s.type = StageType::shear;
    s.drainage = Drainage::undrained;
    s.axial_strain = kShearTo[k];
    s.steps = kFitShearSteps * kFiner;
    p.stages.push_back(s);
  }
  DriverOptions o;
  o.tolerance = DriverOptions{}.tolerance / 1000.0;
  const SimulationResult r = simulate(o, *true_model(), p);
  if (!r.ok()) throw std::runtime_error("reference run failed: " + r.message);
  return r;
}

/// CSV rows "stage,ea,q,u,cell" of the three shear stages: ea per stage (the lab convention) or
/// continuous from the start of the first shear stage, 1 - exp(-(eps_nat - eps_nat_zero)).
std::string data_csv(const SimulationResult& r, bool continuous) {
  std::string csv = "stage,ea,q,u,cell\n";
  const double zero = r.steps[static_cast<std::size_t>(r.stages[1].first - 1)].axial_strain;
  for (int k = 0; k < 3; ++k) {
    const StageSummary& st = r.stages[static_cast<std::size_t>(2 * k + 1)];
    for (int j = st.first - 1; j <= st.last; j += kRowEvery) {
      const StepRecord& rec = r.steps[static_cast<std::size_t>(j)];
      const double ea = continuous ? engineering_strain(rec.axial_strain - zero)
                                   : (j == st.first - 1 ? 0.0 : rec.stage_axial_strain);
      const double u = kBack + rec.excess_pore_pressure;
      char row[200];
      std::snprintf(row, sizeof row, "%d,%.15g,%.15g,%.15g,%.15g\n", k + 1, ea, rec.q, u, rec.radial_stress + u);
      csv += row;
    }
  }
  return csv;
}

json stage_json(const std::string& type, double value, int data_stage) {
  if (type == "consolidation") return json{{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", value}};
  return json{{"type", "shear"}, {"test", "CU"}, {"data_stage", data_stage}};
}

/// A series with the specimen "MS" whose data file holds `csv`; returns the series path.
std::string write_ms_series(const std::string& tag, const std::string& csv, bool continuous, const SimulationResult& r) {
  const auto dir = scratch_dir(tag);
  // End of the first consolidation, from the saturated state (engineering): reference dimensions.
  const StepRecord& c1 = r.steps[static_cast<std::size_t>(r.stages[0].last)];
  json first = stage_json("consolidation", kTargets[0], 0);
  first["end_axial_strain"] = engineering_strain(c1.axial_strain);
  first["end_volumetric_strain"] = engineering_strain(c1.volumetric_strain);
  json specimen{{"id", "MS"},
                {"height", 76.0},
                {"diameter", 38.0},
                {"void_ratio", kVoidRatio},
                {"stages", json::array({json{{"type", "saturation"}, {"b_value", 0.98}, {"cell_pressure", kBack + kSaturation},
                                             {"back_pressure", kBack}},
                                        first, stage_json("shear", 0, 1), stage_json("consolidation", kTargets[1], 0),
                                        stage_json("shear", 0, 2), stage_json("consolidation", kTargets[2], 0),
                                        stage_json("shear", 0, 3)})},
                {"data",
                 {{"file", "data.csv"},
                  {"kind", "reduced"},
                  {"columns",
                   {{"stage", {{"header", "stage"}, {"unit", "-"}}},
                    {"axial_strain", {{"header", "ea"}, {"unit", "decimal"}}},
                    {"deviator_stress", {{"header", "q"}, {"unit", "kPa"}}},
                    {"pore_pressure", {{"header", "u"}, {"unit", "kPa"}}},
                    {"cell_pressure", {{"header", "cell"}, {"unit", "kPa"}}}}}}}};
  if (continuous) specimen["data"]["strain_origin"] = "data_start";
  return write_series(dir, series_of(json::array({specimen})), csv);
}

/// The calibration file: lambda, kappa and M free from a start 20-30 % off, nu fixed at the truth.
std::string calibration_text(const std::string& extra = "") {
  return R"({"format": "triaxcal-calibration", "version": 1, "series": "series.json", "model": "modified_cam_clay",)" + extra +
         R"( "tests": [{"specimen": "MS", "curves": ["deviator_stress", "excess_pore_pressure"]}],
  "parameters": {"lambda": {"status": "free", "lower": 0.05, "upper": 0.5, "start": 0.14, "scale": "log"},
                 "kappa": {"status": "free", "lower": 0.005, "upper": 0.1, "start": 0.045, "scale": "log"},
                 "critical_state_ratio": {"status": "free", "lower": 0.6, "upper": 1.8, "start": 1.3},
                 "poissons_ratio": 0.25},
  "constraints": ["kappa <= 0.5 * lambda"],
  "options": {"local": "bobyqa", "threads": 2}})";
}

CalibrationProblem problem_of(const std::string& series_path, const TestSeries& series) {
  const std::string source = (std::filesystem::path(series_path).parent_path() / "fit.json").string();
  const CalibrationFile file = parse_calibration_file(calibration_text(), source);
  const ModelEntry& entry = find_model("modified_cam_clay");
  auto create = entry.create;
  return build_calibration_problem(file, series, entry.info(),
                                   [create](const ParameterValues& v) { return create(v, "calibration"); });
}

const SimulationResult& reference() {
  static const SimulationResult r = reference_run();
  return r;
}

}  // namespace

TEST_CASE("a multi-stage specimen gives one curve per shear stage and quantity, each compared on its own stage", "[calibrate][multistage]") {
  const std::string path = write_ms_series("ms_curves", data_csv(reference(), false), false, reference());
  const TestSeries series = read_test_series(path);
  const CalibrationProblem p = problem_of(path, series);
  REQUIRE(p.tests.size() == 1);
  const CalibrationTest& t = p.tests.front();
  // Protocol: consolidation, CU, reconsolidation, CU, reconsolidation, CU.
  REQUIRE(t.protocol.stages.size() == 6);
  REQUIRE(t.curves.size() == 6);
  const int shear_stage[3] = {1, 3, 5};
  for (std::size_t c = 0; c < 6; ++c) {
    INFO("curve " << c);
    const int k = static_cast<int>(c % 3);
    CHECK(t.curves[c].y == (c < 3 ? Quantity::deviator_stress : Quantity::excess_pore_pressure));
    CHECK(t.curves[c].stage == shear_stage[k]);
    CHECK(t.curves[c].shear_stage == k + 1);  // numbered 1, 2, 3 for people
    CHECK(t.curves[c].strain_zero_stage == shear_stage[k]);
    CHECK(t.curves[c].xs.size() == 41);
    CHECK(t.curves[c].xs.front() == 0.0);
    CHECK(close(t.curves[c].xs.back(), kShearTo[k], kExact, kStrainFloor));
  }
  // The reconsolidations end on the state measured in the first row of the next stage, not on the
  // declared isotropic target.
  for (int k = 1; k < 3; ++k) {
    const Stage& c = t.protocol.stages[static_cast<std::size_t>(2 * k)];
    const StepRecord& start = reference().steps[static_cast<std::size_t>(reference().stages[static_cast<std::size_t>(2 * k + 1)].first - 1)];
    CHECK(c.type == StageType::anisotropic_consolidation);
    CHECK(close(c.target_axial, start.axial_stress, kRoundOff, kStressFloor));
    CHECK(close(c.target_radial, start.radial_stress, kRoundOff, kStressFloor));
    CHECK(close(c.target_axial, kKeptRatio * kTargets[k], kExact, kStressFloor));
    CHECK(close(t.protocol.stages[static_cast<std::size_t>(2 * k + 1)].axial_strain, kShearTo[k], kExact, kStrainFloor));
  }
}

TEST_CASE("continuous and per-stage strains of a multi-stage file give the same compared points and protocol", "[calibrate][multistage]") {
  const std::string a = write_ms_series("ms_stage", data_csv(reference(), false), false, reference());
  const std::string b = write_ms_series("ms_continuous", data_csv(reference(), true), true, reference());
  const TestSeries sa = read_test_series(a), sb = read_test_series(b);
  const CalibrationProblem pa = problem_of(a, sa), pb = problem_of(b, sb);
  // The continuous file's later stages start beyond the earlier stages' strains (and the
  // reconsolidation's): (eps - eps_k0) / (1 - eps_k0) must bring them to the per-stage values.
  const ReducedCurves& cb = sb.specimens.front().curves;
  REQUIRE(cb.size() == 123);
  CHECK(cb.axial_strain[41] == 0.0);
  CHECK(cb.axial_strain[82] == 0.0);
  const CalibrationTest& ta = pa.tests.front();
  const CalibrationTest& tb = pb.tests.front();
  REQUIRE(ta.curves.size() == tb.curves.size());
  for (std::size_t c = 0; c < ta.curves.size(); ++c) {
    REQUIRE(ta.curves[c].xs.size() == tb.curves[c].xs.size());
    CHECK(ta.curves[c].stage == tb.curves[c].stage);
    CHECK(ta.curves[c].strain_zero_stage == tb.curves[c].strain_zero_stage);
    for (std::size_t i = 0; i < ta.curves[c].xs.size(); ++i) {
      INFO("curve " << c << " point " << i);
      CHECK(close(ta.curves[c].xs[i], tb.curves[c].xs[i], 1e-12, 1e-14));
      CHECK(ta.curves[c].ys[i] == tb.curves[c].ys[i]);
    }
  }
  REQUIRE(ta.protocol.stages.size() == tb.protocol.stages.size());
  for (std::size_t k = 0; k < ta.protocol.stages.size(); ++k) {
    const Stage &x = ta.protocol.stages[k], &y = tb.protocol.stages[k];
    CHECK(x.type == y.type);
    CHECK(((std::isnan(x.axial_strain) && std::isnan(y.axial_strain)) || close(x.axial_strain, y.axial_strain, 1e-12, 1e-14)));
    CHECK(((std::isnan(x.target_axial) && std::isnan(y.target_axial)) || x.target_axial == y.target_axial));
  }
}

TEST_CASE("three-stage CU round trip with Modified Cam-Clay recovers lambda, kappa and M within 1 %", "[calibrate][multistage]") {
  const std::string path = write_ms_series("ms_fit", data_csv(reference(), false), false, reference());
  const TestSeries series = read_test_series(path);
  const CalibrationFile file = parse_calibration_file(calibration_text(), (std::filesystem::path(path).parent_path() / "fit.json").string());
  const CalibrationProblem problem = problem_of(path, series);
  const CalibrationSummary s = calibrate(file.options, problem);
  INFO(s.full());
  REQUIRE(s.usable());
  CHECK(worst_relative_rmse(s) < 0.005);
  CHECK(close(value_named(s, "lambda"), kLambda, 0.01, 0.0));
  CHECK(close(value_named(s, "kappa"), kKappa, 0.01, 0.0));
  CHECK(close(value_named(s, "critical_state_ratio"), kM, 0.01, 0.0));
  CHECK(s.evaluations < 1500);

  // Every stage reaches the outputs with its number: the curves CSV, the report data and the page.
  const std::string csv = format_fit_csv(s);
  CHECK(csv.rfind("test,stage,quantity,stage_axial_strain[-],measured,simulated,unit\n", 0) == 0);
  for (const char* stage : {",1,deviator_stress,", ",2,deviator_stress,", ",3,deviator_stress,", ",3,excess_pore_pressure,"})
    CHECK(csv.find(stage) != std::string::npos);
  {
    // Every row's stage is 1, 2 or 3 (the id "MS" has no comma): never 0.
    std::size_t rows = 0, at = csv.find('\n') + 1;
    while (at < csv.size()) {
      const std::size_t end = csv.find('\n', at);
      const std::string row = csv.substr(at, end - at);
      const std::string stage = row.substr(row.find(',') + 1, row.find(',', row.find(',') + 1) - row.find(',') - 1);
      CHECK((stage == "1" || stage == "2" || stage == "3"));
      ++rows;
      at = end + 1;
    }
    CHECK(rows == 6 * 41);
  }
  const report::ReportData d = report::report_from_calibration(s, problem, CalibrationProvenance{}, &series);
  REQUIRE(d.tests.size() == 1);
  const report::TestReport& t = d.tests.front();
  REQUIRE(t.curves.size() == 6);
  for (std::size_t c = 0; c < 6; ++c) {
    INFO("curve " << c);
    const int k = static_cast<int>(c % 3);
    CHECK(t.curves[c].stage == k + 1);
    CHECK(t.curves[c].quantity == (c < 3 ? "deviator_stress" : "excess_pore_pressure"));
    REQUIRE(t.curves[c].simulated.x.size() > 2);
    // Each stage's model curve starts at its own stage strain 0 and ends where its data end.
    CHECK(close(t.curves[c].simulated.x.front(), 0.0, kExact, kStrainFloor));
    CHECK(close(t.curves[c].simulated.x.back(), kShearTo[k], 1e-9, kStrainFloor));
    CHECK(close(t.curves[c].simulated.y.back(), t.curves[c].measured.y.back(), 0.01, kStressFloor));
  }
  CHECK(t.quality.at(1).name == "deviator_stress vs axial_strain, stage 2");
  const std::string html = report::render_report(d);
  for (const char* name : {"stage 1 measured", "stage 2 model", "stage 3 model"})
    CHECK(html.find("data-name=\"" + std::string(name) + "\"") != std::string::npos);
}

TEST_CASE("the calibration file sets the simulation tolerance and fixed steps, with exact messages for bad values", "[calibrate][multistage]") {
  const std::string src = "dir/fit.json";
  const CalibrationFile d = parse_calibration_file(calibration_text(), src);
  CHECK(d.simulation_tolerance == DriverOptions{}.tolerance);
  CHECK_FALSE(d.fixed_steps);
  CHECK(d.steps_per_shear_stage == 200);
  const CalibrationFile f = parse_calibration_file(calibration_text(R"( "simulation_tolerance": 1e-6, "fixed_steps": true,)"), src);
  CHECK(f.simulation_tolerance == 1e-6);
  CHECK(f.fixed_steps);
  const std::string path = write_ms_series("ms_keys", data_csv(reference(), false), false, reference());
  const TestSeries series = read_test_series(path);
  const ModelEntry& entry = find_model("modified_cam_clay");
  auto create = entry.create;
  const CalibrationProblem p =
      build_calibration_problem(f, series, entry.info(), [create](const ParameterValues& v) { return create(v, "calibration"); });
  CHECK(p.driver.tolerance == 1e-6);
  CHECK(p.driver.fixed_steps);
  REQUIRE_THROWS_WITH(parse_calibration_file(calibration_text(R"( "simulation_tolerance": 0.5,)"), src),
                      "dir/fit.json: simulation_tolerance: must be in [1e-10, 0.1] (the local relative error of the simulation), found 0.5");
  REQUIRE_THROWS_WITH(parse_calibration_file(calibration_text(R"( "simulation_tolerance": 0,)"), src),
                      "dir/fit.json: simulation_tolerance: must be in [1e-10, 0.1] (the local relative error of the simulation), found 0");
  REQUIRE_THROWS_WITH(parse_calibration_file(calibration_text(R"( "fixed_steps": "yes",)"), src),
                      "dir/fit.json: fixed_steps: expected true or false, found \"yes\"");
}

TEST_CASE("a shear stage with unload-reload loops followed by another stage is refused by the calibration file with an exact message",
          "[calibrate][multistage]") {
  const auto dir = scratch_dir("ms_loop");
  json specimen{{"id", "MS"},
                {"height", 76.0},
                {"diameter", 38.0},
                {"void_ratio", kVoidRatio},
                {"stages", json::array({json{{"type", "saturation"}, {"b_value", 0.98}, {"cell_pressure", 320}, {"back_pressure", kBack}},
                                        stage_json("consolidation", 100, 0),
                                        json{{"type", "shear"}, {"test", "CU"}, {"data_stage", 1},
                                             {"unload_reload", json::array({json::array({0.012, 0.025})})}},
                                        stage_json("consolidation", 200, 0), stage_json("shear", 0, 2)})},
                {"data",
                 {{"file", "data.csv"},
                  {"kind", "reduced"},
                  {"columns",
                   {{"stage", {{"header", "stage"}, {"unit", "-"}}},
                    {"axial_strain", {{"header", "ea"}, {"unit", "decimal"}}},
                    {"deviator_stress", {{"header", "q"}, {"unit", "kPa"}}},
                    {"pore_pressure", {{"header", "u"}, {"unit", "kPa"}}},
                    {"cell_pressure", {{"header", "cell"}, {"unit", "kPa"}}}}}}}};
  const std::string csv = "stage,ea,q,u,cell\n1,0,0,300,400\n1,0.01,40,310,400\n1,0.02,60,318,400\n1,0.015,30,315,400\n"
                          "1,0.02,60,318,400\n1,0.03,70,322,400\n2,0,0,300,500\n2,0.01,60,315,500\n2,0.02,90,325,500\n"
                          "2,0.03,105,330,500\n2,0.04,110,333,500\n";
  const std::string path = write_series(dir, series_of(json::array({specimen})), csv);
  const TestSeries series = read_test_series(path);
  const std::string source = (dir / "fit.json").string();
  const CalibrationFile file = parse_calibration_file(calibration_text(), source);
  const ModelEntry& entry = find_model("modified_cam_clay");
  auto create = entry.create;
  REQUIRE_THROWS_WITH(
      build_calibration_problem(file, series, entry.info(), [create](const ParameterValues& v) { return create(v, "calibration"); }),
      source + ": tests[0]: specimen 'MS', stages[2]: a shear stage with unload-reload loops that is followed by another stage cannot be "
               "compared yet (its curves would span several protocol stages; only the last stage of a specimen may have loops in a fit)");
}
