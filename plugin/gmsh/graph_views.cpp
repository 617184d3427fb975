#include "graph_views.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

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

// One colour a test: its measured points and its fitted line share it.
const char* const kColours[] = {"Blue", "Red", "DarkGreen", "Magenta", "Orange", "Cyan", "Black", "Brown"};

}  // namespace

int plot_position(int i, int n) {
  // Gmsh 4.8 View.AutoPosition: 2 top left, 3 top right, 4 bottom left, 5 bottom right,
  // 6 top, 7 bottom, 10 full; 1 automatic.
  if (n == 1) return 10;
  if (n == 2) return i == 0 ? 6 : 7;
  if (n <= 4) return 2 + i;
  return 1;
}

std::string views_pos(const std::vector<UnitCurves>& units) {
  std::string out =
      "// triaxcal: q against axial strain for each soil unit. Written by triaxcal-gmsh on every compute;\n"
      "// merging it replaces the views of the previous compute.\n"
      "For i In {PostProcessing.NbViews-1:0:-1}\n"
      "  If(!StrCmp(StrSub(View[i].Name, 0, " +
      std::to_string(std::string(kViewPrefix).size()) + "), " + quoted(kViewPrefix) +
      "))\n"
      "    Delete View[i];\n"
      "  EndIf\n"
      "EndFor\n";
  int plots = 0;
  for (const UnitCurves& u : units)
    if (!u.curves.empty()) ++plots;
  int plot = 0;
  for (const UnitCurves& u : units) {
    if (u.curves.empty()) continue;
    double xmin = std::numeric_limits<double>::infinity(), xmax = -xmin, ymin = 0.0, ymax = -xmin;
    for (const Curve& c : u.curves)
      for (std::size_t i = 0; i < c.q.size() && i < c.axial_strain.size(); ++i) {
        if (!std::isfinite(c.q[i]) || !std::isfinite(c.axial_strain[i])) continue;
        xmin = std::min(xmin, 100.0 * c.axial_strain[i]);
        xmax = std::max(xmax, 100.0 * c.axial_strain[i]);
        ymin = std::min(ymin, c.q[i]);
        ymax = std::max(ymax, c.q[i]);
      }
    if (!(xmax > xmin)) xmax = xmin + 1.0;
    if (!(ymax > ymin)) ymax = ymin + 1.0;
    const int position = plot_position(plot++, plots);
    int colour = 0;
    for (std::size_t k = 0; k < u.curves.size(); ++k) {
      const Curve& c = u.curves[k];
      // Measured and fitted curves of a test come in pairs and share a colour.
      if (k > 0 && !(u.curves[k - 1].measured && !c.measured)) ++colour;
      out += "View " + quoted(kViewPrefix + u.unit + ": " + c.label + " q [kPa]") + " {\n";
      for (std::size_t i = 0; i < c.q.size() && i < c.axial_strain.size(); ++i) {
        if (!std::isfinite(c.q[i]) || !std::isfinite(c.axial_strain[i])) continue;
        out += "SP(" + num(100.0 * c.axial_strain[i]) + ",0,0){" + num(c.q[i]) + "};\n";
      }
      out += "};\n";
      out += "v = PostProcessing.NbViews-1;\n";
      out += "View[v].Type = 4;\n";
      out += "View[v].AutoPosition = " + std::to_string(position) + ";\n";
      out += std::string("View[v].IntervalsType = ") + (c.measured ? "1" : "2") + ";\n";
      out += "View[v].PointSize = 3;\n";
      out += "View[v].LineWidth = 2;\n";
      out += "View[v].Axes = 3;\n";
      out += "View[v].AxesLabelX = \"axial strain [%]\";\n";
      out += "View[v].RangeType = 2;\n";
      out += "View[v].CustomMin = " + num(ymin) + ";\n";
      out += "View[v].CustomMax = " + num(ymax) + ";\n";
      out += "View[v].AbscissaRangeType = 2;\n";
      out += "View[v].CustomAbscissaMin = " + num(xmin) + ";\n";
      out += "View[v].CustomAbscissaMax = " + num(xmax) + ";\n";
      out += std::string("View[v].ColorTable = {") + kColours[colour % 8] + "};\n";
    }
  }
  return out;
}

}  // namespace triaxcal::gmsh
