// The HTML report in a real browser: headless Chromium loads the file offline, runs its check
// script, and the dumped DOM must hold every expected plot and table; the browser logs no console
// message; a screenshot is saved in the build tree (tests/report_*.png) as an artefact.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>

#include "chromium.hpp"
#include "demo_report.hpp"
#include "svg_reader.hpp"
#include "triaxcal/report.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

struct Loaded {
  BrowserRun run;
  std::unique_ptr<Element> dom;
};

Loaded load(const report::ReportData& data, const std::string& tag) {
  const std::string browser = find_chromium();
  INFO(kChromiumMissing);
  REQUIRE_FALSE(browser.empty());
  const std::string html = "report_" + tag + ".html";
  std::ofstream(html) << report::render_report(data);
  Loaded l;
  l.run = run_chromium(browser, html, tag, "report_" + tag + ".png");
  INFO("chromium log:\n" << l.run.log);
  REQUIRE(l.run.exit_code == 0);
  REQUIRE(l.run.dom.find("</html>") != std::string::npos);
  l.dom = parse_xml(l.run.dom);
  return l;
}

void check_png(const std::string& path) {
  INFO(path);
  REQUIRE(fs::exists(path));
  CHECK(fs::file_size(path) > 20000);  // a blank page compresses to a few kB
  std::ifstream in(path, std::ios::binary);
  char sig[8] = {};
  in.read(sig, 8);
  CHECK(std::string(sig + 1, 3) == "PNG");
}

void check_complete(const report::ReportData& data, const Loaded& l) {
  const Element& dom = *l.dom;
  INFO("console:\n" << console_lines(l.run.log));
  CHECK(console_lines(l.run.log).empty());

  // The page's own script ran, found every plot with a laid-out frame, and every table.
  const Element* check = dom.by_id("render-check");
  REQUIRE(check != nullptr);
  CHECK(check->get("data-status") == "ok");
  const auto plots = report::expected_plot_ids(data);
  const auto tables = report::expected_table_ids(data);
  CHECK(check->get("data-plots") == std::to_string(plots.size()));
  CHECK(check->get("data-tables") == std::to_string(tables.size()));

  for (const std::string& id : plots) {
    INFO("plot " << id);
    const Element* svg = dom.by_id(id);
    REQUIRE(svg != nullptr);
    CHECK(svg->name == "svg");
    CHECK(svg->by_class("frame").size() == 1);
    CHECK(svg->by_class("tick-x").size() >= 2);
    CHECK(svg->by_class("tick-y").size() >= 2);
    CHECK_FALSE(svg->by_class("axis-title-x").at(0)->text.empty());
  }
  for (const std::string& id : tables) {
    INFO("table " << id);
    const Element* t = dom.by_id(id);
    REQUIRE(t != nullptr);
    CHECK(t->name == "table");
    CHECK_FALSE(t->by_name("tr").empty());
  }
  const Element* caution = dom.by_id("caution");
  REQUIRE(caution != nullptr);
  CHECK(caution->text.find("reviewed by a qualified geotechnical engineer") != std::string::npos);
}

}  // namespace

TEST_CASE("the report renders in headless Chromium with every plot and table and no console message") {
  const report::ReportData data = demo_report();
  const Loaded l = load(data, "full");
  check_complete(data, l);
  // The demo has every kind of plot.
  const auto plots = report::expected_plot_ids(data);
  for (const char* id : {"plot-residuals", "plot-history", "plot-deviator-CU-50", "plot-pore-CU-50",
                         "plot-volumetric-CD-300", "plot-stress-paths", "plot-s-t", "plot-mohr", "plot-compression"})
    CHECK(std::find(plots.begin(), plots.end(), id) != plots.end());
  // Strong correlations are highlighted: -0.96 twice (symmetric), nothing else.
  CHECK(l.dom->by_id("table-correlation")->by_class("strong").size() == 2);
  CHECK(l.dom->by_id("outcome")->get("data-outcome") == "converged");
  CHECK(l.dom->by_id("outcome")->has_class("outcome-converged"));
  CHECK(l.run.dom.find("<b>Converged.</b>") != std::string::npos);
  check_png("report_full.png");
}

TEST_CASE("a report of a failed calibration still renders and says what failed") {
  const report::ReportData data = failed_report();
  const Loaded l = load(data, "failed");
  check_complete(data, l);
  const Element* outcome = l.dom->by_id("outcome");
  REQUIRE(outcome != nullptr);
  CHECK(outcome->get("data-outcome") == "failed");
  const std::string dom = l.run.dom;
  CHECK(outcome->has_class("outcome-failed"));
  CHECK(dom.find("<b>Failed: no usable parameter set.</b>") != std::string::npos);
  CHECK(l.dom->by_id("outcome-reason")->text ==
        "no point free of a failure penalty in 40 evaluations; at the best point these tests could not be simulated: "
        "CU-50 (no convergence)");
  CHECK(dom.find("no usable result: no evaluation in 40 succeeded (40 failed simulations)") != std::string::npos);
  CHECK(dom.find("no convergence after 8 increment cuts") != std::string::npos);
  CHECK(l.dom->by_id("failed-tests") != nullptr);
  CHECK(l.dom->by_id("no-correlation") != nullptr);
  check_png("report_failed.png");
}

TEST_CASE("a poor fit and a stopped fit show as warnings with their reason, never as a success") {
  {
    const report::ReportData data = poor_fit_report();
    const Loaded l = load(data, "poor_fit");
    check_complete(data, l);
    const Element* outcome = l.dom->by_id("outcome");
    REQUIRE(outcome != nullptr);
    CHECK(outcome->get("data-outcome") == "poor_fit");
    CHECK(outcome->has_class("outcome-poor_fit"));
    CHECK_FALSE(outcome->has_class("outcome-converged"));
    CHECK(l.run.dom.find("<b>Warning: poor fit.</b>") != std::string::npos);
    CHECK(l.dom->by_id("outcome-reason")->text ==
          "the model does not follow 1 used curve (R^2 below min_r_squared = 0.9): CU-100 deviator_stress (R^2 = -2.100)");
  }
  {
    const report::ReportData data = stopped_report();
    const Loaded l = load(data, "stopped");
    check_complete(data, l);
    const Element* outcome = l.dom->by_id("outcome");
    REQUIRE(outcome != nullptr);
    CHECK(outcome->get("data-outcome") == "stopped");
    CHECK(outcome->has_class("outcome-stopped"));
    CHECK(l.run.dom.find("<b>Warning: stopped before converging.</b>") != std::string::npos);
    CHECK(l.dom->by_id("outcome-reason")->text.find("raise options.local_evaluations") != std::string::npos);
  }
}
