#include <algorithm>
#include <nlohmann/json.hpp>

#include <cmath>
#include <cstdio>
#include <sstream>

#include "triaxcal/interpret.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

using nlohmann::json;

bool given(double v) { return !std::isnan(v); }

/// {"value": v, "unit": u}; a value not available is null, and when the data cannot determine it,
/// "not_determined" says why.
json q(double v, const char* unit, const std::string& reason = {}) {
  json j;
  const bool known = given(v) && std::isfinite(v);
  j["value"] = known ? json(v) : json(nullptr);
  j["unit"] = unit;
  if (!known && !reason.empty()) j["not_determined"] = reason;
  return j;
}

json point_json(const FailurePoint& f) {
  if (f.index < 0 && !f.reported) return nullptr;
  json j = {{"axial_strain", q(f.axial_strain, "-")}, {"q", q(f.q, "kPa")},  {"s1", q(f.s1, "kPa")},
            {"s3", q(f.s3, "kPa")},                   {"p", q(f.p, "kPa")},  {"s", q(f.s, "kPa")},
            {"t", q(f.t, "kPa")},                     {"excess_pore_pressure", q(f.excess_pore_pressure, "kPa")},
            {"cell_pressure", q(f.cell_pressure, "kPa")}};
  if (f.reported) j["reported"] = true;  // the lab's values at failure, not a point of a curve
  return j;
}

json fit_json(const LineFit& f, const char* intercept_unit, const char* slope_unit) {
  return {{"n", f.n},
          {"intercept", q(f.intercept, intercept_unit)},
          {"slope", q(f.slope, slope_unit)},
          {"se_intercept", q(f.se_intercept, intercept_unit)},
          {"se_slope", q(f.se_slope, slope_unit)},
          {"r2", q(f.r2, "-")}};
}

/// "  <what> not determined: <reason>\n", or nothing when the reason is empty.
std::string not_determined(const std::string& indent, const std::string& what, const std::string& reason) {
  return reason.empty() ? std::string() : indent + what + " not determined: " + reason + "\n";
}

std::string cell(double v, int decimals = 1) {
  if (!given(v)) return "-";
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  return buf;
}

}  // namespace

std::string interpretation_json(const Interpretation& r) {
  json root;
  root["format"] = "triaxcal-interpretation";
  root["version"] = 2;
  root["series"] = r.series;
  root["criterion"] = to_string(r.options.criterion);
  root["materials"] = r.materials;
  if (r.options.criterion == FailureCriterion::limiting_strain) root["limiting_strain"] = q(r.options.limiting_strain, "-");
  root["stress_range"] = {{"low", q(r.options.stress_low, "kPa")}, {"high", q(r.options.stress_high, "kPa")}};
  root["design_stress"] = q(r.options.design_stress, "kPa");
  root["reference_pressure"] = q(r.options.reference_pressure, "kPa");
  json left = json::array();
  for (const LeftOut& l : r.left_out)
    left.push_back({{"specimen", l.specimen}, {"shear_stage", l.shear_stage == 0 ? json(nullptr) : json(l.shear_stage)}, {"reason", l.reason}});
  root["left_out"] = left;
  root["strain_basis"] = "axial_strain at failure: engineering axial strain from the start of the stage (stage strain)";
  json stages = json::array();
  for (const StageInterpretation& s : r.stages) {
    json j;
    j["specimen"] = s.specimen;
    j["stage"] = s.stage;
    j["shear_stage"] = s.shear_stage;
    j["used"] = s.left_out.empty();
    if (!s.left_out.empty()) j["left_out"] = s.left_out;
    j["depth"] = q(s.depth, "m");
    j["test"] = to_string(s.test);
    j["direction"] = s.direction == ShearDirection::compression ? "compression" : "extension";
    j["points"] = s.points;
    if (s.failure_values_only)
      j["failure_values_only"] = {{"reported_criterion", s.reported_criterion},
                                  {"note", "the lab's values at failure; the other failure criterion cannot be recomputed from them"}};
    j["consolidation_radial_stress"] = q(s.consolidation_radial, "kPa");
    j["failure"] = {{"max-deviator", point_json(s.by_max_deviator)},
                    {"max-stress-ratio", point_json(s.by_max_stress_ratio)},
                    {"criterion", point_json(s.by_criterion)}};
    j["normal_stress_on_failure_plane"] = q(s.normal_stress_on_failure_plane, "kPa");
    j["design_stress_flag"] = to_string(s.design_stress_flag);
    j["undrained_strength"] = q(s.undrained_strength, "kPa");
    j["initial_stiffness"] = q(s.initial_stiffness, "kPa", s.initial_stiffness_reason);
    j["secant_stiffness_50"] = q(s.secant_stiffness_50, "kPa", s.secant_stiffness_reason);
    json ur = json::array();
    for (double e : s.unload_reload_stiffness) ur.push_back(q(e, "kPa"));
    j["unload_reload_stiffness"] = ur;
    if (s.test == ShearType::cd) {
      j["max_dilation_rate"] = q(s.max_dilation_rate, "-", s.dilation_reason);
      j["max_dilation_rate_se"] = q(s.max_dilation_rate_se, "-");
      const DilationWindow& w = s.dilation_window;
      j["dilation_window"] = {{"width", q(w.width, "-")},
                              {"from", q(w.from, "-")},
                              {"to", q(w.to, "-")},
                              {"points", w.points},
                              {"noise", q(w.noise, "-")},
                              {"basis", "rates in natural strains; width: of the local windows, in natural axial strain; "
                                        "from, to, points: the stretch the peak rate is taken over, engineering axial strain "
                                        "from the stage start"}};
      j["dilation_angle"] = q(s.dilation_angle, "deg", s.dilation_reason);
      j["phi_cv_stress_dilatancy"] = q(s.phi_cv_rowe, "deg", s.phi_cv_reason);
    } else {
      j["max_dilation_rate"] = q(s.max_dilation_rate, "-");
      j["dilation_angle"] = q(s.dilation_angle, "deg");
      j["phi_cv_stress_dilatancy"] = q(s.phi_cv_rowe, "deg");
    }
    j["bolton_relative_dilatancy_index"] = q(s.bolton_index, "-");
    j["bolton_phi_difference"] = q(s.bolton_phi_difference, "deg");
    j["measured_phi_difference"] = q(s.measured_phi_difference, "deg");
    j["steady_state"] = s.steady_state;
    j["steady_state_reason"] = s.steady_reason;
    j["end_state"] = {{"p", q(s.end_p, "kPa")}, {"q", q(s.end_q, "kPa")}, {"void_ratio", q(s.end_void_ratio, "-")}};
    j["skempton_a"] = q(s.skempton_a, "-");
    auto point = [](const FailurePoint& f, double ratio) {
      return json{{"axial_strain", q(f.axial_strain, "-")}, {"p", q(f.p, "kPa")}, {"q", q(f.q, "kPa")}, {"stress_ratio", q(ratio, "-")}};
    };
    j["sand_state"] = {{"start_p", q(s.start_p, "kPa")},
                       {"start_void_ratio", q(s.start_void_ratio, "-")},
                       {"state_parameter", q(s.state_parameter, "-", r.psi_reason)},
                       {"peak_friction_angle", q(s.peak_friction_angle, "deg")},
                       {"phase_transformation", point(s.phase_transformation, s.phase_transformation_ratio)},
                       {"instability", point(s.instability, s.instability_ratio)}};
    j["stress_dilatancy"] = {{"D", s.dilatancy_d}, {"R", s.dilatancy_ratio}, {"unit", "-"}};
    stages.push_back(j);
  }
  root["stages"] = stages;
  root["undrained"] = {{"count", r.uu_count},
                       {"cu_mean", q(r.cu_mean, "kPa")},
                       {"cu_min", q(r.cu_min, "kPa")},
                       {"cu_max", q(r.cu_max, "kPa")},
                       {"phi_u", q(r.uu_count > 0 ? 0.0 : std::nan(""), "deg")},
                       {"assumption", "phi_u = 0 (total stresses)"}};
  if (r.options.cu_depth_trend)
    root["undrained"]["depth_trend"] = {{"cu0", q(r.cu_depth.intercept, "kPa", r.cu_depth_reason)},
                                        {"k", q(r.cu_depth.slope, "kPa/m", r.cu_depth_reason)},
                                        {"r2", q(r.cu_depth.r2, "-", r.cu_depth_reason)},
                                        {"n", r.cu_depth.n},
                                        {"form", "c_u = cu0 + k z, z depth in m"}};
  json envs = json::array();
  for (const StrengthEnvelope& e : r.envelopes) {
    json j;
    j["criterion"] = to_string(e.criterion);
    j["s_t_fit"] = fit_json(e.st, "kPa", "-");
    j["phi"] = q(e.phi, "deg", e.note);
    j["cohesion"] = q(e.cohesion, "kPa", e.note);
    j["se_phi"] = q(e.se_phi, "deg");
    j["se_cohesion"] = q(e.se_cohesion, "kPa");
    j["p_q_fit"] = fit_json(e.pq, "kPa", "-");
    const std::string pq_reason = e.note.empty() ? e.pq_reason : e.note;
    j["phi_from_p_q"] = q(e.phi_pq, "deg", pq_reason);
    j["cohesion_from_p_q"] = q(e.cohesion_pq, "kPa", pq_reason);
    const std::string design_reason = e.note.empty() ? e.design_reason : e.note;
    j["design_line"] = {{"phi", q(e.design_phi, "deg", design_reason)},
                        {"cohesion", q(e.design_cohesion, "kPa", design_reason)},
                        {"form", to_string(e.design_form)},
                        {"rule", kDesignLineRule},
                        {"secant_phi_at_design_stress", q(e.design_secant_phi_at_design, "deg")}};
    j["secant_phi_at_design_stress"] = {{"phi", q(e.secant_phi_at_design, "deg")}, {"rule", kSecantAtDesignRule}};
    if (r.options.origin_regression)
      j["origin_regression"] = {{"phi", q(e.origin_phi, "deg", e.note.empty() ? e.origin_reason : e.note)},
                                {"se_phi", q(e.origin_se_phi, "deg")},
                                {"r2", q(e.origin_r2, "-")},
                                {"rule", kOriginRegressionRule}};
    const std::string power_reason = e.note.empty() ? e.power_reason : e.note;
    j["power_law"] = {{"a", q(e.power_a, "-", power_reason)}, {"b", q(e.power_b, "-", power_reason)}, {"form", "t = a p_ref (s'/p_ref)^b"}};
    json pts = json::array();
    for (const UsedPoint& u : e.points)
      pts.push_back({{"specimen", u.specimen}, {"stage", u.stage}, {"shear_stage", u.shear_stage}, {"s", q(u.s, "kPa")}, {"t", q(u.t, "kPa")}, {"used", u.used},
                     {"excluded_because", u.reason}});
    j["tests"] = pts;
    if (!e.note.empty()) j["note"] = e.note;
    envs.push_back(j);
  }
  root["effective_strength"] = envs;
  auto law = [](const StiffnessLaw& l) {
    return json{{"n", l.n}, {"reference", q(l.reference, "kPa", l.reason)}, {"exponent", q(l.exponent, "-", l.reason)}, {"r2", q(l.r2, "-", l.reason)},
                {"basis", l.basis}, {"form", "E = E_ref (s3'/p_ref)^m"}};
  };
  root["stiffness"] = {{"secant_50", law(r.secant_law)}, {"unload_reload", law(r.unload_reload_law)}};
  root["critical_state"] = {{"count", r.cs_count},
                            {"M", q(r.critical_m, "-", r.critical_m_reason)},
                            {"phi_cs", q(r.phi_cs, "deg", r.critical_m_reason)},
                            {"Gamma", q(r.csl.intercept, "-", r.csl_reason)},
                            {"lambda", q(given(r.csl.slope) ? -r.csl.slope : std::nan(""), "-", r.csl_reason)},
                            {"csl_points", r.csl.n},
                            {"phi_cv_stress_dilatancy_mean", q(r.phi_cv_rowe, "deg", r.phi_cv_rowe_reason)}};
  auto trend = [](const LineFit& f, const std::string& reason, const char* unit) {
    return json{{"intercept", q(f.intercept, unit, reason)}, {"slope", q(f.slope, unit, reason)}, {"n", f.n}};
  };
  root["sand_state"] = {
      {"csl_power", {{"form", "e_c = e_Gamma - lambda_c (p'/p_at)^xi, p_at = 101.325 kPa, xi fixed"},
                     {"e_Gamma", q(r.csl_power.intercept, "-", r.csl_power_reason)},
                     {"lambda_c", q(given(r.csl_power.slope) ? -r.csl_power.slope : std::nan(""), "-", r.csl_power_reason)},
                     {"xi", q(r.csl_exponent, "-")},
                     {"points", r.csl_power.n}}},
      {"state_parameter_line", r.psi_line.empty() ? json(nullptr) : json(r.psi_line)},
      {"state_parameter_reason", r.psi_reason},
      {"peak_friction_angle_vs_psi", trend(r.peak_angle_vs_psi, r.peak_angle_vs_psi_reason, "deg")},
      {"peak_dilation_rate_vs_psi", trend(r.dilation_vs_psi, r.dilation_vs_psi_reason, "-")},
      {"rules", kSandStateRule}};
  json comp = json::array();
  for (const auto& c : r.compressibility)
    comp.push_back({{"specimen", c.specimen}, {"stage", c.stage}, {"basis", c.basis}, {"lambda", q(c.lambda, "-", c.lambda_reason)},
                    {"kappa", q(c.kappa, "-", c.kappa_reason)}, {"compression_index", q(c.compression_index, "-", c.lambda_reason)},
                    {"swelling_index", q(c.swelling_index, "-", c.kappa_reason)},
                    {"constrained_modulus", q(c.constrained_modulus, "kPa", c.constrained_modulus_reason)},
                    {"constrained_modulus_at_axial_stress", q(c.constrained_modulus_stress, "kPa")}});
  root["compressibility"] = comp;
  json b = json::array();
  for (const auto& [id, v] : r.b_values) b.push_back({{"specimen", id}, {"B", q(v, "-")}});
  root["skempton_b"] = b;
  root["warnings"] = r.warnings;
  root["notes"] = r.notes;
  return root.dump(2) + "\n";
}

std::string interpretation_text(const Interpretation& r) {
  std::ostringstream o;
  char line[1024];
  // The id columns widen for long ids (AGS-style LOCA_ID/SAMP_TOP/SAMP_REF/SPEC_REF), 10 at least.
  int id_width = 10;
  for (const StageInterpretation& s : r.stages) id_width = std::max(id_width, static_cast<int>(s.specimen.size()));
  if (!r.options.material.empty()) o << "Material: " << r.options.material << "\n";
  o << "Failure points (criterion " << to_string(r.options.criterion) << "; both common criteria side by side)\n";
  std::snprintf(line, sizeof line, "  %-*s %5s %-4s %-4s %9s | %9s %9s %9s | %9s %9s %9s | %8s %9s %9s\n", id_width, "specimen", "stage", "test",
                "dir", "s3'c[kPa]", "ea,st[-]", "s'[kPa]", "t[kPa]", "ea,st[-]", "s'[kPa]", "t[kPa]", "cu[kPa]", "E50[kPa]", "A_f[-]");
  o << line;
  std::snprintf(line, sizeof line, "  %-*s %5s %-4s %-4s %9s | %29s | %29s |\n", id_width, "", "", "", "", "", "max-deviator", "max-stress-ratio");
  o << line;
  for (const StageInterpretation& s : r.stages) {
    std::snprintf(line, sizeof line, "  %-*s %5d %-4s %-4s %9s | %9s %9s %9s | %9s %9s %9s | %8s %9s %9s\n", id_width, s.specimen.c_str(), s.shear_stage,
                  to_string(s.test).c_str(), s.direction == ShearDirection::compression ? "comp" : "ext",
                  cell(s.consolidation_radial).c_str(), cell(s.by_max_deviator.axial_strain, 4).c_str(),
                  cell(s.by_max_deviator.s).c_str(), cell(s.by_max_deviator.t).c_str(),
                  cell(s.by_max_stress_ratio.axial_strain, 4).c_str(), cell(s.by_max_stress_ratio.s).c_str(),
                  cell(s.by_max_stress_ratio.t).c_str(), cell(s.undrained_strength).c_str(), cell(s.secant_stiffness_50, 0).c_str(),
                  cell(s.skempton_a, 2).c_str());
    o << line;
    if (!s.left_out.empty()) o << "      left out: " << s.left_out << "\n";
  }
  o << "  (stage: the specimen's shear stages 1, 2, 3; ea,st: engineering axial strain from the start of the stage, "
       "the stage strain)\n";
  if (!r.left_out.empty()) {
    o << "\nLeft out by choice:\n";
    for (const LeftOut& l : r.left_out)
      o << "  " << l.specimen << (l.shear_stage > 0 ? " stage " + std::to_string(l.shear_stage) : std::string(" (all stages)")) << ": "
        << l.reason << "\n";
  }
  {
    bool any = false;
    for (const StageInterpretation& s : r.stages) any = any || given(s.normal_stress_on_failure_plane);
    if (any) {
      o << "\nNormal effective stress on the failure plane sigma'_nf = s' - t sin phi' (criterion " << to_string(r.options.criterion)
        << ", phi' " << cell(r.envelopes.front().phi, 2) << " deg)";
      if (given(r.options.design_stress)) o << "; design stress " << cell(r.options.design_stress) << " kPa";
      o << "\n";
      for (const StageInterpretation& s : r.stages) {
        if (!given(s.normal_stress_on_failure_plane)) continue;
        std::snprintf(line, sizeof line, "  %-*s %5d  sigma'_nf %9s kPa", id_width, s.specimen.c_str(), s.shear_stage,
                      cell(s.normal_stress_on_failure_plane).c_str());
        o << line;
        if (s.design_stress_flag == DesignStressFlag::above) o << "  ABOVE the design stress";
        else if (s.design_stress_flag == DesignStressFlag::above_twice) o << "  ABOVE TWICE the design stress";
        else if (s.design_stress_flag == DesignStressFlag::within) o << "  at or below the design stress";
        o << (s.left_out.empty() ? "" : "  (left out)") << "\n";
      }
      if (given(r.options.design_stress)) o << "  (rule: " << kDesignStressRule << ")\n";
    }
  }
  bool any_reported = false;
  for (const StageInterpretation& s : r.stages) {
    if (!s.failure_values_only || s.test == ShearType::uu) continue;  // UU: c_u = q_f / 2 needs no criterion
    if (!any_reported) o << "  failure values only (no curves; the other criterion cannot be recomputed from them):\n";
    any_reported = true;
    o << "      " << s.specimen << " stage " << s.shear_stage << ": lab's criterion "
      << (s.reported_criterion.empty() ? std::string("not reported") : "'" + s.reported_criterion + "'") << "\n";
  }
  if (r.uu_count > 0) {
    std::snprintf(line, sizeof line, "\nUndrained strength (UU, phi_u = 0 assumed): c_u mean %s kPa, range %s to %s kPa, %d specimens\n",
                  cell(r.cu_mean).c_str(), cell(r.cu_min).c_str(), cell(r.cu_max).c_str(), r.uu_count);
    o << line;
  }
  if (r.options.cu_depth_trend) {
    if (r.cu_depth_reason.empty())
      o << "  c_u = c_u0 + k z: c_u0 " << cell(r.cu_depth.intercept) << " kPa, k " << cell(r.cu_depth.slope, 2) << " kPa/m (n = "
        << r.cu_depth.n << ", R2 " << cell(r.cu_depth.r2, 3) << ")\n";
    else
      o << "  c_u = c_u0 + k z not determined: " << r.cu_depth_reason << "\n";
  }
  o << "\nEffective strength (s'-t least squares; p'-q route on compression tests)\n";
  std::snprintf(line, sizeof line, "  %-17s %3s %9s %9s %8s %8s %6s | %9s %9s | %9s %9s | %7s %6s\n", "criterion", "n", "phi'[deg]",
                "c'[kPa]", "se_phi", "se_c", "R2", "phi'_pq", "c'_pq", "phi'_des", "c'_des", "a_pow", "b_pow");
  o << line;
  for (const StrengthEnvelope& e : r.envelopes) {
    std::snprintf(line, sizeof line, "  %-17s %3d %9s %9s %8s %8s %6s | %9s %9s | %9s %9s | %7s %6s\n",
                  (to_string(e.criterion) + (&e == &r.envelopes.front() ? " *" : "")).c_str(), e.st.n, cell(e.phi, 2).c_str(),
                  cell(e.cohesion, 2).c_str(), cell(e.se_phi, 2).c_str(), cell(e.se_cohesion, 2).c_str(), cell(e.st.r2, 4).c_str(),
                  cell(e.phi_pq, 2).c_str(), cell(e.cohesion_pq, 2).c_str(), cell(e.design_phi, 2).c_str(),
                  cell(e.design_cohesion, 2).c_str(), cell(e.power_a, 3).c_str(), cell(e.power_b, 3).c_str());
    o << line;
    for (const UsedPoint& u : e.points)
      if (!u.used) o << "      excluded: " << u.specimen << " stage " << u.shear_stage << ": " << u.reason << "\n";
    if (!e.note.empty()) {
      o << "      phi' and c' not determined: " << e.note << "\n";
      continue;
    }
    if (given(r.options.design_stress))
      o << "      secant phi' with c' = 0 at the design stress " << cell(r.options.design_stress) << " kPa: " << cell(e.secant_phi_at_design, 2)
        << " deg (best fit), " << cell(e.design_secant_phi_at_design, 2) << " deg (design line)\n";
    if (r.options.origin_regression) {
      if (e.origin_reason.empty())
        o << "      through the origin (c' = 0): phi'_0 " << cell(e.origin_phi, 2) << " deg (se " << cell(e.origin_se_phi, 2) << ", R2 "
          << cell(e.origin_r2, 4) << ")\n";
      else
        o << "      through the origin: not determined: " << e.origin_reason << "\n";
    }
    if (e.design_form == DesignLineForm::origin_secant)
      o << "      design line: c' = 0, secant from the origin (a negative intercept of the regression or of the line under its bound)\n";
    o << not_determined("      ", "design line", e.design_reason) << not_determined("      ", "p'-q route", e.pq_reason)
      << not_determined("      ", "power law", e.power_reason);
  }
  o << "  (* the declared criterion; design line: the lower 95 % bound of the mean line, never steeper than the fit, "
       "c' = 0 where an intercept is negative; see the rules below)\n";
  o << "\nStiffness (per stage: E_i, E_50, E_ur; law E = E_ref (s3'/p_ref)^m, p_ref = " << format_number(r.options.reference_pressure)
    << " kPa)\n";
  for (const StageInterpretation& s : r.stages) {
    if (s.failure_values_only) continue;  // no curve, no stiffness
    std::string ur;
    for (double e : s.unload_reload_stiffness) ur += (ur.empty() ? "" : ", ") + cell(e, 0);
    std::snprintf(line, sizeof line, "  %-*s %5d %-4s E_i %9s kPa  E_50 %9s kPa  E_ur %s kPa\n", id_width, s.specimen.c_str(), s.shear_stage,
                  to_string(s.test).c_str(), cell(s.initial_stiffness, 0).c_str(), cell(s.secant_stiffness_50, 0).c_str(),
                  ur.empty() ? "-" : ur.c_str());
    o << line;
    o << not_determined("      ", "E_i", s.initial_stiffness_reason) << not_determined("      ", "E_50", s.secant_stiffness_reason);
  }
  auto law = [&](const char* name, const StiffnessLaw& l) {
    if (!l.reason.empty()) {
      std::snprintf(line, sizeof line, "  %-13s not determined: %s (%s)\n", name, l.reason.c_str(), l.basis.c_str());
    } else {
      std::snprintf(line, sizeof line, "  %-13s E_ref %9s kPa  m %6s  R2 %6s  (n = %d, %s)\n", name, cell(l.reference, 0).c_str(),
                    cell(l.exponent, 3).c_str(), cell(l.r2, 3).c_str(), l.n, l.basis.c_str());
    }
    o << line;
  };
  law("secant (50 %)", r.secant_law);
  law("unload-reload", r.unload_reload_law);
  o << "\nDilatancy (CD: peak rate d = de_v/de_a in natural strains by least squares over the stretch of axial strain "
       "around the peak; sin psi = -d/(2 - d) in compression; Rowe phi_cv; Bolton 1986)\n";
  for (const StageInterpretation& s : r.stages) {
    if (s.test != ShearType::cd) continue;
    const DilationWindow& w = s.dilation_window;
    std::snprintf(line, sizeof line,
                  "  %-*s %5d  d %7s (se %s; local windows %s wide; peak stretch %s to %s axial strain, %d points)  psi %6s deg  phi_cv %6s deg  "
                  "I_R %5s  3 I_R %5s deg  measured %5s deg\n",
                  id_width, s.specimen.c_str(), s.shear_stage, cell(s.max_dilation_rate, 3).c_str(), cell(s.max_dilation_rate_se, 3).c_str(),
                  cell(w.width, 4).c_str(), cell(w.from, 4).c_str(), cell(w.to, 4).c_str(), w.points,
                  cell(s.dilation_angle, 2).c_str(), cell(s.phi_cv_rowe, 2).c_str(),
                  cell(s.bolton_index, 2).c_str(), cell(s.bolton_phi_difference, 1).c_str(), cell(s.measured_phi_difference, 1).c_str());
    o << line << not_determined("      ", "psi", s.dilation_reason) << not_determined("      ", "phi_cv", s.phi_cv_reason);
  }
  o << "\nCritical state (" << r.cs_count << " steady end states):";
  if (r.critical_m_reason.empty()) o << " M " << cell(r.critical_m, 3) << ", phi_cs " << cell(r.phi_cs, 2) << " deg";
  else o << " M and phi_cs not determined: " << r.critical_m_reason;
  o << "\n  critical-state line e = Gamma - lambda ln p':";
  if (r.csl_reason.empty()) o << " Gamma " << cell(r.csl.intercept, 3) << ", lambda " << cell(-r.csl.slope, 4) << " (" << r.csl.n << " points)";
  else o << " not determined: " << r.csl_reason;
  o << "\n  critical-state line e = e_Gamma - lambda_c (p'/p_at)^xi, xi " << cell(r.csl_exponent, 2) << " fixed:";
  if (r.csl_power_reason.empty())
    o << " e_Gamma " << cell(r.csl_power.intercept, 4) << ", lambda_c " << cell(-r.csl_power.slope, 4) << " (" << r.csl_power.n << " points)";
  else o << " not determined: " << r.csl_power_reason;
  o << "\n  phi_cv (Rowe, mean): " << (r.phi_cv_rowe_reason.empty() ? cell(r.phi_cv_rowe, 2) + " deg" : "not determined: " + r.phi_cv_rowe_reason)
    << "\n";
  auto value = [](double v, int decimals) { return given(v) ? cell(v, decimals) : std::string("not determined"); };
  // Stages for people: "oedometer S-1", or "oedometer S-1, loading 2" where the specimen has more
  // than one stage of that kind (not the 0-based stages[k] of the file).
  auto label = [&](std::size_t i) {
    const auto& c = r.compressibility[i];
    const bool oed = c.basis.rfind("oedometer", 0) == 0;
    int ordinal = 0, total = 0;
    for (std::size_t j = 0; j < r.compressibility.size(); ++j) {
      const auto& d = r.compressibility[j];
      if (d.specimen != c.specimen || (d.basis.rfind("oedometer", 0) == 0) != oed) continue;
      ++total;
      if (j <= i) ++ordinal;
    }
    return c.specimen + (total > 1 ? ", stage " + std::to_string(ordinal) + " of " + std::to_string(total) : std::string());
  };
  for (std::size_t i = 0; i < r.compressibility.size(); ++i) {
    const auto& c = r.compressibility[i];
    if (c.basis.rfind("oedometer", 0) == 0)
      o << "  oedometer " << label(i) << ": lambda " << value(c.lambda, 4) << ", kappa " << value(c.kappa, 4)
        << " (e - ln s_a'); C_c " << value(c.compression_index, 3) << ", C_s " << value(c.swelling_index, 3) << "; E_oed "
        << value(c.constrained_modulus, 0) << (given(c.constrained_modulus) ? " kPa" : "") << " at s_a' "
        << cell(c.constrained_modulus_stress, 0) << " kPa\n";
    else
      o << "  consolidation " << label(i) << ": lambda " << value(c.lambda, 4) << ", kappa "
        << value(c.kappa, 4) << "\n";
    o << not_determined("      ", "lambda", c.lambda_reason) << not_determined("      ", "kappa", c.kappa_reason)
      << not_determined("      ", "E_oed", c.constrained_modulus_reason);
  }
  if (!r.psi_line.empty()) {
    o << "\nState parameter psi = e - e_c(p') at the start of shear (Been & Jefferies 1985), from the "
      << (r.psi_line == "power" ? "power-law" : "e - ln p'") << " critical-state line:\n";
    int w = 10;
    for (const StageInterpretation& s : r.stages) w = std::max(w, static_cast<int>(s.specimen.size()));
    char row[512];
    std::snprintf(row, sizeof row, "  %-*s %5s %-4s %9s %7s %8s %9s %9s %9s\n", w, "specimen", "stage", "test", "p'_0 kPa", "e_0", "psi",
                  "phi'_pk", "PT q/p'", "inst q/p'");
    o << row;
    for (const StageInterpretation& s : r.stages) {
      if (!given(s.state_parameter)) continue;
      std::snprintf(row, sizeof row, "  %-*s %5d %-4s %9s %7s %8s %9s %9s %9s%s\n", w, s.specimen.c_str(), s.shear_stage,
                    to_string(s.test).c_str(), cell(s.start_p, 1).c_str(), cell(s.start_void_ratio, 3).c_str(),
                    cell(s.state_parameter, 3).c_str(), cell(s.peak_friction_angle, 2).c_str(), cell(s.phase_transformation_ratio, 3).c_str(),
                    cell(s.instability_ratio, 3).c_str(), s.left_out.empty() ? "" : "  (left out)");
      o << row;
    }
    o << "  phi'_pk: from the largest s1'/s3' with c' = 0 (CD, deg); PT: phase transformation, least p' then rising; inst: first\n"
         "  peak of q then falling more than 5 % (CU); thresholds common practice, no source\n";
    o << "  trend phi'_pk = a + b psi: "
      << (r.peak_angle_vs_psi_reason.empty()
              ? "a " + cell(r.peak_angle_vs_psi.intercept, 2) + " deg, b " + cell(r.peak_angle_vs_psi.slope, 1) + " deg (" +
                    std::to_string(r.peak_angle_vs_psi.n) + " stages)"
              : "not determined: " + r.peak_angle_vs_psi_reason)
      << "\n  trend -d_max = a + b psi: "
      << (r.dilation_vs_psi_reason.empty()
              ? "a " + cell(r.dilation_vs_psi.intercept, 3) + ", b " + cell(r.dilation_vs_psi.slope, 3) + " (" +
                    std::to_string(r.dilation_vs_psi.n) + " stages)"
              : "not determined: " + r.dilation_vs_psi_reason)
      << "\n  (roughly linear trends against psi: Been & Jefferies 1985, from memory)\n";
  } else if (!r.psi_reason.empty()) {
    o << "\nState parameter psi: not determined: " << r.psi_reason << "\n";
  }
  if (!r.b_values.empty()) {
    o << "\nSkempton's B from saturation:";
    for (const auto& [id, v] : r.b_values) o << " " << id << " " << cell(v, 2);
    o << "\n";
  }
  if (!r.notes.empty()) {
    o << "\nRules and assumptions:\n";
    for (const std::string& n : r.notes) o << "  - " << n << "\n";
  }
  if (!r.warnings.empty()) {
    o << "\nWarnings:\n";
    for (const std::string& w : r.warnings) o << "  warning: " << w << "\n";
  }
  return o.str();
}

}  // namespace triaxcal
