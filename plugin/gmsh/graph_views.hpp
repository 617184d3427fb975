#pragma once
// The Gmsh views of a compute, written as one self-describing .pos file for sendMergeFileRequest:
// - each soil unit's physical group filled in its own colour, with a legend naming the unit, its
//   source and status (top left of the window);
// - one 2-D graph a test and quantity (q, and the volumetric strain or the excess pore pressure)
//   against the axial strain: measured points black, the model's line red, one strain axis shared
//   by both, the legend saying so. The graphs are placed in model coordinates to the right of the
//   geometry and the view is zoomed out so that both fit: the geometry stays visible, never under
//   a graph. Each graph can be hidden in Gmsh's views list.
// The file first deletes every view whose name starts with kViewPrefix, so a new compute replaces
// the previous views instead of piling up.

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

/// Names: graphs "triaxcal: <unit> <test>: <quantity>" (the measured view; the model's view adds
/// " model"), legend lines "triaxcal: legend ...".
/// With `graphs` false (a check, no compute): only the colours and the legend, replacing the
/// previous legend and leaving the graphs of the last compute alone.
std::string views_pos(const std::vector<UnitView>& units, bool graphs = true);

/// The colour (a Gmsh colour name) of soil unit i.
const char* unit_colour(std::size_t i);

}  // namespace triaxcal::gmsh
