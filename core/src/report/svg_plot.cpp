#include "triaxcal/svg_plot.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <cstdio>
#include <sstream>

namespace triaxcal::svg {

namespace {

// Layout in viewBox px. The left margin holds y tick labels of up to ~7 characters at 11 px.
constexpr double kLeft = 74.0;
constexpr double kRight = 18.0;
constexpr double kTop = 30.0;
constexpr double kBottom = 50.0;
constexpr double kLegendRow = 18.0;
constexpr double kMarkerSize = 4.0;  // half-size of a marker (px)

std::string num(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.2f", v);
  std::string s = buf;
  if (s == "-0.00") s = "0.00";
  return s;
}

bool usable(double v, bool log) { return std::isfinite(v) && (!log || v > 0.0); }

struct Range {
  double lo = std::numeric_limits<double>::infinity();
  double hi = -std::numeric_limits<double>::infinity();
  void add(double v) {
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  bool empty() const { return !(lo <= hi); }
};

std::string dash_array(Dash dash) {
  switch (dash) {
    case Dash::none:
    case Dash::solid: return "";
    case Dash::dashed: return "7 4";
    case Dash::dotted: return "1.5 3";
    case Dash::dash_dot: return "9 3 2 3";
    case Dash::long_dash: return "15 5";
    case Dash::dash_dot_dot: return "9 3 2 3 2 3";
  }
  return "";
}

// Marker outlines centred on (0, 0), drawn with <use> at the data point.
std::string marker_path(Marker m) {
  const double s = kMarkerSize;
  std::ostringstream d;
  switch (m) {
    case Marker::none: return "";
    case Marker::circle:
      d << "M " << num(-s) << " 0 A " << num(s) << " " << num(s) << " 0 1 0 " << num(s) << " 0 A " << num(s) << " "
        << num(s) << " 0 1 0 " << num(-s) << " 0 Z";
      break;
    case Marker::square: {
      const double h = s * 0.9;
      d << "M " << num(-h) << " " << num(-h) << " H " << num(h) << " V " << num(h) << " H " << num(-h) << " Z";
      break;
    }
    case Marker::triangle:
      d << "M 0 " << num(-s * 1.15) << " L " << num(s) << " " << num(s * 0.75) << " L " << num(-s) << " "
        << num(s * 0.75) << " Z";
      break;
    case Marker::triangle_down:
      d << "M 0 " << num(s * 1.15) << " L " << num(s) << " " << num(-s * 0.75) << " L " << num(-s) << " "
        << num(-s * 0.75) << " Z";
      break;
    case Marker::diamond:
      d << "M 0 " << num(-s * 1.2) << " L " << num(s) << " 0 L 0 " << num(s * 1.2) << " L " << num(-s) << " 0 Z";
      break;
    case Marker::cross:
      d << "M " << num(-s) << " " << num(-s) << " L " << num(s) << " " << num(s) << " M " << num(-s) << " " << num(s)
        << " L " << num(s) << " " << num(-s);
      break;
    case Marker::plus:
      d << "M " << num(-s * 1.2) << " 0 H " << num(s * 1.2) << " M 0 " << num(-s * 1.2) << " V " << num(s * 1.2);
      break;
  }
  return d.str();
}

const Marker kAllMarkers[] = {Marker::circle, Marker::square,  Marker::triangle,     Marker::triangle_down,
                              Marker::diamond, Marker::cross, Marker::plus};

double text_width(const std::string& s, double size) {
  // Rough advance of a sans-serif face: 0.62 em a character (DejaVu Sans is wide) (UTF-8 continuation bytes not counted).
  double n = 0;
  for (unsigned char c : s)
    if ((c & 0xC0) != 0x80) n += 1;
  return n * size * 0.62;
}

double log10_floor_pow(double v) { return std::pow(10.0, std::floor(std::log10(v) + 1e-12)); }
double log10_ceil_pow(double v) { return std::pow(10.0, std::ceil(std::log10(v) - 1e-12)); }

// Widen an automatic linear range to nice ticks; a degenerate range gets a width of its own.
void finish_linear(double& lo, double& hi, const Axis& axis, bool lo_fixed, bool hi_fixed) {
  if (axis.include_zero) {
    if (!lo_fixed) lo = std::min(lo, 0.0);
    if (!hi_fixed) hi = std::max(hi, 0.0);
  }
  if (!(hi > lo)) {
    const double w = lo == 0.0 ? 1.0 : 0.1 * std::abs(lo);
    if (!lo_fixed) lo -= w;
    if (!hi_fixed) hi += w;
    if (!(hi > lo)) hi = lo + 1.0;
  }
  const std::vector<double> t = nice_ticks(lo, hi, axis.target_ticks);
  if (!lo_fixed) lo = t.front();
  if (!hi_fixed) hi = t.back();
}

void finish_log(double& lo, double& hi, bool lo_fixed, bool hi_fixed) {
  if (!lo_fixed) lo = log10_floor_pow(lo);
  if (!hi_fixed) hi = log10_ceil_pow(hi);
  if (!(hi > lo)) hi = lo * 10.0;
}

// A dimensionless quantity has no unit in parentheses (never "(-)").
std::string axis_title(const Axis& a) {
  return a.unit.empty() || a.unit == "-" ? a.label : a.label + " (" + a.unit + ")";
}

struct Writer {
  const Plot& plot;
  Frame f;
  std::string pre;  // id prefix
  std::ostringstream o;

  bool in_x(double x) const {
    const double e = 1e-9 * (std::abs(f.x_max - f.x_min) + std::abs(f.x_max));
    return x >= std::min(f.x_min, f.x_max) - e && x <= std::max(f.x_min, f.x_max) + e;
  }
  bool in_y(double y) const {
    const double e = 1e-9 * (std::abs(f.y_max - f.y_min) + std::abs(f.y_max));
    return y >= f.y_min - e && y <= f.y_max + e;
  }
};

}  // namespace

std::string to_string(Marker marker) {
  switch (marker) {
    case Marker::none: return "none";
    case Marker::circle: return "circle";
    case Marker::square: return "square";
    case Marker::triangle: return "triangle";
    case Marker::diamond: return "diamond";
    case Marker::cross: return "cross";
    case Marker::plus: return "plus";
    case Marker::triangle_down: return "triangle_down";
  }
  return "none";
}

std::string to_string(Dash dash) {
  switch (dash) {
    case Dash::none: return "none";
    case Dash::solid: return "solid";
    case Dash::dashed: return "dashed";
    case Dash::dotted: return "dotted";
    case Dash::dash_dot: return "dash_dot";
    case Dash::long_dash: return "long_dash";
    case Dash::dash_dot_dot: return "dash_dot_dot";
  }
  return "none";
}

double Frame::px(double x) const {
  if (x_log) return left + (std::log10(x) - std::log10(x_min)) / (std::log10(x_max) - std::log10(x_min)) * (right - left);
  return left + (x - x_min) / (x_max - x_min) * (right - left);
}

double Frame::py(double y) const {
  if (y_log) return bottom - (std::log10(y) - std::log10(y_min)) / (std::log10(y_max) - std::log10(y_min)) * (bottom - top);
  return bottom - (y - y_min) / (y_max - y_min) * (bottom - top);
}

std::vector<double> nice_ticks(double lo, double hi, int target) {
  assert(std::isfinite(lo) && std::isfinite(hi) && hi > lo);
  target = std::max(2, target);
  const double raw = (hi - lo) / target;
  const double mag = std::pow(10.0, std::floor(std::log10(raw)));
  const double f = raw / mag;
  const double step = (f <= 1.0 ? 1.0 : f <= 2.0 ? 2.0 : f <= 2.5 ? 2.5 : f <= 5.0 ? 5.0 : 10.0) * mag;
  // A relative slack so that data lying on a tick (0.1 as 0.1000000001) does not add a tick.
  const double slack = 1e-9 * step;
  const long first = static_cast<long>(std::floor((lo + slack) / step));
  const long last = static_cast<long>(std::ceil((hi - slack) / step));
  std::vector<double> ticks;
  for (long k = first; k <= last; ++k) {
    double t = static_cast<double>(k) * step;
    if (std::abs(t) < 1e-12 * step) t = 0.0;
    ticks.push_back(t);
  }
  if (ticks.size() < 2) ticks.push_back(ticks.back() + step);
  return ticks;
}

std::vector<double> log_ticks(double lo, double hi) {
  assert(lo > 0 && hi > lo);
  const int d0 = static_cast<int>(std::floor(std::log10(lo) + 1e-12));
  const int d1 = static_cast<int>(std::ceil(std::log10(hi) - 1e-12));
  const bool fine = d1 - d0 <= 3;
  std::vector<double> ticks;
  for (int d = d0; d <= d1; ++d) {
    const double p = std::pow(10.0, d);
    for (double m : {1.0, 2.0, 5.0}) {
      if (m != 1.0 && !fine) continue;
      const double t = m * p;
      if (t >= lo * (1 - 1e-9) && t <= hi * (1 + 1e-9)) ticks.push_back(t);
    }
  }
  return ticks;
}

std::string tick_label(double value, double spacing) {
  int decimals = 0;
  spacing = std::abs(spacing);
  if (spacing > 0 && std::isfinite(spacing)) {
    for (; decimals < 10; ++decimals) {
      const double scaled = spacing * std::pow(10.0, decimals);
      if (std::abs(scaled - std::round(scaled)) < 1e-6 * std::max(1.0, scaled)) break;
    }
  }
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
  std::string s = buf;
  if (s.find_first_not_of("-0.") == std::string::npos && s[0] == '-') s.erase(0, 1);  // no "-0"
  return s;
}

Frame layout(const Plot& plot) {
  Range xr, yr;
  const bool xl = plot.x.log, yl = plot.y.log;
  for (const Series& s : plot.series)
    for (std::size_t i = 0; i < std::min(s.xs.size(), s.ys.size()); ++i)
      if (usable(s.xs[i], xl) && usable(s.ys[i], yl)) {
        xr.add(s.xs[i]);
        yr.add(s.ys[i]);
      }
  for (const Band& b : plot.bands) {
    if (usable(b.low, xl)) xr.add(b.low);
    if (usable(b.high, xl)) xr.add(b.high);
  }
  for (const Area& a : plot.areas)
    for (std::size_t i = 0; i < a.xs.size() && i < a.y_low.size() && i < a.y_high.size(); ++i)
      if (usable(a.xs[i], xl) && usable(a.y_low[i], yl) && usable(a.y_high[i], yl)) {
        xr.add(a.xs[i]);
        yr.add(a.y_low[i]);
        yr.add(a.y_high[i]);
      }
  for (const HalfCircle& c : plot.circles)
    if (std::isfinite(c.centre) && std::isfinite(c.radius)) {
      xr.add(c.centre - c.radius);
      xr.add(c.centre + c.radius);
      yr.add(0.0);
      yr.add(c.radius);
    }

  Frame f;
  f.x_log = xl;
  f.y_log = yl;
  f.left = kLeft;
  f.right = plot.width - kRight;
  f.top = kTop;
  f.bottom = plot.height - kBottom;

  auto finish = [](const Axis& axis, const Range& r, double& lo, double& hi) {
    const bool lo_fixed = std::isfinite(axis.min), hi_fixed = std::isfinite(axis.max);
    lo = lo_fixed ? axis.min : (r.empty() ? (axis.log ? 1.0 : 0.0) : r.lo);
    hi = hi_fixed ? axis.max : (r.empty() ? (axis.log ? 10.0 : 1.0) : r.hi);
    if (axis.log)
      finish_log(lo, hi, lo_fixed, hi_fixed);
    else
      finish_linear(lo, hi, axis, lo_fixed, hi_fixed);
  };
  finish(plot.x, xr, f.x_min, f.x_max);
  finish(plot.y, yr, f.y_min, f.y_max);

  if (plot.equal_scale && !xl && !yl) {
    // Same px per data unit on both axes: widen the range of the axis that has room to spare.
    const double sx = (f.right - f.left) / (f.x_max - f.x_min);
    const double sy = (f.bottom - f.top) / (f.y_max - f.y_min);
    if (sx < sy) {
      f.y_max = f.y_min + (f.bottom - f.top) / sx;
    } else {
      f.x_max = f.x_min + (f.right - f.left) / sy;
    }
  }
  return f;
}

std::string style_colour(int style) {
  // Okabe & Ito (2008) colour-blind-safe palette, reordered so neighbours differ in lightness.
  static const char* const colours[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7", "#000000", "#E69F00", "#56B4E9"};
  const int n = static_cast<int>(sizeof colours / sizeof colours[0]);
  return colours[((style % n) + n) % n];
}

Dash style_dash(int style) {
  static const Dash dashes[] = {Dash::solid, Dash::dashed, Dash::dash_dot, Dash::dotted, Dash::long_dash,
                                Dash::dash_dot_dot};
  const int n = static_cast<int>(sizeof dashes / sizeof dashes[0]);
  return dashes[((style % n) + n) % n];
}

Marker style_marker(int style) {
  const int n = static_cast<int>(sizeof kAllMarkers / sizeof kAllMarkers[0]);
  return kAllMarkers[((style % n) + n) % n];
}

std::string xml_escape(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

std::string render_svg(const Plot& plot) {
  Writer w{plot, layout(plot), plot.id.empty() ? std::string("plot") : plot.id, {}};
  const Frame& f = w.f;
  std::ostringstream& o = w.o;

  // Legend entries, laid out in rows below the x-axis title.
  struct Entry {
    std::string name;
    std::string colour;
    Dash dash;
    Marker marker;
    bool swatch;
  };
  std::vector<Entry> entries;
  for (const Band& b : plot.bands)
    if (!b.name.empty()) entries.push_back({b.name, style_colour(b.style), Dash::none, Marker::none, true});
  for (const Area& a : plot.areas)
    if (!a.name.empty()) entries.push_back({a.name, style_colour(a.style), Dash::none, Marker::none, true});
  for (const Series& s : plot.series)
    if (!s.name.empty()) entries.push_back({s.name, style_colour(s.style), s.dash, s.marker, false});
  {
    std::vector<std::string> seen;
    for (const HalfCircle& c : plot.circles)
      if (!c.name.empty() && std::find(seen.begin(), seen.end(), c.name) == seen.end()) {
        seen.push_back(c.name);
        entries.push_back({c.name, style_colour(c.style), c.dash, Marker::none, false});
      }
  }
  std::vector<std::pair<double, int>> placed;  // x offset, row
  int rows = 0;
  {
    double x = 0;
    const double avail = f.right - f.left;
    for (const Entry& e : entries) {
      const double wdt = 34.0 + text_width(e.name, 11.0) + 16.0;
      if (x > 0 && x + wdt > avail) {
        x = 0;
        ++rows;
      }
      placed.push_back({x, rows});
      x += wdt;
    }
    if (!entries.empty()) ++rows;
  }
  const double total_height = plot.height + rows * kLegendRow + (rows > 0 ? 4.0 : 0.0);

  o << "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"tx-plot\" id=\"" << xml_escape(w.pre)
    << "\" viewBox=\"0 0 " << num(plot.width) << " " << num(total_height) << "\" width=\"" << num(plot.width)
    << "\" height=\"" << num(total_height) << "\" role=\"img\" aria-label=\"" << xml_escape(plot.title)
    << "\" font-family=\"DejaVu Sans, Liberation Sans, Arial, sans-serif\" font-size=\"11\">\n";
  o << "<title>" << xml_escape(plot.title) << "</title>\n";
  o << "<defs>\n<clipPath id=\"" << w.pre << "-clip\"><rect x=\"" << num(f.left) << "\" y=\"" << num(f.top)
    << "\" width=\"" << num(f.right - f.left) << "\" height=\"" << num(f.bottom - f.top) << "\"/></clipPath>\n";
  for (Marker m : kAllMarkers)
    o << "<path id=\"" << w.pre << "-mk-" << to_string(m) << "\" d=\"" << marker_path(m) << "\"/>\n";
  o << "</defs>\n";
  o << "<rect class=\"background\" x=\"0\" y=\"0\" width=\"" << num(plot.width) << "\" height=\"" << num(total_height)
    << "\" fill=\"#ffffff\"/>\n";
  if (!plot.title.empty())
    o << "<text class=\"plot-title\" x=\"" << num(f.left) << "\" y=\"18\" font-size=\"13\" font-weight=\"bold\">"
      << xml_escape(plot.title) << "</text>\n";

  // Bands and areas first, under the grid lines.
  o << "<g class=\"bands\" clip-path=\"url(#" << w.pre << "-clip)\">\n";
  for (const Band& b : plot.bands) {
    if (!usable(b.low, f.x_log) || !usable(b.high, f.x_log)) continue;
    const double x0 = f.px(std::min(b.low, b.high)), x1 = f.px(std::max(b.low, b.high));
    o << "<rect class=\"band\" data-name=\"" << xml_escape(b.name) << "\" x=\"" << num(x0) << "\" y=\"" << num(f.top)
      << "\" width=\"" << num(x1 - x0) << "\" height=\"" << num(f.bottom - f.top) << "\" fill=\""
      << style_colour(b.style) << "\" fill-opacity=\"0.13\"/>\n";
  }
  for (const Area& a : plot.areas) {
    std::ostringstream pts;
    std::vector<std::size_t> ok;
    for (std::size_t i = 0; i < a.xs.size() && i < a.y_low.size() && i < a.y_high.size(); ++i)
      if (usable(a.xs[i], f.x_log) && usable(a.y_low[i], f.y_log) && usable(a.y_high[i], f.y_log)) ok.push_back(i);
    if (ok.size() < 2) continue;
    for (std::size_t i : ok) pts << num(f.px(a.xs[i])) << "," << num(f.py(a.y_high[i])) << " ";
    for (auto it = ok.rbegin(); it != ok.rend(); ++it) pts << num(f.px(a.xs[*it])) << "," << num(f.py(a.y_low[*it])) << " ";
    o << "<polygon class=\"area\" data-name=\"" << xml_escape(a.name) << "\" points=\"" << pts.str() << "\" fill=\""
      << style_colour(a.style) << "\" fill-opacity=\"0.18\" stroke=\"none\"/>\n";
  }
  o << "</g>\n";

  // Grid, ticks and tick labels. Each tick is a group: its line carries the exact position.
  auto axis_ticks = [](const Axis& axis, double lo, double hi, bool log) {
    std::vector<double> t;
    if (log) return log_ticks(lo, hi);
    for (double v : nice_ticks(lo, hi, axis.target_ticks)) {
      const double e = 1e-9 * (hi - lo);
      if (v >= lo - e && v <= hi + e) t.push_back(v);
    }
    return t;
  };
  const std::vector<double> xt = axis_ticks(plot.x, f.x_min, f.x_max, f.x_log);
  const std::vector<double> yt = axis_ticks(plot.y, f.y_min, f.y_max, f.y_log);
  const double xs = xt.size() > 1 ? xt[1] - xt[0] : 1.0;
  const double ys = yt.size() > 1 ? yt[1] - yt[0] : 1.0;
  o << "<g class=\"grid\" stroke=\"#d9d9d9\" stroke-width=\"0.6\">\n";
  for (double v : xt)
    o << "<line x1=\"" << num(f.px(v)) << "\" y1=\"" << num(f.top) << "\" x2=\"" << num(f.px(v)) << "\" y2=\""
      << num(f.bottom) << "\"/>\n";
  for (double v : yt)
    o << "<line x1=\"" << num(f.left) << "\" y1=\"" << num(f.py(v)) << "\" x2=\"" << num(f.right) << "\" y2=\""
      << num(f.py(v)) << "\"/>\n";
  o << "</g>\n";
  if (!f.x_log && f.x_min < 0 && f.x_max > 0)
    o << "<line class=\"zero-line\" x1=\"" << num(f.px(0)) << "\" y1=\"" << num(f.top) << "\" x2=\"" << num(f.px(0))
      << "\" y2=\"" << num(f.bottom) << "\" stroke=\"#888888\" stroke-width=\"0.8\"/>\n";
  if (!f.y_log && f.y_min < 0 && f.y_max > 0)
    o << "<line class=\"zero-line\" x1=\"" << num(f.left) << "\" y1=\"" << num(f.py(0)) << "\" x2=\"" << num(f.right)
      << "\" y2=\"" << num(f.py(0)) << "\" stroke=\"#888888\" stroke-width=\"0.8\"/>\n";
  o << "<g class=\"axis axis-x\" stroke=\"#000000\">\n";
  for (double v : xt)
    o << "<g class=\"tick tick-x\"><line x1=\"" << num(f.px(v)) << "\" y1=\"" << num(f.bottom) << "\" x2=\""
      << num(f.px(v)) << "\" y2=\"" << num(f.bottom + 5) << "\"/><text class=\"tick-label\" stroke=\"none\" x=\""
      << num(f.px(v)) << "\" y=\"" << num(f.bottom + 17) << "\" text-anchor=\"middle\">"
      << tick_label(v, f.x_log ? v : xs) << "</text></g>\n";
  o << "</g>\n<g class=\"axis axis-y\" stroke=\"#000000\">\n";
  for (double v : yt)
    o << "<g class=\"tick tick-y\"><line x1=\"" << num(f.left - 5) << "\" y1=\"" << num(f.py(v)) << "\" x2=\""
      << num(f.left) << "\" y2=\"" << num(f.py(v)) << "\"/><text class=\"tick-label\" stroke=\"none\" x=\""
      << num(f.left - 8) << "\" y=\"" << num(f.py(v) + 4) << "\" text-anchor=\"end\">"
      << tick_label(v, f.y_log ? v : ys) << "</text></g>\n";
  o << "</g>\n";
  o << "<text class=\"axis-title axis-title-x\" x=\"" << num(0.5 * (f.left + f.right)) << "\" y=\""
    << num(f.bottom + 36) << "\" text-anchor=\"middle\" font-size=\"12\">" << xml_escape(axis_title(plot.x))
    << "</text>\n";
  o << "<text class=\"axis-title axis-title-y\" transform=\"translate(16 " << num(0.5 * (f.top + f.bottom))
    << ") rotate(-90)\" text-anchor=\"middle\" font-size=\"12\">" << xml_escape(axis_title(plot.y)) << "</text>\n";

  // Circles, then series: lines clipped to the frame, markers only inside it.
  bool drew = false;
  const double sx = (f.right - f.left) / (f.x_max - f.x_min), sy = (f.bottom - f.top) / (f.y_max - f.y_min);
  o << "<g class=\"circles\" clip-path=\"url(#" << w.pre << "-clip)\" fill=\"none\">\n";
  for (const HalfCircle& c : plot.circles) {
    if (f.x_log || f.y_log || !std::isfinite(c.centre) || !(c.radius > 0)) continue;
    drew = true;
    o << "<path class=\"mohr-circle\" data-name=\"" << xml_escape(c.name) << "\" data-centre=\"" << c.centre
      << "\" data-radius=\"" << c.radius << "\" d=\"M " << num(f.px(c.centre - c.radius)) << " " << num(f.py(0))
      << " A " << num(c.radius * sx) << " " << num(c.radius * sy) << " 0 0 1 " << num(f.px(c.centre + c.radius)) << " "
      << num(f.py(0)) << "\" stroke=\"" << style_colour(c.style) << "\" stroke-width=\"1.2\"";
    const std::string da = dash_array(c.dash);
    if (!da.empty()) o << " stroke-dasharray=\"" << da << "\"";
    o << "/>\n";
  }
  o << "</g>\n";
  int index = 0;
  for (const Series& s : plot.series) {
    const std::string colour = style_colour(s.style);
    o << "<g class=\"series s-" << index++ << (s.css_class.empty() ? "" : " " + xml_escape(s.css_class))
      << "\" data-name=\"" << xml_escape(s.name) << "\" data-marker=\"" << to_string(s.marker) << "\" data-dash=\""
      << to_string(s.dash) << "\" stroke=\"" << colour << "\""
      << (s.opacity < 1.0 ? " opacity=\"" + num(std::max(0.0, s.opacity)) + "\"" : std::string()) << ">\n";
    const std::size_t n = std::min(s.xs.size(), s.ys.size());
    if (s.dash != Dash::none) {
      const std::string da = dash_array(s.dash);
      std::ostringstream pts;
      int count = 0;
      auto flush = [&] {
        if (count >= 2) {
          o << "<polyline class=\"line\" clip-path=\"url(#" << w.pre << "-clip)\" fill=\"none\" stroke-width=\""
            << num(s.width) << "\" stroke-linejoin=\"round\"" << (da.empty() ? "" : " stroke-dasharray=\"" + da + "\"")
            << " points=\"" << pts.str() << "\"/>\n";
          drew = true;
        }
        pts.str("");
        count = 0;
      };
      for (std::size_t i = 0; i < n; ++i) {
        if (!usable(s.xs[i], f.x_log) || !usable(s.ys[i], f.y_log)) {
          flush();
          continue;
        }
        pts << (count ? " " : "") << num(f.px(s.xs[i])) << "," << num(f.py(s.ys[i]));
        ++count;
      }
      flush();
    }
    if (s.marker != Marker::none) {
      o << "<g class=\"markers\" fill=\"none\" stroke-width=\"1.2\">\n";
      for (std::size_t i = 0; i < n; ++i) {
        if (!usable(s.xs[i], f.x_log) || !usable(s.ys[i], f.y_log) || !w.in_x(s.xs[i]) || !w.in_y(s.ys[i])) continue;
        o << "<use href=\"#" << w.pre << "-mk-" << to_string(s.marker) << "\" x=\"" << num(f.px(s.xs[i])) << "\" y=\""
          << num(f.py(s.ys[i])) << "\"/>\n";
        drew = true;
      }
      o << "</g>\n";
    }
    o << "</g>\n";
  }
  for (const Band& b : plot.bands) drew = drew || (usable(b.low, f.x_log) && usable(b.high, f.x_log));
  o << "<rect class=\"frame\" x=\"" << num(f.left) << "\" y=\"" << num(f.top) << "\" width=\"" << num(f.right - f.left)
    << "\" height=\"" << num(f.bottom - f.top) << "\" fill=\"none\" stroke=\"#000000\" stroke-width=\"1\"/>\n";
  if (!drew) {
    const std::string note = plot.note.empty() ? std::string("no data to plot") : plot.note;
    o << "<text class=\"plot-note\" x=\"" << num(0.5 * (f.left + f.right)) << "\" y=\"" << num(0.5 * (f.top + f.bottom))
      << "\" text-anchor=\"middle\" font-size=\"13\" fill=\"#555555\">" << xml_escape(note) << "</text>\n";
  }

  // Legend.
  if (!entries.empty()) {
    o << "<g class=\"legend\">\n";
    const double y0 = plot.height + 8.0;
    for (std::size_t i = 0; i < entries.size(); ++i) {
      const Entry& e = entries[i];
      const double x = f.left + placed[i].first;
      const double y = y0 + placed[i].second * kLegendRow;
      o << "<g class=\"legend-entry\" data-name=\"" << xml_escape(e.name) << "\">";
      if (e.swatch) {
        o << "<rect x=\"" << num(x) << "\" y=\"" << num(y - 6) << "\" width=\"28\" height=\"12\" fill=\"" << e.colour
          << "\" fill-opacity=\"0.25\" stroke=\"" << e.colour << "\" stroke-width=\"0.6\"/>";
      } else {
        if (e.dash != Dash::none) {
          const std::string da = dash_array(e.dash);
          o << "<line x1=\"" << num(x) << "\" y1=\"" << num(y) << "\" x2=\"" << num(x + 28) << "\" y2=\"" << num(y)
            << "\" stroke=\"" << e.colour << "\" stroke-width=\"1.6\""
            << (da.empty() ? "" : " stroke-dasharray=\"" + da + "\"") << "/>";
        }
        if (e.marker != Marker::none)
          o << "<use href=\"#" << w.pre << "-mk-" << to_string(e.marker) << "\" x=\"" << num(x + 14) << "\" y=\""
            << num(y) << "\" fill=\"none\" stroke=\"" << e.colour << "\" stroke-width=\"1.2\"/>";
      }
      o << "<text x=\"" << num(x + 34) << "\" y=\"" << num(y + 4) << "\">" << xml_escape(e.name) << "</text></g>\n";
    }
    o << "</g>\n";
  }
  o << "</svg>\n";
  return o.str();
}

}  // namespace triaxcal::svg
