#pragma once
// Gmsh graph views of q against axial strain, one 2-D plot a soil unit (measured points and
// simulated lines overlaid on shared axes), written as a self-describing .pos file for
// sendMergeFileRequest. The file first deletes every view whose name starts with kViewPrefix, so a
// new compute replaces the previous views instead of piling up.

#include <string>
#include <vector>

#include "soil_unit.hpp"

namespace triaxcal::gmsh {

inline constexpr const char* kViewPrefix = "triaxcal: ";

struct UnitCurves {
  std::string unit;  ///< physical group name
  std::vector<Curve> curves;
};

/// View names: "triaxcal: <unit>: <curve label> q [kPa]". Units without curves get no plot.
std::string views_pos(const std::vector<UnitCurves>& units);

/// The 2-D plot slot (View.AutoPosition) of plot i out of n: full, top/bottom, quarters, then automatic.
int plot_position(int i, int n);

}  // namespace triaxcal::gmsh
