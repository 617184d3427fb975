// `triaxcal fit` end to end on an oedometer specimen: data made with simulate() from invented
// Modified Cam-Clay parameters (one reading per load step) at a tolerance 1000x tighter than the
// fit's (synthetic.hpp reference_options), written as a laboratory would, axial strain as an
// engineering strain dL / L0 from the start of loading, into a test-series file and fitted on the
// axial_stress curve; lambda and kappa come back. (A void_ratio curve against axial strain carries no
// information in an oedometer: e = e0 - (1 + e0) e_a both measured and simulated.)

#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include <nlohmann/json.hpp>

#include "cli_run.hpp"
#include "synthetic.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
namespace fs = std::filesystem;
using nlohmann::json;

namespace {

// Invented "true" parameters of a fictional soft clay (not from any real soil).
constexpr double kLambda = 0.14, kKappa = 0.025, kE0 = 1.1;
const std::vector<double> kSteps{25, 50, 100, 200, 400, 100, 25, 100, 400};

/// Writes oed.csv and series.json into dir from a simulation of the load steps; returns the series path.
std::string write_oedometer_series(const fs::path& dir) {
  fs::remove_all(dir);
  fs::create_directories(dir);
  const ModelEntry& entry = find_model("modified_cam_clay");
  const auto model = entry.create(
      resolve_parameters(entry.info(), {{"lambda", kLambda}, {"kappa", kKappa}, {"critical_state_ratio", 1.2}, {"poissons_ratio", 0.25}},
                         "test"),
      "test");
  TestProtocol p;
  p.initial.stress = triaxial_stress(10.0, 10.0);
  p.initial.void_ratio = kE0;
  for (double v : kSteps) {
    Stage st;
    st.type = StageType::oedometer;
    st.target_axial = v;
    st.steps = 40;
    p.stages.push_back(st);
  }
  const SimulationResult sim = simulate(reference_options(), *model, p);
  REQUIRE(sim.ok());
  std::ofstream csv(dir / "oed.csv");
  csv.precision(10);
  csv << "ea,sv,e\n0,10," << kE0 << "\n";
  for (const auto& stage : sim.stages) {
    const StepRecord& end = sim.steps[static_cast<std::size_t>(stage.last)];
    // Records carry natural strains since the protocol start; the lab writes dL / L0.
    csv << engineering_strain(end.axial_strain) << "," << end.axial_stress << "," << end.void_ratio << "\n";
  }
  const json series{{"format", "triaxcal-test-series"},
                    {"version", 1},
                    {"name", "invented oedometer"},
                    {"specimens",
                     json::array({json{{"id", "OED"},
                                       {"height", 20},
                                       {"diameter", 75},
                                       {"void_ratio", kE0},
                                       {"stages", json::array({json{{"type", "oedometer"}, {"stress_steps", kSteps}}})},
                                       {"data",
                                        json{{"file", "oed.csv"},
                                             {"kind", "reduced"},
                                             {"columns",
                                              json{{"axial_strain", {{"header", "ea"}, {"unit", "decimal"}}},
                                                   {"axial_stress", {{"header", "sv"}, {"unit", "kPa"}}},
                                                   {"void_ratio", {{"header", "e"}, {"unit", "-"}}}}}}}}})}};
  std::ofstream(dir / "series.json") << series.dump(2);
  return (dir / "series.json").string();
}

json fit(const std::string& tag, const std::string& curve) {
  const fs::path dir = fs::temp_directory_path() / ("triaxcal_oed_fit_" + tag);
  const std::string series = write_oedometer_series(dir);
  const json cal{{"format", "triaxcal-calibration"},
                 {"version", 1},
                 {"description", "invented oedometer fit"},
                 {"series", series},
                 {"model", "modified_cam_clay"},
                 {"steps_per_shear_stage", 360},
                 {"tests", json::array({json{{"specimen", "OED"}, {"curves", {curve}}}})},
                 {"parameters",
                  {{"lambda", {{"status", "free"}, {"lower", 0.03}, {"upper", 0.5}, {"scale", "log"}}},
                   {"kappa", {{"status", "free"}, {"lower", 0.003}, {"upper", 0.1}, {"scale", "log"}}},
                   {"critical_state_ratio", 1.2},
                   {"poissons_ratio", 0.25}}},
                 {"options", {{"global", "none"}, {"local", "bobyqa"}, {"starts", 3}, {"design_points", 8}, {"seed", 1}}}};
  std::ofstream(dir / "oed_cal.json") << cal.dump(2);
  const CliResult r = run_cli("fit " + (dir / "oed_cal.json").string() + " --out " + (dir / "out").string(), "oed_fit_" + tag);
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  return json::parse(slurp((dir / "out" / "oed_cal.parameters.json").string()));
}

double value(const json& params, const std::string& name) {
  const json& v = params.at("parameters").at(name);
  return v.is_number() ? v.get<double>() : v.at("value").get<double>();
}

}  // namespace

TEST_CASE("fit on an oedometer specimen's axial_stress curve recovers the lambda and kappa it was simulated with, within 0.5 %",
          "[calibrate][oedometer][cli]") {
  const json p = fit("stress", "axial_stress");
  CHECK(value(p, "lambda") == Approx(kLambda).epsilon(0.005));
  CHECK(value(p, "kappa") == Approx(kKappa).epsilon(0.005));
}
