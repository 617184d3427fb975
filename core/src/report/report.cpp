#include "triaxcal/report.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "triaxcal/svg_plot.hpp"

namespace triaxcal::report {

namespace {

using svg::xml_escape;
constexpr double kPi = 3.14159265358979323846;
constexpr std::size_t kMaxMarkers = 80;   // measured points marked a series (every k-th point)
constexpr std::size_t kMaxLinePoints = 600;

std::string esc(const std::string& s) { return xml_escape(s); }

/// Four significant digits without exponent in the usual engineering range; an em dash for NaN.
std::string fmt(double v) {
  if (!std::isfinite(v)) return std::isnan(v) ? "&#8212;" : (v > 0 ? "&#8734;" : "&#8722;&#8734;");
  char buf[48];
  const double a = std::abs(v);
  if (a == 0.0) return "0";
  if (a >= 1e-3 && a < 1e7) {
    const int decimals = std::max(0, 3 - static_cast<int>(std::floor(std::log10(a))));
    std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  } else {
    std::snprintf(buf, sizeof buf, "%.3e", v);
  }
  return buf;
}

std::string fmt_fixed(double v, int decimals) {
  if (!std::isfinite(v)) return "&#8212;";
  char buf[48];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  std::string s = buf;
  if (s.find_first_not_of("-0.") == std::string::npos && s[0] == '-') s.erase(0, 1);
  return s;
}

/// The decimals `fmt` gives the larger of |a| and |b| (four significant digits), so that two values
/// and their difference print alike; -1 where `fmt` would use an exponent.
int shared_decimals(double a, double b) {
  double m = 0.0;
  for (double v : {a, b})
    if (std::isfinite(v)) m = std::max(m, std::abs(v));
  if (m == 0.0) return 0;
  if (m < 1e-3 || m >= 1e7) return -1;
  return std::max(0, 3 - static_cast<int>(std::floor(std::log10(m))));
}

/// A value of a comparison row with the row's decimals (exact zeros stay "0").
std::string fmt_row(double v, int decimals) {
  if (decimals < 0 || !std::isfinite(v)) return fmt(v);
  if (v == 0.0) return "0";
  return fmt_fixed(v, decimals);
}

/// Every k-th point (and the last) so that at most `limit` remain.
XY thin(const XY& in, std::size_t limit, double x_scale = 1.0, double y_scale = 1.0) {
  XY out;
  const std::size_t n = std::min(in.x.size(), in.y.size());
  if (n == 0) return out;
  const std::size_t step = std::max<std::size_t>(1, (n + limit - 1) / limit);
  for (std::size_t i = 0; i < n; i += step) {
    out.x.push_back(in.x[i] * x_scale);
    out.y.push_back(in.y[i] * y_scale);
  }
  if ((n - 1) % step != 0) {
    out.x.push_back(in.x[n - 1] * x_scale);
    out.y.push_back(in.y[n - 1] * y_scale);
  }
  return out;
}

svg::Series measured_series(const std::string& name, const XY& xy, int style, double xs = 1.0, double ys = 1.0) {
  const XY t = thin(xy, kMaxMarkers, xs, ys);
  svg::Series s;
  s.name = name;
  s.xs = t.x;
  s.ys = t.y;
  s.marker = svg::style_marker(style);
  s.dash = svg::Dash::none;
  s.style = style;
  s.css_class = "measured";
  return s;
}

svg::Series simulated_series(const std::string& name, const XY& xy, int style, double xs = 1.0, double ys = 1.0) {
  const XY t = thin(xy, kMaxLinePoints, xs, ys);
  svg::Series s;
  s.name = name;
  s.xs = t.x;
  s.ys = t.y;
  s.marker = svg::Marker::none;
  s.dash = svg::style_dash(style);
  s.style = style;
  s.css_class = "simulated";
  return s;
}

svg::Series line_series(const Line& line, double x0, double x1, int style, svg::Dash dash) {
  svg::Series s;
  s.name = line.name;
  s.style = style;
  s.dash = dash;
  s.width = 1.4;
  s.css_class = "envelope";
  const double a = std::isfinite(line.x_from) ? line.x_from : x0;
  const double b = std::isfinite(line.x_to) ? line.x_to : x1;
  s.xs = {a, b};
  s.ys = {line.intercept + line.slope * a, line.intercept + line.slope * b};
  return s;
}

bool line_known(const Line& l) { return std::isfinite(l.intercept) && std::isfinite(l.slope); }

std::string figure(const svg::Plot& plot, const std::string& caption) {
  std::ostringstream o;
  o << "<figure class=\"plot-figure\" id=\"fig-" << esc(plot.id) << "\">\n"
    << svg::render_svg(plot) << "<figcaption>" << esc(caption) << "</figcaption>\n</figure>\n";
  return o.str();
}

const char* kStyle = R"CSS(
:root { --ink: #111; --muted: #555; --rule: #bbb; --warn: #fff4d6; --bad: #fde2e1; --good: #e6f4ea; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink); margin: 0 auto;
       max-width: 1320px; padding: 16px 24px; font-size: 14px; line-height: 1.4; background: #fff; }
h1 { font-size: 22px; margin: 0 0 4px 0; }
h2 { font-size: 18px; border-bottom: 2px solid var(--ink); padding-bottom: 2px; margin-top: 28px; }
h3 { font-size: 15px; margin: 16px 0 6px 0; }
.meta { color: var(--muted); margin: 0 0 10px 0; }
.caution { border: 2px solid var(--ink); padding: 8px 12px; font-weight: bold; margin: 12px 0; }
.outcome { padding: 8px 12px; border-left: 6px solid var(--ink); margin: 12px 0; }
.outcome-converged { background: var(--good); }
.outcome-stopped, .outcome-poor_fit { background: var(--warn); border-left-style: double; }
.outcome-failed { background: var(--bad); border-left-style: dashed; border-left-width: 8px; }
table { border-collapse: collapse; margin: 6px 0 12px 0; font-size: 13px; }
th, td { border: 1px solid var(--rule); padding: 3px 7px; text-align: left; vertical-align: top; }
th { background: #eee; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.comparison-note td { font-size: 0.9em; font-style: italic; color: #444; background: #f6f6f2; }
td.strong { font-weight: bold; background: #ffd9b3; outline: 2px solid #000; outline-offset: -3px; }
td.diag { color: var(--muted); }
tr.failed td { background: var(--bad); }
tr.unused td { color: var(--muted); font-style: italic; }
.flag { font-weight: bold; }
.plots { display: flex; flex-wrap: wrap; gap: 12px 20px; }
figure.plot-figure { margin: 0; flex: 1 1 560px; max-width: 660px; break-inside: avoid; page-break-inside: avoid; }
figure.plot-figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 12px; color: var(--muted); margin-top: 2px; }
.test-block { break-inside: avoid; page-break-inside: avoid; margin-bottom: 10px; }
ul.warnings li { margin-bottom: 3px; }
.render-check { display: none; }
footer { margin-top: 30px; color: var(--muted); font-size: 12px; border-top: 1px solid var(--rule); }
@page { size: A4 portrait; margin: 14mm 12mm; }
@media print {
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  section.report-section { break-before: page; page-break-before: always; }
  h2 { margin-top: 0; }
  .plots { display: block; }
  figure.plot-figure { max-width: 170mm; margin: 0 auto 6mm auto; }
  table { font-size: 9pt; }
  td.strong { background: #ddd; }
}
)CSS";

// Runs after the page is parsed: checks that every plot and table is in place and writes the
// result into the DOM (the browser test reads it back from the dumped DOM).
const char* kCheckScript = R"JS(
(function () {
  var out = document.getElementById('render-check');
  try {
    var plots = document.querySelectorAll('svg.tx-plot');
    var tables = document.querySelectorAll('table.report-table');
    var bad = [];
    for (var i = 0; i < plots.length; ++i) {
      var frame = plots[i].querySelector('rect.frame');
      if (!frame || frame.getBBox().width <= 0) bad.push(plots[i].id);
    }
    out.setAttribute('data-plots', String(plots.length));
    out.setAttribute('data-tables', String(tables.length));
    out.setAttribute('data-status', bad.length === 0 ? 'ok' : 'bad frames: ' + bad.join(', '));
    out.textContent = 'page check: ' + plots.length + ' plots, ' + tables.length + ' tables';
  } catch (e) {
    out.setAttribute('data-status', 'error: ' + e.message);
  }
})();
)JS";

std::string drainage_word(Drainage d) {
  switch (d) {
    case Drainage::drained: return "drained";
    case Drainage::undrained: return "undrained";
    case Drainage::oedometer: return "oedometer";
    case Drainage::other: return "other";
  }
  return "other";
}

bool any_strength(const Strength& s) { return !s.points.empty(); }
bool any_compression(const ReportData& d) {
  return std::any_of(d.tests.begin(), d.tests.end(), [](const TestReport& t) { return !t.compression.empty(); });
}
bool any_residuals(const ReportData& d) {
  for (const TestReport& t : d.tests)
    for (const CurveQuality& q : t.quality)
      if (!q.residuals.empty()) return true;
  return false;
}

bool dimensionless(const std::string& unit) { return unit.empty() || unit == "-"; }

/// A unit column's cell: a dimensionless quantity says so instead of showing "-".
std::string unit_cell(const std::string& unit) { return dimensionless(unit) ? "dimensionless" : esc(unit); }

/// Fixed decimals without a "-0.00".
std::string fixed_text(double v, int decimals) {
  if (!std::isfinite(v)) return "-";
  char buf[48];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  std::string s = buf;
  if (s.find_first_not_of("-0.") == std::string::npos && s[0] == '-') s.erase(0, 1);
  return s;
}

/// How a compared quantity is named and scaled in the plots.
struct CurveLabel {
  std::string title;  ///< in words, for titles and captions
  std::string axis;   ///< axis label with its symbol
  std::string unit;   ///< plotted unit ("" = dimensionless)
  double scale = 1.0; ///< stored value times this is plotted
};

CurveLabel curve_label(const std::string& quantity) {
  if (quantity == "deviator_stress") return {"deviator stress", "deviator stress q", "kPa", 1.0};
  if (quantity == "excess_pore_pressure") return {"excess pore pressure", "excess pore pressure Δu", "kPa", 1.0};
  if (quantity == "volumetric_strain") return {"volumetric strain", "volumetric strain εv (compression +)", "%", 100.0};
  if (quantity == "radial_strain") return {"radial strain", "radial strain εr", "%", 100.0};
  if (quantity == "axial_stress") return {"axial effective stress", "axial effective stress σ'a", "kPa", 1.0};
  if (quantity == "radial_stress") return {"radial effective stress", "radial effective stress σ'r", "kPa", 1.0};
  if (quantity == "mean_stress") return {"mean effective stress", "mean effective stress p'", "kPa", 1.0};
  if (quantity == "void_ratio") return {"void ratio", "void ratio e", "", 1.0};
  if (quantity == "stress_ratio") return {"stress ratio", "stress ratio σ'a/σ'r", "", 1.0};
  std::string words = quantity;
  std::replace(words.begin(), words.end(), '_', ' ');
  return {words, words, "", 1.0};
}

/// The quantities plotted for a test, in page order: a triaxial test always has q and then Δu
/// (undrained) or εv (drained), with or without data; then every other compared quantity.
std::vector<std::string> plotted_quantities(const TestReport& t) {
  std::vector<std::string> out;
  if (t.drainage != Drainage::oedometer) {
    out.push_back("deviator_stress");
    out.push_back(t.drainage == Drainage::undrained ? "excess_pore_pressure" : "volumetric_strain");
  }
  for (const TestCurve& c : t.curves)
    if (std::find(out.begin(), out.end(), c.quantity) == out.end()) out.push_back(c.quantity);
  return out;
}

std::string plot_id(const TestReport& t, const std::string& quantity) {
  const std::string id = html_id(t.id);
  if (quantity == "deviator_stress") return "plot-deviator-" + id;
  if (quantity == "excess_pore_pressure") return "plot-pore-" + id;
  if (quantity == "volumetric_strain") return "plot-volumetric-" + id;
  return "plot-" + html_id(quantity) + "-" + id;
}

class Renderer {
 public:
  explicit Renderer(const ReportData& d) : d_(d) {}

  std::string run() {
    o_ << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
       << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
       << "<title>" << esc(d_.title) << (d_.model.empty() ? "" : " - " + esc(d_.model)) << "</title>\n"
       << "<style>" << kStyle << "</style>\n</head>\n<body>\n";
    header();
    parameters();
    fit();
    curves();
    paths();
    interpretation();
    issues();
    provenance();
    o_ << "<footer><p>" << esc(d_.caution) << "</p><p id=\"render-check\" class=\"render-check\" data-status=\"not run\">"
       << "</p></footer>\n<script>" << kCheckScript << "</script>\n</body>\n</html>\n";
    return o_.str();
  }

 private:
  const ReportData& d_;
  std::ostringstream o_;

  void section(const std::string& id, const std::string& title) {
    o_ << "<section class=\"report-section\" id=\"section-" << id << "\">\n<h2>" << esc(title) << "</h2>\n";
  }
  void end_section() { o_ << "</section>\n"; }

  void header() {
    o_ << "<header class=\"report-header\" id=\"section-summary\">\n<h1>" << esc(d_.title) << "</h1>\n";
    o_ << "<p class=\"meta\">";
    if (!d_.project.empty()) o_ << esc(d_.project) << " &#183; ";
    o_ << "model <b>" << esc(d_.model.empty() ? std::string("(none)") : d_.model) << "</b>";
    if (!d_.model_description.empty()) o_ << " &#8212; " << esc(d_.model_description);
    o_ << "</p>\n";
    o_ << "<p class=\"caution\" id=\"caution\">" << esc(d_.caution) << "</p>\n";

    std::vector<std::string> failed;
    for (const TestReport& t : d_.tests)
      if (t.used && !t.simulated) failed.push_back(t.id);
    o_ << "<div class=\"outcome outcome-" << to_string(d_.outcome) << "\" id=\"outcome\" data-outcome=\""
       << to_string(d_.outcome) << "\">\n";
    // One headline per outcome (docs/report.md); only converged reads as a success.
    switch (d_.outcome) {
      case CalibrationOutcome::converged: o_ << "<p><b>Converged.</b> "; break;
      case CalibrationOutcome::stopped: o_ << "<p><b>Warning: stopped before converging.</b> "; break;
      case CalibrationOutcome::poor_fit: o_ << "<p><b>Warning: poor fit.</b> "; break;
      case CalibrationOutcome::failed: o_ << "<p><b>Failed: no usable parameter set.</b> "; break;
    }
    std::string what = explain(d_.outcome);
    what[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(what[0])));
    o_ << esc(what) << ".</p>\n";
    if (!d_.outcome_reason.empty())
      o_ << "<p id=\"outcome-reason\">" << esc(d_.outcome_reason) << "</p>\n";
    if (!d_.fit_stages.empty()) {
      o_ << "<p>Staged fit: each stage fits its parameters with the others held fixed (at their starts before their own "
            "stage, at its result after it); the outcome above is the worst honest outcome of the stages.</p>\n<ol id=\"fit-stages\">\n";
      for (const std::string& line : d_.fit_stages) o_ << "<li>" << esc(line) << "</li>\n";
      o_ << "</ol>\n";
    }
    if (!d_.intervals_from.empty()) o_ << "<p id=\"intervals-from\">Intervals: " << esc(d_.intervals_from) << ".</p>\n";
    o_ << "<p class=\"meta\">Termination: " << esc(d_.termination.empty() ? std::string("-") : d_.termination)
       << (d_.message.empty() ? std::string() : ". " + esc(d_.message)) << "</p>\n";
    if (!failed.empty()) {
      o_ << "<p id=\"failed-tests\">Tests whose simulation failed at the reported parameters: ";
      for (std::size_t i = 0; i < failed.size(); ++i) o_ << (i ? ", " : "") << "<b>" << esc(failed[i]) << "</b>";
      o_ << ". Their curves show the measured data only; see the fit-quality table for the driver's message.</p>\n";
    }
    if (d_.outcome == CalibrationOutcome::failed)
      o_ << "<p>The parameter table shows the starting values and bounds; they are not a result.</p>\n";
    o_ << "</div>\n";

    int used = 0, simulated = 0;
    for (const TestReport& t : d_.tests) {
      used += t.used ? 1 : 0;
      simulated += (t.used && t.simulated) ? 1 : 0;
    }
    o_ << "<table class=\"report-table\" id=\"table-summary\">\n<tbody>\n";
    auto row = [&](const std::string& k, const std::string& v) {
      o_ << "<tr><th>" << k << "</th><td>" << v << "</td></tr>\n";
    };
    row("Outcome", to_string(d_.outcome));
    row("Termination", esc(d_.termination.empty() ? std::string("-") : d_.termination));
    row("Objective (start &#8594; end)", fmt(d_.start_objective) + " &#8594; " + fmt(d_.objective));
    row("Evaluations", std::to_string(d_.evaluations));
    row("Wall time (s)", fmt(d_.wall_time));
    row("Tests used / simulated at the result", std::to_string(used) + " / " + std::to_string(simulated));
    row("Tests excluded", std::to_string(d_.excluded.size()));
    row("Warnings", std::to_string(d_.warnings.size()));
    o_ << "</tbody>\n</table>\n</header>\n";
  }

  void parameters() {
    section("parameters", "1. Parameter set");
    o_ << "<p>Values in the units shown. Free parameters carry the search bounds and, where the Jacobian at the "
          "optimum allowed it, a standard error and a 95 % interval (linearised; it ignores model error).</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-parameters\">\n<thead><tr><th>parameter</th><th>unit</th>"
          "<th>status</th><th>value</th><th>start</th><th>lower bound</th><th>upper bound</th><th>std. error</th>"
          "<th>95 % interval</th><th>note</th></tr></thead>\n<tbody>\n";
    for (const ParameterRow& p : d_.parameters) {
      std::string note = p.status == "tied" ? "= " + esc(p.expression) : std::string();
      if (p.at_bound) note += std::string(note.empty() ? "" : "; ") + "<span class=\"flag\">at a bound</span>";
      if (!p.description.empty()) note += std::string(note.empty() ? "" : "; ") + esc(p.description);
      const bool free = p.status == "free";
      o_ << "<tr data-parameter=\"" << esc(p.name) << "\"><td>" << esc(p.name) << "</td><td>"
         << unit_cell(p.unit) << "</td><td>" << esc(p.status) << "</td><td class=\"num\">"
         << fmt(p.value) << "</td><td class=\"num\">" << (free ? fmt(p.start) : "") << "</td><td class=\"num\">"
         << (free ? fmt(p.lower) : "") << "</td><td class=\"num\">" << (free ? fmt(p.upper) : "")
         << "</td><td class=\"num\">" << (free ? fmt(p.standard_error) : "") << "</td><td class=\"num\">"
         << (free && std::isfinite(p.interval_low) ? fmt(p.interval_low) + " &#8230; " + fmt(p.interval_high) : "")
         << "</td><td>" << note << "</td></tr>\n";
    }
    if (d_.parameters.empty()) o_ << "<tr><td colspan=\"10\">no parameters reported</td></tr>\n";
    o_ << "</tbody>\n</table>\n";
    correlation();
    end_section();
  }

  void correlation() {
    const Correlation& c = d_.correlation;
    o_ << "<h3>Correlation of the free parameters</h3>\n";
    if (c.names.empty() || c.matrix.size() != c.names.size()) {
      o_ << "<p id=\"no-correlation\">No correlation matrix: it needs at least one free parameter and a Jacobian at "
            "the optimum.</p>\n";
      return;
    }
    o_ << "<p>Cells with |r| &#8805; " << fmt_fixed(c.strong, 2)
       << " are in bold and boxed: those parameters trade off and are not identified separately by these tests.</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-correlation\">\n<thead><tr><th></th>";
    for (const std::string& n : c.names) o_ << "<th>" << esc(n) << "</th>";
    o_ << "</tr></thead>\n<tbody>\n";
    for (std::size_t i = 0; i < c.names.size(); ++i) {
      o_ << "<tr><th>" << esc(c.names[i]) << "</th>";
      for (std::size_t j = 0; j < c.names.size(); ++j) {
        const double r = j < c.matrix[i].size() ? c.matrix[i][j] : kUnknown;
        const char* cls = i == j ? "num diag" : (std::abs(r) >= c.strong ? "num strong" : "num");
        o_ << "<td class=\"" << cls << "\">" << fmt_fixed(r, 2) << "</td>";
      }
      o_ << "</tr>\n";
    }
    o_ << "</tbody>\n</table>\n";
  }

  void fit() {
    section("fit", "2. Fit quality");
    o_ << "<table class=\"report-table\" id=\"table-fit-quality\">\n<thead><tr><th>test</th><th>description</th>"
          "<th>used</th><th>simulated</th><th>weight</th><th>objective share</th><th>curve</th><th>points</th>"
          "<th>RMSE</th><th>R&#178;</th></tr></thead>\n<tbody>\n";
    for (const TestReport& t : d_.tests) {
      const std::size_t rows = std::max<std::size_t>(1, t.quality.size());
      const std::string cls = !t.used ? "unused" : (!t.simulated ? "failed" : "");
      for (std::size_t r = 0; r < rows; ++r) {
        o_ << "<tr" << (cls.empty() ? "" : " class=\"" + cls + "\"") << " data-test=\"" << esc(t.id) << "\">";
        if (r == 0) {
          const std::string span = rows > 1 ? " rowspan=\"" + std::to_string(rows) + "\"" : "";
          o_ << "<td" << span << ">" << esc(t.id) << "</td><td" << span << ">" << esc(t.description) << "</td><td"
             << span << ">" << (t.used ? "yes" : "no") << "</td><td" << span << ">"
             << (t.simulated ? "yes" : "<span class=\"flag\">FAILED</span>: " + esc(t.message)) << "</td><td" << span
             << " class=\"num\">" << fmt(t.weight) << "</td><td" << span << " class=\"num\">" << fmt(t.objective)
             << "</td>";
        }
        if (t.quality.empty()) {
          o_ << "<td colspan=\"4\">no compared curves</td>";
        } else {
          const CurveQuality& q = t.quality[r];
          o_ << "<td>" << esc(q.name) << "</td><td class=\"num\">" << q.points << "</td><td class=\"num\">"
             << fmt(q.rmse) << (std::isfinite(q.rmse) && !dimensionless(q.unit) ? " " + esc(q.unit) : std::string()) << "</td><td class=\"num\">" << fmt_fixed(q.r_squared, 3) << "</td>";
        }
        o_ << "</tr>\n";
      }
    }
    if (d_.tests.empty()) o_ << "<tr><td colspan=\"10\">no tests</td></tr>\n";
    o_ << "</tbody>\n</table>\n<div class=\"plots\">\n";

    if (any_residuals(d_)) {
      svg::Plot p;
      p.id = "plot-residuals";
      p.title = "Residuals (simulated - measured) / measured range";
      p.x = {"axial strain since the stage start", "%"};
      p.y = {"normalised residual", "-"};
      p.y.include_zero = true;
      int style = 0;
      for (const TestReport& t : d_.tests) {
        for (const CurveQuality& q : t.quality) {
          if (q.residuals.empty()) continue;
          svg::Series s = measured_series(t.id + ": " + q.name, q.residuals, style, q.x_scale, 1.0);
          s.css_class = "residual";
          p.series.push_back(std::move(s));
          ++style;
        }
      }
      o_ << figure(p, "Residual of each compared point; a trend (not scatter) shows what the model cannot follow.");
    }
    if (!d_.history.empty()) {
      svg::Plot p;
      p.id = "plot-history";
      p.title = "Objective history of the optimiser";
      p.x = {"evaluation", "-"};
      p.y = {"objective", "-"};
      XY all, best;
      for (const HistoryPoint& h : d_.history) {
        all.x.push_back(static_cast<double>(h.evaluation));
        all.y.push_back(h.objective);
        best.x.push_back(static_cast<double>(h.evaluation));
        best.y.push_back(h.best);
      }
      double lo = std::numeric_limits<double>::infinity(), hi = 0;
      for (double v : all.y)
        if (std::isfinite(v) && v > 0) {
          lo = std::min(lo, v);
          hi = std::max(hi, v);
        }
      p.y.log = std::isfinite(lo) && hi > 20.0 * lo;
      svg::Series e = measured_series("each evaluation", all, 6);
      e.marker = svg::Marker::plus;
      e.css_class = "history";
      p.series.push_back(std::move(e));
      svg::Series b = simulated_series("best so far", best, 4);
      b.dash = svg::Dash::solid;
      b.css_class = "history-best";
      p.series.push_back(std::move(b));
      o_ << figure(p, std::string("Objective of every evaluation") + (p.y.log ? " (log scale)" : "") +
                          " and the best so far; at most " + std::to_string(kMaxMarkers) +
                          " evaluations are marked (evenly thinned).");
    }
    o_ << "</div>\n";
    end_section();
  }

  void curves() {
    section("curves", "3. Measured and simulated curves per test");
    o_ << "<p>Measured points are markers; the model at the reported parameters is a line of the same colour with "
          "its own dash pattern. Strains in %, compression positive; the axial strain of each curve is counted from "
          "the start of its own shear stage (an oedometer test: from the start of its data), as the fit compares "
          "it. A multi-stage specimen has one colour a stage. Parts outside the strain range the fit compared are "
          "drawn faded.</p>\n";
    int style = 0;
    for (const TestReport& t : d_.tests) {
      const int st = style++;
      const std::string id = html_id(t.id);
      o_ << "<div class=\"test-block\" id=\"test-" << id << "\">\n<h3>" << esc(t.id)
         << (t.description.empty() || t.description == t.id ? std::string() : " &#8212; " + esc(t.description)) << " ("
         << drainage_word(t.drainage) << ")</h3>\n";
      if (!t.simulated)
        o_ << "<p class=\"flag\">Simulation failed: " << esc(t.message) << "</p>\n";
      else if (!t.used)
        o_ << "<p>Not used in the calibration (shown for comparison).</p>\n";
      const std::string range = fitted_range_text(t);
      if (!range.empty()) o_ << "<p class=\"meta\">" << esc(range) << "</p>\n";
      o_ << "<div class=\"plots\">\n";
      for (const std::string& quantity : plotted_quantities(t)) curve_plot(t, quantity, st);
      o_ << "</div>\n</div>\n";
    }
    if (d_.tests.empty()) o_ << "<p>No tests.</p>\n";
    end_section();
  }

  /// "Compared over stage axial strains 0 to 2.5 %" when the fit used part of a curve.
  static std::string fitted_range_text(const TestReport& t) {
    for (const TestCurve& c : t.curves)
      if (std::isfinite(c.fitted_from) || std::isfinite(c.fitted_to))
        return "The fit compared axial strains from " +
               (std::isfinite(c.fitted_from) ? fixed_text(100.0 * c.fitted_from, 2) + " %" : std::string("the start")) +
               " to " + (std::isfinite(c.fitted_to) ? fixed_text(100.0 * c.fitted_to, 2) + " %" : std::string("the end")) +
               " of each stage; the rest is drawn faded.";
    return {};
  }

  void curve_plot(const TestReport& t, const std::string& quantity, int test_style) {
    const CurveLabel label = curve_label(quantity);
    svg::Plot p;
    p.id = plot_id(t, quantity);
    p.title = t.id + ": " + label.title;
    const bool oedometer = t.drainage == Drainage::oedometer;
    p.x = {oedometer ? "axial strain εa since the start of the data" : "axial strain εa since the stage start", "%"};
    p.y = {label.axis, label.unit};
    p.x.include_zero = p.y.include_zero = true;
    bool faded_named = false;
    // The y range of the measured points and the model inside the fitted range: the model outside it
    // (an extrapolation) is drawn only within this range widened by a fifth, so that it cannot set
    // the scale and squeeze the data it was fitted to.
    double lo = std::numeric_limits<double>::infinity(), hi = -lo;
    for (const TestCurve& c : t.curves) {
      if (c.quantity != quantity) continue;
      XY in_s, out_s;
      split_fitted(c.simulated, c, true, in_s, out_s);
      for (const XY* xy : {&c.measured, static_cast<const XY*>(&in_s)})
        for (double v : xy->y)
          if (std::isfinite(v)) {
            lo = std::min(lo, v);
            hi = std::max(hi, v);
          }
    }
    const double margin = hi > lo ? 0.2 * (hi - lo) : 0.0;
    int stages = 0;
    for (const TestCurve& c : t.curves)
      if (c.quantity == quantity && c.stage > 0) ++stages;
    for (const TestCurve& c : t.curves) {
      if (c.quantity != quantity) continue;
      const int style = stages > 0 ? c.stage - 1 : test_style;
      const std::string prefix = c.stage > 0 ? "stage " + std::to_string(c.stage) + " " : std::string();
      XY in_m, out_m, in_s, out_s;
      split_fitted(c.measured, c, false, in_m, out_m);
      split_fitted(c.simulated, c, true, in_s, out_s);
      if (!in_m.empty()) p.series.push_back(measured_series(prefix + "measured", in_m, style, 100.0, label.scale));
      if (!in_s.empty()) p.series.push_back(simulated_series(prefix + "model", in_s, style, 100.0, label.scale));
      if (std::isfinite(lo))
        for (double& v : out_s.y)
          if (v < lo - margin || v > hi + margin) v = std::numeric_limits<double>::quiet_NaN();
      for (XY* part : {&out_m, &out_s}) {
        if (part->empty()) continue;
        svg::Series f = part == &out_m ? measured_series("", *part, style, 100.0, label.scale)
                                       : simulated_series("", *part, style, 100.0, label.scale);
        if (!faded_named) f.name = "outside the fitted range (faded)";
        faded_named = true;
        f.opacity = 0.3;
        f.css_class += " outside-fit";
        p.series.push_back(std::move(f));
      }
    }
    p.note = "no " + label.title + " data";
    o_ << figure(p, t.id + ": " + label.title + " against the axial strain" +
                        (quantity == "volumetric_strain" ? "; negative is dilation." : "."));
  }

  /// Points of `xy` inside the fitted strain range of `c`, and outside it. Lines keep their
  /// continuity: each part holds NaN where the other one is drawn.
  static void split_fitted(const XY& xy, const TestCurve& c, bool line, XY& in, XY& out) {
    const double lo = std::isfinite(c.fitted_from) ? c.fitted_from : -std::numeric_limits<double>::infinity();
    const double hi = std::isfinite(c.fitted_to) ? c.fitted_to : std::numeric_limits<double>::infinity();
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const std::size_t n = std::min(xy.x.size(), xy.y.size());
    bool any_out = false;
    for (std::size_t i = 0; i < n; ++i) any_out = any_out || xy.x[i] < lo || xy.x[i] > hi;
    if (!any_out) {
      in = xy;
      return;
    }
    for (std::size_t i = 0; i < n; ++i) {
      const bool inside = xy.x[i] >= lo && xy.x[i] <= hi;
      XY& mine = inside ? in : out;
      XY& other = inside ? out : in;
      if (line && !mine.x.empty() && std::isnan(mine.x.back()) && i > 0) {
        // Rejoin the line at the previous point, so the two parts meet.
        mine.x.push_back(xy.x[i - 1]);
        mine.y.push_back(xy.y[i - 1]);
      }
      mine.x.push_back(xy.x[i]);
      mine.y.push_back(xy.y[i]);
      if (line && (other.x.empty() || !std::isnan(other.x.back()))) {
        other.x.push_back(nan);
        other.y.push_back(nan);
      }
    }
    auto drop_breaks = [](XY& part) {
      bool finite = false;
      for (double v : part.x) finite = finite || std::isfinite(v);
      if (!finite) part = {};
    };
    drop_breaks(in);
    drop_breaks(out);
    if (!line) {
      // Markers: no breaks needed.
      auto finite_only = [](XY& part) {
        XY k;
        for (std::size_t i = 0; i < part.x.size(); ++i)
          if (std::isfinite(part.x[i])) {
            k.x.push_back(part.x[i]);
            k.y.push_back(part.y[i]);
          }
        part = k;
      };
      finite_only(in);
      finite_only(out);
    }
  }

  void paths() {
    section("paths", "4. Stress paths, strength envelopes and compression");
    const Strength& s = d_.strength;
    if (!s.criterion.empty()) o_ << "<p>Failure points picked by: " << esc(s.criterion) << ".</p>\n";
    o_ << "<div class=\"plots\">\n";
    {
      svg::Plot p;
      p.id = "plot-stress-paths";
      p.title = "Effective stress paths p'-q";
      p.x = {"mean effective stress p'", "kPa"};
      p.y = {"deviator stress q", "kPa"};
      p.x.include_zero = p.y.include_zero = true;
      double pmax = 0;
      int style = 0;
      for (const TestReport& t : d_.tests) {
        const int st = style++;
        if (t.stress_path.empty()) continue;
        if (!t.stress_path.measured.empty())
          p.series.push_back(measured_series(t.id + " measured", t.stress_path.measured, st));
        if (!t.stress_path.simulated.empty())
          p.series.push_back(simulated_series(t.id + " model", t.stress_path.simulated, st));
        for (double v : t.stress_path.measured.x) pmax = std::max(pmax, v);
        for (double v : t.stress_path.simulated.x) pmax = std::max(pmax, v);
      }
      int ls = 4;
      for (const Line& l : s.pq_lines)
        if (line_known(l)) p.series.push_back(line_series(l, 0.0, pmax > 0 ? pmax : 1.0, ls++, svg::Dash::long_dash));
      p.note = "no stress-path data";
      o_ << figure(p, "Effective stress paths with the fitted envelope / critical state line.");
    }
    if (any_strength(s)) {
      strength_plot();
      mohr_plot();
    }
    if (any_compression(d_)) {
      svg::Plot p;
      p.id = "plot-compression";
      p.title = "Compression e - ln p'";
      p.x = {"mean effective stress p' (log scale)", "kPa"};
      p.x.log = true;
      p.y = {"void ratio e", "-"};
      int style = 0;
      for (const TestReport& t : d_.tests) {
        const int st = style++;
        if (t.compression.empty()) continue;
        if (!t.compression.measured.empty())
          p.series.push_back(measured_series(t.id + " measured", t.compression.measured, st));
        if (!t.compression.simulated.empty())
          p.series.push_back(simulated_series(t.id + " model", t.compression.simulated, st));
      }
      o_ << figure(p, "Void ratio against p' (log scale) in the isotropic, anisotropic and K0 consolidation stages whose "
                      "void ratios are known: measured as markers, the model as a line. Shear stages and oedometer "
                      "tests are not in this plot.");
    }
    o_ << "</div>\n";
    if (!any_strength(s)) o_ << "<p id=\"no-strength\">No failure points: no s'-t or Mohr-circle plot.</p>\n";
    if (!any_compression(d_))
      o_ << "<p id=\"no-compression\">No consolidation stage with measured void ratios: no e - ln p' plot.</p>\n";
    end_section();
  }

  /// Largest s' (s'-t plot) or s' + t (Mohr plot: the circle's right end) to draw lines to.
  double strength_smax(bool mohr) const {
    double smax = 0;
    for (const StressPoint& pt : d_.strength.points)
      if (std::isfinite(pt.s)) smax = std::max(smax, pt.s + (mohr && std::isfinite(pt.t) ? pt.t : 0.0));
    if (std::isfinite(d_.strength.range_high)) smax = std::max(smax, d_.strength.range_high);
    return smax > 0 ? smax * 1.05 : 1.0;
  }

  void strength_plot() {
    const Strength& s = d_.strength;
    svg::Plot p;
    p.id = "plot-s-t";
    p.title = "s'-t plot of the failure points";
    p.x = {"s' = (σ'1 + σ'3)/2", "kPa"};
    p.y = {"t = (σ'1 - σ'3)/2", "kPa"};
    p.x.include_zero = p.y.include_zero = true;
    const double smax = strength_smax(false);
    if (std::isfinite(s.range_low) || std::isfinite(s.range_high)) {
      svg::Band b;
      b.name = "stress range used";
      b.low = std::isfinite(s.range_low) ? s.range_low : 0.0;
      b.high = std::isfinite(s.range_high) ? std::min(s.range_high, smax) : smax;
      b.style = 6;
      p.bands.push_back(b);
    }
    XY used, unused;
    for (const StressPoint& pt : s.points) {
      XY& xy = pt.used ? used : unused;
      xy.x.push_back(pt.s);
      xy.y.push_back(pt.t);
    }
    if (!used.empty()) {
      svg::Series m = measured_series("failure points used", used, 0);
      m.marker = svg::Marker::circle;
      p.series.push_back(std::move(m));
    }
    if (!unused.empty()) {
      svg::Series m = measured_series("points left out", unused, 1);
      m.marker = svg::Marker::cross;
      p.series.push_back(std::move(m));
    }
    if (line_known(s.regression)) p.series.push_back(line_series(s.regression, 0.0, smax, 4, svg::Dash::solid));
    if (line_known(s.design)) p.series.push_back(line_series(s.design, 0.0, smax, 1, svg::Dash::dashed));
    if (line_known(s.model)) p.series.push_back(line_series(s.model, 0.0, smax, 2, svg::Dash::dash_dot));
    design_stress_line(p);
    o_ << figure(p, "Failure points in s'-t with the regression line, the conservative design line and the model's "
                    "envelope; the shaded band is the stress range used" +
                        std::string(std::isfinite(s.design_stress) ? "; the vertical line is the design stress" : "") + ".");
  }

  /// The design stress as a vertical line (at s' in the s'-t plot, at sigma' in the Mohr plot).
  void design_stress_line(svg::Plot& p) const {
    const double ds = d_.strength.design_stress;
    if (!std::isfinite(ds) || !(ds > 0)) return;
    double top = 0;
    for (const StressPoint& pt : d_.strength.points)
      if (std::isfinite(pt.t)) top = std::max(top, pt.t);
    svg::Series v;
    v.name = "design stress " + fixed_text(ds, 0) + " kPa";
    v.xs = {ds, ds};
    v.ys = {0.0, top > 0 ? 1.1 * top : 1.0};
    v.style = 5;
    v.dash = svg::Dash::dotted;
    v.width = 1.4;
    v.css_class = "design-stress";
    p.series.push_back(std::move(v));
  }

  void mohr_plot() {
    const Strength& s = d_.strength;
    svg::Plot p;
    p.id = "plot-mohr";
    p.title = "Mohr circles at failure";
    p.x = {"normal effective stress σ'", "kPa"};
    p.y = {"shear stress τ", "kPa"};
    p.x.include_zero = p.y.include_zero = true;
    p.x.min = 0.0;
    p.y.min = 0.0;
    p.equal_scale = true;
    p.height = 360.0;
    const double smax = strength_smax(true);
    // One colour and legend entry a failure point (test and stage); left-out points dotted.
    int circle_style = 0;
    for (const StressPoint& pt : s.points) {
      svg::HalfCircle c;
      c.name = pt.label;
      c.centre = pt.s;
      c.radius = pt.t;
      c.style = circle_style++;
      c.dash = pt.used ? svg::Dash::solid : svg::Dash::dotted;
      p.circles.push_back(c);
    }
    design_stress_line(p);
    // s'-t line t = a + s tan(alpha) <=> tau = c' + sigma' tan(phi'), sin phi' = tan alpha,
    // c' = a / cos phi' (common practice, e.g. Lambe & Whitman 1969, Soil Mechanics, ch. 10).
    auto mc = [&](const Line& l, int style, svg::Dash dash, const std::string& name) {
      if (!line_known(l) || std::abs(l.slope) >= 1.0) return;
      const double phi = std::asin(l.slope);
      Line env;
      env.name = name;
      env.intercept = l.intercept / std::cos(phi);
      env.slope = std::tan(phi);
      p.series.push_back(line_series(env, 0.0, smax, style, dash));
      p.series.back().name += " (c' = " + fixed_text(env.intercept, 1) + " kPa, phi' = " + fixed_text(phi * 180.0 / kPi, 1) + " deg)";
    };
    mc(s.regression, 4, svg::Dash::solid, "envelope from regression");
    mc(s.design, 1, svg::Dash::dashed, "design envelope");
    mc(s.model, 2, svg::Dash::dash_dot, "model envelope");
    o_ << figure(p, "Mohr circles of the failure points (equal scales) with the Mohr-Coulomb envelopes.");
  }

  void interpretation() {
    section("interpretation", "5. Classical interpretation beside the fitted model");
    if (d_.comparisons.empty()) {
      o_ << "<p id=\"no-comparison\">No classical results to compare.</p>\n";
    } else {
      o_ << "<table class=\"report-table\" id=\"table-comparison\">\n<thead><tr><th>quantity</th><th>unit</th>"
            "<th>classical interpretation</th><th>fitted model</th><th>difference (model &#8722; classical)</th><th>basis</th></tr>"
            "</thead>\n"
            "<tbody>\n";
      // A note on the model's definition follows the last of the consecutive rows it belongs to.
      for (std::size_t i = 0; i < d_.comparisons.size(); ++i) {
        const Comparison& c = d_.comparisons[i];
        // The row's three numbers with one number of decimals (four significant digits of the
        // larger value): a difference printed finer than the values it comes from reads as precision
        // the values do not have (seen: 1.299 against 1.300, "difference 6.141e-04").
        const int decimals = shared_decimals(c.classical, c.model);
        o_ << "<tr><td>" << esc(c.quantity) << "</td><td>" << unit_cell(c.unit) << "</td><td class=\"num\">"
           << (std::isnan(c.classical) ? std::string("not determined") : fmt_row(c.classical, decimals))
           << "</td><td class=\"num\">" << fmt_row(c.model, decimals) << "</td><td class=\"num\">"
           << fmt_row(c.model - c.classical, decimals) << "</td><td>" << esc(c.basis) << "</td></tr>\n";
        const bool last_of_note = i + 1 == d_.comparisons.size() || d_.comparisons[i + 1].note != c.note;
        if (!c.note.empty() && last_of_note)
          o_ << "<tr class=\"comparison-note\"><td colspan=\"6\">Why the model differs by definition: " << esc(c.note)
             << "</td></tr>\n";
      }
      o_ << "</tbody>\n</table>\n";
    }
    end_section();
  }

  void issues() {
    section("issues", "6. Warnings and excluded tests");
    o_ << "<h3>Warnings</h3>\n";
    if (d_.warnings.empty()) {
      o_ << "<p id=\"no-warnings\">No warnings.</p>\n";
    } else {
      o_ << "<ul class=\"warnings\" id=\"list-warnings\">\n";
      for (const std::string& w : d_.warnings) o_ << "<li>" << esc(w) << "</li>\n";
      o_ << "</ul>\n";
    }
    o_ << "<h3>Excluded tests</h3>\n<table class=\"report-table\" id=\"table-excluded\">\n<thead><tr><th>test</th>"
          "<th>reason</th></tr></thead>\n<tbody>\n";
    for (const Excluded& e : d_.excluded)
      o_ << "<tr><td>" << esc(e.id) << "</td><td>" << esc(e.reason) << "</td></tr>\n";
    if (d_.excluded.empty()) o_ << "<tr><td colspan=\"2\">none</td></tr>\n";
    o_ << "</tbody>\n</table>\n";
    end_section();
  }

  void provenance() {
    section("provenance", "7. Provenance");
    o_ << "<table class=\"report-table\" id=\"table-provenance\">\n<tbody>\n";
    for (const auto& [k, v] : d_.provenance)
      o_ << "<tr><th>" << esc(k) << "</th><td><code>" << esc(v) << "</code></td></tr>\n";
    if (d_.provenance.empty()) o_ << "<tr><td>no provenance recorded</td></tr>\n";
    o_ << "</tbody>\n</table>\n";
    end_section();
  }
};

}  // namespace

std::string html_id(const std::string& text) {
  std::string out;
  for (char c : text) {
    const bool keep = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' || c == '_';
    out += keep ? c : '_';
  }
  return out.empty() ? std::string("_") : out;
}

std::vector<std::string> expected_plot_ids(const ReportData& data) {
  std::vector<std::string> ids;
  if (any_residuals(data)) ids.push_back("plot-residuals");
  if (!data.history.empty()) ids.push_back("plot-history");
  for (const TestReport& t : data.tests)
    for (const std::string& quantity : plotted_quantities(t)) ids.push_back(plot_id(t, quantity));
  ids.push_back("plot-stress-paths");
  if (any_strength(data.strength)) {
    ids.push_back("plot-s-t");
    ids.push_back("plot-mohr");
  }
  if (any_compression(data)) ids.push_back("plot-compression");
  return ids;
}

std::vector<std::string> expected_table_ids(const ReportData& data) {
  std::vector<std::string> ids = {"table-summary", "table-parameters"};
  if (!data.correlation.names.empty() && data.correlation.matrix.size() == data.correlation.names.size())
    ids.push_back("table-correlation");
  ids.push_back("table-fit-quality");
  if (!data.comparisons.empty()) ids.push_back("table-comparison");
  ids.push_back("table-excluded");
  ids.push_back("table-provenance");
  return ids;
}

std::string render_report(const ReportData& data) { return Renderer(data).run(); }

}  // namespace triaxcal::report

namespace triaxcal::report::detail {

// Shared with the interpretation report (report_shared.hpp): one look for both reports.
const char* report_style() { return kStyle; }
const char* report_check_script() { return kCheckScript; }

}  // namespace triaxcal::report::detail
