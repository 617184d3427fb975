// The interpretation report (triaxcal interpret --report): rendered in headless Chromium with every
// plot and table and no console message; the s'-t and Mohr plots read back within a pixel through
// their own tick labels; the declared criterion (a non-default one too) is the one the page uses.
// Data: the invented Kestrel Bay demo series (examples/kestrel_bay, never a reference).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>

#include "../interpret/synthetic_specimen.hpp"
#include "chromium.hpp"
#include "svg_reader.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/interpretation_report.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

const TestSeries& demo() {
  static const TestSeries series = read_test_series(source_path("examples/kestrel_bay/kestrel_bay_series.json"));
  return series;
}

Interpretation clay(FailureCriterion criterion = FailureCriterion::max_deviator) {
  InterpretOptions o;
  o.material = "clay C";
  o.criterion = criterion;
  o.design_stress = 100.0;
  o.origin_regression = true;
  o.cu_depth_trend = true;
  o.left_out.push_back({"C-MS-1", 3, "membrane leak (invented)"});
  return interpret(demo(), o);
}

Interpretation sand() {
  InterpretOptions o;
  o.material = "sand S";
  o.design_stress = 150.0;
  return interpret(demo(), o);
}

// Least-squares map value = a + b * pixel through one axis' tick marks and labels, read from the SVG
// (as tests/report/svg_plot_test.cpp reads them).
struct AxisMap {
  double a = 0, b = 0;
};

AxisMap read_axis(const Element& svg, const std::string& which) {
  std::vector<double> px, val;
  for (const Element* g : svg.by_class("tick-" + which)) {
    const auto lines = g->by_name("line");
    const auto texts = g->by_name("text");
    REQUIRE(lines.size() == 1);
    REQUIRE(texts.size() == 1);
    px.push_back(std::stod(lines[0]->get(which == "x" ? "x1" : "y1")));
    val.push_back(std::stod(texts[0]->text));
  }
  REQUIRE(px.size() >= 2);
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < px.size(); ++i) {
    mx += px[i];
    my += val[i];
  }
  mx /= static_cast<double>(px.size());
  my /= static_cast<double>(px.size());
  double sxy = 0, sxx = 0;
  for (std::size_t i = 0; i < px.size(); ++i) {
    sxy += (px[i] - mx) * (val[i] - my);
    sxx += (px[i] - mx) * (px[i] - mx);
  }
  AxisMap m;
  m.b = sxy / sxx;
  m.a = my - m.b * mx;
  return m;
}

double pixel_error(const AxisMap& m, double data, double pixel) { return std::abs((data - m.a) / m.b - pixel); }

const Element* series_of_class(const Element& svg, const std::string& cls) {
  for (const Element* g : svg.by_class("series"))
    if (g->has_class(cls)) return g;
  return nullptr;
}

std::vector<std::pair<double, double>> polyline(const Element& g) {
  std::vector<std::pair<double, double>> pts;
  const auto lines = g.by_name("polyline");
  if (lines.empty()) return pts;
  std::istringstream in(lines[0]->get("points"));
  std::string pair;
  while (in >> pair) {
    const auto comma = pair.find(',');
    pts.emplace_back(std::stod(pair.substr(0, comma)), std::stod(pair.substr(comma + 1)));
  }
  return pts;
}

std::string write(const std::string& tag, const Interpretation& in, const TestSeries& series = demo()) {
  const std::string html = "interpretation_" + tag + ".html";
  std::ofstream(html) << report::render_interpretation_report(in, series);
  return html;
}

void check_in_browser(const Interpretation& in, const std::string& tag, bool screenshot, const TestSeries& series = demo()) {
  const std::string browser = find_chromium();
  INFO(kChromiumMissing);
  REQUIRE_FALSE(browser.empty());
  const std::string html = write(tag, in, series);
  const std::string png = screenshot ? "report_interpretation_" + tag + ".png" : std::string();
  const BrowserRun run = run_chromium(browser, html, "interp_" + tag, png, 6000);
  INFO("chromium log:\n" << run.log);
  REQUIRE(run.exit_code == 0);
  const auto dom = parse_xml(run.dom);
  INFO("console:\n" << console_lines(run.log));
  CHECK(console_lines(run.log).empty());
  const Element* check = dom->by_id("render-check");
  REQUIRE(check != nullptr);
  CHECK(check->get("data-status") == "ok");
  const auto plots = report::interpretation_plot_ids(in, series);
  const auto tables = report::interpretation_table_ids(in, series);
  CHECK(check->get("data-plots") == std::to_string(plots.size()));
  CHECK(check->get("data-tables") == std::to_string(tables.size()));
  for (const std::string& id : plots) {
    INFO("plot " << id);
    const Element* svg = dom->by_id(id);
    REQUIRE(svg != nullptr);
    CHECK(svg->name == "svg");
    CHECK(svg->by_class("tick-x").size() >= 2);
    CHECK(svg->by_class("tick-y").size() >= 2);
  }
  for (const std::string& id : tables) {
    INFO("table " << id);
    const Element* t = dom->by_id(id);
    REQUIRE(t != nullptr);
    CHECK(t->name == "table");
    CHECK_FALSE(t->by_name("tr").empty());
  }
  CHECK(dom->by_id("caution")->text.find("reviewed by a qualified geotechnical engineer") != std::string::npos);
  if (screenshot) {
    REQUIRE(fs::exists(png));
    CHECK(fs::file_size(png) > 20000);
  }
}

}  // namespace

TEST_CASE("the interpretation report renders in headless Chromium with every plot and table and no console message",
          "[report][interpret][browser]") {
  const Interpretation c = clay();
  const auto plots = report::interpretation_plot_ids(c, demo());
  // The clay has UU tests with depths, CU tests, an oedometer and steady end states.
  for (const char* id : {"plot-uu-mohr", "plot-cu-depth", "plot-s-t", "plot-mohr", "plot-oedometer", "plot-critical-state"})
    CHECK(std::find(plots.begin(), plots.end(), id) != plots.end());
  check_in_browser(c, "clay", true);
}

TEST_CASE("the interpretation report of drained tests renders in headless Chromium with its stiffness and dilatancy plots",
          "[report][interpret][browser]") {
  const Interpretation s = sand();
  const auto sand_plots = report::interpretation_plot_ids(s, demo());
  for (const char* id : {"plot-s-t", "plot-mohr", "plot-stiffness", "plot-dilatancy"})
    CHECK(std::find(sand_plots.begin(), sand_plots.end(), id) != sand_plots.end());
  check_in_browser(s, "sand", false);  // one screenshot (the clay's) is enough as an artefact
}

TEST_CASE("the interpretation report's page layout: running header with page x of y, headings kept with what follows, sign-off",
          "[report][interpret]") {
  const std::string html = report::render_interpretation_report(clay(), demo());
  // Self-contained: the only URL is the SVG namespace name, an identifier that is not fetched.
  const std::string stripped = std::regex_replace(html, std::regex("xmlns=\"http://www\\.w3\\.org/2000/svg\""), "");
  CHECK(stripped.find("http:") == std::string::npos);
  CHECK(stripped.find("https:") == std::string::npos);
  CHECK(html.find("<link") == std::string::npos);
  CHECK(html.find(" src=") == std::string::npos);
  CHECK(html.find("@import") == std::string::npos);
  CHECK(std::regex_search(html, std::regex("url\\((?!#)")) == false);
  CHECK(html.find("@top-left { content: \"Interpretation of triaxial and oedometer tests\"") != std::string::npos);
  CHECK(html.find("@top-right { content: \"Kestrel Bay terrace (INVENTED demo site)  \u00b7  \" \"page \" counter(page) \" of \" "
                  "counter(pages)") != std::string::npos);
  CHECK(html.find("h2, h3 { break-after: avoid;") != std::string::npos);
  // Not on figcaption: the last element of a section, its break-after reaches the section's end and
  // left the next heading alone at the foot of a page (seen printed; the printed test below).
  CHECK(html.find("figcaption { break-after: avoid") == std::string::npos);
  const auto dom = parse_xml(html);
  const Element* signoff = dom->by_id("table-signoff");
  REQUIRE(signoff != nullptr);
  std::vector<std::string> roles;
  for (const Element* th : signoff->by_name("th")) roles.push_back(th->text);
  for (const char* role : {"prepared", "checked", "approved"}) CHECK(std::find(roles.begin(), roles.end(), role) != roles.end());
  for (const Element* td : signoff->by_name("td")) CHECK(td->text.empty());  // blank fields
  // Left out, with the reason, in the tests table and the list of tests left out.
  CHECK(dom->by_id("table-left-out")->by_name("td").size() >= 4);
  CHECK(html.find("no: membrane leak (invented)") != std::string::npos);
}

namespace {

std::string squeeze(const std::string& line) {
  std::string out;
  for (char c : line) {
    if (c == ' ' && (out.empty() || out.back() == ' ')) continue;
    out += c;
  }
  while (!out.empty() && out.back() == ' ') out.pop_back();
  return out;
}

std::vector<std::string> lines_of(const std::string& page) {
  std::vector<std::string> lines;
  std::istringstream in(page);
  for (std::string line; std::getline(in, line);)
    if (!squeeze(line).empty()) lines.push_back(squeeze(line));
  return lines;
}

/// Prints the report of `in` to PDF in headless Chromium and reads each page's text back.
void check_printed(const Interpretation& in, const std::string& tag) {
  const std::string browser = find_chromium();
  INFO(kChromiumMissing);
  REQUIRE_FALSE(browser.empty());
  {
    INFO(kPdftotextMissing);
    REQUIRE(std::system("command -v pdftotext >/dev/null 2>&1") == 0);
  }
  const std::string html = write("printed_" + tag, in);
  std::string log;
  const std::vector<std::string> pages = printed_pages(browser, html, "interp_" + tag, log);
  INFO("chromium and pdftotext said:\n" << log);
  REQUIRE(pages.size() >= 2);
  std::vector<std::string> headings;
  const auto dom = parse_xml(slurp(html));
  for (const char* h : {"h2", "h3"})
    for (const Element* e : dom->by_name(h)) headings.push_back(squeeze(e->text));
  REQUIRE(headings.size() >= 8);
  const std::string n = std::to_string(pages.size());
  bool signoff_whole = false;
  for (std::size_t i = 0; i < pages.size(); ++i) {
    const std::vector<std::string> lines = lines_of(pages[i]);
    INFO("page " << i + 1 << " of " << n << ":\n" << pages[i]);
    REQUIRE(lines.size() >= 2);
    // The running header: title, site, page x of y, on the first line of every page.
    CHECK(lines.front().find("Interpretation of triaxial and oedometer tests") == 0);
    CHECK(lines.front().find("Kestrel Bay terrace (INVENTED demo site)") != std::string::npos);
    CHECK(lines.front().find("page " + std::to_string(i + 1) + " of " + n) != std::string::npos);
    // No heading as the last line of a page (the page's text ends with what followed a heading).
    CHECK(std::find(headings.begin(), headings.end(), lines.back()) == headings.end());
    const std::string text = pages[i];
    if (text.find("Sign-off") != std::string::npos)
      signoff_whole = text.find("prepared") != std::string::npos && text.find("checked") != std::string::npos &&
                      text.find("approved") != std::string::npos && text.find("signature") != std::string::npos;
  }
  CHECK(signoff_whole);  // the sign-off block on one page with its heading
}

}  // namespace

TEST_CASE("the interpretation report printed to PDF: running header with page x of y on every page, no heading alone at "
          "the foot of a page, the sign-off block whole",
          "[report][interpret][browser][print]") {
  // The clay with the options of the demo script (max stress ratio, no design stress) printed the
  // heading of section 6 alone at the foot of page 8 before the fix; the clay and sand of the tests.
  InterpretOptions o;
  o.material = "clay C";
  o.criterion = FailureCriterion::max_stress_ratio;
  check_printed(interpret(demo(), o), "clay_demo");
  check_printed(clay(), "clay");
  check_printed(sand(), "sand");
}

TEST_CASE("the s'-t plot reads back within a pixel: failure points by both criteria, the lines over the s' range used",
          "[report][interpret][readback]") {
  const Interpretation in = clay();
  const auto dom = parse_xml(report::render_interpretation_report(in, demo()));
  const Element* svg = dom->by_id("plot-s-t");
  REQUIRE(svg != nullptr);
  const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
  // Markers of the maximum-deviator points in stage order, then the maximum-stress-ratio ones.
  for (const char* cls : {"failure-max-deviator", "failure-max-stress-ratio"}) {
    INFO(cls);
    const Element* g = series_of_class(*svg, cls);
    REQUIRE(g != nullptr);
    const auto uses = g->by_name("use");
    std::vector<const FailurePoint*> expected;
    for (const StageInterpretation& s : in.stages)
      if (s.test != ShearType::uu)
        expected.push_back(std::string(cls) == "failure-max-deviator" ? &s.by_max_deviator : &s.by_max_stress_ratio);
    REQUIRE(uses.size() == expected.size());
    for (std::size_t i = 0; i < uses.size(); ++i) {
      CHECK(pixel_error(mx, expected[i]->s, std::stod(uses[i]->get("x"))) < 1.0);
      CHECK(pixel_error(my, expected[i]->t, std::stod(uses[i]->get("y"))) < 1.0);
    }
  }
  // The regression line from the smallest to the largest s' used, at t = a + b s'.
  const StrengthEnvelope& e = in.envelopes.front();
  const Element* reg = series_of_class(*svg, "regression");
  REQUIRE(reg != nullptr);
  const auto pts = polyline(*reg);
  REQUIRE(pts.size() == 2);
  CHECK(pixel_error(mx, e.st.x_min, pts[0].first) < 1.0);
  CHECK(pixel_error(mx, e.st.x_max, pts[1].first) < 1.0);
  CHECK(pixel_error(my, e.st.intercept + e.st.slope * e.st.x_min, pts[0].second) < 1.0);
  CHECK(pixel_error(my, e.st.intercept + e.st.slope * e.st.x_max, pts[1].second) < 1.0);
  // The design stress: the locus s' - t sin phi' = 100 kPa starts at (100, 0).
  const Element* ds = series_of_class(*svg, "design-stress");
  REQUIRE(ds != nullptr);
  const auto dpts = polyline(*ds);
  REQUIRE(dpts.size() == 2);
  CHECK(pixel_error(mx, 100.0, dpts[0].first) < 1.0);
  CHECK(pixel_error(my, 0.0, dpts[0].second) < 1.0);
  // ... and every point on it has sigma'_nf = 100: the far end read back.
  const double s_end = mx.a + mx.b * dpts[1].first, t_end = my.a + my.b * dpts[1].second;
  CHECK(std::abs(s_end - t_end * std::sin(degrees_to_radians(e.phi)) - 100.0) < std::abs(mx.b) + std::abs(my.b));
}

TEST_CASE("the effective Mohr circles read back within a pixel, each labelled, and honour a non-default criterion",
          "[report][interpret][readback]") {
  for (FailureCriterion criterion : {FailureCriterion::max_deviator, FailureCriterion::max_stress_ratio}) {
    const Interpretation in = clay(criterion);
    INFO("criterion " << to_string(criterion));
    REQUIRE(in.envelopes.front().criterion == criterion);
    const auto dom = parse_xml(report::render_interpretation_report(in, demo()));
    const Element* svg = dom->by_id("plot-mohr");
    REQUIRE(svg != nullptr);
    const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
    const auto arcs = svg->by_class("mohr-circle");
    std::vector<const FailurePoint*> expected;
    std::vector<std::string> names;
    for (const StageInterpretation& s : in.stages)
      if (s.test != ShearType::uu) {
        expected.push_back(criterion == FailureCriterion::max_deviator ? &s.by_max_deviator : &s.by_max_stress_ratio);
        names.push_back(s.specimen);
      }
    REQUIRE(arcs.size() == expected.size());
    for (std::size_t i = 0; i < arcs.size(); ++i) {
      std::istringstream d(arcs[i]->get("d"));
      std::string M, A;
      double x0, y0, rx, ry, rot, large, sweep, x1, y1;
      d >> M >> x0 >> y0 >> A >> rx >> ry >> rot >> large >> sweep >> x1 >> y1;
      const double c = expected[i]->s, r = expected[i]->t;
      CHECK(pixel_error(mx, c - r, x0) < 1.0);
      CHECK(pixel_error(mx, c + r, x1) < 1.0);
      CHECK(pixel_error(my, 0.0, y0) < 1.0);
      CHECK(arcs[i]->get("data-name").rfind(names[i], 0) == 0);  // labelled by its test
    }
    // The page names the declared criterion where the envelope is reported.
    const Element* table = dom->by_id("table-strength");
    REQUIRE(table != nullptr);
    const auto rows = table->by_name("tr");
    REQUIRE(rows.size() >= 2);
    CHECK(rows[1]->get("data-criterion") == to_string(criterion));
    const Element* st = dom->by_id("plot-s-t");
    const Element* declared = series_of_class(
        *st, criterion == FailureCriterion::max_deviator ? "failure-max-deviator" : "failure-max-stress-ratio");
    REQUIRE(declared != nullptr);
    CHECK(declared->get("data-name").find("(declared)") != std::string::npos);
  }
}

TEST_CASE("failure-value stages are drawn in the s'-t and Mohr plots as points without a path, read back within a pixel",
          "[report][interpret][readback]") {
  // The invented Hollowmere Reach site typed in as a series (tests/ags/data): CU specimens known by the lab's values at
  // failure only, on t = 10 + 0.5 s' (hand calculation in tests/ags/import_test.cpp).
  const TestSeries series = read_test_series(source_path("tests/ags/data/hollowmere_reach_series.json"));
  InterpretOptions o;
  o.material = "clay A";
  const Interpretation in = interpret(series, o);
  const auto dom = parse_xml(report::render_interpretation_report(in, series));
  CHECK(dom->by_id("no-strength") == nullptr);
  const Element* svg = dom->by_id("plot-s-t");
  REQUIRE(svg != nullptr);
  const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
  std::vector<const StageInterpretation*> reported;
  for (const StageInterpretation& s : in.stages)
    if (s.test == ShearType::cu) reported.push_back(&s);
  REQUIRE(reported.size() == 5);
  const Element* g = series_of_class(*svg, "failure-max-deviator");
  REQUIRE(g != nullptr);
  const auto uses = g->by_name("use");
  REQUIRE(uses.size() == reported.size());
  for (std::size_t i = 0; i < uses.size(); ++i) {
    INFO(reported[i]->specimen << " stage " << reported[i]->shear_stage);
    // s' = cell - u_f + q_f / 2, t = q_f / 2 from the lab's values (the hand calculation's points).
    CHECK(pixel_error(mx, reported[i]->by_max_deviator.s, std::stod(uses[i]->get("x"))) < 1.0);
    CHECK(pixel_error(my, reported[i]->by_max_deviator.t, std::stod(uses[i]->get("y"))) < 1.0);
    CHECK(pixel_error(my, 0.5 * reported[i]->by_max_deviator.q, std::stod(uses[i]->get("y"))) < 1.0);
  }
  CHECK(svg->by_class("stress-path").empty());  // no curve, no path
  // A criterion's legend entry only where it has points.
  bool any_ratio = false;
  for (const StageInterpretation* s : reported) any_ratio = any_ratio || !std::isnan(s->by_max_stress_ratio.s);
  INFO("points by the maximum stress ratio: " << any_ratio);
  CHECK((series_of_class(*svg, "failure-max-stress-ratio") != nullptr) == any_ratio);
  const Element* fig = dom->by_id("fig-plot-s-t");
  REQUIRE(fig != nullptr);
  CHECK(fig->by_name("figcaption").front()->text.find("Failure points without a path are the lab's values at failure") !=
        std::string::npos);
  // Mohr circles: centre s', radius t of each reported point.
  const Element* mohr = dom->by_id("plot-mohr");
  REQUIRE(mohr != nullptr);
  const AxisMap cx = read_axis(*mohr, "x"), cy = read_axis(*mohr, "y");
  const auto arcs = mohr->by_class("mohr-circle");
  REQUIRE(arcs.size() == reported.size());
  for (std::size_t i = 0; i < arcs.size(); ++i) {
    std::istringstream d(arcs[i]->get("d"));
    std::string M, A;
    double x0, y0, rx, ry, rot, large, sweep, x1, y1;
    d >> M >> x0 >> y0 >> A >> rx >> ry >> rot >> large >> sweep >> x1 >> y1;
    const double c = reported[i]->by_max_deviator.s, r = reported[i]->by_max_deviator.t;
    CHECK(pixel_error(cx, c - r, x0) < 1.0);
    CHECK(pixel_error(cx, c + r, x1) < 1.0);
    CHECK(pixel_error(cy, 0.0, y0) < 1.0);
    CHECK(arcs[i]->get("data-name").rfind(reported[i]->specimen, 0) == 0);
  }
}

// Sand state (issue 17): the section of the power-law critical-state line, the state parameter, the
// trends against it and the CU phase transformation and instability. Data: the invented Gannet Reach
// series (examples/gannet_reach) and invented specimens whose expected values are hand calculations.
namespace {

const TestSeries& gannet() {
  static const TestSeries series = read_test_series(source_path("examples/gannet_reach/gannet_reach_series.json"));
  return series;
}

Interpretation gannet_interpretation() { return interpret(gannet(), InterpretOptions{}); }

std::vector<std::pair<double, double>> markers(const Element& g) {
  std::vector<std::pair<double, double>> pts;
  for (const Element* u : g.by_name("use")) pts.emplace_back(std::stod(u->get("x")), std::stod(u->get("y")));
  return pts;
}

const Element* row_with(const Element& table, const std::string& attribute, const std::string& value) {
  for (const Element* tr : table.by_name("tr"))
    if (tr->get(attribute) == value) return tr;
  return nullptr;
}

std::string cells(const Element& tr) {
  std::string out;
  for (const Element* td : tr.by_name("td")) out += td->text + "|";
  return out;
}

// Hand values (the specimens of tests/interpret/sand_state_test.cpp, sand_hand in
// tests/interpret/synthetic_specimen.hpp): CD compression specimens whose steady end states lie on
// e_c = 0.90 - 0.03 (p'/p_at)^0.7 and whose start states have psi_0 = -0.10, -0.05, -0.02, with
// phi'_peak = 33 - 40 psi_0 (37, 35, 33.8 deg), M = 1.2.
using sand_hand::csl;

/// A dense CU specimen: p' falls from 100 to 70 kPa at 2 % axial strain, then rises to 190 kPa at 15 %;
/// q = 2000 e_a to 2 %, then 40 + 900 (e_a - 0.02): phase transformation at 2 %, q/p' = 40/70.
Specimen hand_cu(double e0) {
  std::vector<double> ea, q, du, e;
  for (int i = 0; i <= 75; ++i) {
    const double x = 0.002 * i;
    const double p = x <= 0.02 ? 100.0 - 1500.0 * x : 70.0 + 120.0 * (x - 0.02) / 0.13;
    ea.push_back(x);
    q.push_back(x <= 0.02 ? 2000.0 * x : 40.0 + 900.0 * (x - 0.02));
    du.push_back(100.0 + q.back() / 3.0 - p);
    e.push_back(e0);
  }
  return make_specimen("CU-dense", ShearType::cu, 100.0, ea, q, {}, du, e);
}

TestSeries hand_series() {
  TestSeries series;
  series.source = "invented_sand.json";
  const double s3[] = {60.0, 120.0, 240.0}, psi[] = {-0.10, -0.05, -0.02};
  for (int k = 0; k < 3; ++k) series.specimens.push_back(sand_hand::cd("D" + std::to_string(k), s3[k], csl(s3[k]) + psi[k], 33.0 - 40.0 * psi[k]));
  series.specimens.push_back(hand_cu(0.70));
  return series;
}

}  // namespace

TEST_CASE("the sand section renders in headless Chromium: critical-state line, state parameter, trends, CU paths",
          "[report][interpret][browser][sand]") {
  const Interpretation in = gannet_interpretation();
  const auto plots = report::interpretation_plot_ids(in, gannet());
  for (const char* id : {"plot-critical-state", "plot-sand-csl", "plot-sand-peak-angle", "plot-sand-dilation", "plot-sand-cu-paths"})
    CHECK(std::find(plots.begin(), plots.end(), id) != plots.end());
  const auto tables = report::interpretation_table_ids(in, gannet());
  for (const char* id : {"table-sand-csl", "table-sand-state", "table-sand-cu"})
    CHECK(std::find(tables.begin(), tables.end(), id) != tables.end());
  check_in_browser(in, "gannet", true, gannet());
}

TEST_CASE("the sand plots read back within a pixel: critical states, the power-law line, phi'_peak against psi, "
          "phase transformation and instability",
          "[report][interpret][readback][sand]") {
  const Interpretation in = gannet_interpretation();
  REQUIRE(in.csl_power_reason.empty());
  const auto dom = parse_xml(report::render_interpretation_report(in, gannet()));
  {
    const Element* svg = dom->by_id("plot-sand-csl");
    REQUIRE(svg != nullptr);
    const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
    const Element* g = series_of_class(*svg, "csl-point");
    REQUIRE(g != nullptr);
    std::vector<std::pair<double, double>> expected;
    for (const StageInterpretation& s : in.stages)
      if (s.steady_state && s.direction == ShearDirection::compression) expected.emplace_back(s.end_p, s.end_void_ratio);
    const auto pts = markers(*g);
    REQUIRE(pts.size() == expected.size());
    REQUIRE(pts.size() == static_cast<std::size_t>(in.csl_power.n));
    for (std::size_t i = 0; i < pts.size(); ++i) {
      CHECK(pixel_error(mx, expected[i].first, pts[i].first) < 1.0);
      CHECK(pixel_error(my, expected[i].second, pts[i].second) < 1.0);
    }
    // The line's first vertex: the smallest p' of the end states, on e_c = e_Gamma - lambda_c (p'/p_at)^xi.
    const Element* l = series_of_class(*svg, "csl-power");
    REQUIRE(l != nullptr);
    const auto v = polyline(*l);
    REQUIRE(v.size() == 41);
    const double p0 = 101.325 * std::pow(in.csl_power.x_min, 1.0 / in.csl_exponent);
    CHECK(pixel_error(mx, p0, v[0].first) < 1.0);
    CHECK(pixel_error(my, in.csl_power.intercept + in.csl_power.slope * in.csl_power.x_min, v[0].second) < 1.0);
  }
  {
    const Element* svg = dom->by_id("plot-sand-peak-angle");
    REQUIRE(svg != nullptr);
    const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
    const Element* g = series_of_class(*svg, "peak-angle");
    REQUIRE(g != nullptr);
    std::vector<std::pair<double, double>> expected;
    for (const StageInterpretation& s : in.stages)
      if (std::isfinite(s.state_parameter) && std::isfinite(s.peak_friction_angle)) expected.emplace_back(s.state_parameter, s.peak_friction_angle);
    const auto pts = markers(*g);
    REQUIRE(pts.size() == expected.size());
    REQUIRE(pts.size() == 6);  // the six CD tests of Gannet Reach
    for (std::size_t i = 0; i < pts.size(); ++i) {
      CHECK(pixel_error(mx, expected[i].first, pts[i].first) < 1.0);
      CHECK(pixel_error(my, expected[i].second, pts[i].second) < 1.0);
    }
    REQUIRE(in.peak_angle_vs_psi_reason.empty());
    const Element* reg = series_of_class(*svg, "regression");
    REQUIRE(reg != nullptr);
    const auto r = polyline(*reg);
    REQUIRE(r.size() == 2);
    const LineFit& f = in.peak_angle_vs_psi;
    CHECK(pixel_error(mx, f.x_max, r[1].first) < 1.0);
    CHECK(pixel_error(my, f.intercept + f.slope * f.x_max, r[1].second) < 1.0);
    CHECK(f.slope < 0.0);  // denser (psi more negative) is stronger
  }
  {
    const Element* svg = dom->by_id("plot-sand-cu-paths");
    REQUIRE(svg != nullptr);
    const AxisMap mx = read_axis(*svg, "x"), my = read_axis(*svg, "y");
    for (const char* cls : {"phase-transformation", "instability"}) {
      INFO(cls);
      const Element* g = series_of_class(*svg, cls);
      REQUIRE(g != nullptr);
      std::vector<const FailurePoint*> expected;
      for (const StageInterpretation& s : in.stages)
        if (std::string(cls) == "instability" ? std::isfinite(s.instability_ratio) : std::isfinite(s.phase_transformation_ratio))
          expected.push_back(std::string(cls) == "instability" ? &s.instability : &s.phase_transformation);
      const auto pts = markers(*g);
      REQUIRE(pts.size() == expected.size());
      for (std::size_t i = 0; i < pts.size(); ++i) {
        CHECK(pixel_error(mx, expected[i]->p, pts[i].first) < 1.0);
        CHECK(pixel_error(my, expected[i]->q, pts[i].second) < 1.0);
      }
    }
    // Gannet Reach's dense CU tests pass phase transformation (generate_data.py, invented).
    CHECK(markers(*series_of_class(*svg, "phase-transformation")).size() >= 3);
  }
}

TEST_CASE("the sand tables give the hand values: e_Gamma, lambda_c, psi at the start of shear, the trend, the phase "
          "transformation ratio",
          "[report][interpret][sand]") {
  const TestSeries series = hand_series();
  const Interpretation in = interpret(series, InterpretOptions{});
  const auto dom = parse_xml(report::render_interpretation_report(in, series));
  const Element* csl_table = dom->by_id("table-sand-csl");
  REQUIRE(csl_table != nullptr);
  CHECK(cells(*row_with(*csl_table, "data-key", "e_gamma")).rfind("0.9000|-|3 steady end state(s), p", 0) == 0);
  CHECK(cells(*row_with(*csl_table, "data-key", "lambda_c")).rfind("0.0300|-|", 0) == 0);
  CHECK(cells(*row_with(*csl_table, "data-key", "xi")).rfind("0.70|-|fixed", 0) == 0);
  // phi'_peak = 33 - 40 psi_0 exactly.
  CHECK(cells(*row_with(*csl_table, "data-key", "peak_angle_trend")).rfind("a 33.000, b -40.000|deg|3 CD compression stage(s)", 0) == 0);
  const Element* state = dom->by_id("table-sand-state");
  REQUIRE(state != nullptr);
  const double psi[] = {-0.10, -0.05, -0.02};
  for (int k = 0; k < 3; ++k) {
    const Element* tr = row_with(*state, "data-test", "D" + std::to_string(k));
    REQUIRE(tr != nullptr);
    CHECK(std::stod(tr->get("data-psi")) == Approx(psi[k]).margin(1e-6));
    CHECK(cells(*tr).find("|yes|") != std::string::npos);  // steady from 12 % to 20 %
  }
  // The CU specimen ends at 15 % with p' still rising: not critical, with the reason; its psi_0 against the line.
  const Element* cu = row_with(*state, "data-test", "CU-dense");
  REQUIRE(cu != nullptr);
  CHECK(std::stod(cu->get("data-psi")) == Approx(0.70 - csl(100.0)).margin(1e-6));
  CHECK(cells(*cu).find("|no: q changes by ") != std::string::npos);
  const Element* cu_table = dom->by_id("table-sand-cu");
  REQUIRE(cu_table != nullptr);
  const Element* pt = row_with(*cu_table, "data-test", "CU-dense");
  REQUIRE(pt != nullptr);
  CHECK(cells(*pt).find("|2.00|70.0|40.0|0.571|none: no peak of q") != std::string::npos);
}

TEST_CASE("the sand section says 'not determined' with the reason where one steady state cannot give a line",
          "[report][interpret][sand]") {
  TestSeries series;
  series.source = "invented_sand.json";
  series.specimens.push_back(sand_hand::cd("D0", 100.0, 0.80, 36.0));
  series.specimens.push_back(hand_cu(0.70));
  const Interpretation in = interpret(series, InterpretOptions{});
  const auto tables = report::interpretation_table_ids(in, series);
  REQUIRE(std::find(tables.begin(), tables.end(), "table-sand-csl") != tables.end());  // the CU phase transformation
  const auto dom = parse_xml(report::render_interpretation_report(in, series));
  const Element* csl_table = dom->by_id("table-sand-csl");
  REQUIRE(csl_table != nullptr);
  CHECK(cells(*row_with(*csl_table, "data-key", "e_gamma")) ==
        "&#8212;|-|not determined: 2 or more steady end states with a void ratio are needed, found 1|");
  CHECK(cells(*row_with(*csl_table, "data-key", "psi_line")).find("|not determined: no critical-state line (") != std::string::npos);
  const Element* d0 = row_with(*dom->by_id("table-sand-state"), "data-test", "D0");
  REQUIRE(d0 != nullptr);
  CHECK(cells(*d0).find("psi not determined: no critical-state line") != std::string::npos);
  const auto plots = report::interpretation_plot_ids(in, series);
  CHECK(std::find(plots.begin(), plots.end(), "plot-sand-peak-angle") == plots.end());
}
