#include "graph_views.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <map>
#include <string_view>

namespace triaxcal::gmsh {

namespace {

std::string quoted(std::string text) {
  std::replace(text.begin(), text.end(), '"', '\'');
  return "\"" + text + "\"";
}

std::string num(double v) {
  char b[32];
  std::snprintf(b, sizeof b, "%.9g", v);
  return b;
}

// Fill colours of the soil units, dark enough to read as legend text on white.
const char* const kUnitColours[] = {"DarkOrange", "SteelBlue", "SeaGreen", "IndianRed",
                                    "MediumPurple", "Peru", "CadetBlue", "OliveDrab"};

/// One graph: a test and quantity, with its measured and model curves.
struct Graph {
  std::size_t unit = 0;
  std::string test, quantity;
  std::string title;    ///< "<test up to ' ('>: <quantity>": the view's name, drawn centred over the left axis
  std::string heading;  ///< above the row: the unit's name, and the whole test name where the title shortens it
  const Curve* measured = nullptr;
  const Curve* model = nullptr;
  int row = 0, column = 0;  ///< in the layout of a row a test, a column a quantity
  int line = 0;             ///< in the layout of one graph a row
};

}  // namespace

double text_width_em(const std::string& text) {
  // Advance widths of DejaVu Sans (the sans font Gmsh's GL text falls back to on Debian), rounded
  // up; UTF-8 continuation bytes add nothing, a multi-byte character counts as a wide letter.
  double w = 0.0;
  for (unsigned char c : text) {
    if ((c & 0xC0) == 0x80) continue;
    if (c >= 0x80) w += 0.7;
    else if (c >= '0' && c <= '9') w += 0.64;
    else if (c == ' ') w += 0.32;
    else if (std::string_view(".,:;'|!iljI").find(static_cast<char>(c)) != std::string_view::npos) w += 0.34;
    else if (std::string_view("-()[]{}ftr/\"").find(static_cast<char>(c)) != std::string_view::npos) w += 0.42;
    else if (std::string_view("mwMW%@").find(static_cast<char>(c)) != std::string_view::npos) w += 0.98;
    else if (c >= 'A' && c <= 'Z') w += 0.74;
    else w += 0.62;
  }
  return w;
}

NiceAxis nice_axis(double lo, double hi, int max_intervals) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) lo = 0.0, hi = 1.0;
  lo = std::min(lo, 0.0);  // every axis of a graph includes 0: strains start there, q and du rise from it
  hi = std::max(hi, 0.0);
  if (!(hi > lo)) hi = lo + 1.0;
  max_intervals = std::max(1, max_intervals);
  const double raw = (hi - lo) / max_intervals;
  double decade = std::pow(10.0, std::floor(std::log10(raw)));
  for (int guard = 0; guard < 8; ++guard, decade *= 10.0)
    for (double m : {1.0, 2.0, 2.5, 5.0}) {
      const double step = m * decade;
      // A tolerance of 1e-9 steps keeps a value on a tick (15 at step 5) from opening another interval.
      const double a = std::floor(lo / step + 1e-9) * step, b = std::ceil(hi / step - 1e-9) * step;
      const int n = static_cast<int>(std::lround((b - a) / step));
      if (n <= max_intervals) return {a, b, std::max(1, n)};
    }
  return {lo, hi, 1};
}

std::string tick_label(double v) {
  char b[32];
  std::snprintf(b, sizeof b, "%g", std::abs(v) < 1e-12 ? 0.0 : v);
  return b;
}

const char* unit_colour(std::size_t i) { return kUnitColours[i % (sizeof kUnitColours / sizeof kUnitColours[0])]; }

std::string views_pos(const std::vector<UnitView>& units, bool with_graphs) {
  // Our views are known by their attribute ("triaxcal legend", "triaxcal graph"), so that their
  // names, which are the graphs' titles, can be short; views named "triaxcal: ..." are those of
  // earlier versions of the plugin. "AlwaysVisible": Gmsh 4.8 hides the views that were there before
  // a merge that adds views (MergePostProcessingFile with Solver.AutoShowViews 2); counted by index,
  // that would hide the first of the views this file makes in place of the deleted ones.
  std::string out =
      "// triaxcal: the soil units and their graphs. Written by triaxcal-gmsh on every compute (and the\n"
      "// legend alone on a check); merging it replaces the views of the previous compute. The graphs are\n"
      "// placed in window pixels, right-aligned, and laid out from Gmsh's font sizes; the view of the\n"
      "// model (zoom, rotation) is set only when no triaxcal graph is shown yet, so a compute keeps the\n"
      "// user's view.\n"
      "had_graphs = 0;\n"
      "For i In {PostProcessing.NbViews-1:0:-1}\n";
  if (with_graphs)
    out +=
        "  If(StrFind(View[i].Attributes, \"triaxcal graph\") > 0)\n"
        "    had_graphs = 1;\n"
        "  EndIf\n"
        "  If(StrFind(View[i].Attributes, \"triaxcal\") > 0 || !StrCmp(StrSub(View[i].Name, 0, 10), \"triaxcal: \"))\n";
  else
    out += "  If(StrFind(View[i].Attributes, \"triaxcal legend\") > 0 || !StrCmp(StrSub(View[i].Name, 0, 17), \"triaxcal: legend \"))\n";
  out +=
      "    Delete View[i];\n"
      "  EndIf\n"
      "EndFor\n";

  // Soil units: each physical group filled in its colour.
  // Geometry surfaces are drawn as crosses until meshed (Gmsh 4.8 fills built-in surfaces only through
  // their mesh); the mesh faces are filled in the unit's colour.
  out += "Geometry.Surfaces = 1;\nMesh.SurfaceFaces = 1;\n";
  for (std::size_t i = 0; i < units.size(); ++i) {
    const UnitView& u = units[i];
    if (u.tag <= 0) continue;
    const char* kind = u.dimension == 3 ? "Volume" : "Surface";
    out += std::string("Color ") + unit_colour(i) + " { " + kind + "{ Physical " + kind + "{" + std::to_string(u.tag) +
           "} }; }\n";
  }

  // Graphs: a row a test (of every unit, in order), a column a quantity (q first); in a narrow
  // window one graph a row, in the same order.
  std::vector<Graph> graphs;
  int rows = 0, columns = 0;
  for (std::size_t k = 0; k < units.size() && with_graphs; ++k) {
    std::map<std::string, int> row_of;          // test -> row
    std::map<std::string, int> columns_of_row;  // test -> next column
    for (const Curve& c : units[k].curves) {
      auto r = row_of.find(c.test);
      if (r == row_of.end()) r = row_of.emplace(c.test, rows++).first;
      Graph* g = nullptr;
      for (Graph& x : graphs)
        if (x.unit == k && x.test == c.test && x.quantity == c.quantity) g = &x;
      if (!g) {
        Graph n;
        n.unit = k;
        n.test = c.test;
        n.quantity = c.quantity;
        const std::size_t paren = c.test.find(" (");
        n.title = (paren == std::string::npos ? c.test : c.test.substr(0, paren)) + ": " + c.quantity;
        n.heading = units[k].unit + (paren == std::string::npos ? std::string() : ": " + c.test);
        n.row = r->second;
        n.column = columns_of_row[c.test]++;
        n.line = static_cast<int>(graphs.size());
        graphs.push_back(n);
        g = &graphs.back();
        columns = std::max(columns, g->column + 1);
      }
      (c.measured ? g->measured : g->model) = &c;
    }
  }

  // Legend (window pixels, top left): the soil units in their colours, then what the graphs show.
  std::vector<std::pair<std::string, const char*>> lines;  // text, colour
  for (std::size_t i = 0; i < units.size(); ++i) lines.emplace_back(units[i].unit + ": " + units[i].legend, unit_colour(i));
  if (!graphs.empty()) {
    lines.emplace_back("graphs: measured = black points, model = red line", "Black");
    lines.emplace_back("x axis: axial strain since the stage start [%]", "Black");
    std::vector<std::string> said;
    for (const Graph& g : graphs) {
      std::string meaning;
      if (g.quantity.rfind("q ", 0) == 0) meaning = "q: deviator stress";
      else if (g.quantity.rfind("e_v ", 0) == 0) meaning = "e_v: volumetric strain";
      else if (g.quantity.rfind("du ", 0) == 0) meaning = "du: excess pore pressure";
      if (!meaning.empty() && std::find(said.begin(), said.end(), meaning) == said.end()) said.push_back(meaning);
    }
    // Short lines: the legend must fit left of the graphs in a narrow window.
    std::string text;
    for (const std::string& s : said) {
      if (!text.empty() && text.size() + s.size() > 44) {
        lines.emplace_back(text + ",", "Black");
        text.clear();
      }
      text += (text.empty() ? "" : ", ") + s;
    }
    if (!text.empty()) lines.emplace_back(text, "Black");
  }
  double legend_em = 0.0;
  for (const auto& l : lines) legend_em = std::max(legend_em, text_width_em(l.first));
  out += "fs = General.GraphicsFontSize;\nft = General.GraphicsFontSizeTitle;\n";
  out += "If(fs <= 0)\n  fs = 15;\nEndIf\nIf(ft <= 0)\n  ft = 18;\nEndIf\n";
  out += "lead = Round(1.4 * fs);\n";
  out += "legend_lines = " + std::to_string(lines.size()) + ";\nlegend_h = 10 + lead * legend_lines;\n";
  out += "legend_w = 12 + 1.1 * fs * " + num(legend_em) + ";\n";
  for (std::size_t i = 0; i < lines.size(); ++i) {
    out += "View " + quoted("legend " + std::to_string(i + 1) + ": " + lines[i].first) + " { T2(12, 6 + fs + lead * " +
           std::to_string(i) + ", 0){" + quoted(lines[i].first) + "}; };\n";
    out += "v = PostProcessing.NbViews-1;\n";
    out += "View[v].Attributes = \"triaxcal legend AlwaysVisible\";\n";
    out += std::string("View[v].Color.Text2D = ") + lines[i].second + ";\n";
  }
  if (graphs.empty()) return out;

  // What the layout needs from the graphs, in em (font sizes come from Gmsh at merge time).
  const int kXIntervals = 3;  // at most: Gmsh drops x ticks whose widest label does not fit between two
  const int kYIntervals = 4;  // at most: Gmsh drops y ticks where they are closer than a line
  const char* const kXLabel = "eps_a [%]";  // after the x tick labels, right of the box
  const char* const kHiddenNote = "hidden graphs: tick them in the Post-processing list";
  std::vector<double> title_em(2, 0.0), ylabel_em(2, 0.0);
  double heading_em = 0.0, xtick_em = 0.0;
  std::vector<int> x_decimals;
  struct Axes {
    NiceAxis x, y;
  };
  std::vector<Axes> axes;
  for (const Graph& g : graphs) {
    double xmin = 0.0, xmax = 0.0, ymin = 0.0, ymax = 0.0;
    for (const Curve* c : {g.measured, g.model})
      if (c)
        for (std::size_t i = 0; i < c->y.size() && i < c->axial_strain.size(); ++i) {
          if (!std::isfinite(c->y[i]) || !std::isfinite(c->axial_strain[i])) continue;
          xmin = std::min(xmin, 100.0 * c->axial_strain[i]);
          xmax = std::max(xmax, 100.0 * c->axial_strain[i]);
          ymin = std::min(ymin, c->y[i]);
          ymax = std::max(ymax, c->y[i]);
        }
    Axes a{nice_axis(xmin, xmax, kXIntervals), nice_axis(ymin, ymax, kYIntervals)};
    axes.push_back(a);
    // The x tick labels in "%.<d>f" with the decimals of the step (Gmsh drops ticks when its widest
    // label, -31415.9265 in that format, does not fit between two: "%g" would cost 4.6 em a tick).
    const double step = (a.x.max - a.x.min) / a.x.intervals;
    int d = 0;
    while (d < 4 && std::abs(step * std::pow(10.0, d) - std::round(step * std::pow(10.0, d))) > 1e-9 * std::pow(10.0, d)) ++d;
    x_decimals.push_back(d);
    xtick_em = std::max(xtick_em, 0.42 + 5 * 0.64 + (d > 0 ? 0.34 + 0.64 * d : 0.0));
    const std::size_t col = g.column > 0 ? 1 : 0;
    title_em[col] = std::max(title_em[col], text_width_em(g.title));
    heading_em = std::max(heading_em, text_width_em(g.heading));
    for (int i = 0; i <= a.y.intervals; ++i)
      ylabel_em[col] = std::max(ylabel_em[col], text_width_em(tick_label(a.y.min + i * (a.y.max - a.y.min) / a.y.intervals)));
  }
  const double title_all = std::max(title_em[0], title_em[1]), ylabel_all = std::max(ylabel_em[0], ylabel_em[1]);

  // Layout, in window pixels (Gmsh 4.8, drawGraph2d: the title, the view's name, is centred over the
  // left axis one line above the box in the title font; the x tick labels one line under the box,
  // the x axis label two lines under it in the title font; the y tick labels right-aligned left of
  // the axis). A graph's box is gw x gh; around it: the unit's name (a line), the title, the ticks and
  // the label, so that nothing of one graph reaches the next. Two columns (q, then e_v or du) where
  // they fit in 72 % of the width, else one; the rows that do not fit in the height are hidden
  // (listed in the Post-processing menu; ticking one shows it in the place of a shown one).
  out += "two_possible = " + std::string(columns >= 2 ? "1" : "0") + ";\nrows2 = " + std::to_string(rows) +
         ";\nrows1 = " + std::to_string(graphs.size()) + ";\n";
  out += "tw0 = " + num(title_em[0]) + "; tw1 = " + num(title_em[1]) + "; tw = " + num(title_all) + ";\n";
  out += "yl0 = " + num(ylabel_em[0]) + "; yl1 = " + num(ylabel_em[1]) + "; yl = " + num(ylabel_all) + ";\n";
  out += "xintervals = " + std::to_string(kXIntervals) + ";\nxtick = " + num(xtick_em) + ";\nhw = " + num(heading_em) + ";\nxl = " +
         num(text_width_em(kXLabel)) + ";\n";
  out += "note_w = 12 + 1.1 * fs * " + num(text_width_em(kHiddenNote)) + ";\n";
  out += R"(W = General.GraphicsWidth - General.MenuWidth;
If(W < 300)
  W = General.GraphicsWidth;
EndIf
H = General.GraphicsHeight;
fh = 1.2 * fs; tic = 5;
// The graphs' box: at least what Gmsh needs for every x tick label (xtick em a tick) and
// 4 y intervals (a line each), at most 340 x 230.
gmin = xintervals * 1.1 * xtick * fs + 12;
ghmin = Max(80, 4.5 * fh);
hd = 1.3 * fs;
T = fh + tic + 1.05 * ft;
B = fh + tic + 0.3 * fs + 0.6 * fs;
xlw = 1.5 * fs + 1.1 * fs * xl;
// Left of an axis: its tick labels or half of the widest title over it; between two columns also
// both halves of the titles that meet.
L0 = 2 * tic + 1.1 * fs * yl0 + 4; L1 = 2 * tic + 1.1 * fs * yl1 + 4; L = 2 * tic + 1.1 * fs * yl + 4;
h0 = 0.55 * ft * tw0; h1 = 0.55 * ft * tw1; hall = 0.55 * ft * tw;
gap = fs;
two = 0;
If(two_possible && 2 * (gmin + xlw) + Max(L0, h0) + gap + L1 + 12 <= 0.72 * W)
  two = 1;
EndIf
If(two)
  gw = (0.72 * W - Max(L0, h0) - gap - L1 - 12) / 2 - xlw;
Else
  gw = 0.55 * W - Max(L, hall) - xlw - 12;
EndIf
If(gw < gmin)
  gw = gmin;
EndIf
If(gw > 340)
  gw = 340;
EndIf
If(two)
  A0 = Max(L0, h0);
  A1 = A0 + Max(gw + xlw + gap + L1, h0 + h1 + fs);
  Bw = A1 + Max(gw + xlw, h1) + 12;
Else
  A0 = Max(L, hall);
  A1 = A0;
  Bw = A0 + Max(gw + xlw, hall) + 12;
EndIf
If(Bw < 1.1 * fs * hw + 12)
  Bw = 1.1 * fs * hw + 12;
EndIf
nr = two ? rows2 : rows1;
// Below the legend where the two would meet (the legend gets a line more when graphs are hidden:
// the layout is made twice, the second time with that line).
hidden = 0;
For pass In {1:2}
  y0 = 8;
  If(Max(legend_w, hidden ? note_w : 0) > W - Bw)
    y0 = legend_h + hidden * lead + 8;
  EndIf
  gh = (H - y0 - 8) / nr - (hd + T + B);
  If(gh > Min(230, 0.7 * gw))
    gh = Min(230, 0.7 * gw);
  EndIf
  If(gh < ghmin)
    gh = ghmin;
  EndIf
  P = hd + T + gh + B;
  shown = Floor((H - y0 - 8) / P);
  If(shown < 1)
    shown = 1;
  EndIf
  If(shown > nr)
    shown = nr;
  EndIf
  hidden = shown < nr;
EndFor
)";

  for (std::size_t k = 0; k < graphs.size(); ++k) {
    const Graph& g = graphs[k];
    const Axes& a = axes[k];
    const std::string& title = g.title;
    // Where this graph goes: row and column of the two-column layout or its line in the one-column one.
    out += "If(two)\n  rr = " + std::to_string(g.row) + "; cc = " + std::to_string(g.column > 0 ? 1 : 0) +
           ";\nElse\n  rr = " + std::to_string(g.line) + "; cc = 0;\nEndIf\n";
    out += "slot = rr - shown * Floor(rr / shown);\n";
    out += "gx = (cc ? A1 : A0) - Bw;\ngy = y0 + slot * P + hd + T;\n";
    // The unit's name above the row (in one column: above every graph) (black, as every text of a graph).
    out += "hy = (two && cc) ? -100000 : y0 + slot * P + fs;\n";
    // Points outside the y range are not drawn (SaturateValues 0): two of them at the ends of the x
    // range make Gmsh's axis span exactly [x min, x max] (it takes the range from the points) for both
    // the measured points and the model's line, which then share one scale.
    const double outside = a.y.max + (a.y.max - a.y.min) + 1.0;
    const Curve* first = g.measured ? g.measured : g.model;
    for (const Curve* c : {g.measured, g.model}) {
      if (!c) continue;
      const bool carries_axes = c == first;
      // The view with the axes carries the graph's title (its name) and the unit's name; a model line
      // beside measured points adds " model" to the name, which Gmsh does not draw (no axes).
      out += "View " + quoted(title + (carries_axes ? "" : " model")) + " {\n";
      if (carries_axes)
        out += "T2(gx - A0, hy, 0){" + quoted(g.heading) + "};\nT2(gx + gw + 1.5 * fs, gy + gh + fh + tic, 0){" + quoted(kXLabel) + "};\n";
      out += "SP(" + num(a.x.min) + ",0,0){" + num(outside) + "};\n";
      // Measured points thinned to about 60 a graph, so that each is seen and the model's line
      // between them too (the fit used every point).
      const std::size_t n = std::min(c->y.size(), c->axial_strain.size());
      const std::size_t stride = c->measured && n > 60 ? (n + 59) / 60 : 1;
      for (std::size_t i = 0; i < n; ++i) {
        if (i % stride != 0 && i + 1 != n) continue;
        if (!std::isfinite(c->y[i]) || !std::isfinite(c->axial_strain[i])) continue;
        out += "SP(" + num(100.0 * c->axial_strain[i]) + ",0,0){" + num(c->y[i]) + "};\n";
      }
      out += "SP(" + num(a.x.max) + ",0,0){" + num(outside) + "};\n";
      out += "};\n";
      out += "v = PostProcessing.NbViews-1;\n";
      out += "View[v].Attributes = \"triaxcal graph AlwaysVisible\";\n";
      out += "View[v].Type = 4;\n";
      out += "View[v].AutoPosition = 0;\n";
      out += "View[v].PositionX = gx;\nView[v].PositionY = gy;\n";
      out += "View[v].Width = gw;\nView[v].Height = gh;\n";
      out += "View[v].Visible = rr < shown;\n";
      out += std::string("View[v].IntervalsType = ") + (c->measured ? "1" : "2") + ";\n";
      out += "View[v].PointSize = 5;\n";
      out += "View[v].LineWidth = 2;\n";
      out += "View[v].SaturateValues = 0;\n";
      out += std::string("View[v].Axes = ") + (carries_axes ? "3" : "0") + ";\n";
      out += "View[v].AxesLabelX = \"\";\n";
      out += "View[v].AxesTicsX = " + std::to_string(a.x.intervals + 1) + ";\n";
      out += "View[v].AxesFormatX = \"%." + std::to_string(x_decimals[k]) + "f\";\n";
      out += "View[v].Format = \"%g\";\n";
      out += "View[v].NbIso = " + std::to_string(a.y.intervals) + ";\n";
      out += "View[v].RangeType = 2;\n";
      out += "View[v].CustomMin = " + num(a.y.min) + ";\n";
      out += "View[v].CustomMax = " + num(a.y.max) + ";\n";
      out += std::string("View[v].ColorTable = {") + (c->measured ? "Black" : "Red") + "};\n";
      out += "View[v].Color.Text2D = Black;\n";
    }
  }
  // The rows that do not fit: say so in the legend.
  out += "If(shown < nr)\n";
  out += "  View \"graphs not shown\" { T2(12, 6 + fs + lead * legend_lines, 0){" + quoted(kHiddenNote) + "}; };\n";
  out += "  v = PostProcessing.NbViews-1;\n  View[v].Attributes = \"triaxcal graph note AlwaysVisible\";\n  View[v].Color.Text2D = Black;\n";
  out += "EndIf\n";

  // The first graphs of a session: zoom and move the model into the part of the window left of the
  // graphs and under the legend (Gmsh's own fit: the model's box with DisplayBorderFactor on each
  // side fills the window). Afterwards the user's zoom, pan and rotation are kept.
  out += R"(If(!had_graphs)
  w = General.MaxX - General.MinX; h = General.MaxY - General.MinY;
  If(w <= 0)
    w = 1;
  EndIf
  If(h <= 0)
    h = w;
  EndIf
  Wf = W - Bw - 10;
  If(Wf < 50)
    Wf = W;
  EndIf
  top = legend_h + 6;
  Hf = H - top - 10;
  If(shown < nr)
    top = legend_h + lead + 6;
    Hf = H - top - 10;
  EndIf
  p = Min(0.92 * Wf / w, 0.9 * Hf / h);
  bf = General.DisplayBorderFactor;
  p0 = Min(W / ((1 + 2 * bf) * w), H / ((1 + 2 * bf) * h));
  General.ScaleX = p / p0; General.ScaleY = p / p0; General.ScaleZ = p / p0;
  General.TranslationX = (Wf / 2 - W / 2) / p;
  General.TranslationY = (H / 2 - (top + Hf / 2)) / p;
EndIf
)";
  return out;
}

}  // namespace triaxcal::gmsh
