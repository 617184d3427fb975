#include "triaxcal/interpretation_report.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "report_shared.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/svg_plot.hpp"

namespace triaxcal::report {

namespace {

using svg::xml_escape;
constexpr double kDeg = 3.14159265358979323846 / 180.0;
constexpr std::size_t kMaxPathPoints = 300;  // stress-path vertices a test (evenly thinned)
constexpr double kAtmosphere = 101.325;      // kPa, p_at of the power-law critical-state line (interpret.cpp)

bool given(double v) { return std::isfinite(v); }
std::string esc(const std::string& s) { return xml_escape(s); }

/// Fixed decimals; an em dash for a value not known; never "-0.0".
std::string num(double v, int decimals) {
  if (!given(v)) return "&#8212;";
  char buf[48];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  std::string s = buf;
  if (s.find_first_not_of("-0.") == std::string::npos && s[0] == '-') s.erase(0, 1);
  return s;
}

/// A CSS string literal (for @page margin boxes): quotes, backslashes and non-ASCII escaped.
std::string css_string(const std::string& text) {
  std::string out = "\"";
  for (unsigned char c : text) {
    if (c == '"' || c == '\\' || c < 0x20) {
      char buf[8];
      std::snprintf(buf, sizeof buf, "\\%x ", c);
      out += buf;
    } else {
      out += static_cast<char>(c);
    }
  }
  return out + "\"";
}

std::string label(const StageInterpretation& s, const Specimen* sp) {
  const bool multi = sp && sp->shear_stages().size() > 1;
  return s.specimen + (multi ? " stage " + std::to_string(s.shear_stage) : std::string());
}

const Specimen* specimen_of(const TestSeries& series, const std::string& id) {
  for (const Specimen& sp : series.specimens)
    if (sp.id == id) return &sp;
  return nullptr;
}

bool is_uu(const StageInterpretation& s) { return s.test == ShearType::uu; }
/// A failure point of a curve, or the lab's reported one (a stage known by its failure values only).
bool has_point(const FailurePoint& f) { return (f.index >= 0 || f.reported) && given(f.s) && given(f.t); }
/// An effective-stress stage with a failure point: a curve's, or (failure values only) the lab's by its criterion.
bool effective(const StageInterpretation& s) { return !is_uu(s) && (has_point(s.by_max_deviator) || has_point(s.by_max_stress_ratio)); }

/// What the page holds; plot and table ids follow from it.
struct Plan {
  bool uu = false, cu_depth = false, strength = false, stiffness = false, dilatancy = false, oedometer = false,
       critical = false, compressibility = false;
  // Sand state (issue 17): the section shows when the power-law line or a state parameter is
  // determined, or a CU stage has a phase transformation or an instability.
  bool sand = false, sand_csl = false, sand_angle = false, sand_dilation = false, sand_cu = false;
  Plan(const Interpretation& in, const TestSeries& series) {
    sand_csl = in.csl_power_reason.empty();
    for (const StageInterpretation& s : in.stages) {
      const bool psi = given(s.state_parameter) && s.left_out.empty();
      sand_angle = sand_angle || (psi && given(s.peak_friction_angle));
      sand_dilation = sand_dilation || (psi && s.test == ShearType::cd && s.direction == ShearDirection::compression &&
                                        given(s.max_dilation_rate));
      sand_cu = sand_cu || given(s.phase_transformation_ratio) || given(s.instability_ratio);
      sand = sand || given(s.state_parameter);
    }
    sand = sand || sand_csl || sand_cu;
    for (const StageInterpretation& s : in.stages) {
      if (is_uu(s) && given(s.undrained_strength)) {
        uu = true;
        cu_depth = cu_depth || given(s.depth);
      }
      strength = strength || effective(s);
      stiffness = stiffness || (s.test == ShearType::cd && given(s.consolidation_radial) &&
                                (given(s.secant_stiffness_50) || !s.unload_reload_stiffness.empty()));
      dilatancy = dilatancy || !s.dilatancy_d.empty();
      critical = critical || (s.steady_state && given(s.end_void_ratio) && s.end_p > 0.0);
    }
    compressibility = !in.compressibility.empty();
    for (const auto& c : in.compressibility) {
      const Specimen* sp = specimen_of(series, c.specimen);
      if (c.basis.rfind("oedometer", 0) == 0 && sp) {
        const auto [first, last] = sp->stage_points(c.stage);
        for (int i = first; i <= last; ++i)
          if (given(sp->curves.void_ratio[static_cast<std::size_t>(i)])) oedometer = true;
      }
    }
  }
};

/// Colour and dash of the k-th test in the s'-t and Mohr plots: the palette without black (black marks
/// the failure points and the regression), solid for the first six tests, dashed for the next six, ...
int test_style(int k) {
  static const int styles[] = {0, 1, 2, 3, 5, 6};
  return styles[k % 6];
}
svg::Dash test_dash(int k) {
  static const svg::Dash dashes[] = {svg::Dash::solid, svg::Dash::dashed, svg::Dash::dash_dot};
  return dashes[(k / 6) % 3];
}

svg::Series points(const std::string& name, std::vector<double> xs, std::vector<double> ys, int style, svg::Marker marker,
                   const std::string& css = "measured") {
  svg::Series s;
  s.name = name;
  s.xs = std::move(xs);
  s.ys = std::move(ys);
  s.marker = marker;
  s.dash = svg::Dash::none;
  s.style = style;
  s.css_class = css;
  return s;
}

svg::Series line(const std::string& name, std::vector<double> xs, std::vector<double> ys, int style, svg::Dash dash,
                 const std::string& css = "envelope") {
  svg::Series s;
  s.name = name;
  s.xs = std::move(xs);
  s.ys = std::move(ys);
  s.marker = svg::Marker::none;
  s.dash = dash;
  s.style = style;
  s.width = 1.5;
  s.css_class = css;
  return s;
}

std::string figure(const svg::Plot& plot, const std::string& caption) {
  std::ostringstream o;
  o << "<figure class=\"plot-figure\" id=\"fig-" << esc(plot.id) << "\">\n"
    << svg::render_svg(plot) << "<figcaption>" << esc(caption) << "</figcaption>\n</figure>\n";
  return o.str();
}

const char* kExtraStyle = R"CSS(
.signoff { width: 100%; }
.signoff td { height: 40px; }
.signoff th:first-child { width: 90px; }
.flag-above { background: var(--warn); }
.flag-above_twice { background: var(--bad); font-weight: bold; }
p.rule { color: var(--muted); font-size: 12px; margin: 2px 0 10px 0; }
ol.rules li { margin-bottom: 4px; font-size: 13px; }
/* A heading stays with what follows it. Not figcaption: the last element of a section, its
   break-after propagates to the section's end, so the page could break nowhere between two sections
   but after the next heading (seen printed: a heading alone at the foot of a page). A figure is
   already kept whole. */
h2, h3 { break-after: avoid; page-break-after: avoid; }
h3 + table, h3 + p, h2 + p, h2 + table { break-before: avoid; page-break-before: avoid; }
tr { break-inside: avoid; page-break-inside: avoid; }
@media print {
  section.report-section { break-before: auto; page-break-before: auto; }
  section.report-section.new-page { break-before: page; page-break-before: always; }
  .signoff { break-inside: avoid; page-break-inside: avoid; }
}
)CSS";

class InterpretationRenderer {
 public:
  InterpretationRenderer(const Interpretation& in, const TestSeries& series, const InterpretationReportOptions& options)
      : in_(in), series_(series), opt_(options), plan_(in, series) {}

  std::string run() {
    const std::string site = opt_.site.empty() ? series_.name : opt_.site;
    o_ << "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
       << "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
       << "<title>" << esc(opt_.title) << (site.empty() ? "" : " - " + esc(site)) << "</title>\n"
       << "<style>" << detail::report_style() << kExtraStyle << "@page { @top-left { content: " << css_string(opt_.title)
       << "; font-size: 8pt; color: #555; } @top-right { content: " << css_string(site.empty() ? std::string() : site + "  \u00b7  ")
       << " \"page \" counter(page) \" of \" counter(pages); font-size: 8pt; color: #555; } }\n</style>\n</head>\n<body>\n";
    header(site);
    tests();
    if (plan_.uu) undrained();
    strength();
    stiffness();
    dilatancy();
    compressibility();
    if (plan_.sand) sand();
    left_out();
    rules();
    signoff();
    o_ << "<footer><p>" << esc(opt_.caution) << "</p><p id=\"render-check\" class=\"render-check\" data-status=\"not run\">"
       << "</p></footer>\n<script>" << detail::report_check_script() << "</script>\n</body>\n</html>\n";
    return o_.str();
  }

 private:
  const Interpretation& in_;
  const TestSeries& series_;
  const InterpretationReportOptions& opt_;
  Plan plan_;
  std::ostringstream o_;
  int section_ = 0;

  const Specimen* sp(const std::string& id) const { return specimen_of(series_, id); }
  std::string label_of(const StageInterpretation& s) const { return label(s, sp(s.specimen)); }
  const StrengthEnvelope* declared() const { return in_.envelopes.empty() ? nullptr : &in_.envelopes.front(); }

  void section(const std::string& id, const std::string& title, bool new_page = false) {
    o_ << "<section class=\"report-section" << (new_page ? " new-page" : "") << "\" id=\"section-" << id << "\">\n<h2>"
       << ++section_ << ". " << esc(title) << "</h2>\n";
  }
  void end_section() { o_ << "</section>\n"; }

  void header(const std::string& site) {
    o_ << "<header class=\"report-header\" id=\"section-summary\">\n<h1>" << esc(opt_.title) << "</h1>\n<p class=\"meta\">";
    if (!site.empty()) o_ << esc(site) << " &#183; ";
    o_ << "series <code>" << esc(series_.source) << "</code>";
    if (!series_.description.empty()) o_ << "<br>" << esc(series_.description);
    o_ << "</p>\n<p class=\"caution\" id=\"caution\">" << esc(opt_.caution) << "</p>\n";
    int used = 0, out = 0;
    for (const StageInterpretation& s : in_.stages) (s.left_out.empty() ? used : out) += 1;
    std::string materials;
    for (const std::string& m : in_.materials) materials += (materials.empty() ? "" : ", ") + m;
    const InterpretOptions& o = in_.options;
    o_ << "<table class=\"report-table\" id=\"table-summary\">\n<tbody>\n";
    auto row = [&](const std::string& k, const std::string& v) { o_ << "<tr><th>" << k << "</th><td>" << v << "</td></tr>\n"; };
    row("Material", esc(materials.empty() ? std::string("-") : materials));
    std::string crit = to_string(o.criterion);
    if (o.criterion == FailureCriterion::limiting_strain) crit += " " + num(o.limiting_strain * 100.0, 2) + " % stage strain";
    row("Failure criterion (envelope and design line)", esc(crit));
    row("Stress range of the envelope (s&#8242; at failure)",
        (o.stress_low > 0.0 || std::isfinite(o.stress_high)) ? num(o.stress_low, 0) + " to " + num(o.stress_high, 0) + " kPa"
                                                               : std::string("all failure points"));
    row("Design stress (normal effective stress on the failure plane)", given(o.design_stress) ? num(o.design_stress, 1) + " kPa" : "not given");
    row("Shear stages used / left out by choice", std::to_string(used) + " / " + std::to_string(out));
    row("Warnings", std::to_string(in_.warnings.size()));
    o_ << "</tbody>\n</table>\n</header>\n";
  }

  void tests() {
    section("tests", "Tests");
    o_ << "<p>Stages are numbered 1, 2, 3 per specimen in the order of its shear stages. Strains at failure are stage "
          "strains: engineering axial strain from the start of the stage.</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-tests\">\n<thead><tr><th>specimen</th><th>stage</th><th>material</th>"
          "<th>depth</th><th>test</th><th>direction</th><th>s&#8242;3 at the start (kPa)</th><th>points</th><th>used</th>"
          "</tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      const Specimen* p = sp(s.specimen);
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << "><td>" << esc(s.specimen) << "</td><td class=\"num\">"
         << s.shear_stage << "</td><td>" << esc(p ? p->material : std::string()) << "</td><td>" << esc(p ? p->depth : std::string())
         << "</td><td>" << esc(to_string(s.test)) << "</td><td>"
         << (s.direction == ShearDirection::compression ? "compression" : "extension") << "</td><td class=\"num\">"
         << num(s.consolidation_radial, 1) << "</td><td class=\"num\">" << s.points << "</td><td>"
         << (s.left_out.empty() ? std::string("yes") : "no: " + esc(s.left_out)) << "</td></tr>\n";
    }
    if (in_.stages.empty()) o_ << "<tr><td colspan=\"9\">no shear stages</td></tr>\n";
    o_ << "</tbody>\n</table>\n";
    end_section();
  }

  void undrained() {
    section("undrained", "Undrained strength (UU, total stresses)");
    o_ << "<p>c<sub>u</sub> = (&#963;1 &#8722; &#963;3)<sub>max</sub> / 2 per specimen, &#966;<sub>u</sub> = 0 (total stresses; "
          "common practice). Mean " << num(in_.cu_mean, 1) << " kPa, range " << num(in_.cu_min, 1) << " to " << num(in_.cu_max, 1)
       << " kPa over " << in_.uu_count << " specimen(s) used.";
    if (in_.options.cu_depth_trend) {
      if (in_.cu_depth_reason.empty())
        o_ << " Trend c<sub>u</sub> = c<sub>u0</sub> + k z: c<sub>u0</sub> = " << num(in_.cu_depth.intercept, 1) << " kPa, k = "
           << num(in_.cu_depth.slope, 2) << " kPa/m (n = " << in_.cu_depth.n << ", R&#178; = " << num(in_.cu_depth.r2, 3)
           << "; least squares, common practice, no source).";
      else
        o_ << " Trend c<sub>u</sub> = c<sub>u0</sub> + k z not determined: " << esc(in_.cu_depth_reason) << ".";
    }
    o_ << "</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-undrained\">\n<thead><tr><th>specimen</th><th>stage</th><th>depth text</th>"
          "<th>depth z (m)</th><th>cell pressure &#963;3 (kPa)</th><th>q<sub>max</sub> (kPa)</th><th>stage strain at q<sub>max</sub> (%)</th>"
          "<th>c<sub>u</sub> (kPa)</th><th>used</th></tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      if (!is_uu(s)) continue;
      const Specimen* p = sp(s.specimen);
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << "><td>" << esc(s.specimen) << "</td><td class=\"num\">"
         << s.shear_stage << "</td><td>" << esc(p ? p->depth : std::string()) << "</td><td class=\"num\">" << num(s.depth, 2)
         << "</td><td class=\"num\">" << num(s.by_max_deviator.cell_pressure, 1) << "</td><td class=\"num\">"
         << num(std::abs(s.by_max_deviator.q), 1) << "</td><td class=\"num\">" << num(s.by_max_deviator.axial_strain * 100.0, 2)
         << "</td><td class=\"num\">" << num(s.undrained_strength, 1) << "</td><td>"
         << (s.left_out.empty() ? std::string("yes") : "no: " + esc(s.left_out)) << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n<div class=\"plots\">\n";
    {
      svg::Plot p;
      p.id = "plot-uu-mohr";
      p.title = "UU: total-stress Mohr circles at q_max (φu = 0)";
      p.x = {"total normal stress σ", "kPa"};
      p.y = {"shear stress τ", "kPa"};
      p.y.min = 0.0;
      p.equal_scale = true;
      p.height = 360.0;
      double right = 0.0, left = INFINITY;
      int style = 0, missing = 0;
      for (const StageInterpretation& s : in_.stages) {
        if (!is_uu(s) || !given(s.undrained_strength)) continue;
        const double s3 = s.by_max_deviator.cell_pressure;
        if (!given(s3)) {
          ++missing;
          continue;
        }
        svg::HalfCircle c;
        c.name = label_of(s) + (s.left_out.empty() ? "" : " (left out)");
        c.centre = s3 + s.undrained_strength;
        c.radius = s.undrained_strength;
        c.style = style++;
        c.dash = s.left_out.empty() ? svg::Dash::solid : svg::Dash::dotted;
        p.circles.push_back(c);
        right = std::max(right, c.centre + c.radius);
        left = std::min(left, c.centre - c.radius);
      }
      if (given(in_.cu_mean) && right > 0.0)
        p.series.push_back(line("τ = c_u mean = " + num(in_.cu_mean, 1) + " kPa (φu = 0)", {left, right}, {in_.cu_mean, in_.cu_mean},
                                8, svg::Dash::dashed));
      p.note = "no UU test with a cell pressure";
      o_ << figure(p, "Total-stress Mohr circles of the UU tests at the largest deviator stress (centre σ3 + c_u, radius c_u), "
                      "each labelled, and the φu = 0 envelope at the mean c_u" +
                          (missing ? "; " + std::to_string(missing) + " test(s) without a cell pressure are not drawn" : std::string()) + ".");
    }
    if (plan_.cu_depth) {
      svg::Plot p;
      p.id = "plot-cu-depth";
      p.title = "c_u against depth";
      p.x = {"depth z", "m"};
      p.y = {"undrained strength c_u", "kPa"};
      p.x.include_zero = p.y.include_zero = true;
      std::vector<double> z, cu, zo, cuo;
      for (const StageInterpretation& s : in_.stages)
        if (is_uu(s) && given(s.depth) && given(s.undrained_strength)) {
          (s.left_out.empty() ? z : zo).push_back(s.depth);
          (s.left_out.empty() ? cu : cuo).push_back(s.undrained_strength);
        }
      if (!z.empty()) p.series.push_back(points("UU tests used", z, cu, 0, svg::Marker::circle));
      if (!zo.empty()) p.series.push_back(points("left out", zo, cuo, 1, svg::Marker::cross));
      if (in_.options.cu_depth_trend && in_.cu_depth_reason.empty()) {
        const LineFit& f = in_.cu_depth;
        p.series.push_back(line("c_u = " + num(f.intercept, 1) + " + " + num(f.slope, 2) + " z", {f.x_min, f.x_max},
                                {f.intercept + f.slope * f.x_min, f.intercept + f.slope * f.x_max}, 4, svg::Dash::solid));
      }
      o_ << figure(p, "c_u of each UU test against its depth (the depth text read as metres; a range at its middle)" +
                          std::string(in_.options.cu_depth_trend ? ", with the least-squares trend over the depths used." : "."));
    }
    o_ << "</div>\n";
    end_section();
  }

  void strength() {
    section("strength", "Effective strength", true);
    const StrengthEnvelope* env = declared();
    const InterpretOptions& o = in_.options;
    o_ << "<p>Failure points by both common criteria; the envelope and the design line use the declared criterion <b>"
       << esc(to_string(o.criterion)) << "</b>. s&#8242; = (&#963;&#8242;1 + &#963;&#8242;3)/2, t = (&#963;&#8242;1 &#8722; "
       << "&#963;&#8242;3)/2, &#949;<sub>a,st</sub> the stage strain. &#963;&#8242;<sub>nf</sub> = s&#8242; &#8722; t sin &#966;&#8242; "
          "is the normal effective stress on the failure plane (declared criterion, &#966;&#8242; of its envelope).</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-failure\">\n<thead><tr><th rowspan=\"2\">specimen</th><th rowspan=\"2\">stage</th>"
          "<th rowspan=\"2\">test</th><th colspan=\"4\">maximum deviator stress</th><th colspan=\"4\">maximum stress ratio "
          "&#963;&#8242;1/&#963;&#8242;3</th><th rowspan=\"2\">&#963;&#8242;<sub>nf</sub> (kPa)</th><th rowspan=\"2\">against the "
          "design stress</th><th rowspan=\"2\">A<sub>f</sub> (-)</th></tr>\n<tr><th>&#949;<sub>a,st</sub> (%)</th><th>s&#8242; (kPa)</th>"
          "<th>t (kPa)</th><th>u<sub>e</sub> (kPa)</th><th>&#949;<sub>a,st</sub> (%)</th><th>s&#8242; (kPa)</th><th>t (kPa)</th>"
          "<th>u<sub>e</sub> (kPa)</th></tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      if (!effective(s)) continue;
      const FailurePoint &a = s.by_max_deviator, &b = s.by_max_stress_ratio;
      const std::string flag = to_string(s.design_stress_flag);
      std::string fcls;
      if (s.design_stress_flag == DesignStressFlag::above) fcls = " flag-above";
      if (s.design_stress_flag == DesignStressFlag::above_twice) fcls = " flag-above_twice";
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << " data-test=\"" << esc(label_of(s)) << "\"><td>"
         << esc(s.specimen) << "</td><td class=\"num\">" << s.shear_stage << "</td><td>" << esc(to_string(s.test))
         << "</td><td class=\"num\">" << num(a.axial_strain * 100.0, 2) << "</td><td class=\"num\">" << num(a.s, 1)
         << "</td><td class=\"num\">" << num(a.t, 1) << "</td><td class=\"num\">" << num(a.excess_pore_pressure, 1)
         << "</td><td class=\"num\">" << num(b.axial_strain * 100.0, 2) << "</td><td class=\"num\">" << num(b.s, 1)
         << "</td><td class=\"num\">" << num(b.t, 1) << "</td><td class=\"num\">" << num(b.excess_pore_pressure, 1)
         << "</td><td class=\"num" << fcls << "\" data-sigma-nf=\"" << (given(s.normal_stress_on_failure_plane) ? num(s.normal_stress_on_failure_plane, 3) : "")
         << "\">" << num(s.normal_stress_on_failure_plane, 1) << "</td><td class=\"" << fcls.substr(fcls.empty() ? 0 : 1)
         << "\" data-flag=\"" << esc(flag) << "\">" << esc(s.design_stress_flag == DesignStressFlag::not_checked ? std::string("-") : flag)
         << "</td><td class=\"num\">" << num(s.skempton_a, 2) << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n";
    if (given(o.design_stress)) o_ << "<p class=\"rule\">Design stress " << num(o.design_stress, 1) << " kPa. Rule: " << esc(kDesignStressRule) << ".</p>\n";
    envelopes_table();
    if (env && plan_.strength) {
      o_ << "<div class=\"plots\">\n";
      st_plot(*env);
      mohr_plot(*env);
      o_ << "</div>\n";
    } else {
      o_ << "<p id=\"no-strength\">No effective-stress failure points: no s&#8242;-t or Mohr-circle plot.</p>\n";
    }
    end_section();
  }

  void envelopes_table() {
    const InterpretOptions& o = in_.options;
    const bool design = given(o.design_stress);
    o_ << "<table class=\"report-table\" id=\"table-strength\">\n<thead><tr><th>criterion</th><th>n</th><th>&#966;&#8242; (deg)</th>"
          "<th>c&#8242; (kPa)</th><th>se &#966;&#8242; (deg)</th><th>se c&#8242; (kPa)</th><th>R&#178;</th><th>s&#8242; used (kPa)</th>"
          "<th>design &#966;&#8242; (deg)</th><th>design c&#8242; (kPa)</th><th>design line</th>"
       << (design ? "<th>secant &#966;&#8242; at the design stress, c&#8242; = 0 (deg): best fit / design line</th>" : "")
       << (o.origin_regression ? "<th>through the origin &#966;&#8242;<sub>0</sub> (deg)</th>" : "")
       << "<th>p&#8242;-q route &#966;&#8242; / c&#8242;</th></tr></thead>\n<tbody>\n";
    for (const StrengthEnvelope& e : in_.envelopes) {
      const bool first = &e == &in_.envelopes.front();
      o_ << "<tr data-criterion=\"" << esc(to_string(e.criterion)) << "\"><td>" << esc(to_string(e.criterion))
         << (first ? " (declared)" : "") << "</td><td class=\"num\">" << e.st.n << "</td>";
      if (!e.note.empty()) {
        o_ << "<td colspan=\"" << (10 + (design ? 1 : 0) + (o.origin_regression ? 1 : 0)) << "\">not determined: " << esc(e.note)
           << "</td></tr>\n";
        continue;
      }
      o_ << "<td class=\"num\">" << num(e.phi, 2) << "</td><td class=\"num\">" << num(e.cohesion, 2) << "</td><td class=\"num\">"
         << num(e.se_phi, 2) << "</td><td class=\"num\">" << num(e.se_cohesion, 2) << "</td><td class=\"num\">" << num(e.st.r2, 4)
         << "</td><td class=\"num\">" << num(e.st.x_min, 0) << " to " << num(e.st.x_max, 0) << "</td><td class=\"num\">"
         << num(e.design_phi, 2) << "</td><td class=\"num\">" << num(e.design_cohesion, 2) << "</td><td>"
         << esc(e.design_reason.empty() ? to_string(e.design_form) : "not determined: " + e.design_reason) << "</td>";
      if (design)
        o_ << "<td class=\"num\" data-secant=\"" << num(e.secant_phi_at_design, 4) << "\">" << num(e.secant_phi_at_design, 2) << " / "
           << num(e.design_secant_phi_at_design, 2) << "</td>";
      if (o.origin_regression)
        o_ << "<td class=\"num\">"
           << (e.origin_reason.empty() ? num(e.origin_phi, 2) + " (se " + num(e.origin_se_phi, 2) + ")" : "not determined: " + esc(e.origin_reason))
           << "</td>";
      o_ << "<td class=\"num\">" << (e.pq_reason.empty() ? num(e.phi_pq, 2) + " / " + num(e.cohesion_pq, 2) + " kPa" : "not determined")
         << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n";
    o_ << "<p class=\"rule\">Envelope: t = a + s&#8242; tan &#945; by least squares, sin &#966;&#8242; = tan &#945;, c&#8242; = a / cos "
          "&#966;&#8242;. Design line, " << esc(kDesignLineRule) << ".";
    if (design) o_ << " Secant &#966;&#8242; at the design stress, " << esc(kSecantAtDesignRule) << ".";
    if (o.origin_regression) o_ << " Through the origin, " << esc(kOriginRegressionRule) << ".";
    o_ << "</p>\n";
  }

  /// The s'-t plot: every stress path, both failure criteria, the lines over the s' range used, the
  /// stress range and the design stress.
  void st_plot(const StrengthEnvelope& env) {
    const InterpretOptions& o = in_.options;
    svg::Plot p;
    p.id = "plot-s-t";
    p.title = "s'-t: stress paths, failure points and envelopes";
    p.x = {"s' = (σ'1 + σ'3)/2", "kPa"};
    p.y = {"t = (σ'1 - σ'3)/2", "kPa"};
    p.x.include_zero = p.y.include_zero = true;
    p.height = 460.0;
    double smax = 0.0, tmax = 0.0, tmin = 0.0;
    int style = 0;
    bool any_reported = false;
    for (const StageInterpretation& s : in_.stages) {
      if (!effective(s)) continue;
      if (s.failure_values_only) {  // the lab's failure point only: no path to draw
        any_reported = true;
        smax = std::max(smax, has_point(s.by_max_deviator) ? s.by_max_deviator.s : s.by_max_stress_ratio.s);
        continue;
      }
      const Specimen* spc = sp(s.specimen);
      if (!spc) continue;
      const auto [first, last] = spc->stage_points(s.stage);
      const double dir = s.direction == ShearDirection::compression ? 1.0 : -1.0;
      std::vector<double> xs, ys;
      const int n = last - first + 1;
      const int step = std::max(1, (n + static_cast<int>(kMaxPathPoints) - 1) / static_cast<int>(kMaxPathPoints));
      for (int i = first; i <= last; i += step) {
        const std::size_t u = static_cast<std::size_t>(i);
        xs.push_back(0.5 * (spc->curves.axial_stress[u] + spc->curves.radial_stress[u]));
        ys.push_back(0.5 * dir * spc->curves.deviator_stress[u]);
      }
      if ((n - 1) % step != 0) {
        const std::size_t u = static_cast<std::size_t>(last);
        xs.push_back(0.5 * (spc->curves.axial_stress[u] + spc->curves.radial_stress[u]));
        ys.push_back(0.5 * dir * spc->curves.deviator_stress[u]);
      }
      for (std::size_t i = 0; i < xs.size(); ++i) {
        if (given(xs[i])) smax = std::max(smax, xs[i]);
        if (given(ys[i])) {
          tmax = std::max(tmax, ys[i]);
          tmin = std::min(tmin, ys[i]);
        }
      }
      svg::Series path = line(label_of(s) + (s.left_out.empty() ? "" : " (left out)"), xs, ys, test_style(style),
                              s.left_out.empty() ? test_dash(style) : svg::Dash::dotted, "stress-path");
      ++style;
      path.width = 1.0;
      p.series.push_back(std::move(path));
    }
    // Failure points: the declared criterion's envelope says which were used.
    std::vector<double> dx, dy, rx, ry, cx, cy, ox, oy;
    for (const StageInterpretation& s : in_.stages) {
      if (!effective(s)) continue;
      bool used = false;
      for (const UsedPoint& u : env.points)
        if (u.specimen == s.specimen && u.stage == s.stage) used = u.used;
      if (!used && has_point(s.by_criterion)) {
        ox.push_back(s.by_criterion.s);
        oy.push_back(s.by_criterion.t);
      }
      if (has_point(s.by_max_deviator)) {
        dx.push_back(s.by_max_deviator.s);
        dy.push_back(s.by_max_deviator.t);
        tmax = std::max(tmax, s.by_max_deviator.t);
      }
      if (has_point(s.by_max_stress_ratio)) {
        rx.push_back(s.by_max_stress_ratio.s);
        ry.push_back(s.by_max_stress_ratio.t);
        tmax = std::max(tmax, s.by_max_stress_ratio.t);
      }
      if (o.criterion != FailureCriterion::max_deviator && o.criterion != FailureCriterion::max_stress_ratio &&
          has_point(s.by_criterion)) {
        cx.push_back(s.by_criterion.s);
        cy.push_back(s.by_criterion.t);
      }
    }
    const bool dev = o.criterion == FailureCriterion::max_deviator, ratio = o.criterion == FailureCriterion::max_stress_ratio;
    // A criterion with no point (e.g. failure-value stages only) gets no legend entry.
    if (!dx.empty())
      p.series.push_back(points(std::string("failure: maximum deviator stress") + (dev ? " (declared)" : ""), dx, dy, 4,
                                svg::Marker::circle, "failure-max-deviator"));
    if (!rx.empty())
      p.series.push_back(points(std::string("failure: maximum stress ratio") + (ratio ? " (declared)" : ""), rx, ry, 4,
                                svg::Marker::triangle, "failure-max-stress-ratio"));
    if (!cx.empty())
      p.series.push_back(points("failure: " + to_string(o.criterion) + " (declared)", cx, cy, 4, svg::Marker::square, "failure-criterion"));
    if (!ox.empty()) p.series.push_back(points("declared failure point not used", ox, oy, 1, svg::Marker::cross, "failure-unused"));
    // Lines only over the s' range used.
    if (env.note.empty()) {
      const double x1 = env.st.x_min, x2 = env.st.x_max;
      p.series.push_back(line("regression: c' = " + num(env.cohesion, 1) + " kPa, φ' = " + num(env.phi, 1) + "°", {x1, x2},
                              {env.st.intercept + env.st.slope * x1, env.st.intercept + env.st.slope * x2}, 4, svg::Dash::solid,
                              "envelope regression"));
      if (given(env.design_phi)) {
        const double b = std::sin(env.design_phi * kDeg), a = env.design_cohesion * std::cos(env.design_phi * kDeg);
        p.series.push_back(line("design line: c' = " + num(env.design_cohesion, 1) + " kPa, φ' = " + num(env.design_phi, 1) + "°",
                                {x1, x2}, {a + b * x1, a + b * x2}, 5, svg::Dash::dashed, "envelope design"));
      }
      if (o.origin_regression && given(env.origin_phi)) {
        const double b = std::sin(env.origin_phi * kDeg);
        p.series.push_back(line("through the origin: φ'0 = " + num(env.origin_phi, 1) + "°", {0.0, x2}, {0.0, b * x2}, 6,
                                svg::Dash::dash_dot, "envelope origin"));
      }
      svg::Band band;
      if (o.stress_low > 0.0 || std::isfinite(o.stress_high)) {
        band.name = "stress range chosen: " + num(o.stress_low, 0) + " to " + num(o.stress_high, 0) + " kPa";
        band.low = o.stress_low;
        band.high = std::isfinite(o.stress_high) ? o.stress_high : std::max(smax, x2) * 1.05;
      } else {
        band.name = "s' range of the failure points used";
        band.low = x1;
        band.high = x2;
      }
      band.style = 6;
      p.bands.push_back(band);
    }
    // Design stress: the points with sigma'_nf = s' - t sin phi' = D lie on t = (s' - D) / sin phi'.
    if (given(o.design_stress)) {
      const double d = o.design_stress;
      const double top = std::max(tmax, 1.0) * 1.05;
      if (given(env.phi) && env.phi > 0.0) {
        const double sp = std::sin(env.phi * kDeg);
        p.series.push_back(line("design stress: σ'nf = s' - t sin φ' = " + num(d, 0) + " kPa", {d, d + top * sp}, {0.0, top}, 3,
                                svg::Dash::long_dash, "design-stress"));
        p.series.push_back(line("twice the design stress: σ'nf = " + num(2.0 * d, 0) + " kPa", {2.0 * d, 2.0 * d + top * sp},
                                {0.0, top}, 3, svg::Dash::dotted, "design-stress-twice"));
      } else {
        p.series.push_back(line("design stress " + num(d, 0) + " kPa (φ' not determined: drawn at s')", {d, d}, {0.0, top}, 3,
                                svg::Dash::long_dash, "design-stress"));
      }
    }
    // Lab scatter can put the first points of a path a little below t = 0; the axis starts at 0 unless
    // a path goes clearly below it (more than 2 % of the largest t), so the plot is not half empty.
    if (!(tmin < -0.02 * tmax)) p.y.min = 0.0;
    o_ << figure(p, "Stress path of every test (dotted: left out), failure points by maximum deviator stress (circles) and by "
                    "maximum stress ratio (triangles), the regression and design lines drawn only over the s' range used (shaded), "
                    "and the design stress as the locus of s'-t points whose failure plane carries it." +
                    std::string(any_reported ? " Failure points without a path are the lab's values at failure (no curve), each "
                                               "drawn for the criterion the lab reported only." : ""));
  }

  void mohr_plot(const StrengthEnvelope& env) {
    svg::Plot p;
    p.id = "plot-mohr";
    p.title = "Effective Mohr circles at failure (" + to_string(env.criterion) + ")";
    p.x = {"normal effective stress σ'", "kPa"};
    p.y = {"shear stress τ", "kPa"};
    p.x.min = p.y.min = 0.0;
    p.equal_scale = true;
    p.height = 380.0;
    double right = 0.0;
    int style = 0;
    for (const UsedPoint& u : env.points) {
      if (!given(u.s) || !given(u.t)) continue;
      const Specimen* spc = sp(u.specimen);
      const bool multi = spc && spc->shear_stages().size() > 1;
      svg::HalfCircle c;
      c.name = u.specimen + (multi ? " stage " + std::to_string(u.shear_stage) : std::string()) + (u.used ? "" : " (not used)");
      c.centre = u.s;
      c.radius = u.t;
      c.style = test_style(style);
      c.dash = u.used ? test_dash(style) : svg::Dash::dotted;
      ++style;
      p.circles.push_back(c);
      right = std::max(right, u.s + u.t);
    }
    // t = a + s' tan(alpha) <=> tau = c' + sigma' tan(phi'), sin phi' = tan alpha, c' = a / cos phi'
    // (common practice, e.g. Lambe & Whitman 1969, Soil Mechanics, ch. 10).
    auto envelope = [&](double c, double phi_deg, const std::string& name, int st, svg::Dash dash, const char* css) {
      if (!given(c) || !given(phi_deg)) return;
      const double x2 = right * 1.05, tn = std::tan(phi_deg * kDeg);
      p.series.push_back(line(name + ": c' = " + num(c, 1) + " kPa, φ' = " + num(phi_deg, 1) + "°", {0.0, x2}, {c, c + tn * x2}, st, dash, css));
    };
    if (env.note.empty()) {
      envelope(env.cohesion, env.phi, "envelope from the regression", 4, svg::Dash::solid, "envelope regression");
      envelope(env.design_cohesion, env.design_phi, "design envelope", 5, svg::Dash::dashed, "envelope design");
    }
    o_ << figure(p, "Mohr circles of the failure points by the declared criterion (equal scales), each labelled; dotted: not "
                    "used; with the Mohr-Coulomb envelopes of the regression and the design line.");
  }

  void stiffness() {
    section("stiffness", "Stiffness", true);
    o_ << "<p>E<sub>i</sub>: slope of q against the stage strain up to 20 % of the peak; E<sub>50</sub>: secant to 50 % of the peak "
          "from the stage start; E<sub>ur</sub>: secant of each unload-reload loop. Law E = E<sub>ref</sub> (&#963;&#8242;3 / p<sub>ref</sub>)"
          "<sup>m</sup> on the drained stages used, p<sub>ref</sub> = "
       << num(in_.options.reference_pressure, 0) << " kPa.</p>\n";
    o_ << "<table class=\"report-table\" id=\"table-stiffness\">\n<thead><tr><th>specimen</th><th>stage</th><th>test</th>"
          "<th>&#963;&#8242;3 at the start (kPa)</th><th>E<sub>i</sub> (kPa)</th><th>E<sub>50</sub> (kPa)</th><th>E<sub>ur</sub> (kPa)</th>"
          "<th>note</th></tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      std::string ur;
      for (double e : s.unload_reload_stiffness) ur += (ur.empty() ? "" : ", ") + num(e, 0);
      std::string note = s.left_out.empty() ? std::string() : "left out: " + s.left_out;
      if (!s.secant_stiffness_reason.empty()) note += (note.empty() ? "" : "; ") + ("E_50 not determined: " + s.secant_stiffness_reason);
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << "><td>" << esc(s.specimen) << "</td><td class=\"num\">"
         << s.shear_stage << "</td><td>" << esc(to_string(s.test)) << "</td><td class=\"num\">" << num(s.consolidation_radial, 1)
         << "</td><td class=\"num\">" << num(s.initial_stiffness, 0) << "</td><td class=\"num\">" << num(s.secant_stiffness_50, 0)
         << "</td><td class=\"num\">" << (ur.empty() ? "&#8212;" : ur) << "</td><td>" << esc(note) << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n";
    o_ << "<table class=\"report-table\" id=\"table-stiffness-law\">\n<thead><tr><th>law</th><th>n</th><th>E<sub>ref</sub> (kPa)</th>"
          "<th>m (-)</th><th>R&#178;</th><th>basis</th></tr></thead>\n<tbody>\n";
    auto law_row = [&](const char* name, const StiffnessLaw& l) {
      o_ << "<tr><td>" << name << "</td><td class=\"num\">" << l.n << "</td>";
      if (l.reason.empty())
        o_ << "<td class=\"num\">" << num(l.reference, 0) << "</td><td class=\"num\">" << num(l.exponent, 3) << "</td><td class=\"num\">"
           << num(l.r2, 3) << "</td>";
      else
        o_ << "<td colspan=\"3\">not determined: " << esc(l.reason) << "</td>";
      o_ << "<td>" << esc(l.basis) << "</td></tr>\n";
    };
    law_row("secant E_50", in_.secant_law);
    law_row("unload-reload E_ur", in_.unload_reload_law);
    o_ << "</tbody>\n</table>\n";
    if (plan_.stiffness) {
      svg::Plot p;
      p.id = "plot-stiffness";
      p.title = "Stiffness against confining stress";
      p.x = {"σ'3 at the start of shear (log scale)", "kPa"};
      p.y = {"stiffness E (log scale)", "kPa"};
      p.x.log = p.y.log = true;
      std::vector<double> x50, e50, xur, eur;
      double lo = INFINITY, hi = 0.0;
      for (const StageInterpretation& s : in_.stages) {
        if (s.test != ShearType::cd || !s.left_out.empty() || !given(s.consolidation_radial)) continue;
        if (given(s.secant_stiffness_50)) {
          x50.push_back(s.consolidation_radial);
          e50.push_back(s.secant_stiffness_50);
        }
        for (double e : s.unload_reload_stiffness) {
          xur.push_back(s.consolidation_radial);
          eur.push_back(e);
        }
        lo = std::min(lo, s.consolidation_radial);
        hi = std::max(hi, s.consolidation_radial);
      }
      if (!x50.empty()) p.series.push_back(points("E_50", x50, e50, 0, svg::Marker::circle));
      if (!xur.empty()) p.series.push_back(points("E_ur", xur, eur, 2, svg::Marker::triangle));
      auto law_line = [&](const StiffnessLaw& l, const std::string& name, int st, svg::Dash dash) {
        if (!l.reason.empty() || !(hi > lo)) return;
        const double pr = in_.options.reference_pressure;
        p.series.push_back(line(name + " = " + num(l.reference, 0) + " (σ'3/" + num(pr, 0) + ")^" + num(l.exponent, 3), {lo, hi},
                                {l.reference * std::pow(lo / pr, l.exponent), l.reference * std::pow(hi / pr, l.exponent)}, st, dash));
      };
      law_line(in_.secant_law, "E_50", 0, svg::Dash::solid);
      law_line(in_.unload_reload_law, "E_ur", 2, svg::Dash::dashed);
      p.note = "no drained stiffness";
      o_ << "<div class=\"plots\">\n"
         << figure(p, "E_50 and E_ur of the drained stages used against σ'3 at the start of shear, with the fitted power laws "
                      "over the stresses tested.")
         << "</div>\n";
    }
    end_section();
  }

  void dilatancy() {
    bool any_cd = false;
    for (const StageInterpretation& s : in_.stages) any_cd = any_cd || s.test == ShearType::cd;
    if (!any_cd) return;
    section("dilatancy", "Dilatancy (drained stages)");
    o_ << "<table class=\"report-table\" id=\"table-dilatancy\">\n<thead><tr><th>specimen</th><th>stage</th><th>peak rate "
          "d&#949;<sub>v</sub>/d&#949;<sub>a</sub> (-)</th><th>se (-)</th><th>peak stretch, stage strain (%)</th><th>&#968; (deg)</th>"
          "<th>&#966;<sub>cv</sub> Rowe (deg)</th><th>I<sub>R</sub> (-)</th><th>3 I<sub>R</sub> (deg)</th><th>&#966;<sub>peak</sub> "
          "&#8722; &#966;<sub>cv</sub> (deg)</th><th>note</th></tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      if (s.test != ShearType::cd) continue;
      std::string note = s.left_out.empty() ? std::string() : "left out: " + s.left_out;
      if (!s.dilation_reason.empty()) note += (note.empty() ? "" : "; ") + ("psi not determined: " + s.dilation_reason);
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << "><td>" << esc(s.specimen) << "</td><td class=\"num\">"
         << s.shear_stage << "</td><td class=\"num\">" << num(s.max_dilation_rate, 3) << "</td><td class=\"num\">"
         << num(s.max_dilation_rate_se, 3) << "</td><td class=\"num\">" << num(s.dilation_window.from * 100.0, 2) << " to "
         << num(s.dilation_window.to * 100.0, 2) << "</td><td class=\"num\">" << num(s.dilation_angle, 2) << "</td><td class=\"num\">"
         << num(s.phi_cv_rowe, 2) << "</td><td class=\"num\">" << num(s.bolton_index, 2) << "</td><td class=\"num\">"
         << num(s.bolton_phi_difference, 1) << "</td><td class=\"num\">" << num(s.measured_phi_difference, 1) << "</td><td>"
         << esc(note) << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n<p class=\"rule\">Mean &#966;<sub>cv</sub> (Rowe 1962) over the stages used: "
       << (in_.phi_cv_rowe_reason.empty() ? num(in_.phi_cv_rowe, 2) + " deg" : "not determined: " + esc(in_.phi_cv_rowe_reason))
       << ". &#968; from the Mohr-Coulomb flow rule, elastic strains neglected; Bolton (1986) I<sub>R</sub> where the relative density "
          "is given.</p>\n";
    if (plan_.dilatancy) {
      svg::Plot p;
      p.id = "plot-dilatancy";
      p.title = "Stress-dilatancy (Rowe 1962)";
      p.x = {"D = 1 - dεv/dεa", "-"};
      p.y = {"R = σ'1/σ'3", "-"};
      int style = 0;
      double dmin = INFINITY, dmax = 0.0;
      for (const StageInterpretation& s : in_.stages) {
        if (s.dilatancy_d.empty()) continue;
        p.series.push_back(points(label_of(s) + (s.left_out.empty() ? "" : " (left out)"), s.dilatancy_d, s.dilatancy_ratio, style % 8,
                                  svg::style_marker(style)));
        ++style;
        for (double d : s.dilatancy_d) {
          dmin = std::min(dmin, d);
          dmax = std::max(dmax, d);
        }
      }
      if (in_.phi_cv_rowe_reason.empty() && dmax > dmin) {
        const double k = std::pow(std::tan((45.0 + 0.5 * in_.phi_cv_rowe) * kDeg), 2.0);
        p.series.push_back(line("R = K_cv D, φcv = " + num(in_.phi_cv_rowe, 1) + "°", {dmin, dmax}, {k * dmin, k * dmax}, 4,
                                svg::Dash::dashed));
      }
      o_ << "<div class=\"plots\">\n"
         << figure(p, "Stress ratio against the dilatancy D past 50 % of the peak deviator stress, and Rowe's line with the mean "
                      "φcv.")
         << "</div>\n";
    }
    end_section();
  }

  void compressibility() {
    if (!plan_.compressibility && !plan_.critical && in_.cs_count == 0) return;
    section("compressibility", "Compressibility and critical state", true);
    if (plan_.compressibility) {
      o_ << "<table class=\"report-table\" id=\"table-compressibility\">\n<thead><tr><th>specimen</th><th>series stage</th><th>basis</th>"
            "<th>&#955; (-)</th><th>&#954; (-)</th><th>C<sub>c</sub> (-)</th><th>C<sub>s</sub> (-)</th><th>E<sub>oed</sub> (kPa)</th>"
            "<th>at &#963;&#8242;<sub>v</sub> (kPa)</th><th>note</th></tr></thead>\n<tbody>\n";
      for (const auto& c : in_.compressibility) {
        std::string note;
        for (const auto& [what, why] : {std::pair<const char*, const std::string&>{"lambda", c.lambda_reason},
                                        {"kappa", c.kappa_reason},
                                        {"E_oed", c.constrained_modulus_reason}})
          if (!why.empty()) note += (note.empty() ? "" : "; ") + std::string(what) + " not determined: " + why;
        const bool oed = c.basis.rfind("oedometer", 0) == 0;
        o_ << "<tr><td>" << esc(c.specimen) << "</td><td class=\"num\">" << c.stage + 1 << "</td><td>" << esc(c.basis)
           << "</td><td class=\"num\">" << num(c.lambda, 4) << "</td><td class=\"num\">" << num(c.kappa, 4) << "</td><td class=\"num\">"
           << num(c.compression_index, 3) << "</td><td class=\"num\">" << num(c.swelling_index, 3) << "</td><td class=\"num\">"
           << (oed ? num(c.constrained_modulus, 0) : "") << "</td><td class=\"num\">" << (oed ? num(c.constrained_modulus_stress, 0) : "")
           << "</td><td>" << esc(note) << "</td></tr>\n";
      }
      o_ << "</tbody>\n</table>\n<p class=\"rule\">Series stage: the position of the stage in the specimen's list of stages in the "
            "series file (1 = first). C<sub>c</sub> = &#955; ln 10, C<sub>s</sub> = &#954; ln 10.</p>\n";
    }
    o_ << "<table class=\"report-table\" id=\"table-critical-state\">\n<tbody>\n";
    o_ << "<tr><th>steady end states (compression)</th><td class=\"num\">" << in_.cs_count << "</td></tr>\n";
    o_ << "<tr><th>M (-) / &#966;<sub>cs</sub> (deg)</th><td class=\"num\">"
       << (in_.critical_m_reason.empty() ? num(in_.critical_m, 3) + " / " + num(in_.phi_cs, 2) : "not determined: " + esc(in_.critical_m_reason))
       << "</td></tr>\n";
    o_ << "<tr><th>critical-state line e = &#915; &#8722; &#955; ln p&#8242; (p&#8242; in kPa)</th><td class=\"num\">"
       << (in_.csl_reason.empty() ? "&#915; " + num(in_.csl.intercept, 3) + ", &#955; " + num(-in_.csl.slope, 4) + " (" + std::to_string(in_.csl.n) + " points)"
                                  : "not determined: " + esc(in_.csl_reason))
       << "</td></tr>\n</tbody>\n</table>\n";
    o_ << "<div class=\"plots\">\n";
    if (plan_.oedometer) oedometer_plot();
    if (plan_.critical) critical_plot();
    o_ << "</div>\n";
    end_section();
  }

  void oedometer_plot() {
    svg::Plot p;
    p.id = "plot-oedometer";
    p.title = "Oedometer: e - log σ'v";
    p.x = {"vertical effective stress σ'v (log scale)", "kPa"};
    p.y = {"void ratio e", "-"};
    p.x.log = true;
    int style = 0;
    for (const auto& c : in_.compressibility) {
      if (c.basis.rfind("oedometer", 0) != 0) continue;
      const Specimen* spc = sp(c.specimen);
      if (!spc) continue;
      const auto [first, last] = spc->stage_points(c.stage);
      std::vector<double> xs, ys;
      for (int i = first; i <= last; ++i) {
        const std::size_t u = static_cast<std::size_t>(i);
        if (spc->curves.axial_stress[u] > 0.0 && given(spc->curves.void_ratio[u])) {
          xs.push_back(spc->curves.axial_stress[u]);
          ys.push_back(spc->curves.void_ratio[u]);
        }
      }
      if (xs.empty()) continue;
      const int st = style++ % 8;
      svg::Series m = points(c.specimen + " measured", xs, ys, st, svg::Marker::circle);
      m.dash = svg::Dash::dotted;
      m.width = 0.8;
      p.series.push_back(std::move(m));
      if (given(c.lambda) && given(c.lambda_e_at_1))
        p.series.push_back(line(c.specimen + ": C_c = " + num(c.compression_index, 3), {c.lambda_from, c.lambda_to},
                                {c.lambda_e_at_1 - c.lambda * std::log(c.lambda_from), c.lambda_e_at_1 - c.lambda * std::log(c.lambda_to)},
                                4, svg::Dash::solid));
      if (given(c.kappa) && given(c.kappa_e_at_1))
        p.series.push_back(line(c.specimen + ": C_s = " + num(c.swelling_index, 3), {c.kappa_from, c.kappa_to},
                                {c.kappa_e_at_1 - c.kappa * std::log(c.kappa_from), c.kappa_e_at_1 - c.kappa * std::log(c.kappa_to)}, 5,
                                svg::Dash::dashed));
    }
    o_ << figure(p, "Void ratio against the vertical effective stress (log scale) with the C_c line over the first-loading points "
                    "used and the C_s line over the first unloading.");
  }

  void critical_plot() {
    svg::Plot p;
    p.id = "plot-critical-state";
    p.title = "Critical state: e - ln p'";
    p.x = {"mean effective stress p' (log scale)", "kPa"};
    p.y = {"void ratio e", "-"};
    p.x.log = true;
    int style = 0;
    for (const StageInterpretation& s : in_.stages) {
      if (!(s.steady_state && given(s.end_void_ratio) && s.end_p > 0.0)) continue;
      p.series.push_back(points(label_of(s) + (s.left_out.empty() ? "" : " (left out)"), {s.end_p}, {s.end_void_ratio}, style % 8,
                                s.left_out.empty() ? svg::style_marker(style) : svg::Marker::cross));
      ++style;
    }
    if (in_.csl_reason.empty()) {
      const LineFit& f = in_.csl;
      const double a = std::exp(f.x_min), b = std::exp(f.x_max);
      p.series.push_back(line("e = " + num(f.intercept, 3) + " - " + num(-f.slope, 4) + " ln p'", {a, b}, {f.intercept + f.slope * f.x_min,
                              f.intercept + f.slope * f.x_max}, 4, svg::Dash::dashed));
    }
    if (plan_.sand_csl) p.series.push_back(power_line(1.0, "csl-power"));
    o_ << figure(p, "Steady (critical) end states of the compression stages in e - ln p' with the critical-state line where "
                    "it is determined" +
                        std::string(plan_.sand_csl ? ", and the power-law line e_c = e_Γ - λ_c (p'/p_at)^ξ (solid) over the same states."
                                                   : "."));
  }

  /// e_c(p') of the power-law critical-state line (Interpretation::csl_power).
  double csl_power_at(double p) const {
    return in_.csl_power.intercept + in_.csl_power.slope * std::pow(p / kAtmosphere, in_.csl_exponent);
  }
  /// The power-law line sampled over its fitted p' range widened by `widen` on a log scale each way.
  svg::Series power_line(double widen, const std::string& css) const {
    const double xi = in_.csl_exponent, a = kAtmosphere * std::pow(in_.csl_power.x_min, 1.0 / xi) / widen,
                 b = kAtmosphere * std::pow(in_.csl_power.x_max, 1.0 / xi) * widen;
    std::vector<double> xs, ys;
    for (int k = 0; k <= 40; ++k) {
      const double pk = a * std::pow(b / a, k / 40.0);
      xs.push_back(pk);
      ys.push_back(csl_power_at(pk));
    }
    return line("e_c = " + num(in_.csl_power.intercept, 4) + " - " + num(-in_.csl_power.slope, 4) + " (p'/p_at)^" + num(xi, 2), xs, ys,
                4, svg::Dash::solid, css);
  }

  /// Sand state (issue 17): the power-law critical-state line, the state parameter at the start of
  /// each shear stage, the peak angle and dilation against it, and the CU phase transformation and
  /// instability.
  void sand() {
    section("sand", "State parameter and power-law critical-state line (sand state)", true);
    o_ << "<p>Critical-state line in the power form e<sub>c</sub> = e<sub>&#915;</sub> &#8722; &#955;<sub>c</sub> "
          "(p&#8242;/p<sub>at</sub>)<sup>&#958;</sup>, p<sub>at</sub> = 101.325 kPa, &#958; fixed (the form of Dafalias &amp; "
          "Manzari 2004, after Li &amp; Wang 1998), fitted by least squares to the steady end states of the compression stages. "
          "State parameter &#968; = e &#8722; e<sub>c</sub>(p&#8242;) at the start of each shear stage (Been &amp; Jefferies 1985): "
          "negative is denser than critical (dilates), positive looser (contracts).</p>\n";
    o_ << "<p class=\"rule\">Critical state: " << esc(kSteadyStateRule) << ". " << esc(kSandStateRule) << ".</p>\n";
    // The line and the trends.
    o_ << "<table class=\"report-table\" id=\"table-sand-csl\">\n<thead><tr><th>quantity</th><th>value</th><th>unit</th>"
          "<th>basis</th></tr></thead>\n<tbody>\n";
    auto row = [&](const std::string& what, const std::string& value, const char* unit, const std::string& basis, const char* key) {
      o_ << "<tr data-key=\"" << key << "\"><th>" << what << "</th><td class=\"num\">" << value << "</td><td>" << unit << "</td><td>"
         << basis << "</td></tr>\n";
    };
    const LineFit& cp = in_.csl_power;
    const std::string csl_basis =
        std::to_string(cp.n) + " steady end state(s), p&#8242; " + num(kAtmosphere * std::pow(cp.x_min, 1.0 / in_.csl_exponent), 0) +
        " to " + num(kAtmosphere * std::pow(cp.x_max, 1.0 / in_.csl_exponent), 0) + " kPa, R&#178; = " + num(cp.r2, 4);
    const std::string csl_not = "not determined: " + esc(in_.csl_power_reason);
    if (plan_.sand_csl) {
      row("e<sub>&#915;</sub>, the line at p&#8242; = 0", num(cp.intercept, 4), "-", csl_basis, "e_gamma");
      row("&#955;<sub>c</sub>, its slope against (p&#8242;/p<sub>at</sub>)<sup>&#958;</sup>", num(-cp.slope, 4), "-", csl_basis, "lambda_c");
    } else {
      row("e<sub>&#915;</sub>, &#955;<sub>c</sub>", "&#8212;", "-", csl_not, "e_gamma");
    }
    row("&#958;, the exponent", num(in_.csl_exponent, 2), "-", "fixed (interpret --csl-exponent; 0.7 from memory of Li &amp; Wang 1998)", "xi");
    row("&#915; and &#955; of e = &#915; &#8722; &#955; ln p&#8242; (p&#8242; in kPa)",
        in_.csl_reason.empty() ? num(in_.csl.intercept, 4) + " / " + num(-in_.csl.slope, 4) : "&#8212;", "-",
        in_.csl_reason.empty() ? std::to_string(in_.csl.n) + " steady end state(s), R&#178; = " + num(in_.csl.r2, 4)
                               : "not determined: " + esc(in_.csl_reason),
        "log_line");
    row("&#968; taken against", in_.psi_line.empty() ? "&#8212;" : (in_.psi_line == "power" ? "power-law line" : "e &#8722; ln p&#8242; line"),
        "", in_.psi_line.empty() ? "not determined: " + esc(in_.psi_reason) : std::string("the first determined of the two lines"),
        "psi_line");
    auto trend_row = [&](const std::string& what, const LineFit& f, const std::string& reason, const char* unit, const char* key) {
      if (reason.empty())
        row(what, "a " + num(f.intercept, 3) + ", b " + num(f.slope, 3), unit,
            std::to_string(f.n) + " CD compression stage(s), &#968; " + num(f.x_min, 3) + " to " + num(f.x_max, 3) +
                ", R&#178; = " + num(f.r2, 3) + " (least squares; a roughly linear trend, Been &amp; Jefferies 1985, from memory)",
            key);
      else
        row(what, "&#8212;", unit, "not determined: " + esc(reason), key);
    };
    trend_row("&#966;&#8242;<sub>peak</sub> = a + b &#968;", in_.peak_angle_vs_psi, in_.peak_angle_vs_psi_reason, "deg", "peak_angle_trend");
    trend_row("&#8722;(d&#949;<sub>v</sub>/d&#949;<sub>a</sub>)<sub>max</sub> = a + b &#968;", in_.dilation_vs_psi,
              in_.dilation_vs_psi_reason, "-", "dilation_trend");
    o_ << "</tbody>\n</table>\n";
    // Each shear stage.
    o_ << "<table class=\"report-table\" id=\"table-sand-state\">\n<thead><tr><th>specimen</th><th>stage</th><th>test</th>"
          "<th>p&#8242;<sub>0</sub> (kPa)</th><th>e<sub>0</sub> (-)</th><th>&#968;<sub>0</sub> (-)</th><th>end p&#8242; (kPa)</th>"
          "<th>end e (-)</th><th>critical state at the end</th><th>&#966;&#8242;<sub>peak</sub> (deg)</th>"
          "<th>&#8722;(d&#949;<sub>v</sub>/d&#949;<sub>a</sub>)<sub>max</sub> (-)</th><th>note</th></tr></thead>\n<tbody>\n";
    for (const StageInterpretation& s : in_.stages) {
      if (is_uu(s) || s.failure_values_only) continue;
      std::string note = s.left_out.empty() ? std::string() : "left out: " + s.left_out;
      if (!given(s.state_parameter)) {
        const std::string why = !in_.psi_reason.empty() ? in_.psi_reason
                                : !given(s.start_void_ratio) ? std::string("no void ratio at the start of shear")
                                                             : std::string("no p' > 0 at the start of shear");
        note += (note.empty() ? "" : "; ") + ("psi not determined: " + why);
      }
      const bool cs = s.steady_state && s.direction == ShearDirection::compression;
      std::string crit = cs ? "yes" : "no: " + esc(s.steady_reason.empty() ? std::string("extension stage") : s.steady_reason);
      o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << " data-test=\"" << esc(label_of(s)) << "\" data-psi=\""
         << (given(s.state_parameter) ? num(s.state_parameter, 6) : "") << "\"><td>" << esc(s.specimen) << "</td><td class=\"num\">"
         << s.shear_stage << "</td><td>" << esc(to_string(s.test)) << "</td><td class=\"num\">" << num(s.start_p, 1)
         << "</td><td class=\"num\">" << num(s.start_void_ratio, 4) << "</td><td class=\"num\">" << num(s.state_parameter, 4)
         << "</td><td class=\"num\">" << num(s.end_p, 1) << "</td><td class=\"num\">" << num(s.end_void_ratio, 4) << "</td><td>"
         << crit << "</td><td class=\"num\">" << num(s.peak_friction_angle, 2) << "</td><td class=\"num\">"
         << num(given(s.max_dilation_rate) ? -s.max_dilation_rate : s.max_dilation_rate, 3) << "</td><td>" << esc(note)
         << "</td></tr>\n";
    }
    o_ << "</tbody>\n</table>\n";
    // CU stages: phase transformation and instability.
    bool any_cu = false;
    for (const StageInterpretation& s : in_.stages) any_cu = any_cu || (s.test == ShearType::cu && !s.failure_values_only);
    if (any_cu) {
      o_ << "<h3>Undrained stages: phase transformation and instability</h3>\n";
      o_ << "<table class=\"report-table\" id=\"table-sand-cu\">\n<thead><tr><th rowspan=\"2\">specimen</th><th rowspan=\"2\">stage</th>"
            "<th rowspan=\"2\">&#968;<sub>0</sub> (-)</th><th colspan=\"4\">phase transformation (least p&#8242;)</th>"
            "<th colspan=\"4\">instability (peak q before a drop)</th></tr>\n<tr><th>&#949;<sub>a,st</sub> (%)</th><th>p&#8242; (kPa)</th>"
            "<th>q (kPa)</th><th>q/p&#8242; (-)</th><th>&#949;<sub>a,st</sub> (%)</th><th>p&#8242; (kPa)</th><th>q (kPa)</th>"
            "<th>q/p&#8242; (-)</th></tr></thead>\n<tbody>\n";
      for (const StageInterpretation& s : in_.stages) {
        if (s.test != ShearType::cu || s.failure_values_only) continue;
        o_ << "<tr" << (s.left_out.empty() ? "" : " class=\"unused\"") << " data-test=\"" << esc(label_of(s)) << "\"><td>"
           << esc(s.specimen) << "</td><td class=\"num\">" << s.shear_stage << "</td><td class=\"num\">" << num(s.state_parameter, 4)
           << "</td>";
        if (given(s.phase_transformation_ratio))
          o_ << "<td class=\"num\">" << num(s.phase_transformation.axial_strain * 100.0, 2) << "</td><td class=\"num\">"
             << num(s.phase_transformation.p, 1) << "</td><td class=\"num\">" << num(s.phase_transformation.q, 1)
             << "</td><td class=\"num\" data-ratio=\"" << num(s.phase_transformation_ratio, 6) << "\">"
             << num(s.phase_transformation_ratio, 3) << "</td>";
        else
          o_ << "<td colspan=\"4\">none: p&#8242; does not rise again after its least value by 2 % (and 1 kPa)</td>";
        if (given(s.instability_ratio))
          o_ << "<td class=\"num\">" << num(s.instability.axial_strain * 100.0, 2) << "</td><td class=\"num\">" << num(s.instability.p, 1)
             << "</td><td class=\"num\">" << num(s.instability.q, 1) << "</td><td class=\"num\" data-ratio=\""
             << num(s.instability_ratio, 6) << "\">" << num(s.instability_ratio, 3) << "</td>";
        else
          o_ << "<td colspan=\"4\">none: no peak of q followed by a fall of more than 5 % while p&#8242; falls</td>";
        o_ << "</tr>\n";
      }
      o_ << "</tbody>\n</table>\n";
    }
    o_ << "<div class=\"plots\">\n";
    sand_csl_plot();
    if (plan_.sand_angle) sand_trend_plot(true);
    if (plan_.sand_dilation) sand_trend_plot(false);
    if (plan_.sand_cu) sand_cu_plot();
    o_ << "</div>\n";
    end_section();
  }

  void sand_csl_plot() {
    svg::Plot p;
    p.id = "plot-sand-csl";
    p.title = "Critical-state line: e - p'";
    p.x = {"mean effective stress p'", "kPa"};
    p.y = {"void ratio e", "-"};
    p.x.include_zero = true;
    std::vector<double> cx, cy, sx, sy;
    double pmax = 0.0;
    for (const StageInterpretation& s : in_.stages) {
      if (!s.left_out.empty()) continue;
      if (s.steady_state && s.direction == ShearDirection::compression && given(s.end_void_ratio) && s.end_p > 0.0) {
        cx.push_back(s.end_p);
        cy.push_back(s.end_void_ratio);
        pmax = std::max(pmax, s.end_p);
      }
      if (given(s.state_parameter)) {
        sx.push_back(s.start_p);
        sy.push_back(s.start_void_ratio);
        pmax = std::max(pmax, s.start_p);
      }
    }
    if (!cx.empty()) p.series.push_back(points("steady (critical) end states", cx, cy, 0, svg::Marker::circle, "csl-point"));
    if (!sx.empty()) p.series.push_back(points("start of shear (ψ0 = e0 - e_c)", sx, sy, 2, svg::Marker::triangle, "start-state"));
    if (plan_.sand_csl) {
      p.series.push_back(power_line(1.0, "csl-power"));
      if (pmax > 0.0) {  // the same line over every plotted p', so that psi0 reads off as a vertical distance
        std::vector<double> xs, ys;
        for (int k = 0; k <= 40; ++k) {
          const double pk = pmax * k / 40.0;
          xs.push_back(pk);
          ys.push_back(csl_power_at(pk));
        }
        p.series.push_back(line("the same line beyond the end states", xs, ys, 4, svg::Dash::dotted, "csl-power-extended"));
      }
    }
    p.note = "no critical-state line and no state parameter";
    o_ << figure(p, "Void ratio against p': the steady end states (circles), the power-law critical-state line fitted to them "
                    "(solid over their p' range, dotted beyond) and the state at the start of each shear stage (triangles); ψ0 "
                    "is the vertical distance of a triangle from the line.");
  }

  void sand_trend_plot(bool angle) {
    svg::Plot p;
    p.id = angle ? "plot-sand-peak-angle" : "plot-sand-dilation";
    p.title = angle ? "Peak friction angle against ψ0" : "Peak dilation rate against ψ0";
    p.x = {"state parameter at the start of shear ψ0", "-"};
    p.y = angle ? svg::Axis{"peak friction angle φ'peak", "deg"} : svg::Axis{"peak dilation rate -(dεv/dεa)max", "-"};
    std::vector<double> xs, ys;
    for (const StageInterpretation& s : in_.stages) {
      if (!s.left_out.empty() || !given(s.state_parameter)) continue;
      const double y = angle ? s.peak_friction_angle
                             : (s.test == ShearType::cd && s.direction == ShearDirection::compression ? -s.max_dilation_rate : kNotGiven);
      if (!given(y)) continue;
      xs.push_back(s.state_parameter);
      ys.push_back(y);
    }
    p.series.push_back(points("CD compression stages", xs, ys, 0, svg::Marker::circle, angle ? "peak-angle" : "peak-dilation"));
    const LineFit& f = angle ? in_.peak_angle_vs_psi : in_.dilation_vs_psi;
    const std::string& reason = angle ? in_.peak_angle_vs_psi_reason : in_.dilation_vs_psi_reason;
    if (reason.empty())
      p.series.push_back(line("regression: " + num(f.intercept, angle ? 2 : 3) + " + (" + num(f.slope, angle ? 1 : 3) + ") ψ0",
                              {f.x_min, f.x_max}, {f.intercept + f.slope * f.x_min, f.intercept + f.slope * f.x_max}, 4,
                              svg::Dash::solid, "regression"));
    o_ << figure(p, std::string(angle ? "φ'peak from the largest σ'1/σ'3 (c' = 0)" : "The peak dilation rate (Dilatancy table)") +
                        " of each CD compression stage against its state parameter at the start of shear, with the "
                        "least-squares line" +
                        (reason.empty() ? std::string(".") : " (not determined: " + reason + ")."));
  }

  void sand_cu_plot() {
    svg::Plot p;
    p.id = "plot-sand-cu-paths";
    p.title = "Undrained stress paths: phase transformation and instability";
    p.x = {"mean effective stress p'", "kPa"};
    p.y = {"deviator stress q", "kPa"};
    p.x.include_zero = p.y.include_zero = true;
    p.height = 460.0;
    int style = 0;
    double pmax = 0.0, zoom_p = 0.0, zoom_q = 0.0;  // zoom_*: the start states and the marked points
    std::vector<double> tx, ty, ix, iy;
    for (const StageInterpretation& s : in_.stages) {
      if (s.test != ShearType::cu || s.failure_values_only) continue;
      const Specimen* spc = sp(s.specimen);
      if (!spc) continue;
      const auto [first, last] = spc->stage_points(s.stage);
      const int n = last - first + 1;
      const int step = std::max(1, (n + static_cast<int>(kMaxPathPoints) - 1) / static_cast<int>(kMaxPathPoints));
      std::vector<double> xs, ys;
      for (int i = first; i <= last; i += step) {
        xs.push_back(spc->curves.mean_stress[static_cast<std::size_t>(i)]);
        ys.push_back(spc->curves.deviator_stress[static_cast<std::size_t>(i)]);
      }
      if ((n - 1) % step != 0) {
        xs.push_back(spc->curves.mean_stress[static_cast<std::size_t>(last)]);
        ys.push_back(spc->curves.deviator_stress[static_cast<std::size_t>(last)]);
      }
      for (double x : xs)
        if (given(x)) pmax = std::max(pmax, x);
      svg::Series path = line(label_of(s) + (s.left_out.empty() ? "" : " (left out)"), xs, ys, test_style(style),
                              s.left_out.empty() ? test_dash(style) : svg::Dash::dotted, "stress-path");
      path.width = 1.0;
      p.series.push_back(std::move(path));
      ++style;
      if (given(s.start_p)) zoom_p = std::max(zoom_p, s.start_p);
      if (given(s.phase_transformation_ratio)) {
        tx.push_back(s.phase_transformation.p);
        ty.push_back(s.phase_transformation.q);
        zoom_p = std::max(zoom_p, s.phase_transformation.p);
        zoom_q = std::max(zoom_q, s.phase_transformation.q);
      }
      if (given(s.instability_ratio)) {
        ix.push_back(s.instability.p);
        iy.push_back(s.instability.q);
        zoom_p = std::max(zoom_p, s.instability.p);
        zoom_q = std::max(zoom_q, s.instability.q);
      }
    }
    // Dense specimens climb to many times their start stress; the frame shows the region of the
    // start states and the marked points, where the paths turn (lines are clipped to the frame).
    const bool zoom = zoom_p > 0.0 && pmax > 2.0 * 1.6 * zoom_p;
    if (zoom) {
      p.x.max = 1.6 * zoom_p;
      p.y.max = std::max(1.6 * zoom_q, 0.8 * zoom_p);
    }
    p.series.push_back(points("phase transformation (least p')", tx, ty, 4, svg::Marker::diamond, "phase-transformation"));
    p.series.push_back(points("instability (peak q before a drop)", ix, iy, 4, svg::Marker::square, "instability"));
    if (in_.critical_m_reason.empty() && pmax > 0.0)
      p.series.push_back(line("critical state q = M p', M = " + num(in_.critical_m, 3), {0.0, pmax}, {0.0, in_.critical_m * pmax}, 5,
                              svg::Dash::dashed, "critical-line"));
    o_ << figure(p, "Stress paths of the CU stages in p'-q with the phase-transformation points (diamonds: p' stops falling, the "
                    "excess pore pressure stops rising) and the instability points (squares: the peak of q before a loss of "
                    "strength), and the critical-state line q = M p' where M is determined" +
                        std::string(zoom ? "; the frame shows p' up to " + num(p.x.max, 0) +
                                               " kPa around the start states and the marked points (the paths of the dense "
                                               "specimens leave it, up to p' = " + num(pmax, 0) + " kPa)."
                                         : "."));
  }

  void left_out() {
    section("left-out", "Tests left out, warnings");
    o_ << "<table class=\"report-table\" id=\"table-left-out\">\n<thead><tr><th>specimen</th><th>stage</th><th>left out of</th>"
          "<th>reason</th></tr></thead>\n<tbody>\n";
    int rows = 0;
    for (const LeftOut& l : in_.left_out) {
      o_ << "<tr><td>" << esc(l.specimen) << "</td><td>" << (l.shear_stage > 0 ? std::to_string(l.shear_stage) : std::string("all"))
         << "</td><td>everything (by choice)</td><td>" << esc(l.reason) << "</td></tr>\n";
      ++rows;
    }
    for (const StrengthEnvelope& e : in_.envelopes)
      for (const UsedPoint& u : e.points) {
        if (u.used || u.reason.rfind("left out: ", 0) == 0) continue;
        o_ << "<tr><td>" << esc(u.specimen) << "</td><td>" << u.shear_stage << "</td><td>envelope (" << esc(to_string(e.criterion))
           << ")</td><td>" << esc(u.reason) << "</td></tr>\n";
        ++rows;
      }
    if (rows == 0) o_ << "<tr><td colspan=\"4\">none</td></tr>\n";
    o_ << "</tbody>\n</table>\n<h3>Warnings</h3>\n";
    if (in_.warnings.empty()) {
      o_ << "<p id=\"no-warnings\">No warnings.</p>\n";
    } else {
      o_ << "<ul class=\"warnings\" id=\"list-warnings\">\n";
      for (const std::string& w : in_.warnings) o_ << "<li>" << esc(w) << "</li>\n";
      o_ << "</ul>\n";
    }
    end_section();
  }

  void rules() {
    section("rules", "Rules and assumptions");
    o_ << "<ol class=\"rules\" id=\"list-rules\">\n";
    for (const std::string& n : in_.notes) o_ << "<li>" << esc(n) << "</li>\n";
    o_ << "</ol>\n";
    end_section();
  }

  void signoff() {
    section("signoff", "Sign-off");
    o_ << "<p class=\"caution\">" << esc(opt_.caution) << "</p>\n";
    o_ << "<table class=\"report-table signoff\" id=\"table-signoff\">\n<thead><tr><th></th><th>name</th><th>signature</th>"
          "<th>date</th></tr></thead>\n<tbody>\n";
    for (const char* role : {"prepared", "checked", "approved"})
      o_ << "<tr><th>" << role << "</th><td></td><td></td><td></td></tr>\n";
    o_ << "</tbody>\n</table>\n";
    end_section();
  }
};

}  // namespace

std::vector<std::string> interpretation_plot_ids(const Interpretation& in, const TestSeries& series) {
  const Plan plan(in, series);
  std::vector<std::string> ids;
  if (plan.uu) ids.push_back("plot-uu-mohr");
  if (plan.uu && plan.cu_depth) ids.push_back("plot-cu-depth");
  if (plan.strength && !in.envelopes.empty()) {
    ids.push_back("plot-s-t");
    ids.push_back("plot-mohr");
  }
  if (plan.stiffness) ids.push_back("plot-stiffness");
  if (plan.dilatancy) ids.push_back("plot-dilatancy");
  if (plan.oedometer) ids.push_back("plot-oedometer");
  if (plan.critical) ids.push_back("plot-critical-state");
  if (plan.sand) {
    ids.push_back("plot-sand-csl");
    if (plan.sand_angle) ids.push_back("plot-sand-peak-angle");
    if (plan.sand_dilation) ids.push_back("plot-sand-dilation");
    if (plan.sand_cu) ids.push_back("plot-sand-cu-paths");
  }
  return ids;
}

std::vector<std::string> interpretation_table_ids(const Interpretation& in, const TestSeries& series) {
  const Plan plan(in, series);
  std::vector<std::string> ids = {"table-summary", "table-tests"};
  if (plan.uu) ids.push_back("table-undrained");
  ids.push_back("table-failure");
  ids.push_back("table-strength");
  ids.push_back("table-stiffness");
  ids.push_back("table-stiffness-law");
  bool any_cd = false;
  for (const StageInterpretation& s : in.stages) any_cd = any_cd || s.test == ShearType::cd;
  if (any_cd) ids.push_back("table-dilatancy");
  if (plan.compressibility || plan.critical || in.cs_count > 0) {
    if (plan.compressibility) ids.push_back("table-compressibility");
    ids.push_back("table-critical-state");
  }
  if (plan.sand) {
    ids.push_back("table-sand-csl");
    ids.push_back("table-sand-state");
    bool any_cu = false;
    for (const StageInterpretation& s : in.stages) any_cu = any_cu || (s.test == ShearType::cu && !s.failure_values_only);
    if (any_cu) ids.push_back("table-sand-cu");
  }
  ids.push_back("table-left-out");
  ids.push_back("table-signoff");
  return ids;
}

std::string render_interpretation_report(const Interpretation& in, const TestSeries& series, const InterpretationReportOptions& options) {
  return InterpretationRenderer(in, series, options).run();
}

}  // namespace triaxcal::report
