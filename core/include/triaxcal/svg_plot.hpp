#pragma once
// A small SVG plot writer of our own (docs/report.md says why not PLplot): x-y plots with axes,
// "nice" ticks, unit labels, a legend, measured points as markers, simulated curves as lines, shaded
// bands and half circles (Mohr). Styles read in greyscale: every series has a dash pattern and a
// marker shape besides its colour. Every drawn element carries a class so a stylesheet can restyle
// it; presentation attributes make a lone SVG file correct without the stylesheet.
//
// Data coordinates map linearly (or by log10 on a log axis) onto the plot frame, y pointing up.
// Marker positions are written to 0.01 px, so a reader of the SVG recovers the data from the tick
// labels and tick positions to well within a pixel (tests/report/svg_plot_test.cpp does exactly that).

#include <limits>
#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"

namespace triaxcal::svg {

inline constexpr double kAuto = std::numeric_limits<double>::quiet_NaN();

enum class Marker { none, circle, square, triangle, diamond, cross, plus, triangle_down };
enum class Dash { none, solid, dashed, dotted, dash_dot, long_dash, dash_dot_dot };

TRIAXCAL_CORE_EXPORT std::string to_string(Marker marker);
TRIAXCAL_CORE_EXPORT std::string to_string(Dash dash);

struct Axis {
  std::string label;        ///< quantity, e.g. "deviator stress q"
  std::string unit;         ///< shown in parentheses, e.g. "kPa"; empty = dimensionless "(-)"
  double min = kAuto;       ///< NaN = from the data (widened to the nearest ticks)
  double max = kAuto;
  bool include_zero = false;  ///< widen the automatic range to include 0
  bool log = false;         ///< log10 scale (data <= 0 are not drawn)
  int target_ticks = 6;     ///< about this many major ticks
};

/// One data series. `line` joins the points in order; `marker` marks every point.
struct Series {
  std::string name;         ///< legend text; empty = not in the legend
  std::vector<double> xs, ys;  ///< non-finite pairs break the line and are not marked
  Marker marker = Marker::none;
  Dash dash = Dash::solid;  ///< Dash::none = no line
  int style = 0;            ///< palette index (colour), see style_colour()
  double width = 1.6;       ///< line width (px)
  double opacity = 1.0;     ///< below 1: drawn faded (e.g. points outside the fitted range)
  std::string css_class;    ///< extra class, e.g. "measured" or "simulated"
};

/// A vertical shaded band x in [low, high] across the whole frame (e.g. the stress range used).
struct Band {
  std::string name;
  double low = 0.0, high = 0.0;
  int style = 0;
};

/// A filled region between two curves y_low(x) and y_high(x) (e.g. an interval band).
struct Area {
  std::string name;
  std::vector<double> xs, y_low, y_high;
  int style = 0;
};

/// The upper half of a circle centred on (centre, 0) with radius `radius` (a Mohr circle in
/// s'-t or sigma'-tau axes). Draw with equal_scale so it is round.
struct HalfCircle {
  std::string name;
  double centre = 0.0, radius = 0.0;
  Dash dash = Dash::solid;
  int style = 0;
};

struct Plot {
  std::string id;           ///< unique in the document (SVG ids are prefixed with it)
  std::string title;
  Axis x, y;
  std::vector<Series> series;
  std::vector<Band> bands;
  std::vector<Area> areas;
  std::vector<HalfCircle> circles;
  bool equal_scale = false; ///< one data unit is as long on x as on y (widens one range)
  double width = 640.0;     ///< px (viewBox units; the SVG scales to its container)
  double height = 420.0;
  std::string note;         ///< shown inside the frame when there is nothing to draw
};

/// The plot frame and the data-to-pixel map of a rendered plot.
struct Frame {
  double left = 0, top = 0, right = 0, bottom = 0;  ///< frame edges (px)
  double x_min = 0, x_max = 1, y_min = 0, y_max = 1;  ///< data range of the axes
  bool x_log = false, y_log = false;
  double px(double x) const;
  double py(double y) const;
};

/// "Nice" major ticks (1, 2, 2.5 or 5 times a power of ten) covering [lo, hi] with about
/// `target` intervals; the first and last ticks lie at or outside lo and hi.
TRIAXCAL_CORE_EXPORT std::vector<double> nice_ticks(double lo, double hi, int target);
/// Ticks of a log axis: decades, with 2 and 5 between them when there are few decades.
TRIAXCAL_CORE_EXPORT std::vector<double> log_ticks(double lo, double hi);
/// Tick label with as many decimals as the tick spacing needs ("0.05", "100", "1.5e+04" never).
TRIAXCAL_CORE_EXPORT std::string tick_label(double value, double spacing);

/// The frame `plot` will be drawn in (computed from the data as render_svg does).
TRIAXCAL_CORE_EXPORT Frame layout(const Plot& plot);

/// The whole <svg> element, no XML prologue (embeddable in HTML and valid as a standalone file).
TRIAXCAL_CORE_EXPORT std::string render_svg(const Plot& plot);

/// Palette for style indices: colour-blind-safe hues of distinct lightness.
TRIAXCAL_CORE_EXPORT std::string style_colour(int style);
/// The default dash and marker of a style index, so that series differ without colour.
TRIAXCAL_CORE_EXPORT Dash style_dash(int style);
TRIAXCAL_CORE_EXPORT Marker style_marker(int style);

/// Escapes & < > " ' for XML text and attributes.
TRIAXCAL_CORE_EXPORT std::string xml_escape(const std::string& text);

}  // namespace triaxcal::svg
