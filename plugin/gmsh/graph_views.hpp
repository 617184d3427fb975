#pragma once
// The Gmsh views of a compute, written as one self-describing .pos file for sendMergeFileRequest:
// - each soil unit's physical group filled in its own colour, with a legend naming the unit, its
//   source and status (top left of the window);
// - one 2-D graph a test and quantity (q, and the volumetric strain or the excess pore pressure)
//   against the axial strain: measured points black, the model's line red, one strain axis from 0
//   shared by both, round tick values, the unit's name above each row. The graphs are placed in
//   window pixels on the right of the window, laid out from Gmsh's font sizes so that no title,
//   tick label or axis label reaches another graph (two columns where they fit, else one; rows that
//   do not fit are hidden and listed). The model's view is moved left of the graphs only when no
//   triaxcal graph is shown yet: a later compute keeps the user's zoom, pan and rotation.
// The file first deletes the views of the previous compute (by their attribute "triaxcal ..."), so a
// new compute replaces them instead of piling up.

#include <string>
#include <vector>

#include "soil_unit.hpp"

namespace triaxcal::gmsh {

inline constexpr const char* kViewPrefix = "triaxcal: ";

struct UnitView {
  std::string unit;          ///< physical group name
  int dimension = 2;         ///< of the physical group (2: surfaces, 3: volumes)
  int tag = 0;               ///< physical tag in the current model (colouring only)
  std::string legend;        ///< what the legend says after the name, e.g. "calibration, mohr_coulomb: converged"
  std::vector<Curve> curves; ///< measured and model curves, in test order
};

/// Names: graphs "<test>: <quantity>" (the view that carries the axes: its name is the graph's title;
/// the model's line beside measured points adds " model"), attribute "triaxcal graph"; legend lines
/// "legend <n>: <text>", attribute "triaxcal legend".
/// With `graphs` false (a check, no compute): only the colours and the legend, replacing the
/// previous legend and leaving the graphs of the last compute alone.
std::string views_pos(const std::vector<UnitView>& units, bool graphs = true);

/// The colour (a Gmsh colour name) of soil unit i.
const char* unit_colour(std::size_t i);

/// An axis range with round ticks: [min, max] in `intervals` steps of 1, 2, 2.5 or 5 x 10^k, at most
/// `max_intervals`, always including 0.
struct NiceAxis {
  double min = 0.0, max = 1.0;
  int intervals = 1;
};
NiceAxis nice_axis(double lo, double hi, int max_intervals);

/// A tick value as Gmsh prints it with the format "%g".
std::string tick_label(double v);

/// The width of `text` in em of Gmsh's GL font (DejaVu Sans advance widths rounded up).
double text_width_em(const std::string& text);

}  // namespace triaxcal::gmsh
