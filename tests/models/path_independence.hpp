#pragma once
// Path independence for every model (DESIGN.md "Models": the response from a state depends on that
// state alone): the same stage run from the same state, once at the start of a protocol and once
// after another history, must give the same records.

#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <string>

#include "tolerances.hpp"
#include "triaxcal/driver.hpp"

namespace triaxcal::test {

/// Largest difference between two runs of one stage, relative to the larger magnitude of the two
/// values, after an absolute floor (kStressFloor for stresses, kStrainFloor for strains and void
/// ratio), and where it was found.
struct StageDifference {
  double relative = 0.0;
  double raw = 0.0;         ///< largest |x - y| / max(|x|, |y|) without the floor, over values above 100 floors
  int records = 0;          ///< records compared
  std::string where;        ///< quantity and stage strain of the largest difference
};

/// Compares the records of stage `stage_a` of `a` with those of stage `stage_b` of `b` (records
/// must lie at the same engineering stage axial strain, which is checked): q, p', excess pore
/// pressure, engineering stage axial and volumetric strain, void ratio where known.
inline StageDifference compare_stages(const SimulationResult& a, int stage_a, const SimulationResult& b, int stage_b) {
  StageDifference d;
  const StageSummary& sa = a.stages.at(stage_a);
  const StageSummary& sb = b.stages.at(stage_b);
  REQUIRE(sa.last - sa.first == sb.last - sb.first);
  auto take = [&](const char* what, double x, double y, double floor, double strain) {
    const double larger = std::max(std::abs(x), std::abs(y));
    const double excess = std::max(0.0, std::abs(x - y) - floor) / std::max(larger, floor);
    if (larger > 100.0 * floor) d.raw = std::max(d.raw, std::abs(x - y) / larger);
    if (excess > d.relative) {
      d.relative = excess;
      std::ostringstream w;
      w << what << " " << x << " against " << y << " at stage strain " << strain;
      d.where = w.str();
    }
  };
  for (int k = 0; k <= sa.last - sa.first; ++k) {
    const StepRecord& x = a.steps[sa.first + k];
    const StepRecord& y = b.steps[sb.first + k];
    REQUIRE(std::abs(x.stage_axial_strain - y.stage_axial_strain) <= 1e-12);
    const double eps = x.stage_axial_strain;
    take("q", x.q, y.q, kStressFloor, eps);
    take("p'", x.p, y.p, kStressFloor, eps);
    take("excess pore pressure", x.excess_pore_pressure, y.excess_pore_pressure, kStressFloor, eps);
    take("stage volumetric strain", x.stage_volumetric_strain, y.stage_volumetric_strain, kStrainFloor, eps);
    if (!std::isnan(x.void_ratio) && !std::isnan(y.void_ratio)) take("void ratio", x.void_ratio, y.void_ratio, kStrainFloor, eps);
    ++d.records;
  }
  return d;
}

/// The state at record `r` as the initial conditions of a new protocol (stress and void ratio; a
/// model-specific preconsolidation pressure is set by the caller).
inline InitialConditions conditions_at(const StepRecord& r) {
  InitialConditions c;
  c.stress = Vec6::Zero();
  c.stress[0] = r.axial_stress;
  c.stress[1] = c.stress[2] = r.radial_stress;
  c.void_ratio = r.void_ratio;
  return c;
}

/// Linear interpolation of q at an engineering stage axial strain within one stage's records.
inline double q_at_stage_strain(const SimulationResult& r, int stage, double strain) {
  const StageSummary& s = r.stages.at(stage);
  for (int i = s.first + 1; i <= s.last; ++i) {
    const StepRecord& lo = r.steps[i - 1];
    const StepRecord& hi = r.steps[i];
    if (hi.stage_axial_strain >= strain) {
      const double t = (strain - lo.stage_axial_strain) / (hi.stage_axial_strain - lo.stage_axial_strain);
      return lo.q + t * (hi.q - lo.q);
    }
  }
  return r.steps[s.last].q;
}

}  // namespace triaxcal::test
