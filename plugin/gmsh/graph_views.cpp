#include "graph_views.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <map>

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
  std::string title;
  const Curve* measured = nullptr;
  const Curve* model = nullptr;
  int row = 0, column = 0;
};

}  // namespace

const char* unit_colour(std::size_t i) { return kUnitColours[i % (sizeof kUnitColours / sizeof kUnitColours[0])]; }

std::string views_pos(const std::vector<UnitView>& units, bool with_graphs) {
  const std::string prefix = std::string(kViewPrefix) + (with_graphs ? "" : "legend ");
  std::string out =
      "// triaxcal: the soil units and their graphs. Written by triaxcal-gmsh on every compute (and the\n"
      "// legend alone on a check); merging it replaces the views of the previous compute.\n"
      "For i In {PostProcessing.NbViews-1:0:-1}\n"
      "  If(!StrCmp(StrSub(View[i].Name, 0, " +
      std::to_string(prefix.size()) + "), " + quoted(prefix) +
      "))\n"
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

  // Graphs: a row a test (of every unit, in order), a column a quantity (q first).
  std::vector<Graph> graphs;
  int rows = 0, columns = 0;
  for (const UnitView& u : units) {
    if (!with_graphs) break;
    std::map<std::string, int> row_of;         // test -> row
    std::map<std::string, int> columns_of_row;  // test -> next column
    for (const Curve& c : u.curves) {
      auto r = row_of.find(c.test);
      if (r == row_of.end()) r = row_of.emplace(c.test, rows++).first;
      const std::string title = std::string(kViewPrefix) + u.unit + " " + c.test + ": " + c.quantity;
      Graph* g = nullptr;
      for (Graph& x : graphs)
        if (x.title == title) g = &x;
      if (!g) {
        graphs.push_back({title, nullptr, nullptr, r->second, columns_of_row[c.test]++});
        g = &graphs.back();
        columns = std::max(columns, g->column + 1);
      }
      (c.measured ? g->measured : g->model) = &c;
    }
  }

  // Legend (window pixels, top left): the soil units in their colours, then the graphs' styles.
  int line = 0;
  auto legend = [&](const std::string& name, const std::string& text, const char* colour) {
    out += "View " + quoted(std::string(kViewPrefix) + "legend " + name) + " { T2(12, " + std::to_string(24 + 20 * line++) +
           ", 0){" + quoted(text) + "}; };\n";
    out += "v = PostProcessing.NbViews-1;\n";
    out += std::string("View[v].Color.Text2D = ") + colour + ";\n";
  };
  for (std::size_t i = 0; i < units.size(); ++i)
    legend(units[i].unit, units[i].unit + ": " + units[i].legend, unit_colour(i));
  if (!graphs.empty()) {
    legend("measured", "graphs: measured = black points", "Black");
    legend("model", "graphs: model = red line (x: axial strain since the stage start)", "Red");
    legend("quantities", "q: deviator stress, e_v: volumetric strain, du: excess pore pressure", "Black");
  }
  if (graphs.empty()) return out;

  // Layout in window pixels, turned into model coordinates to the right of the geometry, then the
  // view scaled and moved so that the geometry and the graphs fit the window (Gmsh's default view
  // fits the model's box with a fifth of its size as border on each side). The graphs shrink to 60 %
  // at most (their text does not) and the geometry keeps a quarter of the width; what does not fit
  // then extends past the window's right or bottom edge (zoom out or hide graphs).
  out += "rows = " + std::to_string(rows) + "; columns = " + std::to_string(columns) + "; legend = " +
         std::to_string(24 + 20 * line) + ";\n";
  out += R"(x0 = General.MinX; x1 = General.MaxX; y0 = General.MinY; y1 = General.MaxY;
w = x1 - x0; h = y1 - y0;
If(w <= 0)
  w = 1;
EndIf
If(h <= 0)
  h = w;
EndIf
W = General.GraphicsWidth - General.MenuWidth;
If(W < 300)
  W = General.GraphicsWidth;
EndIf
H = General.GraphicsHeight;
gw = 300; gh = 150; gx = 150; gy = 100;
bw = columns * (gw + gx) + gx; bh = rows * (gh + gy) + gy + legend;
f = 1;
If(0.75 * W / bw < f)
  f = 0.75 * W / bw;
EndIf
If(0.9 * H / bh < f)
  f = 0.9 * H / bh;
EndIf
If(f < 0.6)
  f = 0.6;
EndIf
p = (0.95 * W - f * bw) / w;
If(p < 0.25 * W / w)
  p = 0.25 * W / w;
EndIf
If(0.85 * H / h < p)
  p = 0.85 * H / h;
EndIf
GW = f * gw / p; GH = f * gh / p; GX = f * gx / p; GY = f * gy / p;
rx0 = x0; rx1 = x1 + columns * (GW + GX) + GX; ry1 = y1 + GY + legend / p;
ry0 = y1 - rows * (GH + GY);
If(y0 < ry0)
  ry0 = y0;
EndIf
p0 = W / (1.4 * w);
If(H / (1.4 * h) < p0)
  p0 = H / (1.4 * h);
EndIf
General.ScaleX = p / p0; General.ScaleY = p / p0; General.ScaleZ = p / p0;
General.TranslationX = -((rx0 + rx1) / 2 - (x0 + x1) / 2);
cy = (ry0 + ry1) / 2;
If((ry1 - ry0) * p > 0.95 * H)
  cy = ry1 - 0.95 * H / (2 * p);
EndIf
General.TranslationY = -(cy - (y0 + y1) / 2);
)";
  for (const Graph& g : graphs) {
    // One strain axis and one y range for both curves of the graph.
    double xmin = std::numeric_limits<double>::infinity(), xmax = -xmin, ymin = 0.0, ymax = -xmin;
    for (const Curve* c : {g.measured, g.model})
      if (c)
        for (std::size_t i = 0; i < c->y.size() && i < c->axial_strain.size(); ++i) {
          if (!std::isfinite(c->y[i]) || !std::isfinite(c->axial_strain[i])) continue;
          xmin = std::min(xmin, 100.0 * c->axial_strain[i]);
          xmax = std::max(xmax, 100.0 * c->axial_strain[i]);
          ymin = std::min(ymin, c->y[i]);
          ymax = std::max(ymax, c->y[i]);
        }
    if (!(xmax > xmin)) xmax = xmin + 1.0;
    if (!(ymax > ymin)) ymax = ymin + 1.0;
    // The measured view carries the axes and the title; the model's view only its line.
    const Curve* first = g.measured ? g.measured : g.model;
    for (const Curve* c : {g.measured, g.model}) {
      if (!c) continue;
      const bool axes = c == first;
      // The view with the axes carries the graph's title; a model line beside measured points adds " model".
      out += "View " + quoted(g.title + (axes ? "" : " model")) + " {\n";
      // Measured points thinned to about 60 a graph, so that each is seen and the model's line
      // between them too (the fit used every point).
      const std::size_t n = std::min(c->y.size(), c->axial_strain.size());
      const std::size_t stride = c->measured && n > 60 ? (n + 59) / 60 : 1;
      for (std::size_t i = 0; i < n; ++i) {
        if (i % stride != 0 && i + 1 != n) continue;
        if (!std::isfinite(c->y[i]) || !std::isfinite(c->axial_strain[i])) continue;
        out += "SP(" + num(100.0 * c->axial_strain[i]) + ",0,0){" + num(c->y[i]) + "};\n";
      }
      out += "};\n";
      out += "v = PostProcessing.NbViews-1;\n";
      out += "View[v].Type = 4;\n";
      out += "View[v].AutoPosition = 12;\n";
      out += "View[v].PositionX = x1 + GX + " + std::to_string(g.column) + " * (GW + GX);\n";
      out += "View[v].PositionY = y1 - " + std::to_string(g.row) + " * (GH + GY) - GH;\n";
      out += "View[v].Width = GW;\nView[v].Height = GH;\n";
      out += std::string("View[v].IntervalsType = ") + (c->measured ? "1" : "2") + ";\n";
      out += "View[v].PointSize = 5;\n";
      out += "View[v].LineWidth = 3;\n";
      out += std::string("View[v].Axes = ") + (axes ? "3" : "0") + ";\n";
      out += "View[v].AxesLabelX = \"axial strain [%]\";\n";
      out += "View[v].RangeType = 2;\n";
      out += "View[v].CustomMin = " + num(ymin) + ";\n";
      out += "View[v].CustomMax = " + num(ymax) + ";\n";
      out += "View[v].AbscissaRangeType = 2;\n";
      out += "View[v].CustomAbscissaMin = " + num(xmin) + ";\n";
      out += "View[v].CustomAbscissaMax = " + num(xmax) + ";\n";
      out += std::string("View[v].ColorTable = {") + (c->measured ? "Black" : "Red") + "};\n";
    }
  }
  return out;
}

}  // namespace triaxcal::gmsh
