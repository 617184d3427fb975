// Report data from a calibration summary and its problem (what `triaxcal fit` holds in memory).
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <sstream>

#include "triaxcal/conventions.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/report_input.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::report {

namespace {

constexpr double kDeg = 3.14159265358979323846 / 180.0;

bool consolidation(StageType t) {
  return t != StageType::shear && t != StageType::constant_p_shear && t != StageType::unload_reload;
}
Drainage drainage_of(const TestProtocol& p) {
  bool shear = false, undrained = false;
  for (const Stage& s : p.stages)
    if (!consolidation(s.type)) {
      shear = true;
      undrained = undrained || s.drainage == triaxcal::Drainage::undrained;
    }
  if (!shear) return Drainage::oedometer;
  return undrained ? Drainage::undrained : Drainage::drained;
}

bool is_strain(Quantity q) {
  return q == Quantity::axial_strain || q == Quantity::radial_strain || q == Quantity::volumetric_strain;
}

// Simulated curve y(x) of one measured curve: the records from the start of its zero stage (or
// its own stage), strains counted from there as engineering strains, as calibrate() compares them
// (records carry natural strains since the protocol start: 1 - exp(-(eps - eps_origin)),
// conventions.hpp).
XY simulated_curve(const SimulationResult& r, const MeasuredCurve& c) {
  XY out;
  if (r.steps.empty()) return out;
  std::size_t first = 0, last = r.steps.size() - 1;
  const int zero = c.strain_zero_stage;
  std::size_t base = 0;
  if (zero >= 0 && static_cast<std::size_t>(zero) < r.stages.size())
    base = static_cast<std::size_t>(std::max(0, r.stages[static_cast<std::size_t>(zero)].first - 1));
  first = base;
  if (c.stage >= 0 && static_cast<std::size_t>(c.stage) < r.stages.size()) {
    first = static_cast<std::size_t>(std::max(0, r.stages[static_cast<std::size_t>(c.stage)].first - 1));
    last = static_cast<std::size_t>(r.stages[static_cast<std::size_t>(c.stage)].last);
  }
  const StepRecord& b = r.steps[base];
  for (std::size_t i = first; i <= last && i < r.steps.size(); ++i) {
    double x = value_of(r.steps[i], c.x), y = value_of(r.steps[i], c.y);
    if (is_strain(c.x)) x = engineering_strain(x - value_of(b, c.x));
    if (is_strain(c.y)) y = engineering_strain(y - value_of(b, c.y));
    out.x.push_back(x);
    out.y.push_back(y);
  }
  return out;
}

/// The failure criterion in words, as the report states it.
std::string criterion_words(FailureCriterion c, double limiting_strain) {
  switch (c) {
    case FailureCriterion::max_deviator: return "maximum deviator stress";
    case FailureCriterion::max_stress_ratio: return "maximum stress ratio";
    case FailureCriterion::limiting_strain: {
      char b[64];
      std::snprintf(b, sizeof b, "limiting axial strain %.4g %%", 100.0 * limiting_strain);
      return b;
    }
    case FailureCriterion::end_of_test: return "end of test";
  }
  return to_string(c);
}

/// The fitted parameter that declares `role` in the model's ModelInfo (never matched by name), or
/// nullptr when the model has none.
const FittedParameter* find_parameter(const CalibrationSummary& s, const ModelInfo* model, ParameterRole role) {
  if (!model) return nullptr;
  const int i = parameter_with_role(*model, role);
  if (i < 0) return nullptr;
  const std::string& name = model->parameters[static_cast<std::size_t>(i)].name;
  for (const FittedParameter& p : s.parameters)
    if (p.name == name) return &p;
  return nullptr;
}

/// The fitted model's value of a classical quantity: what the model implies for the role
/// (ModelInfo::implied: phi_cs from M, a critical-state strength), else the parameter that declares
/// the role; `basis` names where it comes from, `note` where the model's definition differs.
struct ModelValue {
  bool present = false;  ///< the model has a value or a note for the role
  double value = kUnknown;
  std::string basis;
  std::string note;
};

ModelValue model_value(const CalibrationSummary& s, const ModelInfo* model, ParameterRole role) {
  ModelValue out;
  if (!model) return out;
  ImpliedValue implied;
  if (model->implied) {
    std::vector<double> values;
    for (const ParameterInfo& info : model->parameters) {
      double v = info.default_value;
      for (const FittedParameter& p : s.parameters)
        if (p.name == info.name) v = p.value;
      values.push_back(v);
    }
    implied = model->implied(role, values);
  }
  out.note = implied.note;
  if (std::isfinite(implied.value)) {
    out.present = true;
    out.value = implied.value;
    out.basis = "model " + implied.how;
    return out;
  }
  if (const FittedParameter* p = find_parameter(s, model, role)) {
    out.present = true;
    out.value = p->value;
    out.basis = "model " + p->name;
  }
  return out;
}

}  // namespace

ReportData report_from_calibration(const CalibrationSummary& s, const CalibrationProblem& problem,
                                   const CalibrationProvenance& prov, const TestSeries* series,
                                   const Interpretation* interpretation) {
  ReportData d;
  d.project = prov.description;
  d.model = s.model.empty() && problem.model ? problem.model->name : s.model;
  if (problem.model) d.model_description = problem.model->title;
  d.termination = to_string(s.termination);
  d.message = s.message;
  d.objective = s.objective;
  d.start_objective = s.start_objective;
  d.evaluations = s.evaluations;
  d.wall_time = s.wall_time;
  d.caution = prov.caution.empty() ? std::string(kCautionText) : prov.caution;

  for (std::size_t i = 0; i < problem.tests.size(); ++i) {
    const CalibrationTest& ct = problem.tests[i];
    TestReport t;
    t.id = ct.id;
    t.weight = ct.weight;
    t.drainage = drainage_of(ct.protocol);
    t.description = ct.protocol.name;
    const Specimen* specimen = nullptr;
    if (series)
      for (const Specimen& sp : series->specimens)
        if (sp.id == ct.id) specimen = &sp;
    if (specimen && !specimen->description.empty()) t.description = specimen->description;
    const TestFit* fit = nullptr;
    for (const TestFit& f : s.tests)
      if (f.id == ct.id) fit = &f;
    const SimulationResult* sim = i < s.simulations.size() ? &s.simulations[i] : nullptr;
    t.simulated = fit ? fit->simulated : false;
    t.message = fit ? fit->message : std::string("not simulated");
    if (fit) t.objective = fit->objective;
    // Every compared curve, one a quantity and shear stage, against its own stage strain.
    for (const MeasuredCurve& c : ct.curves) {
      if (c.x != Quantity::axial_strain) continue;
      TestCurve tc;
      tc.quantity = to_string(c.y);
      tc.unit = unit_of(c.y);
      tc.stage = c.shear_stage;
      tc.measured.x = c.xs;
      tc.measured.y = c.ys;
      if (std::isfinite(c.x_min)) tc.fitted_from = c.x_min;
      if (std::isfinite(c.x_max)) tc.fitted_to = c.x_max;
      if (sim && t.simulated) tc.simulated = simulated_curve(*sim, c);
      t.curves.push_back(std::move(tc));
    }
    // e - ln p': the consolidation stages only (isotropic, anisotropic, K0), measured and simulated;
    // shear stages and oedometer tests (no measured p') are not in it.
    auto consolidating = [](StageType type) {
      return type == StageType::isotropic_consolidation || type == StageType::anisotropic_consolidation ||
             type == StageType::k0_consolidation;
    };
    if (sim && t.simulated && !sim->steps.empty()) {
      for (const StepRecord& r : sim->steps) {
        t.stress_path.simulated.x.push_back(r.p);
        t.stress_path.simulated.y.push_back(r.q);
        if (std::isfinite(r.void_ratio) && static_cast<std::size_t>(r.stage) < ct.protocol.stages.size() &&
            consolidating(ct.protocol.stages[static_cast<std::size_t>(r.stage)].type)) {
          t.compression.simulated.x.push_back(r.p);
          t.compression.simulated.y.push_back(r.void_ratio);
        }
      }
    }
    if (specimen) {
      const ReducedCurves& rc = specimen->curves;
      t.stress_path.measured.x = rc.mean_stress;
      t.stress_path.measured.y = rc.deviator_stress;
      for (std::size_t k = 0; k < rc.void_ratio.size() && k < rc.mean_stress.size() && k < rc.stage.size(); ++k) {
        const int st = rc.stage[k];
        const bool consolidation_row = st >= 0 && static_cast<std::size_t>(st) < specimen->stages.size() &&
                                       specimen->stages[static_cast<std::size_t>(st)].type == SpecimenStageType::consolidation;
        if (consolidation_row && std::isfinite(rc.void_ratio[k]) && rc.mean_stress[k] > 0) {
          t.compression.measured.x.push_back(rc.mean_stress[k]);
          t.compression.measured.y.push_back(rc.void_ratio[k]);
        }
      }
    }
    // Without measured void ratios there is nothing to compare the model's with.
    if (t.compression.measured.empty()) t.compression.simulated = {};
    if (fit)
      for (const CurveFit& c : fit->curves) {
        CurveQuality q;
        q.name = to_string(c.y) + " vs " + to_string(c.x) + (c.shear_stage > 0 ? ", stage " + std::to_string(c.shear_stage) : "");
        q.unit = unit_of(c.y);
        q.points = c.points;
        q.rmse = c.rmse;
        q.r_squared = c.r_squared;
        q.x_name = to_string(c.x);
        const bool strain_x = is_strain(c.x);
        q.x_scale = strain_x ? 100.0 : 1.0;
        q.x_unit = strain_x ? "%" : unit_of(c.x);
        if (c.range > 0)
          for (std::size_t k = 0; k < c.xs.size() && k < c.measured.size() && k < c.simulated.size(); ++k)
            if (std::isfinite(c.simulated[k])) {
              q.residuals.x.push_back(c.xs[k]);
              q.residuals.y.push_back((c.simulated[k] - c.measured[k]) / c.range);
            }
        t.quality.push_back(q);
      }
    d.tests.push_back(std::move(t));
  }

  for (const FittedParameter& p : s.parameters) {
    ParameterRow row;
    row.name = p.name;
    row.unit = p.unit;
    row.status = to_string(p.status);
    row.expression = p.expression;
    row.value = p.value;
    row.start = p.start;
    row.lower = p.lower;
    row.upper = p.upper;
    row.standard_error = p.standard_error;
    row.interval_low = p.interval_low;
    row.interval_high = p.interval_high;
    row.at_bound = p.at_bound;
    d.parameters.push_back(row);
  }
  if (s.correlation.rows() == static_cast<Eigen::Index>(s.free_names.size()) && !s.free_names.empty()) {
    d.correlation.names = s.free_names;
    for (Eigen::Index r = 0; r < s.correlation.rows(); ++r) {
      std::vector<double> row;
      for (Eigen::Index c = 0; c < s.correlation.cols(); ++c) row.push_back(s.correlation(r, c));
      d.correlation.matrix.push_back(row);
    }
  }
  for (const HistoryEntry& h : s.history) d.history.push_back({h.evaluation, h.objective, h.best, h.stage});
  d.warnings = s.warnings;

  d.outcome = s.outcome;
  d.outcome_reason = s.outcome_reason;
  for (std::size_t k = 0; k < s.fit_stages.size(); ++k) d.fit_stages.push_back(s.fit_stages[k].line(k, s.fit_stages.size()));
  d.intervals_from = s.uncertainty_basis;

  d.provenance.emplace_back("software", "triaxcal " + prov.software_version);
  d.provenance.emplace_back("created", prov.created);
  for (const auto& [path, hash] : prov.inputs) d.provenance.emplace_back("input " + path, "sha256 " + hash);
  d.provenance.emplace_back("algorithms", "global " + s.global_algorithm + ", local " + s.local_algorithm +
                                              ", loss " + s.loss + ", threads " + std::to_string(s.threads));
  std::istringstream lines(s.options_text);
  for (std::string line; std::getline(lines, line);) {
    const auto eq = line.find(" = ");
    if (eq != std::string::npos) d.provenance.emplace_back("option " + line.substr(0, eq), line.substr(eq + 3));
  }

  // Model envelope in s'-t where the model has c' and phi' (or implies them: a critical-state
  // strength): t = c' cos phi' + s' sin phi'.
  const ModelValue phi = model_value(s, problem.model, ParameterRole::friction_angle);
  const ModelValue coh = model_value(s, problem.model, ParameterRole::cohesion);
  if (phi.present && std::isfinite(phi.value)) {
    const double c = coh.present && std::isfinite(coh.value) ? coh.value : 0.0;
    d.strength.model = {"model envelope (c' = " + std::to_string(static_cast<int>(std::lround(c))) + " kPa, phi' = " +
                            std::to_string(static_cast<int>(std::lround(phi.value))) + " deg)",
                        c * std::cos(phi.value * kDeg), std::sin(phi.value * kDeg), kUnknown, kUnknown};
  }
  if (interpretation) {
    const Interpretation& in = *interpretation;
    d.strength.criterion =
        in.envelopes.empty() ? std::string() : criterion_words(in.envelopes.front().criterion, in.options.limiting_strain);
    if (!in.envelopes.empty()) {
      const StrengthEnvelope& e = in.envelopes.front();
      // Label: the specimen, and the stage (numbered 1, 2, 3 among its shear stages) when it has several.
      for (const UsedPoint& p : e.points) {
        std::string label = p.specimen;
        if (series)
          for (const Specimen& sp : series->specimens)
            if (sp.id == p.specimen) {
              const std::vector<int> shear = sp.shear_stages();
              const auto at = std::find(shear.begin(), shear.end(), p.stage);
              if (shear.size() > 1 && at != shear.end()) label += " stage " + std::to_string(at - shear.begin() + 1);
            }
        if (!p.used) label += " (left out)";
        d.strength.points.push_back({label, p.s, p.t, p.used});
      }
      if (std::isfinite(e.st.intercept))
        d.strength.regression = {"regression t = a + s' tan alpha", e.st.intercept, e.st.slope, kUnknown, kUnknown};
      if (std::isfinite(e.design_phi)) {
        const double c = std::isfinite(e.design_cohesion) ? e.design_cohesion : 0.0;
        d.strength.design = {"design line (" + to_string(e.design_form) + ")", c * std::cos(e.design_phi * kDeg),
                             std::sin(e.design_phi * kDeg), kUnknown, kUnknown};
      }
      if (std::isfinite(e.pq.intercept))
        d.strength.pq_lines.push_back({"envelope q = d + M p' (interpretation)", e.pq.intercept, e.pq.slope, kUnknown, kUnknown});
      // A classical value the data cannot determine is shown as "not determined" with the reason.
      const std::string why = e.note.empty() ? std::string() : "; not determined: " + e.note;
      d.comparisons.push_back({"friction angle phi'", "deg", e.phi, phi.value,
                               "s'-t regression (" + criterion_words(e.criterion, in.options.limiting_strain) + ") vs " +
                                   (phi.present ? phi.basis : std::string("model: none")) + why,
                               phi.note});
      d.comparisons.push_back({"cohesion c'", "kPa", e.cohesion, coh.value,
                               "s'-t regression vs " + (coh.present ? coh.basis : std::string("model: none")) + why, coh.note});
    }
    if (std::isfinite(in.options.stress_low) && in.options.stress_low > 0) d.strength.range_low = in.options.stress_low;
    if (std::isfinite(in.options.stress_high)) d.strength.range_high = in.options.stress_high;
    d.strength.design_stress = in.options.design_stress;
    if (!d.strength.points.empty() && !std::isfinite(d.strength.range_low)) d.strength.range_low = 0.0;
    if (std::isfinite(in.critical_m))
      d.strength.pq_lines.push_back({"critical state line q = M p'", 0.0, in.critical_m, kUnknown, kUnknown});
    // A classical value the data cannot determine is shown as "not determined" with the reason,
    // never as a number; one with neither a value nor a reason (no such tests) is left out.
    // Matched by the parameter's declared role; the basis names the model's parameter.
    // The model's value is what it implies for the role (ModelInfo::implied), else its parameter.
    auto compare = [&](const char* quantity, const char* unit, double classical, const std::string& reason, ParameterRole role,
                       const std::string& classical_basis) {
      const ModelValue m = model_value(s, problem.model, role);
      if (!m.present) return;
      const std::string basis = classical_basis + " vs " + m.basis;
      if (std::isfinite(classical)) d.comparisons.push_back({quantity, unit, classical, m.value, basis, m.note});
      else if (!reason.empty())
        d.comparisons.push_back({quantity, unit, kUnknown, m.value, basis + "; not determined: " + reason, m.note});
    };
    compare("critical-state friction angle phi_cs", "deg", in.phi_cs, in.critical_m_reason,
            ParameterRole::critical_state_friction_angle, "large-strain states");
    compare("critical-state ratio M", "-", in.critical_m, in.critical_m_reason, ParameterRole::critical_state_ratio,
            "large-strain states");
    compare("secant stiffness at p_ref", "kPa", in.secant_law.reference, in.secant_law.reason,
            ParameterRole::secant_stiffness_ref, "E_50 power law");
    // E_50 like with like: the classical value of each drained (CD) shear stage against the E_50 of
    // the model's own simulated curve of that stage, both by one rule (secant_modulus_50). A
    // parameter of the secant-stiffness role may be an input of a hardening law whose curves have
    // another E_50 by definition: the model's note says so (ModelInfo::implied).
    if (series) {
      const std::string note = model_value(s, problem.model, ParameterRole::secant_stiffness_ref).note;
      for (const TestReport& t : d.tests) {
        if (t.drainage != Drainage::drained || !t.simulated) continue;
        const Specimen* sp = nullptr;
        for (const Specimen& x : series->specimens)
          if (x.id == t.id) sp = &x;
        if (!sp) continue;
        const std::vector<int> shear = sp->shear_stages();
        for (const TestCurve& c : t.curves) {
          if (c.quantity != to_string(Quantity::deviator_stress) || c.simulated.empty()) continue;
          const std::size_t k = c.stage > 0 ? static_cast<std::size_t>(c.stage - 1) : 0;
          if (k >= shear.size()) continue;
          for (const StageInterpretation& st : in.stages) {
            if (st.specimen != t.id || st.stage != shear[k] || st.test != ShearType::cd) continue;
            // Upwards for the stage as the interpretation counts it (-q in extension).
            const double sign = st.direction == ShearDirection::extension ? -1.0 : 1.0;
            std::vector<double> q;
            for (double y : c.simulated.y) q.push_back(sign * y);
            const SecantModulus model = secant_modulus_50(c.simulated.x, q);
            std::string quantity = "secant stiffness E_50 of " + t.id + (c.stage > 0 ? " stage " + std::to_string(c.stage) : "");
            if (std::isfinite(st.consolidation_radial))
              quantity += " (s3' = " + std::to_string(std::lround(st.consolidation_radial)) + " kPa)";
            std::string basis = "secant to half the peak deviator stress of the measured curve vs of the model's curve (one rule)";
            if (!std::isfinite(st.secant_stiffness_50)) basis += "; measured not determined: " + st.secant_stiffness_reason;
            if (!std::isfinite(model.value)) basis += "; model not determined: " + model.reason;
            d.comparisons.push_back({quantity, "kPa", st.secant_stiffness_50, model.value, basis, note});
          }
        }
      }
    }
    compare("unload-reload stiffness at p_ref", "kPa", in.unload_reload_law.reference, in.unload_reload_law.reason,
            ParameterRole::unload_reload_stiffness_ref, "E_ur power law");
    compare("stiffness exponent m", "-", in.secant_law.exponent, in.secant_law.reason, ParameterRole::stiffness_exponent,
            "E_50 power law");
    {
      // Dilation angle: the mean over the CD stages that determine one.
      double sum = 0.0;
      int n = 0;
      std::string reason;
      for (const StageInterpretation& st : in.stages) {
        if (st.test != ShearType::cd) continue;
        if (std::isfinite(st.dilation_angle)) {
          sum += st.dilation_angle;
          ++n;
        } else if (reason.empty()) {
          reason = st.specimen + ": " + st.dilation_reason;
        }
      }
      compare("dilation angle psi", "deg", n > 0 ? sum / n : kUnknown, reason, ParameterRole::dilation_angle,
              "peak dilation rate of the CD stages (mean)");
    }
    {
      // Undrained strength and stiffness of the UU stages (total stress): c_u, E_u and their ratio.
      double cu = 0.0, eu = 0.0;
      int n_cu = 0, n_eu = 0;
      for (const StageInterpretation& st : in.stages) {
        if (st.test != ShearType::uu) continue;
        if (std::isfinite(st.undrained_strength)) {
          cu += st.undrained_strength;
          ++n_cu;
        }
        if (std::isfinite(st.initial_stiffness)) {
          eu += st.initial_stiffness;
          ++n_eu;
        }
      }
      const double cu_mean = n_cu > 0 ? cu / n_cu : kUnknown, eu_mean = n_eu > 0 ? eu / n_eu : kUnknown;
      compare("undrained shear strength c_u", "kPa", cu_mean, "", ParameterRole::undrained_shear_strength,
              "q_max / 2 of the UU stages (mean)");
      compare("undrained Young's modulus E_u", "kPa", eu_mean, "", ParameterRole::undrained_youngs_modulus,
              "initial stiffness of the UU stages (mean)");
      const FittedParameter* fcu = find_parameter(s, problem.model, ParameterRole::undrained_shear_strength);
      const FittedParameter* feu = find_parameter(s, problem.model, ParameterRole::undrained_youngs_modulus);
      if (fcu && feu && fcu->value > 0.0)
        d.comparisons.push_back({"stiffness ratio E_u / c_u", "-", n_cu > 0 && n_eu > 0 ? eu_mean / cu_mean : kUnknown,
                                 feu->value / fcu->value, "UU stages (mean E_i / mean c_u) vs model " + feu->name + " / " + fcu->name});
    }
    for (const std::string& w : in.warnings) d.warnings.push_back("interpretation: " + w);
  }
  return d;
}

}  // namespace triaxcal::report
