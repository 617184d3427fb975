// The SVG plot writer: nice ticks, and plotted points that map back to their data through the
// tick labels written in the same SVG (the SVG is parsed, not the writer's own mapping).
#include <catch2/catch.hpp>

#include <cmath>
#include <set>
#include <sstream>

#include "svg_reader.hpp"
#include "triaxcal/svg_plot.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

struct AxisMap {
  double a = 0, b = 0;  // value (or log10 value) = a + b * pixel
  double max_tick_error_px = 0;
  int ticks = 0;
};

// Least-squares line through (tick pixel, tick label value) of one axis, read from the SVG.
AxisMap read_axis(const Element& svgroot, const std::string& which, bool log) {
  std::vector<double> px, val;
  for (const Element* g : svgroot.by_class("tick-" + which)) {
    const auto lines = g->by_name("line");
    const auto texts = g->by_name("text");
    REQUIRE(lines.size() == 1);
    REQUIRE(texts.size() == 1);
    px.push_back(std::stod(lines[0]->get(which == "x" ? "x1" : "y1")));
    const double v = std::stod(texts[0]->text);
    val.push_back(log ? std::log10(v) : v);
  }
  AxisMap m;
  m.ticks = static_cast<int>(px.size());
  REQUIRE(px.size() >= 2);
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < px.size(); ++i) {
    mx += px[i];
    my += val[i];
  }
  mx /= px.size();
  my /= px.size();
  double sxy = 0, sxx = 0;
  for (std::size_t i = 0; i < px.size(); ++i) {
    sxy += (px[i] - mx) * (val[i] - my);
    sxx += (px[i] - mx) * (px[i] - mx);
  }
  m.b = sxy / sxx;
  m.a = my - m.b * mx;
  for (std::size_t i = 0; i < px.size(); ++i)
    m.max_tick_error_px = std::max(m.max_tick_error_px, std::abs((val[i] - m.a) / m.b - px[i]));
  return m;
}

// Pixel distance between a data value and a plotted pixel coordinate, through the axis map.
double pixel_error(const AxisMap& m, double data, double pixel, bool log) {
  const double v = log ? std::log10(data) : data;
  return std::abs((v - m.a) / m.b - pixel);
}

const Element& only_svg(const Element& root) {
  const auto svgs = root.by_name("svg");
  REQUIRE(svgs.size() == 1);
  return *svgs[0];
}

const Element* series_named(const Element& svgroot, const std::string& name) {
  for (const Element* g : svgroot.by_class("series"))
    if (g->get("data-name") == name) return g;
  return nullptr;
}

std::vector<std::pair<double, double>> polyline_points(const Element& line) {
  std::vector<std::pair<double, double>> pts;
  std::istringstream in(line.get("points"));
  std::string pair;
  while (in >> pair) {
    const auto comma = pair.find(',');
    pts.emplace_back(std::stod(pair.substr(0, comma)), std::stod(pair.substr(comma + 1)));
  }
  return pts;
}

bool is_nice_step(double step) {
  const double mag = std::pow(10.0, std::floor(std::log10(step) + 1e-12));
  const double f = step / mag;
  for (double n : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (std::abs(f - n) < 1e-9) return true;
  return false;
}

}  // namespace

TEST_CASE("nice ticks are 1, 2, 2.5 or 5 times a power of ten, evenly spaced, and cover the range") {
  const std::vector<std::pair<double, double>> ranges = {
      {0, 1}, {0, 0.073}, {-12.5, 387}, {95, 105}, {0, 15}, {1e-4, 3e-4}, {-0.031, -0.002}, {0, 2400}, {17, 18.2}};
  for (const auto& [lo, hi] : ranges) {
    INFO("range " << lo << " .. " << hi);
    const std::vector<double> t = svg::nice_ticks(lo, hi, 6);
    REQUIRE(t.size() >= 3);
    CHECK(t.size() <= 12);
    CHECK(t.front() <= lo + 1e-12);
    CHECK(t.back() >= hi - 1e-12);
    const double step = t[1] - t[0];
    CHECK(is_nice_step(step));
    for (std::size_t i = 1; i < t.size(); ++i) CHECK(std::abs(t[i] - t[i - 1] - step) < 1e-9 * step);
  }
}

TEST_CASE("log ticks are decades with 2 and 5 between them over a few decades") {
  const std::vector<double> t = svg::log_ticks(10, 1000);
  CHECK(t == std::vector<double>{10, 20, 50, 100, 200, 500, 1000});
  const std::vector<double> wide = svg::log_ticks(1e-3, 1e3);
  CHECK(wide == std::vector<double>{1e-3, 1e-2, 1e-1, 1, 10, 100, 1000});
}

TEST_CASE("tick labels carry as many decimals as the spacing needs and never show -0") {
  CHECK(svg::tick_label(0.05, 0.01) == "0.05");
  CHECK(svg::tick_label(7.5, 2.5) == "7.5");
  CHECK(svg::tick_label(250, 50) == "250");
  CHECK(svg::tick_label(-1e-17, 0.2) == "0.0");
  CHECK(svg::tick_label(0.0004, 0.0002) == "0.0004");
  CHECK(svg::tick_label(20000, 5000) == "20000");
}

TEST_CASE("plotted markers and line vertices map back to the data within a pixel through the tick labels") {
  // A hyperbolic stress-strain curve q = e / (1/E + e/q_ult), axial strain in %, E and q_ult
  // invented for the check; the "measured" points are the same curve sampled coarsely.
  const double E = 15000.0, q_ult = 420.0;  // kPa
  svg::Plot p;
  p.id = "t1";
  p.x = {"axial strain", "%"};
  p.y = {"deviator stress q", "kPa"};
  p.x.include_zero = p.y.include_zero = true;
  svg::Series meas, sim;
  meas.name = "measured";
  meas.marker = svg::Marker::circle;
  meas.dash = svg::Dash::none;
  sim.name = "model";
  sim.dash = svg::Dash::dashed;
  sim.style = 1;
  for (int i = 0; i <= 150; ++i) {
    const double e = 0.001 * i;  // decimal
    const double q = e / (1.0 / E + e / q_ult);
    sim.xs.push_back(100 * e);
    sim.ys.push_back(q);
    if (i % 10 == 3) {
      meas.xs.push_back(100 * e);
      meas.ys.push_back(q * (1.0 + 0.01 * ((i / 10) % 3 - 1)));
    }
  }
  p.series = {meas, sim};
  const std::string text = svg::render_svg(p);
  const auto root = parse_xml(text);
  const Element& s = only_svg(*root);
  const AxisMap mx = read_axis(s, "x", false), my = read_axis(s, "y", false);
  CHECK(mx.max_tick_error_px < 0.02);
  CHECK(my.max_tick_error_px < 0.02);
  CHECK(mx.ticks >= 4);
  CHECK(my.ticks >= 4);

  const Element* gm = series_named(s, "measured");
  REQUIRE(gm != nullptr);
  const auto uses = gm->by_name("use");
  REQUIRE(uses.size() == meas.xs.size());
  double worst = 0;
  for (std::size_t i = 0; i < uses.size(); ++i) {
    worst = std::max(worst, pixel_error(mx, meas.xs[i], std::stod(uses[i]->get("x")), false));
    worst = std::max(worst, pixel_error(my, meas.ys[i], std::stod(uses[i]->get("y")), false));
  }
  CHECK(worst < 1.0);
  CHECK(worst < 0.05);  // written to 0.01 px

  const Element* gs = series_named(s, "model");
  REQUIRE(gs != nullptr);
  const auto lines = gs->by_name("polyline");
  REQUIRE(lines.size() == 1);
  const auto pts = polyline_points(*lines[0]);
  REQUIRE(pts.size() == sim.xs.size());
  worst = 0;
  for (std::size_t i = 0; i < pts.size(); ++i) {
    worst = std::max(worst, pixel_error(mx, sim.xs[i], pts[i].first, false));
    worst = std::max(worst, pixel_error(my, sim.ys[i], pts[i].second, false));
  }
  CHECK(worst < 1.0);
  CHECK(lines[0]->get("stroke-dasharray") == "7 4");
  // Units in the axis titles.
  CHECK(s.by_class("axis-title-x").at(0)->text == "axial strain (%)");
  CHECK(s.by_class("axis-title-y").at(0)->text == "deviator stress q (kPa)");
}

TEST_CASE("on a log axis the markers map back through log10 of the tick labels within a pixel") {
  // e = e0 - lambda ln(p'/p0): a normal compression line, numbers invented for the check.
  svg::Plot p;
  p.id = "t2";
  p.x = {"p'", "kPa"};
  p.x.log = true;
  p.y = {"void ratio e", "-"};
  svg::Series s;
  s.name = "oedometer";
  s.marker = svg::Marker::square;
  s.dash = svg::Dash::solid;
  for (double pp : {12.5, 25.0, 50.0, 100.0, 200.0, 400.0, 800.0}) {
    s.xs.push_back(pp);
    s.ys.push_back(1.35 - 0.18 * std::log(pp / 12.5));
  }
  p.series = {s};
  const auto root = parse_xml(svg::render_svg(p));
  const Element& e = only_svg(*root);
  const AxisMap mx = read_axis(e, "x", true), my = read_axis(e, "y", false);
  CHECK(mx.max_tick_error_px < 0.02);
  const auto uses = series_named(e, "oedometer")->by_name("use");
  REQUIRE(uses.size() == s.xs.size());
  for (std::size_t i = 0; i < uses.size(); ++i) {
    CHECK(pixel_error(mx, s.xs[i], std::stod(uses[i]->get("x")), true) < 1.0);
    CHECK(pixel_error(my, s.ys[i], std::stod(uses[i]->get("y")), false) < 1.0);
  }
}

TEST_CASE("with equal scales a Mohr circle is round and spans centre +- radius on the stress axis") {
  svg::Plot p;
  p.id = "t3";
  p.x = {"sigma'", "kPa"};
  p.y = {"tau", "kPa"};
  p.x.min = p.y.min = 0.0;
  p.equal_scale = true;
  p.circles.push_back({"failure", 180.0, 95.0, svg::Dash::solid, 0});
  p.circles.push_back({"failure", 420.0, 210.0, svg::Dash::solid, 0});
  const auto root = parse_xml(svg::render_svg(p));
  const Element& e = only_svg(*root);
  const AxisMap mx = read_axis(e, "x", false), my = read_axis(e, "y", false);
  CHECK(std::abs(std::abs(mx.b) - std::abs(my.b)) < 1e-3 * std::abs(mx.b));  // same kPa per px
  const auto arcs = e.by_class("mohr-circle");
  REQUIRE(arcs.size() == 2);
  for (std::size_t i = 0; i < arcs.size(); ++i) {
    std::istringstream d(arcs[i]->get("d"));
    std::string M, A;
    double x0, y0, rx, ry, rot, large, sweep, x1, y1;
    d >> M >> x0 >> y0 >> A >> rx >> ry >> rot >> large >> sweep >> x1 >> y1;
    const double c = p.circles[i].centre, r = p.circles[i].radius;
    CHECK(std::abs(rx - ry) < 0.02);
    CHECK(pixel_error(mx, c - r, x0, false) < 1.0);
    CHECK(pixel_error(mx, c + r, x1, false) < 1.0);
    CHECK(pixel_error(my, 0.0, y0, false) < 1.0);
    CHECK(std::abs(rx * std::abs(mx.b) - r) < std::abs(mx.b));  // radius within a pixel
  }
  CHECK(e.by_class("legend-entry").size() == 1);  // one entry for circles of one name
}

TEST_CASE("a shaded band spans its stress range within a pixel") {
  svg::Plot p;
  p.id = "t4";
  p.x = {"s'", "kPa"};
  p.y = {"t", "kPa"};
  p.bands.push_back({"range used", 50.0, 300.0, 6});
  svg::Series pts;
  pts.name = "points";
  pts.marker = svg::Marker::circle;
  pts.dash = svg::Dash::none;
  pts.xs = {20, 120, 260, 390};
  pts.ys = {15, 60, 130, 190};
  p.series = {pts};
  const auto root = parse_xml(svg::render_svg(p));
  const Element& e = only_svg(*root);
  const AxisMap mx = read_axis(e, "x", false);
  const auto bands = e.by_class("band");
  REQUIRE(bands.size() == 1);
  const double x = std::stod(bands[0]->get("x")), w = std::stod(bands[0]->get("width"));
  CHECK(pixel_error(mx, 50.0, x, false) < 1.0);
  CHECK(pixel_error(mx, 300.0, x + w, false) < 1.0);
}

TEST_CASE("default styles differ in dash pattern and marker shape, so series read without colour") {
  std::set<std::string> dashes, markers;
  for (int i = 0; i < 6; ++i) {
    dashes.insert(svg::to_string(svg::style_dash(i)));
    markers.insert(svg::to_string(svg::style_marker(i)));
  }
  CHECK(dashes.size() == 6);
  CHECK(markers.size() == 6);
  svg::Plot p;
  p.id = "t5";
  p.x = {"x", ""};
  p.y = {"y", ""};
  for (int i = 0; i < 4; ++i) {
    svg::Series s;
    s.name = "series " + std::to_string(i);
    s.style = i;
    s.dash = svg::style_dash(i);
    s.marker = svg::style_marker(i);
    s.xs = {0, 1, 2};
    s.ys = {0.0 + i, 1.0 + i, 1.5 + i};
    p.series.push_back(s);
  }
  const auto root = parse_xml(svg::render_svg(p));
  const Element& e = only_svg(*root);
  const auto entries = e.by_class("legend-entry");
  REQUIRE(entries.size() == 4);
  std::set<std::string> seen;
  for (const Element* g : e.by_class("series")) {
    const auto lines = g->by_name("polyline");
    REQUIRE(lines.size() == 1);
    seen.insert(lines[0]->get("stroke-dasharray") + "|" + g->get("data-marker"));
  }
  CHECK(seen.size() == 4);
  CHECK(e.by_class("axis-title-x").at(0)->text == "x");  // dimensionless: no "(-)"
}

TEST_CASE("non-finite values break a line and are not marked") {
  svg::Plot p;
  p.id = "t6";
  svg::Series s;
  s.name = "gappy";
  s.marker = svg::Marker::diamond;
  s.xs = {0, 1, 2, 3, 4, 5};
  s.ys = {0, 1, std::nan(""), 3, 4, 5};
  p.series = {s};
  const auto root = parse_xml(svg::render_svg(p));
  const Element* g = series_named(only_svg(*root), "gappy");
  REQUIRE(g != nullptr);
  CHECK(g->by_name("polyline").size() == 2);
  CHECK(g->by_name("use").size() == 5);
}

TEST_CASE("text is escaped, the SVG is well formed, and an empty plot shows its note inside axes") {
  svg::Plot p;
  p.id = "t7";
  p.title = "q < 5 & \"odd\" <name>";
  p.x = {"a<b", "kPa"};
  p.note = "no deviator-stress data";
  const std::string text = svg::render_svg(p);
  const auto root = parse_xml(text);  // throws when tags do not balance
  const Element& e = only_svg(*root);
  CHECK(e.by_class("plot-title").at(0)->text == "q < 5 & \"odd\" <name>");
  CHECK(e.by_class("plot-note").at(0)->text == "no deviator-stress data");
  CHECK(e.by_class("frame").size() == 1);
  CHECK(e.by_class("tick-x").size() >= 2);
  CHECK(text.find("http://www.w3.org/2000/svg") != std::string::npos);
}
