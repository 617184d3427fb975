// render_report without a browser: self-contained, well formed, printable, every expected plot
// and table present, numbers and failures shown as the data says.
#include <catch2/catch.hpp>

#include <regex>
#include <set>

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
  // An unknown RMSE is a dash without a unit after it (never "&#8212; kPa").
  CHECK(html.find("&#8212; kPa") == std::string::npos);
  CHECK(html.find("<td class=\"num\">&#8212;</td>") != std::string::npos);
}

TEST_CASE("a multi-stage test is plotted stage by stage, each with its own colour and legend entries") {
  report::ReportData d = demo_report();
  report::TestReport ms;
  ms.id = "MS-1";
  ms.description = "invented three-stage CU specimen";
  ms.drainage = report::Drainage::undrained;
  for (int k = 1; k <= 3; ++k)
    for (const char* quantity : {"deviator_stress", "excess_pore_pressure"}) {
      report::TestCurve c;
      c.quantity = quantity;
      c.stage = k;
      for (int i = 0; i <= 20; ++i) {
        const double e = 0.0025 * i, y = 50.0 * k * e / (0.01 + e);
        c.measured.x.push_back(e);
        c.measured.y.push_back(y + 1.0);
        c.simulated.x.push_back(e);
        c.simulated.y.push_back(y);
      }
      ms.curves.push_back(c);
    }
  d.tests.push_back(ms);
  const auto root = parse_xml(report::render_report(d));
  for (const char* id : {"plot-deviator-MS-1", "plot-pore-MS-1"}) {
    INFO(id);
    const Element* plot = root->by_id(id);
    REQUIRE(plot != nullptr);
    std::set<std::string> colours;
    std::vector<std::string> names;
    for (const Element* g : plot->by_class("series")) {
      names.push_back(g->get("data-name"));
      colours.insert(g->get("stroke"));
    }
    CHECK(names == std::vector<std::string>{"stage 1 measured", "stage 1 model", "stage 2 measured", "stage 2 model",
                                            "stage 3 measured", "stage 3 model"});
    CHECK(colours.size() == 3);
  }
  // The heading shows the specimen's description once, not the id twice.
  const Element* block = root->by_id("test-MS-1");
  REQUIRE(block != nullptr);
  CHECK(block->by_name("h3").at(0)->text == "MS-1 &#8212; invented three-stage CU specimen (undrained)");
}

TEST_CASE("points outside the fitted strain range are drawn faded, with one legend entry saying so") {
  const report::ReportData d = demo_report();  // CD-300 was compared from 0 to 15 % only
  const auto root = parse_xml(report::render_report(d));
  const Element* dev = root->by_id("plot-deviator-CD-300");
  REQUIRE(dev != nullptr);
  const auto faded = dev->by_class("outside-fit");
  REQUIRE(faded.size() == 2);  // measured and model
  for (const Element* g : faded) CHECK(g->get("opacity") == "0.30");
  CHECK(faded[0]->get("data-name") == "outside the fitted range (faded)");
  CHECK(faded[1]->get("data-name").empty());
  // The faded markers are the points beyond 15 %, the others are drawn in full.
  const Element* measured = dev->by_class("measured").at(0);
  CHECK(measured->by_name("use").size() == 38);  // 0, 0.4, ... 14.8 %
  CHECK(faded[0]->by_name("use").size() == 13);   // 15.2 ... 20 %
  CHECK(root->by_id("plot-deviator-CD-100")->by_class("outside-fit").empty());
  CHECK(root->by_id("test-CD-300")->by_class("meta").at(0)->text ==
        "The fit compared axial strains from the start to 15.00 % of each stage; the rest is drawn faded.");
}

TEST_CASE("Mohr circles have one colour and legend entry a test; the design stress is drawn in s'-t and Mohr plots") {
  const report::ReportData d = demo_report();
  const auto root = parse_xml(report::render_report(d));
  const Element* mohr = root->by_id("plot-mohr");
  REQUIRE(mohr != nullptr);
  const auto circles = mohr->by_class("mohr-circle");
  REQUIRE(circles.size() == 5);
  std::set<std::string> colours, names;
  for (const Element* c : circles) {
    colours.insert(c->get("stroke"));
    names.insert(c->get("data-name"));
  }
  CHECK(colours.size() == 5);
  CHECK(names == std::set<std::string>{"CU-50", "CU-100", "CU-200", "CD-100", "CD-300"});
  for (const char* id : {"plot-s-t", "plot-mohr"}) {
    INFO(id);
    const auto lines = root->by_id(id)->by_class("design-stress");
    REQUIRE(lines.size() == 1);
    CHECK(lines[0]->get("data-name") == "design stress 250 kPa");
  }
}

TEST_CASE("no dimensionless unit is shown as a unit and no number reads -0.00") {
  report::ReportData d = demo_report();
  d.strength.regression.intercept = -0.001;  // c' of -0.001 kPa prints as 0.0, not -0.0
  const std::string html = report::render_report(d);
  CHECK(html.find("(-)") == std::string::npos);
  CHECK(html.find("<td>-</td>") == std::string::npos);
  CHECK(html.find("-0.0<") == std::string::npos);
  CHECK(html.find("-0.00") == std::string::npos);
  CHECK(html.find("= -0.0 kPa") == std::string::npos);
  CHECK(html.find("= 0.0 kPa, phi") != std::string::npos);  // the legend of the regression envelope
  const auto root = parse_xml(html);
  for (const Element* r : root->by_id("table-parameters")->by_name("tr"))
    if (r->get("data-parameter") == "poissons_ratio") CHECK(r->by_name("td").at(1)->text == "dimensionless");
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
