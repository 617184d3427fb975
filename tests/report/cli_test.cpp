// `triaxcal report RESULT_DIR`: the report input JSON round trip, the files `triaxcal fit` writes,
// exact messages for bad input.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "cli_run.hpp"
#include "demo_report.hpp"
#include "svg_reader.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/report_input.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

fs::path fresh_dir(const std::string& name) {
  fs::remove_all(name);
  fs::create_directories(name);
  return name;
}

}  // namespace

TEST_CASE("a report input written as JSON and read back renders the same page") {
  for (const report::ReportData& d : {demo_report(), failed_report(), poor_fit_report(), stopped_report()}) {
    const std::string json = report::report_input_json(d);
    const report::ReportData back = report::parse_report_input(json, "demo.report.json");
    CHECK(report::render_report(back) == report::render_report(d));
  }
}

TEST_CASE("report reads the report input in RESULT_DIR and writes <name>.report.html beside it") {
  const fs::path dir = fresh_dir("report_cli_input");
  std::ofstream(dir / "demo.report.json") << report::report_input_json(poor_fit_report());
  const CliResult r = run_cli("report " + dir.string(), "report_input");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("outcome: poor_fit: the model does not follow 1 used curve (R^2 below min_r_squared = 0.9): "
                   "CU-100 deviator_stress (R^2 = -2.100)\n") == 0);
  CHECK(r.out.find("report:  " + (dir / "demo.report.html").string()) != std::string::npos);
  CHECK(r.out.find("reviewed by a qualified geotechnical engineer") != std::string::npos);
  const auto root = parse_xml(slurp((dir / "demo.report.html").string()));
  for (const std::string& id : report::expected_plot_ids(poor_fit_report())) CHECK(root->by_id(id) != nullptr);
}

TEST_CASE("report on the files triaxcal fit writes shows parameters, fit quality and each test's curves") {
  const fs::path dir = "report_cli_fit";
  fs::remove_all(dir);
  const CliResult fit = run_cli("fit " + source_path("examples/calibrate/mohr_coulomb_cd.json") + " --out " +
                                    dir.string() + " --threads 2",
                                "report_fit");
  INFO(fit.out << fit.err);
  REQUIRE(fit.exit_code == 0);
  const CliResult r = run_cli("report " + dir.string() + " --title 'Demo fit'", "report_fit_report");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const std::string html = slurp((dir / "mohr_coulomb_cd.report.html").string());
  const auto root = parse_xml(html);
  CHECK(root->by_name("h1").at(0)->text == "Demo fit");
  const Element* params = root->by_id("table-parameters");
  REQUIRE(params != nullptr);
  bool phi = false;
  for (const Element* row : params->by_name("tr")) phi = phi || row->get("data-parameter") == "friction_angle";
  CHECK(phi);
  CHECK(root->by_id("outcome")->get("data-outcome") == "converged");
  // Every test of the example has its deviator and volumetric plots with measured and model curves.
  const Element* fitq = root->by_id("table-fit-quality");
  REQUIRE(fitq != nullptr);
  int tests = 0;
  for (const Element* row : fitq->by_name("tr")) {
    const std::string id = row->get("data-test");
    if (id.empty() || root->by_id("plot-deviator-" + report::html_id(id)) == nullptr) continue;
    ++tests;
    const Element* dev = root->by_id("plot-deviator-" + report::html_id(id));
    CHECK_FALSE(dev->by_class("measured").empty());
    CHECK_FALSE(dev->by_class("simulated").empty());
    CHECK(root->by_id("plot-volumetric-" + report::html_id(id)) != nullptr);
  }
  CHECK(tests >= 2);
  CHECK(root->by_id("plot-residuals") != nullptr);
}

TEST_CASE("report: a bad key in the report input gives exit 2 and names the key path") {
  const fs::path dir = fresh_dir("report_cli_bad");
  std::ofstream(dir / "x.report.json")
      << R"({"format": "triaxcal-report-input", "version": 1, "tests": [{"id": "T1", "colour": "red"}]})";
  const CliResult r = run_cli("report " + dir.string(), "report_bad");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + (dir / "x.report.json").string() +
                     ": tests[0].colour: unknown key 'colour' (expected one of: id, description, drainage, used, "
                     "simulated, message, objective, weight, deviator, pore_pressure, volumetric, stress_path, "
                     "compression, quality)\n");
  CHECK_FALSE(fs::exists(dir / "x.report.html"));
}

TEST_CASE("report: unequal x and y lengths and a wrong outcome are rejected with the key path") {
  CHECK_THROWS_WITH(report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 1,
      "tests": [{"id": "T1", "deviator": {"measured": {"x": [0, 0.01], "y": [5]}}}]})", "r.json"),
                    "r.json: tests[0].deviator.measured: x has 2 values and y 1 (expected equal lengths)");
  CHECK_THROWS_WITH(report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 2,
      "outcome": "fine"})", "r.json"),
                    "r.json: outcome: expected converged, stopped, poor_fit or failed, found \"fine\"");
  CHECK_THROWS_WITH(report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 2,
      "outcome": "success"})", "r.json"),
                    "r.json: outcome: expected converged, stopped, poor_fit or failed, found \"success\"");
  CHECK_THROWS_WITH(report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 1,
      "outcome": "fine"})", "r.json"),
                    "r.json: outcome: expected success, partial or failed (version 1), found \"fine\"");
  CHECK_THROWS_WITH(report::parse_report_input(R"({"format": "triaxcal-parameters", "version": 1})", "r.json"),
                    "r.json: format: expected \"triaxcal-report-input\", found \"triaxcal-parameters\"");
}

TEST_CASE("a version 1 report input that said success for a fit stopped at its budget reads as stopped") {
  // Written by triaxcal before the outcome vocabulary: "success" for every usable fit.
  const report::ReportData d = report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 1,
      "outcome": "success", "termination": "evaluation_limit",
      "tests": [{"id": "T1", "quality": [{"name": "deviator_stress vs axial_strain", "r_squared": 0.97}]}]})",
                                                          "old.report.json");
  CHECK(d.outcome == CalibrationOutcome::stopped);
  CHECK(d.outcome_reason == "termination evaluation_limit (derived: old.report.json records no outcome)");
  const report::ReportData poor = report::parse_report_input(R"({"format": "triaxcal-report-input", "version": 1,
      "outcome": "success", "termination": "converged",
      "tests": [{"id": "T1", "quality": [{"name": "deviator_stress vs axial_strain", "r_squared": -2.1}]}]})",
                                                             "old.report.json");
  CHECK(poor.outcome == CalibrationOutcome::poor_fit);
  CHECK(poor.outcome_reason ==
        "the model does not follow T1 deviator_stress (R^2 = -2.100) (derived: old.report.json records no outcome)");
}

TEST_CASE("report: a directory without results gives exit 2 and says what it looked for") {
  const fs::path dir = fresh_dir("report_cli_empty");
  const CliResult r = run_cli("report " + dir.string(), "report_empty");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + dir.string() +
                     ": no report input (<name>.report.json) and no fit result (<name>.parameters.json with "
                     "<name>.curves.csv)\n");
}
