// Bounds of free parameters that a calibration file leaves out come from the classical
// interpretation of the same series (seed_from_interpretation, docs/calibration-format.md).
// The rules (v/4 to 4 v, v +- 8 deg, ...) are ours: common practice for a first search box, no
// source. Expected bounds are computed here from the interpretation's own numbers, never typed in.
// Series: the invented demo series (examples/calibrate) and the invented Kestrel Bay series.

#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>
#include <fstream>

#include <nlohmann/json.hpp>

#include "calibration_file_checks.hpp"
#include "cli_run.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

const std::string kDemoSeries = source_path("examples/calibrate/demo_series.json");
const std::string kKestrelSeries = source_path("examples/kestrel_bay/kestrel_bay_series.json");

/// A scratch folder of this test program under the system's temporary directory.
fs::path scratch() {
  static const fs::path dir = [] {
    const fs::path d = fs::temp_directory_path() / ("triaxcal_bounds_" + std::to_string(getpid()));
    fs::create_directories(d);
    return d;
  }();
  return dir;
}

std::string write(const std::string& name, const json& content) {
  const fs::path path = scratch() / name;
  std::ofstream(path) << content.dump(2);
  return path.string();
}

/// The bundled example examples/calibrate/mohr_coulomb_cd.json (its tests, constraint and
/// options: the least-squares multi-start) with the given parameters block and its series as
/// an absolute path (the file is written elsewhere).
json example_with(const json& parameters) {
  json c = json::parse(slurp(source_path("examples/calibrate/mohr_coulomb_cd.json")));
  c["series"] = kDemoSeries;
  c["parameters"] = parameters;
  return c;
}

/// The example's parameters with friction_angle, cohesion, youngs_modulus and dilation_angle free
/// and without bounds or start.
json free_without_bounds() {
  return {{"youngs_modulus", {{"status", "free"}, {"scale", "log"}}},
          {"poissons_ratio", {{"status", "free"}, {"lower", 0.05}, {"upper", 0.45}, {"start", 0.25}}},
          {"cohesion", {{"status", "free"}}},
          {"friction_angle", {{"status", "free"}}},
          {"dilation_angle", {{"status", "free"}}},
          {"tensile_strength", 0}};
}

double mean_of(const std::vector<double>& v) {
  double sum = 0.0;
  for (double x : v) sum += x;
  return sum / static_cast<double>(v.size());
}

/// The interpretation's values for the Mohr-Coulomb parameters of a series of CD tests.
struct Values {
  double phi = kNotGiven, cohesion = kNotGiven, dilation = kNotGiven, youngs = kNotGiven;
};

Values values_of(const Interpretation& in) {
  Values v;
  REQUIRE(!in.envelopes.empty());
  v.phi = in.envelopes.front().phi;
  v.cohesion = std::max(0.0, in.envelopes.front().cohesion);
  std::vector<double> psi, e;
  for (const StageInterpretation& s : in.stages)
    if (s.test == ShearType::cd) {
      psi.push_back(s.dilation_angle);
      e.push_back(s.initial_stiffness);
    }
  REQUIRE(!psi.empty());
  v.dilation = mean_of(psi);
  v.youngs = mean_of(e);
  return v;
}

const ModelInfo& model(const std::string& name) { return find_model(name).info(); }

std::string message_of(CalibrationFile& f, const TestSeries& series, const ModelInfo& info) {
  try {
    seed_from_interpretation(f, series, info);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("fit with friction angle, cohesion, E' and dilation free without bounds takes its bounds from the "
          "interpretation by the rules, and the fitted values lie inside them",
          "[cli][fit][interpretation][bounds]") {
  const Values v = values_of(interpret(read_test_series(kDemoSeries), InterpretOptions{}));
  // The rules of docs/calibration-format.md, applied to the interpretation's own numbers.
  const std::map<std::string, std::pair<double, double>> expected{
      {"friction_angle", {v.phi - 8.0, v.phi + 8.0}},
      {"cohesion", {0.0, std::max(3.0 * v.cohesion, 20.0)}},
      {"dilation_angle", {0.0, std::max(v.dilation + 8.0, 5.0)}},
      {"youngs_modulus", {v.youngs / 4.0, 4.0 * v.youngs}}};
  // The boxes must lie inside Mohr-Coulomb's ranges, or a cut would change them.
  for (const auto& [name, box] : expected) {
    const ParameterInfo& pi = model("mohr_coulomb").parameters[static_cast<std::size_t>(parameter_index(model("mohr_coulomb"), name))];
    REQUIRE(box.first >= pi.lower);
    REQUIRE(box.second < pi.upper);
  }

  const fs::path out = scratch() / "fit_bounds_out";
  fs::remove_all(out);
  const std::string file = write("fit_bounds.json", example_with(free_without_bounds()));
  const CliResult r = run_cli("fit " + file + " --out " + out.string() + " --verbose", "fit_bounds");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("calibration of mohr_coulomb: converged") != std::string::npos);
  CHECK(r.out.find("friction_angle: bounds [" + format_number(v.phi - 8.0) + ", " + format_number(v.phi + 8.0) +
                   "] deg from the interpretation (s'-t envelope, v = " + format_number(v.phi) + ", v +- 8 deg)\n") !=
        std::string::npos);
  CHECK(r.out.find("youngs_modulus: bounds [" + format_number(v.youngs / 4.0) + ", " + format_number(4.0 * v.youngs) +
                   "] kPa from the interpretation (mean initial stiffness of the CD stages, v = " + format_number(v.youngs) +
                   ", v/4 to 4 v)\n") != std::string::npos);
  CHECK(r.out.find("cohesion: bounds [0, ") != std::string::npos);
  CHECK(r.out.find("dilation_angle: bounds [0, ") != std::string::npos);
  CHECK(r.out.find("poissons_ratio: bounds") == std::string::npos);  // given in the file

  const json params = json::parse(slurp((out / "fit_bounds.parameters.json").string()));
  for (const auto& [name, box] : expected) {
    INFO(name);
    const json& p = params["parameters"][name];
    CHECK(p["lower_bound"].get<double>() == Approx(box.first).margin(1e-12).epsilon(1e-12));
    CHECK(p["upper_bound"].get<double>() == Approx(box.second).epsilon(1e-12));
    const double value = p["value"].get<double>();
    CHECK(value >= p["lower_bound"].get<double>());
    CHECK(value <= p["upper_bound"].get<double>());
  }
  CHECK(params["parameters"]["poissons_ratio"]["lower_bound"].get<double>() == 0.05);
  CHECK(params["parameters"]["poissons_ratio"]["upper_bound"].get<double>() == 0.45);
  // The invented demo data were made with E' = 25000 kPa, phi' = 34 deg, psi = 5 deg plus noise
  // (tests/calibrate/fit_command_test.cpp): the derived box lets the fit find them.
  CHECK(params["parameters"]["youngs_modulus"]["value"].get<double>() == Approx(25000).epsilon(0.02));
  CHECK(params["parameters"]["friction_angle"]["value"].get<double>() == Approx(34).epsilon(0.02));
  CHECK(params["parameters"]["dilation_angle"]["value"].get<double>() == Approx(5).epsilon(0.05));
}

TEST_CASE("a free parameter without bounds that the interpretation gives no value for exits 2 with an exact message",
          "[cli][fit][interpretation][bounds][errors]") {
  json p = free_without_bounds();
  p["poissons_ratio"] = {{"status", "free"}, {"start", 0.25}};
  const std::string file = write("fit_bounds_missing.json", example_with(p));
  const CliResult r = run_cli("fit " + file + " --out " + (scratch() / "fit_bounds_missing_out").string(),
                              "fit_bounds_missing");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + file +
                     ": parameters.poissons_ratio: lower and upper are needed: the interpretation of the series gives "
                     "no value for poissons_ratio\n");
  CHECK(!fs::exists(scratch() / "fit_bounds_missing_out" / "fit_bounds_missing.parameters.json"));
}

TEST_CASE("one missing bound without an interpretation value, or a rule without data, names what is missing",
          "[interpretation][bounds][errors]") {
  const TestSeries series = read_test_series(kDemoSeries);
  {
    json p = free_without_bounds();
    p["poissons_ratio"] = {{"status", "free"}, {"lower", 0.1}};
    CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
    CHECK(message_of(f, series, model("mohr_coulomb")) ==
          "cal.json: parameters.poissons_ratio: upper is needed: the interpretation of the series gives no value for "
          "poissons_ratio");
  }
  {
    // The demo series has no oedometer stage and no unload-reload loop.
    json c = example_with({{"oedometer_stiffness_ref", {{"status", "free"}}}});
    c["model"] = "hyperbolic_hardening";
    CalibrationFile f = parse_calibration_file(c.dump(), "cal.json");
    CHECK(message_of(f, series, model("hyperbolic_hardening")) ==
          "cal.json: parameters.oedometer_stiffness_ref: lower and upper are needed: the interpretation of the series "
          "gives no value for oedometer_stiffness_ref (it would come from the mean constrained modulus of the oedometer "
          "stages at s_a' = 100 kPa)");
  }
}

TEST_CASE("a bound the file gives is kept and only the other one is derived", "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const Values v = values_of(interpret(series, InterpretOptions{}));
  REQUIRE(v.phi > 30.0);
  REQUIRE(v.phi < 38.0);
  json p = free_without_bounds();
  p["friction_angle"] = {{"status", "free"}, {"lower", 30}};
  p["cohesion"] = {{"status", "free"}, {"upper", 12.5}};
  CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
  const std::vector<std::string> notes = seed_from_interpretation(f, series, model("mohr_coulomb"));
  const ParameterSpec& phi = spec_of(f, "friction_angle");
  CHECK(phi.lower == 30.0);
  CHECK(phi.upper == Approx(v.phi + 8.0).epsilon(1e-12));
  CHECK(has_line(notes, "friction_angle: upper bound " + format_number(v.phi + 8.0) +
                            " deg from the interpretation (s'-t envelope, v = " + format_number(v.phi) +
                            ", v +- 8 deg), lower 30 as given"));
  const ParameterSpec& c = spec_of(f, "cohesion");
  CHECK(c.lower == 0.0);
  CHECK(c.upper == 12.5);
  CHECK(c.start == Approx(std::clamp(v.cohesion, 0.0, 12.5)));
  // The filled-in file makes a problem the engine accepts, with the given bounds unchanged.
  const ModelEntry& mc = find_model("mohr_coulomb");
  const CalibrationProblem problem = build_calibration_problem(
      f, series, mc.info(), [&mc](const ParameterValues& values) { return mc.create(values, "cal.json"); });
  for (const ParameterSpec& s : problem.parameters)
    if (s.name == "friction_angle") CHECK(s.lower == 30.0);
}

TEST_CASE("a start given in the file widens a derived bound to include it", "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const Values v = values_of(interpret(series, InterpretOptions{}));
  const double start = 45.0;
  REQUIRE(v.phi + 8.0 < start);
  json p = free_without_bounds();
  p["friction_angle"] = {{"status", "free"}, {"start", start}};
  CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
  const std::vector<std::string> notes = seed_from_interpretation(f, series, model("mohr_coulomb"));
  const ParameterSpec& phi = spec_of(f, "friction_angle");
  CHECK(phi.lower == Approx(v.phi - 8.0).epsilon(1e-12));
  CHECK(phi.upper == start);
  CHECK(phi.start == start);
  CHECK(has_line(notes, "friction_angle: bounds [" + format_number(v.phi - 8.0) + ", 45] deg from the interpretation "
                        "(s'-t envelope, v = " + format_number(v.phi) + ", v +- 8 deg; widened to include the start 45)"));
}

TEST_CASE("a given bound on the wrong side of the derived one asks for the other bound", "[interpretation][bounds][errors]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const Values v = values_of(interpret(series, InterpretOptions{}));
  REQUIRE(v.phi + 8.0 < 45.0);
  json p = free_without_bounds();
  p["friction_angle"] = {{"status", "free"}, {"lower", 45}};
  CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
  CHECK(message_of(f, series, model("mohr_coulomb")) ==
        "cal.json: parameters.friction_angle: the upper bound " + format_number(v.phi + 8.0) +
            " from the interpretation (s'-t envelope, v = " + format_number(v.phi) +
            ", v +- 8 deg) is not above the given lower = 45; give upper too");
}

TEST_CASE("derived bounds are cut to the model's range, an open end moved inward by 1e-4 max(1, |end|)",
          "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const Values v = values_of(interpret(series, InterpretOptions{}));
  // A made-up model whose friction angle must stay below 40 deg (open), just above v: the
  // interpretation's v + 8 is cut to 40 - 0.004.
  REQUIRE(v.phi < 40.0 - 0.004);
  REQUIRE(v.phi + 8.0 > 40.0);
  ModelInfo narrow = model("mohr_coulomb");
  narrow.parameters[static_cast<std::size_t>(parameter_index(narrow, "friction_angle"))].upper = 40.0;
  json p = free_without_bounds();
  CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
  const std::vector<std::string> notes = seed_from_interpretation(f, series, narrow);
  const ParameterSpec& phi = spec_of(f, "friction_angle");
  CHECK(phi.lower == Approx(v.phi - 8.0).epsilon(1e-12));
  CHECK(phi.upper == Approx(40.0 - 1e-4 * 40.0).epsilon(1e-12));
  CHECK(phi.upper < 40.0);
  CHECK(has_line(notes, "friction_angle: bounds [" + format_number(v.phi - 8.0) + ", " + format_number(40.0 - 0.004) +
                            "] deg from the interpretation (s'-t envelope, v = " + format_number(v.phi) +
                            ", v +- 8 deg; cut to the model's range (0, 40))"));
}

TEST_CASE("oedometer_stiffness_ref takes bounds v/4 to 4 v from the constrained modulus of the oedometer stages "
          "at the model's reference pressure",
          "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kKestrelSeries);
  std::string oedometer, material;
  for (const Specimen& s : series.specimens)
    if (!s.oedometer_stages().empty()) {
      oedometer = s.id;
      material = s.material;
    }
  REQUIRE(!oedometer.empty());
  for (const double pref : {100.0, 200.0}) {
    INFO("reference_pressure " << pref);
    InterpretOptions io;
    io.material = material;
    io.reference_pressure = pref;
    std::vector<double> moduli;
    for (const auto& c : interpret(series, io).compressibility)
      if (std::isfinite(c.constrained_modulus)) moduli.push_back(c.constrained_modulus);
    REQUIRE(!moduli.empty());
    const double eoed = mean_of(moduli);
    json c = example_with({{"oedometer_stiffness_ref", {{"status", "free"}}}, {"reference_pressure", pref}});
    c["series"] = kKestrelSeries;
    c["model"] = "hyperbolic_hardening";
    c["tests"] = json::array({{{"specimen", oedometer}, {"curves", {"void_ratio"}}}});
    CalibrationFile f = parse_calibration_file(c.dump(), "cal.json");
    const std::vector<std::string> notes = seed_from_interpretation(f, series, model("hyperbolic_hardening"));
    const ParameterSpec& s = spec_of(f, "oedometer_stiffness_ref");
    CHECK(s.lower == Approx(eoed / 4.0).epsilon(1e-12));
    CHECK(s.upper == Approx(4.0 * eoed).epsilon(1e-12));
    CHECK(s.start == Approx(eoed).epsilon(1e-12));
    CHECK(has_line(notes, "oedometer_stiffness_ref: bounds [" + format_number(eoed / 4.0) + ", " +
                              format_number(4.0 * eoed) +
                              "] kPa from the interpretation (mean constrained modulus of the oedometer stages at s_a' = " +
                              format_number(pref) + " kPa, v = " + format_number(eoed) + ", v/4 to 4 v)"));
  }
}

TEST_CASE("Modified Cam-Clay's critical_state_friction_angle takes its start and bounds v +- 8 deg from the critical states",
          "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kKestrelSeries);
  std::string specimen, material;
  for (const Specimen& s : series.specimens)
    if (s.material.find("clay") != std::string::npos || s.material.find("Clay") != std::string::npos) {
      if (s.oedometer_stages().empty() && specimen.empty()) {
        specimen = s.id;
        material = s.material;
      }
    }
  REQUIRE(!specimen.empty());
  InterpretOptions io;
  io.material = material;
  const Interpretation in = interpret(series, io);
  const double v = std::isfinite(in.phi_cs) ? in.phi_cs : in.phi_cv_rowe;
  REQUIRE(std::isfinite(v));
  json c = example_with({{"critical_state_ratio", 0}, {"critical_state_friction_angle", {{"status", "free"}}}});
  c["series"] = kKestrelSeries;
  c["model"] = "modified_cam_clay";
  c["tests"] = json::array({{{"specimen", specimen}, {"curves", {"deviator_stress"}}}});
  CalibrationFile f = parse_calibration_file(c.dump(), "cal.json");
  const std::vector<std::string> notes = seed_from_interpretation(f, series, model("modified_cam_clay"));
  const ParameterSpec& s = spec_of(f, "critical_state_friction_angle");
  INFO("phi_cs from the interpretation: " << v);
  CHECK(s.start == Approx(v).epsilon(1e-12));
  CHECK(s.lower == Approx(v - 8.0).epsilon(1e-12));
  CHECK(s.upper == Approx(v + 8.0).epsilon(1e-12));
}

TEST_CASE("seeds and bounds follow the parameter's declared role, never its name", "[interpretation][bounds][roles]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const Values v = values_of(interpret(series, InterpretOptions{}));
  // A made-up model: Mohr-Coulomb's metadata with the friction angle under a name no rule knows.
  ModelInfo renamed = model("mohr_coulomb");
  ParameterInfo& phi_info = renamed.parameters[static_cast<std::size_t>(parameter_index(renamed, "friction_angle"))];
  phi_info.name = "shearing_resistance_angle";
  json p = free_without_bounds();
  p.erase("friction_angle");
  p["shearing_resistance_angle"] = {{"status", "free"}};
  CalibrationFile f = parse_calibration_file(example_with(p).dump(), "cal.json");
  const std::vector<std::string> notes = seed_from_interpretation(f, series, renamed);
  const ParameterSpec& phi = spec_of(f, "shearing_resistance_angle");
  CHECK(phi.lower == Approx(v.phi - 8.0).epsilon(1e-12));
  CHECK(phi.upper == Approx(v.phi + 8.0).epsilon(1e-12));
  CHECK(phi.start == Approx(v.phi).epsilon(1e-12));
  CHECK(has_line(notes, "shearing_resistance_angle: start " + format_number(v.phi) +
                            " from the interpretation (s'-t envelope)"));

  // The same parameter under its usual name but without a role gets nothing from the interpretation.
  ModelInfo no_role = model("mohr_coulomb");
  no_role.parameters[static_cast<std::size_t>(parameter_index(no_role, "friction_angle"))].role = ParameterRole::none;
  CalibrationFile g = parse_calibration_file(example_with(free_without_bounds()).dump(), "cal.json");
  CHECK(message_of(g, series, no_role) ==
        "cal.json: parameters.friction_angle: lower and upper are needed: the interpretation of the series gives no "
        "value for friction_angle");
}

TEST_CASE("every registered model declares each role at most once", "[roles]") {
  for (const ModelEntry& e : model_registry()) {
    const ModelInfo& info = e.info();
    for (std::size_t i = 0; i < info.parameters.size(); ++i) {
      const ParameterRole role = info.parameters[i].role;
      if (role == ParameterRole::none) continue;
      INFO(info.name << ": " << info.parameters[i].name << " declares " << to_string(role));
      CHECK(parameter_with_role(info, role) == static_cast<int>(i));
    }
  }
  CHECK(parameter_with_role(model("mohr_coulomb"), ParameterRole::none) == -1);
  CHECK(parameter_with_role(model("mohr_coulomb"), ParameterRole::compression_index) == -1);
  CHECK(std::string(to_string(ParameterRole::earth_pressure_at_rest)) == "earth_pressure_at_rest");
}

TEST_CASE("a calibration file fixes a word parameter at its word and names the new name of a former one",
          "[calibration][names][errors]") {
  const TestSeries series = read_test_series(kDemoSeries);
  const ModelEntry& entry = find_model("hyperbolic_hardening");
  json p = {{"friction_angle", {{"status", "free"}, {"lower", 30}, {"upper", 40}}}, {"dilatancy_rule", "no_dilatancy"}};
  auto build = [&](const json& parameters) {
    json c = example_with(parameters);
    c["model"] = "hyperbolic_hardening";
    c.erase("constraints");
    const CalibrationFile f = parse_calibration_file(c.dump(), "cal.json");
    return build_calibration_problem(f, series, entry.info(), [&](const ParameterValues& v) { return entry.create(v, "cal.json"); });
  };
  auto message = [&](const json& parameters) {
    try {
      build(parameters);
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const CalibrationProblem problem = build(p);
  for (const ParameterSpec& s : problem.parameters)
    if (s.name == "dilatancy_rule") CHECK(s.value == 2.0);  // the index of "no_dilatancy"
  json q = p;
  q["dilatancy_rule"] = {{"status", "fixed"}, {"value", "rowe"}};
  for (const ParameterSpec& s : build(q).parameters)
    if (s.name == "dilatancy_rule") CHECK(s.value == 0.0);
  q["dilatancy_rule"] = 1;
  CHECK(message(q) == "cal.json: parameters.dilatancy_rule: expected one of \"rowe\", \"rowe_no_contraction\" or "
                      "\"no_dilatancy\", found 1");
  q["dilatancy_rule"] = {{"status", "free"}, {"lower", 0}, {"upper", 2}};
  CHECK(message(q) == "cal.json: parameters.dilatancy_rule: a word parameter is fixed at one of \"rowe\", "
                      "\"rowe_no_contraction\" or \"no_dilatancy\", not free");
  q = p;
  q["k0_nc"] = 0.45;
  CHECK(message(q) == "cal.json: hyperbolic_hardening: parameter 'k0_nc' is now called 'k0_normally_consolidated'");
  q = p;
  q["cohesion"] = "none";
  CHECK(message(q) == "cal.json: parameters.cohesion: expected a number (kPa), found \"none\"");
}

TEST_CASE("the calibration file's interpretation key chooses the criterion, stress range and design stress the seeds "
          "and the report use",
          "[interpretation][bounds]") {
  const TestSeries series = read_test_series(kDemoSeries);
  json c = example_with(free_without_bounds());
  c["interpretation"] = {{"criterion", "max_stress_ratio"}, {"stress_range", {0, 500}}, {"design_stress", 150}};
  CalibrationFile f = parse_calibration_file(c.dump(), "cal.json");
  CHECK(f.interpretation.criterion == FailureCriterion::max_stress_ratio);
  CHECK(f.interpretation.stress_low == 0.0);
  CHECK(f.interpretation.stress_high == 500.0);
  CHECK(f.interpretation.design_stress == 150.0);
  const InterpretOptions io = interpretation_options(f, series, model("mohr_coulomb"));
  CHECK(io.criterion == FailureCriterion::max_stress_ratio);
  CHECK(io.design_stress == 150.0);
  // The seeded start of phi' is the envelope of the chosen criterion, not of the default one.
  const Interpretation by_ratio = interpret(series, io);
  REQUIRE_FALSE(by_ratio.envelopes.empty());
  CHECK(by_ratio.envelopes.front().criterion == FailureCriterion::max_stress_ratio);
  seed_from_interpretation(f, series, model("mohr_coulomb"));
  CHECK(spec_of(f, "friction_angle").start == by_ratio.envelopes.front().phi);
  // Without the key: the defaults (maximum deviator stress, every s', no design stress).
  const CalibrationFile d = parse_calibration_file(example_with(free_without_bounds()).dump(), "cal.json");
  CHECK(d.interpretation.criterion == FailureCriterion::max_deviator);
  CHECK(std::isnan(d.interpretation.design_stress));
}

TEST_CASE("bad interpretation keys in a calibration file give exact messages", "[interpretation][bounds][errors]") {
  auto message = [](const json& interpretation) {
    json c = example_with(free_without_bounds());
    c["interpretation"] = interpretation;
    try {
      parse_calibration_file(c.dump(), "cal.json");
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("(no error)");
  };
  CHECK(message({{"criterion", "peak"}}) ==
        "cal.json: interpretation.criterion: expected one of \"max_deviator\", \"max_stress_ratio\", \"limiting_strain\", "
        "\"end_of_test\", found \"peak\"");
  CHECK(message({{"colour", 1}}) ==
        "cal.json: interpretation.colour: unknown key 'colour' (expected one of: criterion, limiting_strain, stress_range, "
        "design_stress)");
  CHECK(message({{"limiting_strain", 0.1}}) ==
        "cal.json: interpretation.limiting_strain: only with \"criterion\": \"limiting_strain\", found criterion "
        "\"max_deviator\"");
  CHECK(message({{"criterion", "limiting_strain"}, {"limiting_strain", 15}}) ==
        "cal.json: interpretation.limiting_strain: must be a decimal axial strain in (0, 1), found 15");
  CHECK(message({{"stress_range", {300, 100}}}) ==
        "cal.json: interpretation.stress_range: expected [low, high] in kPa of s' at failure with 0 <= low < high, found "
        "[300,100]");
  CHECK(message({{"design_stress", -5}}) == "cal.json: interpretation.design_stress: expected a positive stress in kPa, found -5");
  CHECK(message(json::array()) == "cal.json: interpretation: expected an object, found array");
}
