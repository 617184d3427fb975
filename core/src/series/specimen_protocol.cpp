#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/conventions.hpp"
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

/// The effective stresses measured at the start of a later shear stage of a multi-stage specimen.
struct MeasuredStart {
  bool found = false;
  int stage = -1;  ///< the shear stage (specimen index)
  double axial = kNotGiven, radial = kNotGiven;
};

/// For consolidation stage `k`: when a shear stage comes before it and it is the last consolidation
/// before the next shear stage, that shear stage's first row, if it has both effective stresses
/// (positive). A multi-stage specimen's reconsolidation then ends on the measured state; the first
/// shear stage keeps its declared consolidation (the stress history the lab applied).
MeasuredStart measured_start_after(const Specimen& s, int k) {
  MeasuredStart m;
  bool sheared_before = false;
  for (int j = 0; j < k; ++j) sheared_before = sheared_before || s.stages[static_cast<std::size_t>(j)].type == SpecimenStageType::shear;
  if (!sheared_before) return m;
  for (std::size_t j = static_cast<std::size_t>(k) + 1; j < s.stages.size(); ++j) {
    const SpecimenStage& st = s.stages[j];
    if (st.type == SpecimenStageType::consolidation) return m;  // not the last one before the shear
    if (st.type != SpecimenStageType::shear) continue;
    const auto [first, last] = s.stage_points(static_cast<int>(j));
    if (first > last) return m;
    const double sa = s.curves.axial_stress[static_cast<std::size_t>(first)];
    const double sr = s.curves.radial_stress[static_cast<std::size_t>(first)];
    if (!(given(sa) && given(sr) && sa > 0.0 && sr > 0.0)) return m;
    m.found = true;
    m.stage = static_cast<int>(j);
    m.axial = sa;
    m.radial = sr;
    return m;
  }
  return m;
}

}  // namespace

SpecimenProtocol specimen_protocol_with_map(const Specimen& s, int steps_per_shear_stage) {
  if (steps_per_shear_stage < 1)
    throw InputError("specimen_protocol: steps_per_shear_stage = " + std::to_string(steps_per_shear_stage) + " must be at least 1");
  if (s.failure_values_only())
    throw InputError("specimen '" + s.id +
                     "' is known by its reported failure values only (no data file): there are no curves to simulate or compare with");
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
      if (const MeasuredStart m = measured_start_after(s, static_cast<int>(k)); m.found) {
        // Reconsolidation of a multi-stage specimen: to the state measured at the next stage's start.
        c.type = StageType::anisotropic_consolidation;
        c.target_axial = m.axial;
        c.target_radial = m.radial;
        c.label += " (to the measured start of stages[" + std::to_string(m.stage) + "])";
        p.stages.push_back(c);
        out.origin.push_back(origin);
        continue;
      }
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
    // Shear: from the stage start to the stage strain of its last row (engineering, relative to the
    // stage start like the curves), split around the declared loops. A segment after a loop starts
    // where the reload is taken to return, the loop's top strain E_a, and runs to E_b:
    // (E_b - E_a) / (1 - E_a) relative to its own start (exact for the natural strains the driver adds).
    const auto [first, last] = s.stage_points(origin);
    if (first > last)
      throw InputError("specimen '" + s.id + "', stages[" + std::to_string(k) + "]: no data points, so the strain to shear to is unknown");
    const auto& ea = s.curves.axial_strain;
    const auto& q = s.curves.deviator_stress;
    const double end = ea[static_cast<std::size_t>(last)];
    const double dir = st.direction == ShearDirection::compression ? 1.0 : -1.0;
    const Drainage drainage = st.shear == ShearType::cd ? Drainage::drained : Drainage::undrained;
    struct Segment {
      double from, to;            // stage strains (engineering, signed)
      double loop_q = kNotGiven;  // when an unload-reload loop follows
    };
    std::vector<Segment> segments;
    double at = 0.0;
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
      segments.push_back({at, top_strain, dir * bottom});
      at = top_strain;
    }
    segments.push_back({at, end, kNotGiven});
    double total = 0.0;
    for (const Segment& g : segments) total += std::abs(natural_strain(g.to) - natural_strain(g.from));
    for (const Segment& g : segments) {
      const double span = natural_strain(g.to) - natural_strain(g.from);
      if (std::abs(span) > 1e-9) {
        Stage sh;
        sh.type = StageType::shear;
        sh.label = label;
        sh.drainage = drainage;
        sh.axial_strain = (g.to - g.from) / (1.0 - g.from);
        const double share = total > 0.0 ? std::abs(span) / total : 1.0;
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
