#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/error.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal {

namespace {

bool given(double v) { return !std::isnan(v); }

/// p' after set-up when neither the specimen nor its saturation stage says (kPa). A small
/// isotropic stress that every pressure-dependent model can start from; stated in the docs.
constexpr double kAssumedInitialStress = 10.0;
constexpr int kConsolidationSteps = 50;
constexpr int kMinSegmentSteps = 5;

}  // namespace

SpecimenProtocol specimen_protocol_with_map(const Specimen& s, int steps_per_shear_stage) {
  if (steps_per_shear_stage < 1)
    throw InputError("specimen_protocol: steps_per_shear_stage = " + std::to_string(steps_per_shear_stage) + " must be at least 1");
  SpecimenProtocol out;
  TestProtocol& p = out.protocol;
  p.name = s.id;
  p.back_pressure = s.back_pressure;
  double p0 = s.initial_effective_stress;
  if (!given(p0))
    for (const SpecimenStage& st : s.stages)
      if (st.type == SpecimenStageType::saturation && given(st.cell_pressure) && given(st.back_pressure) &&
          st.cell_pressure > st.back_pressure)
        p0 = st.cell_pressure - st.back_pressure;
  if (!given(p0) && s.is_oedometer() && !s.curves.axial_stress.empty()) p0 = s.curves.axial_stress.front();
  if (!given(p0)) p0 = kAssumedInitialStress;
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = s.void_ratio;

  for (std::size_t k = 0; k < s.stages.size(); ++k) {
    const SpecimenStage& st = s.stages[k];
    const int origin = static_cast<int>(k);
    const std::string label = s.id + " stages[" + std::to_string(k) + "]" + (st.label.empty() ? "" : " " + st.label);
    if (static_cast<int>(k) == s.data_zero_stage) out.data_zero_stage = static_cast<int>(p.stages.size());
    if (st.type == SpecimenStageType::saturation) continue;
    if (st.type == SpecimenStageType::oedometer) {
      // One drained oedometer stage per monotone branch of the stress steps, from p0 on.
      struct Branch {
        double from, to;
      };
      std::vector<Branch> branches;
      double at = p0;
      for (const double target : st.stress_steps) {
        if (target == at) continue;
        const bool up = target > at;
        if (!branches.empty() && (branches.back().to > branches.back().from) == up)
          branches.back().to = target;
        else
          branches.push_back({at, target});
        at = target;
      }
      double total = 0.0;
      for (const Branch& b : branches) total += std::abs(std::log(b.to / b.from));
      int loadings = 0;
      for (const Branch& b : branches) {
        Stage o;
        o.type = StageType::oedometer;
        o.drainage = Drainage::drained;
        o.target_axial = b.to;
        const bool up = b.to > b.from;
        o.label = label + (up ? (loadings++ == 0 ? " loading" : " reloading") : " unloading");
        const double share = total > 0.0 ? std::abs(std::log(b.to / b.from)) / total : 1.0;
        o.steps = std::max(kMinSegmentSteps, static_cast<int>(std::lround(share * steps_per_shear_stage)));
        p.stages.push_back(o);
        out.origin.push_back(origin);
      }
      continue;
    }
    if (st.type == SpecimenStageType::consolidation) {
      Stage c;
      c.label = label;
      c.steps = kConsolidationSteps;
      c.drainage = Drainage::drained;
      switch (st.path) {
        case ConsolidationPath::isotropic:
          c.type = StageType::isotropic_consolidation;
          c.target_p = st.axial_stress;
          break;
        case ConsolidationPath::anisotropic:
          c.type = StageType::anisotropic_consolidation;
          c.target_axial = st.axial_stress;
          c.target_radial = st.radial_stress;
          break;
        case ConsolidationPath::k0:
          c.type = StageType::k0_consolidation;
          c.target_axial = st.axial_stress;
          break;
      }
      p.stages.push_back(c);
      out.origin.push_back(origin);
      continue;
    }
    // Shear: run to the axial strain the data reach, with the declared loops in between.
    const auto [first, last] = s.stage_points(origin);
    if (first > last)
      throw InputError("specimen '" + s.id + "', stages[" + std::to_string(k) + "]: no data points, so the strain to shear to is unknown");
    const auto& ea = s.curves.axial_strain;
    const auto& q = s.curves.deviator_stress;
    const double start = ea[static_cast<std::size_t>(first)];
    const double end = ea[static_cast<std::size_t>(last)];
    const double dir = st.direction == ShearDirection::compression ? 1.0 : -1.0;
    const Drainage drainage = st.shear == ShearType::cd ? Drainage::drained : Drainage::undrained;
    struct Segment {
      double strain;           // increment (signed)
      double loop_q = kNotGiven;  // when an unload-reload loop follows
    };
    std::vector<Segment> segments;
    double at = start;
    std::vector<UnloadReloadLoop> loops = st.loops;
    std::sort(loops.begin(), loops.end(), [](const auto& a, const auto& b) { return a.from_strain < b.from_strain; });
    if (dir < 0) std::reverse(loops.begin(), loops.end());
    for (const UnloadReloadLoop& l : loops) {
      // The loop starts at the furthest strain reached before the first reversal inside it, and
      // its bottom is the smallest deviator (in the shear direction) inside it.
      int top = -1;
      double bottom = std::numeric_limits<double>::infinity();
      const auto inside = [&](int i) {
        const double e = ea[static_cast<std::size_t>(i)];
        return e >= l.from_strain && e <= l.to_strain;
      };
      for (int i = first; i < last && top < 0; ++i)
        if (inside(i) && dir * (ea[static_cast<std::size_t>(i + 1)] - ea[static_cast<std::size_t>(i)]) < 0.0) top = i;
      for (int i = top + 1; top >= 0 && i <= last; ++i)
        if (inside(i)) bottom = std::min(bottom, dir * q[static_cast<std::size_t>(i)]);
      if (top < 0 || bottom == std::numeric_limits<double>::infinity()) continue;
      const double top_strain = ea[static_cast<std::size_t>(top)];
      segments.push_back({top_strain - at, dir * bottom});
      at = top_strain;
    }
    segments.push_back({end - at, kNotGiven});
    double total = 0.0;
    for (const Segment& g : segments) total += std::abs(g.strain);
    for (const Segment& g : segments) {
      if (std::abs(g.strain) > 1e-9) {
        Stage sh;
        sh.type = StageType::shear;
        sh.label = label;
        sh.drainage = drainage;
        sh.axial_strain = g.strain;
        const double share = total > 0.0 ? std::abs(g.strain) / total : 1.0;
        sh.steps = std::max(kMinSegmentSteps, static_cast<int>(std::lround(share * steps_per_shear_stage)));
        p.stages.push_back(sh);
        out.origin.push_back(origin);
      }
      if (given(g.loop_q)) {
        Stage ur;
        ur.type = StageType::unload_reload;
        ur.label = label + " unload-reload";
        ur.drainage = drainage;
        ur.target_deviator = g.loop_q;
        ur.steps = std::max(kMinSegmentSteps, steps_per_shear_stage / 10);
        p.stages.push_back(ur);
        out.origin.push_back(origin);
      }
    }
  }
  return out;
}

TestProtocol specimen_protocol(const Specimen& specimen, int steps_per_shear_stage) {
  return specimen_protocol_with_map(specimen, steps_per_shear_stage).protocol;
}

}  // namespace triaxcal
