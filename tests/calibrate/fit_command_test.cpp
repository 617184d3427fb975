// `triaxcal fit` end to end on the invented demo series (examples/calibrate): results load back into
// `triaxcal simulate`, bad calibration files exit 2 with exact messages, Ctrl-C keeps the best point
// and leaves no half-written file, and each outcome (converged, stopped, poor_fit, failed) is reached
// by a real calibration and shown alike on the command line, in the JSON and in the report.

#include <catch2/catch.hpp>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>

#include <nlohmann/json.hpp>

#include "cli_run.hpp"

using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

const std::string kSeries = source_path("examples/calibrate/demo_series.json");

std::string calibration(const std::string& parameters, const std::string& tests, const std::string& options,
                        int steps = 60) {
  return R"({"format": "triaxcal-calibration", "version": 1, "description": "invented test case",
  "series": ")" + kSeries + R"(", "model": "mohr_coulomb", "steps_per_shear_stage": )" + std::to_string(steps) +
         R"(, "tests": )" + tests + R"(, "parameters": )" + parameters + R"(, "options": )" + options + "}";
}

const std::string kTests =
    R"([{"specimen": "CD-50", "curves": ["deviator_stress", "volumetric_strain"]},
        {"specimen": "CD-100", "curves": ["deviator_stress", "volumetric_strain"]},
        {"specimen": "CD-200", "curves": ["deviator_stress", "volumetric_strain"]}])";

std::string parameters(const std::string& phi = R"({"status": "free", "lower": 20, "upper": 45, "start": 30})",
                       const std::string& tension = "0") {
  return R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "poissons_ratio": {"status": "free", "lower": 0.05, "upper": 0.45, "start": 0.25},
    "cohesion": {"status": "free", "lower": 0, "upper": 30, "start": 2},
    "friction_angle": )" + phi + R"(,
    "dilation_angle": {"status": "free", "lower": 0, "upper": 20, "start": 2},
    "tensile_strength": )" + tension + "}";
}

std::string write(const std::string& name, const std::string& text) {
  std::ofstream(name) << text;
  return name;
}

std::string error_of(const std::string& file) {
  const CliResult r = run_cli("fit " + file + " --out fit_bad_out", "fit_bad");
  CHECK(r.exit_code == 2);
  CHECK(!fs::exists("fit_bad_out/" + fs::path(file).stem().string() + ".parameters.json"));
  return r.err;
}

}  // namespace

TEST_CASE("fit of the demo series writes a parameter set that triaxcal simulate loads unchanged, CSV and HDF5",
          "[cli][fit]") {
  fs::remove_all("fit_ok_out");
  const std::string file = write("fit_ok.json", calibration(parameters(), kTests, R"({"local": "bobyqa", "seed": 3})"));
  const CliResult r = run_cli("fit " + file + " --out fit_ok_out --threads 2 --report", "fit_ok");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("Caution:") != std::string::npos);
  CHECK(r.out.find("calibration of mohr_coulomb: converged") != std::string::npos);
  CHECK(r.out.find("\noutcome:       converged: the local (bobyqa) stage met its tolerance; every used curve has R^2 >= 0.9") !=
        std::string::npos);
  CHECK(r.err.empty());
  for (const char* f : {"fit_ok.parameters.json", "fit_ok.curves.csv", "fit_ok.h5", "fit_ok.report.txt"})
    CHECK(fs::exists(fs::path("fit_ok_out") / f));
  const auto json = nlohmann::json::parse(slurp("fit_ok_out/fit_ok.parameters.json"));
  // The demo data were made with E' = 25000 kPa, phi' = 34 deg, psi = 5 deg (invented) plus noise.
  CHECK(json["parameters"]["youngs_modulus"]["value"].get<double>() == Approx(25000).epsilon(0.02));
  CHECK(json["parameters"]["friction_angle"]["value"].get<double>() == Approx(34).epsilon(0.02));
  CHECK(json["parameters"]["dilation_angle"]["value"].get<double>() == Approx(5).epsilon(0.05));
  CHECK(json["provenance"]["inputs"].size() == 5);
  CHECK(json["provenance"]["inputs"][0]["sha256"].get<std::string>().size() == 64);
  CHECK(json["caution"].get<std::string>().rfind("Caution:", 0) == 0);
  CHECK(json["fit"]["outcome"] == "converged");
  // The search's counts beside the outcome (how many local runs reached the best objective is the
  // sign of a well-posed problem): present, and consistent with each other.
  const auto& fit = json["fit"];
  CHECK(fit["local_runs"].get<int>() >= 1);
  CHECK(fit["local_runs_at_best"].get<int>() >= 1);
  CHECK(fit["local_runs_at_best"].get<int>() <= fit["local_runs"].get<int>());
  CHECK(fit["failed_starts"].get<int>() == 0);
  CHECK(fit["work_limited_simulations"].get<long>() == 0);
  CHECK(fit["jacobian_evaluations"].get<long>() > 0);
  // Mohr-Coulomb has a derivative version: every Jacobian exact.
  CHECK(fit["exact_jacobians"].get<long>() > 0);
  CHECK(fit["difference_jacobians"].get<long>() == 0);
  const auto html = slurp("fit_ok_out/fit_ok.report.html");
  CHECK(html.find("<div class=\"outcome outcome-converged\" id=\"outcome\" data-outcome=\"converged\">") !=
        std::string::npos);
  const CliResult sim = run_cli("simulate --model mohr_coulomb --params fit_ok_out/fit_ok.parameters.json --protocol " +
                                    source_path("examples/simulate/cd_100.json"),
                                "fit_ok_sim");
  INFO(sim.err);
  CHECK(sim.exit_code == 0);
}

TEST_CASE("bad calibration files exit 2 with exact messages and write nothing", "[cli][fit][errors]") {
  const std::string known = "youngs_modulus, poissons_ratio, cohesion, friction_angle, dilation_angle, tensile_strength";
  {
    std::string p = parameters();
    p.insert(1, R"("angle_of_repose": 3, )");
    const std::string f = write("fit_bad_unknown.json", calibration(p, kTests, "{}"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": parameters.angle_of_repose: mohr_coulomb has no parameter "
                                                   "'angle_of_repose' (known: " + known + ")\n");
  }
  {
    const std::string f = write("fit_bad_reversed.json",
                                calibration(parameters(R"({"status": "free", "lower": 40, "upper": 25})"), kTests, "{}"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": parameters.friction_angle: lower = 40 must be below upper = 25 (deg)\n");
  }
  {
    const std::string f = write("fit_bad_start.json",
                                calibration(parameters(R"({"status": "free", "lower": 25, "upper": 40, "start": 50})"), kTests, "{}"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": parameters.friction_angle: start = 50 is outside the bounds [25, 40] (deg)\n");
  }
  {
    const std::string f = write(
        "fit_bad_tie.json",
        calibration(parameters(R"({"status": "free", "lower": 25, "upper": 40})",
                               R"({"status": "tied", "expression": "0.1 * cohesion_ref"})"),
                    kTests, "{}"));
    CHECK(error_of(f) == "triaxcal: error: " + f +
                             ": parameters.tensile_strength.expression: unknown name 'cohesion_ref' in \"0.1 * cohesion_ref\" "
                             "(known: " + known + ")\n");
  }
  {
    const std::string f = write("fit_bad_test.json",
                                calibration(parameters(), R"([{"specimen": "CD-999", "curves": ["deviator_stress"]}])", "{}"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": tests[0].specimen: \"CD-999\" is not in the test series " + kSeries +
                             " (known: CD-50, CD-100, CD-200)\n");
  }
  {
    const std::string f = write("fit_bad_key.json", calibration(parameters(), kTests, R"({"globl": "crs2"})"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": options.globl: unknown key 'globl' (expected one of: global, "
                                                   "global_evaluations, global_runs, local, local_evaluations, starts, design_points, "
                                                   "relative_tolerance, x_tolerance, max_seconds, seed, threads, loss, "
                                                   "loss_scale, sensitivities, failure_penalty, uncertainty, jacobian_step, correlation_warning, "
                                                   "min_r_squared, stress_precision, strain_precision, noise_from_residuals, "
                                                   "same_optimum_tolerance)\n");
  }
  {
    const std::string f = write("fit_bad_r2.json", calibration(parameters(), kTests, R"({"min_r_squared": 2})"));
    CHECK(error_of(f) == "triaxcal: error: " + f + ": calibration options: min_r_squared = 2 must be in [-1, 1]\n");
  }
}

TEST_CASE("Ctrl-C during a fit stops cleanly, keeps the best point so far and leaves no half-written file",
          "[cli][fit][interrupt]") {
  fs::remove_all("fit_int_out");
  // A global stage far longer than the test waits, so the interrupt arrives during the fit.
  const std::string f = write("fit_int.json", calibration(parameters(), kTests,
                                                          R"({"global": "crs2", "global_evaluations": 1000000, "max_seconds": 60})", 150));
  const std::string cmd = std::string(TRIAXCAL_CLI) + " fit " + f +
                          " --out fit_int_out >fit_int.out 2>fit_int.err & pid=$!; sleep 1; "
                          // A background job of a non-interactive shell starts with SIGINT ignored until
                          // triaxcal installs its handler: on a loaded machine the first signal can come
                          // too early, so it is repeated until the process ends.
                          "for i in 1 2 3 4 5 6 7 8 9 10 11 12 13 14 15 16 17 18 19 20; do kill -INT $pid 2>/dev/null || break; "
                          "[ -e fit_int_out/fit_int.parameters.json ] && break; sleep 0.5; done; wait $pid; echo $? >fit_int.rc";
  REQUIRE(std::system(("sh -c '" + cmd + "'").c_str()) == 0);
  INFO(slurp("fit_int.out") << slurp("fit_int.err"));
  CHECK(std::stoi(slurp("fit_int.rc")) == 0);
  CHECK(slurp("fit_int.out").find("stopped") != std::string::npos);
  const auto json = nlohmann::json::parse(slurp("fit_int_out/fit_int.parameters.json"));
  CHECK(json["fit"]["termination"] == "stopped");
  // On a slow or loaded machine the stop can come so early that the curves do not fit yet: the
  // outcome is then poor_fit (it takes precedence) and its reason adds that the run was stopped.
  const std::string outcome = json["fit"]["outcome"].get<std::string>();
  const std::string reason = json["fit"]["outcome_reason"].get<std::string>();
  const std::string stop = "stopped on request (the progress callback; Ctrl-C in triaxcal fit) after ";
  if (outcome == "stopped") {
    CHECK(reason.rfind(stop, 0) == 0);
  } else {
    CHECK(outcome == "poor_fit");
    CHECK(reason.find("; also not converged: " + stop) != std::string::npos);
  }
  CHECK(fs::exists("fit_int_out/fit_int.h5"));
  for (const auto& entry : fs::directory_iterator("fit_int_out"))
    CHECK(entry.path().filename().string().find(".tmp") == std::string::npos);
}

TEST_CASE("free parameters without a start take theirs from the classical interpretation of the series",
          "[cli][fit][interpretation]") {
  fs::remove_all("fit_seed_out");
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "scale": "log"},
    "poissons_ratio": {"status": "free", "lower": 0.05, "upper": 0.45, "start": 0.25},
    "cohesion": {"status": "free", "lower": 0, "upper": 30},
    "friction_angle": {"status": "free", "lower": 20, "upper": 45},
    "dilation_angle": {"status": "free", "lower": 0, "upper": 20, "start": 2}})";
  const std::string f = write("fit_seed.json", calibration(p, kTests, "{}"));
  // The notes on bounds and starts are part of the full account (--verbose).
  const CliResult r = run_cli("fit " + f + " --out fit_seed_out --verbose", "fit_seed");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("friction_angle: start ") != std::string::npos);
  CHECK(r.out.find("youngs_modulus: start ") != std::string::npos);
  CHECK(r.out.find("dilation_angle: start ") == std::string::npos);  // it has a start of its own
  // The interpretation of the invented demo data gives phi' close to the 34 deg they were made with.
  const auto pos = r.out.find("friction_angle: start ");
  CHECK(std::stod(r.out.substr(pos + 22)) == Approx(34).margin(1.5));
  CHECK(r.out.find("\nOptions as asked:\n") != std::string::npos);
  CHECK(r.out.find("\nFit per test and curve (RMSE in the curve's unit):\n") != std::string::npos);
}

TEST_CASE("fit prints a brief account by default: outcome, parameters with intervals, worst curve, files, caution",
          "[cli][fit]") {
  fs::remove_all("fit_brief_out");
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "scale": "log"},
    "poissons_ratio": {"status": "free", "lower": 0.05, "upper": 0.45, "start": 0.25},
    "cohesion": {"status": "free", "lower": 0, "upper": 30},
    "friction_angle": {"status": "free", "lower": 20, "upper": 45},
    "dilation_angle": {"status": "free", "lower": 0, "upper": 20, "start": 2}})";
  // The interpretation the report shows is the one the file asks for (here not the default).
  std::string text = calibration(p, kTests, "{}");
  text.insert(text.size() - 1, R"(, "interpretation": {"criterion": "max_stress_ratio", "design_stress": 150})");
  const std::string f = write("fit_brief.json", text);
  const CliResult r = run_cli("fit " + f + " --out fit_brief_out", "fit_brief");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  // One line says how many bounds and starts came from the interpretation; --verbose lists them.
  CHECK(r.out.rfind("3 bounds/starts/fixed values taken from the classical interpretation of the series (--verbose lists them)\n"
                    "calibration of mohr_coulomb: converged, objective ", 0) == 0);
  CHECK(r.out.find("friction_angle: start ") == std::string::npos);
  CHECK(r.out.find("  friction_angle = ") != std::string::npos);
  CHECK(r.out.find("95 % [") != std::string::npos);
  CHECK(r.out.find("  worst curve: CD-") != std::string::npos);
  CHECK(r.out.find("Options as asked") == std::string::npos);
  CHECK(r.out.find("Fit per test and curve") == std::string::npos);
  for (const char* line : {"\noutcome:       converged", "\nparameter set: fit_brief_out/fit_brief.parameters.json\n",
                           "\ncurves:        fit_brief_out/fit_brief.curves.csv\n", "\nCaution: "})
    CHECK(r.out.find(line) != std::string::npos);
  const auto input = nlohmann::json::parse(slurp("fit_brief_out/fit_brief.report.json"));
  CHECK(input["strength"]["criterion"] == "maximum stress ratio");
  CHECK(input["strength"]["design_stress"] == 150.0);
  // Every data file read is in the provenance, each once.
  int data_files = 0;
  for (const auto& row : input["provenance"])
    data_files += row[0].get<std::string>().find("demo_cd_") != std::string::npos ? 1 : 0;
  CHECK(data_files == 3);
}

namespace {

const std::string kTwoTests =
    R"([{"specimen": "CD-50", "curves": ["deviator_stress", "volumetric_strain"]},
        {"specimen": "CD-100", "curves": ["deviator_stress", "volumetric_strain"]}])";

std::string report_outcome(const std::string& report_input) {
  return nlohmann::json::parse(slurp(report_input))["outcome"].get<std::string>();
}

}  // namespace

TEST_CASE("a fit stopped by a tiny evaluation budget says stopped, names the key to raise and still exits 0",
          "[cli][fit][outcome]") {
  fs::remove_all("fit_stop_out");
  // Started next to the values the invented demo data were made with, so every curve fits; twelve
  // evaluations are too few for the local stage to meet its tolerance.
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 24000, "scale": "log"},
    "poissons_ratio": {"status": "free", "lower": 0.05, "upper": 0.45, "start": 0.3},
    "cohesion": {"status": "free", "lower": 0, "upper": 30, "start": 4},
    "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 34},
    "dilation_angle": {"status": "free", "lower": 0, "upper": 20, "start": 5}, "tensile_strength": 0})";
  const std::string f = write("fit_stop.json", calibration(p, kTwoTests, R"({"local": "bobyqa", "local_evaluations": 12})"));
  const std::string reason =
      "the local (bobyqa) stage used its budget of 12 evaluations before it met its tolerance: raise options.local_evaluations";
  const CliResult r = run_cli("fit " + f + " --out fit_stop_out --report", "fit_stop");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("calibration of mohr_coulomb: stopped, objective ") == 0);
  CHECK(r.out.find("\noutcome:       stopped: " + reason + "\n") != std::string::npos);
  CHECK(r.err == "triaxcal: warning: fit: stopped: " + reason + "\n");
  const auto json = nlohmann::json::parse(slurp("fit_stop_out/fit_stop.parameters.json"));
  CHECK(json["fit"]["outcome"] == "stopped");
  CHECK(json["fit"]["outcome_reason"] == reason);
  CHECK(json["fit"]["termination"] == "evaluation_limit");
  CHECK(report_outcome("fit_stop_out/fit_stop.report.json") == "stopped");
  // The HDF5 archive's /summary carries the same outcome and reason (read with hdf5-tools' h5dump).
  REQUIRE(std::system("h5dump -a /summary/outcome fit_stop_out/fit_stop.h5 >fit_stop_h5.txt 2>&1 && "
                      "h5dump -a /summary/outcome_reason fit_stop_out/fit_stop.h5 >>fit_stop_h5.txt 2>&1") == 0);
  const std::string h5 = slurp("fit_stop_h5.txt");
  CHECK(h5.find("(0): \"stopped\"") != std::string::npos);
  CHECK(h5.find("(0): \"" + reason + "\"") != std::string::npos);
  const auto html = slurp("fit_stop_out/fit_stop.report.html");
  CHECK(html.find("<div class=\"outcome outcome-stopped\" id=\"outcome\" data-outcome=\"stopped\">") != std::string::npos);
  CHECK(html.find("<p id=\"outcome-reason\">" + reason + "</p>") != std::string::npos);
  // The same fit with --require-converged writes the same files and exits 5.
  const CliResult strict = run_cli("fit " + f + " --out fit_stop_out --require-converged", "fit_stop_strict");
  CHECK(strict.exit_code == 5);
  CHECK(fs::exists("fit_stop_out/fit_stop.parameters.json"));
}

TEST_CASE("a model that cannot follow the curves gives poor_fit naming each used curve with its R^2",
          "[cli][fit][outcome]") {
  fs::remove_all("fit_poor_out");
  // Mohr-Coulomb with phi' fixed at 22 deg and no dilation cannot reach the strength and the
  // dilation of the demo data (made with phi' = 34 deg, psi = 5 deg, invented): only E' is free.
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "poissons_ratio": 0.3, "cohesion": 0, "friction_angle": 22, "dilation_angle": 0, "tensile_strength": 0})";
  const std::string f = write("fit_poor.json", calibration(p, kTwoTests, R"({"local": "bobyqa"})"));
  const CliResult r = run_cli("fit " + f + " --out fit_poor_out --report", "fit_poor");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 0);
  const auto json = nlohmann::json::parse(slurp("fit_poor_out/fit_poor.parameters.json"));
  CHECK(json["fit"]["outcome"] == "poor_fit");
  // The reason lists every used curve whose R^2 (as the JSON records it) is below 0.9, in order.
  std::string listed;
  int poor = 0;
  for (const auto& t : json["fit"]["tests"])
    for (const auto& c : t["curves"]) {
      const double r2 = c["r_squared"].get<double>();
      CHECK(c["poor_fit"].get<bool>() == (r2 < 0.9));
      if (r2 >= 0.9) continue;
      char b[32];
      std::snprintf(b, sizeof b, "%.3f", r2);
      listed += (listed.empty() ? "" : ", ") + t["id"].get<std::string>() + " " + c["quantity"].get<std::string>() +
                " (R^2 = " + b + ")";
      ++poor;
    }
  REQUIRE(poor >= 2);
  CHECK(listed.find("CD-50 deviator_stress (R^2 = -") == 0);
  const std::string reason = "the model does not follow " + std::to_string(poor) +
                             " used curves (R^2 below min_r_squared = 0.9): " + listed;
  CHECK(json["fit"]["outcome_reason"] == reason);
  CHECK(r.out.find("\noutcome:       poor_fit: " + reason + "\n") != std::string::npos);
  CHECK(r.err == "triaxcal: warning: fit: poor_fit: " + reason + "\n");
  CHECK(report_outcome("fit_poor_out/fit_poor.report.json") == "poor_fit");
  const auto html = slurp("fit_poor_out/fit_poor.report.html");
  CHECK(html.find("<div class=\"outcome outcome-poor_fit\" id=\"outcome\" data-outcome=\"poor_fit\">") != std::string::npos);
  CHECK(html.find("<b>Warning: poor fit.</b>") != std::string::npos);
}

TEST_CASE("a local-only fit whose start point fails is failed with exit 4, never converged at the penalty",
          "[cli][fit][outcome]") {
  fs::remove_all("fit_failstart_out");
  // Start psi' = 38 deg above phi' = 25 deg: Mohr-Coulomb rejects it, and so every point the local
  // stage tries near it; the penalty is flat there, so the local stage "meets its tolerance" on it.
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "poissons_ratio": 0.3, "cohesion": 0, "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 25},
    "dilation_angle": {"status": "free", "lower": 0, "upper": 40, "start": 38}, "tensile_strength": 0})";
  const std::string f = write("fit_failstart.json", calibration(p, kTwoTests, R"({"local": "bobyqa"})"));
  const CliResult r = run_cli("fit " + f + " --out fit_failstart_out --report", "fit_failstart");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 4);
  CHECK(r.out.find("calibration of mohr_coulomb: failed, objective 40, ") == 0);
  CHECK(r.out.find("converged") == std::string::npos);
  CHECK(r.err.rfind("triaxcal: fit: failed: no point free of a failure penalty in ", 0) == 0);
  CHECK(r.err.find(" evaluations; at the best point the model rejected the parameters: " + f +
                   ": mohr_coulomb: dilation_angle = 38 deg must not exceed "
                   "friction_angle = 25 deg: the start point failed and nothing better was found; check the start values, "
                   "or add design_points or a global stage (report input: fit_failstart_out/fit_failstart.report.json)\n") !=
        std::string::npos);
  CHECK_FALSE(fs::exists("fit_failstart_out/fit_failstart.parameters.json"));
  const auto input = nlohmann::json::parse(slurp("fit_failstart_out/fit_failstart.report.json"));
  CHECK(input["outcome"] == "failed");
  CHECK(input["termination"] == "no_usable_result");
  const auto html = slurp("fit_failstart_out/fit_failstart.report.html");
  CHECK(html.find("<div class=\"outcome outcome-failed\" id=\"outcome\" data-outcome=\"failed\">") != std::string::npos);
}

TEST_CASE("a problem where every evaluation fails is failed with exit 4 and says the search found nothing",
          "[cli][fit][outcome]") {
  fs::remove_all("fit_allfail_out");
  // psi' in [30, 40] deg and phi' in [20, 25] deg: Mohr-Coulomb rejects every point of the box.
  const std::string p = R"({"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "poissons_ratio": 0.3, "cohesion": 0, "friction_angle": {"status": "free", "lower": 20, "upper": 25, "start": 22},
    "dilation_angle": {"status": "free", "lower": 30, "upper": 40, "start": 35}, "tensile_strength": 0})";
  const std::string f = write("fit_allfail.json", calibration(p, kTwoTests, R"({"local": "bobyqa", "design_points": 20})"));
  const CliResult r = run_cli("fit " + f + " --out fit_allfail_out", "fit_allfail");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 4);
  CHECK(r.err.rfind("triaxcal: fit: failed: no point free of a failure penalty in ", 0) == 0);
  CHECK(r.err.find(": the start point failed and no point of the search did better; check the bounds and the tests named "
                   "(report input: fit_allfail_out/fit_allfail.report.json)\n") != std::string::npos);
  CHECK_FALSE(fs::exists("fit_allfail_out/fit_allfail.parameters.json"));
  CHECK(report_outcome("fit_allfail_out/fit_allfail.report.json") == "failed");
}

TEST_CASE("fit --help states the outcomes and the exit code of each", "[cli][fit][outcome]") {
  const CliResult r = run_cli("fit --help", "fit_help");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("--require-converged         Exit 5 (files still written) when the outcome is stopped or poor_fit "
                   "instead of 0") != std::string::npos);
  CHECK(r.out.find("Exit codes: 0 converged, and also stopped or poor_fit (files written, a warning line on stderr; "
                   "--require-converged makes these 5); 2 bad input; 4 failed (only the report input is written); 1 "
                   "internal error.") != std::string::npos);
}
