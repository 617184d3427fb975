// render_report without a browser: self-contained, well formed, printable, every expected plot
// and table present, numbers and failures shown as the data says.
#include <catch2/catch.hpp>

#include <regex>

#include "demo_report.hpp"
#include "svg_reader.hpp"
#include "triaxcal/report.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

TEST_CASE("the report is one self-contained page: no remote scripts, styles, fonts or images") {
  const std::string html = report::render_report(demo_report());
  // The only URL is the SVG namespace name, which is an identifier, not fetched.
  std::string stripped = std::regex_replace(html, std::regex("xmlns=\"http://www\\.w3\\.org/2000/svg\""), "");
  CHECK(stripped.find("http:") == std::string::npos);
  CHECK(stripped.find("https:") == std::string::npos);
  CHECK(stripped.find("//") == std::string::npos);
  CHECK(html.find("<link") == std::string::npos);
  CHECK(html.find("@import") == std::string::npos);
  CHECK(html.find(" src=") == std::string::npos);
  CHECK(html.find("@font-face") == std::string::npos);
  CHECK(std::regex_search(html, std::regex("url\\((?!#)")) == false);  // only url(#clip) references
}

TEST_CASE("the report is well formed and carries every expected plot and table id once") {
  const report::ReportData data = demo_report();
  const std::string html = report::render_report(data);
  const auto root = parse_xml(html);  // throws when tags do not balance
  for (const std::string& id : report::expected_plot_ids(data)) {
    INFO(id);
    std::vector<const Element*> found;
    root->collect([&](const Element& e) { return e.get("id") == id; }, found);
    REQUIRE(found.size() == 1);
    CHECK(found[0]->name == "svg");
  }
  for (const std::string& id : report::expected_table_ids(data)) {
    INFO(id);
    const Element* t = root->by_id(id);
    REQUIRE(t != nullptr);
    CHECK(t->name == "table");
  }
  CHECK(root->by_name("svg").size() == report::expected_plot_ids(data).size());
}

TEST_CASE("the print stylesheet sets A4 and a page break before every section") {
  const std::string html = report::render_report(demo_report());
  CHECK(html.find("@page { size: A4 portrait;") != std::string::npos);
  CHECK(html.find("@media print") != std::string::npos);
  CHECK(html.find("section.report-section { break-before: page; page-break-before: always; }") != std::string::npos);
  const auto root = parse_xml(html);
  CHECK(root->by_class("report-section").size() == 7);
}

TEST_CASE("the parameter table shows units, status, bounds, intervals and flags a value at a bound") {
  const auto root = parse_xml(report::render_report(demo_report()));
  const Element* t = root->by_id("table-parameters");
  REQUIRE(t != nullptr);
  const Element* row = nullptr;
  for (const Element* r : t->by_name("tr"))
    if (r->get("data-parameter") == "friction_angle") row = r;
  REQUIRE(row != nullptr);
  const auto cells = row->by_name("td");
  REQUIRE(cells.size() == 10);
  CHECK(cells[1]->text == "deg");
  CHECK(cells[2]->text == "free");
  CHECK(cells[3]->text == "30.10");
  CHECK(cells[5]->text == "20.00");
  CHECK(cells[6]->text == "45.00");
  CHECK(cells[8]->text == "28.50 &#8230; 31.70");
  const Element* cohesion = nullptr;
  for (const Element* r : t->by_name("tr"))
    if (r->get("data-parameter") == "cohesion") cohesion = r;
  REQUIRE(cohesion != nullptr);
  CHECK(cohesion->by_class("flag").at(0)->text == "at a bound");
}

TEST_CASE("odd text is escaped and unknown numbers show as a dash") {
  report::ReportData d = demo_report();
  d.tests[0].quality[0].rmse = report::kUnknown;
  const std::string html = report::render_report(d);
  CHECK(html.find("Invented test fixture &quot;Marsh Lane&quot; &lt;demo&gt; &amp; co") != std::string::npos);
  CHECK(html.find("&#8212; kPa") != std::string::npos);
}

TEST_CASE("a failed calibration's report says so at the top and keeps the measured curves") {
  const report::ReportData data = failed_report();
  const std::string html = report::render_report(data);
  const auto root = parse_xml(html);
  const Element* o = root->by_id("outcome");
  REQUIRE(o != nullptr);
  CHECK(o->has_class("outcome-failed"));
  CHECK(html.find("<b>Failed: no usable parameter set.</b>") != std::string::npos);
  CHECK(html.find("The parameter table shows the starting values and bounds; they are not a result.") !=
        std::string::npos);
  const Element* dev = root->by_id("plot-deviator-CD-300");
  REQUIRE(dev != nullptr);
  CHECK_FALSE(dev->by_class("measured").empty());
  CHECK(dev->by_class("simulated").empty());
  // No history and no correlation: those plots and tables are left out, and the page says why.
  const auto plots = report::expected_plot_ids(data);
  CHECK(std::find(plots.begin(), plots.end(), "plot-history") == plots.end());
  CHECK(root->by_id("no-correlation") != nullptr);
}

TEST_CASE("an empty report still renders with a note in place of each missing plot") {
  report::ReportData d;
  d.outcome = CalibrationOutcome::failed;
  d.message = "nothing was run";
  const std::string html = report::render_report(d);
  const auto root = parse_xml(html);
  CHECK(root->by_id("plot-stress-paths") != nullptr);
  CHECK(root->by_id("plot-stress-paths")->by_class("plot-note").at(0)->text == "no stress-path data");
  CHECK(root->by_id("no-strength") != nullptr);
  CHECK(root->by_id("no-compression") != nullptr);
}
