#include "soil_unit.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <memory>
#include <regex>

#include "../../core/src/json_checks.hpp"
#include "calibration_run.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::gmsh {

using nlohmann::json;

namespace {

/// Values by model order, with the status and interval a fitted set carries beside each value.
std::vector<ParameterOutput> parameter_outputs(const ModelInfo& info, const ParameterValues& values, const json& set) {
  std::vector<ParameterOutput> out;
  const json* params = set.contains("parameters") ? &set.at("parameters") : nullptr;
  for (std::size_t i = 0; i < info.parameters.size(); ++i) {
    ParameterOutput p;
    p.name = info.parameters[i].name;
    p.unit = info.parameters[i].unit;
    p.value = values[i];
    if (params && params->contains(p.name) && params->at(p.name).is_object()) {
      const json& j = params->at(p.name);
      if (j.contains("status") && j.at("status").is_string()) p.status = j.at("status").get<std::string>();
      if (j.contains("interval_95") && j.at("interval_95").is_array() && j.at("interval_95").size() == 2 &&
          j.at("interval_95")[0].is_number() && j.at("interval_95")[1].is_number()) {
        p.has_interval = true;
        p.low = j.at("interval_95")[0].get<double>();
        p.high = j.at("interval_95")[1].get<double>();
      }
    }
    p.used = !(info.unused && info.unused(i, values));
    out.push_back(p);
  }
  return out;
}

/// The graph label of a compared quantity: its y axis with its unit (strains in %), and its scale.
std::string graph_quantity(Quantity y, double& scale) {
  scale = 1.0;
  switch (y) {
    case Quantity::deviator_stress: return "q [kPa]";
    case Quantity::volumetric_strain: scale = 100.0; return "e_v [%]";
    case Quantity::excess_pore_pressure: return "du [kPa]";
    case Quantity::radial_strain: scale = 100.0; return "e_r [%]";
    default: break;
  }
  const std::string unit = unit_of(y);
  return to_string(y) + (unit.empty() || unit == "-" ? "" : " [" + unit + "]");
}

TestProtocol check_test(const UnitSettings& s) {
  TestProtocol t;
  t.name = "check test";
  t.initial.stress = triaxial_stress(s.check_p, s.check_p);
  t.initial.void_ratio = s.check_void_ratio;
  t.initial.overconsolidation_ratio = s.check_ocr;
  Stage shear;
  shear.type = StageType::shear;
  shear.label = s.check_drainage + " compression";
  shear.drainage = s.check_drainage == "undrained" ? Drainage::undrained : Drainage::drained;
  shear.axial_strain = s.check_axial_strain;
  shear.steps = 300;
  t.stages.push_back(shear);
  return t;
}

void from_parameter_set(const Project& project, const UnitSettings& s, UnitResult& r) {
  if (s.parameter_set.empty()) throw InputError("parameter set file: not given (choose a parameter-set JSON)");
  const std::string path = project.resolve(s.parameter_set).string();
  const std::string text = detail::read_text_file(path);
  const ParameterFile file = parse_parameter_file(text, path);
  const ModelEntry* entry = nullptr;
  try {
    entry = &find_model(file.model);
  } catch (const InputError& e) {
    throw InputError(path + ": model: " + e.what());
  }
  const ParameterValues values = resolve_parameter_file(entry->info(), file);
  const std::unique_ptr<Model> model = entry->create(values, path);
  const TestProtocol protocol = check_test(s);
  const SimulationResult sim = simulate(DriverOptions{}, *model, protocol);
  r.model = entry->info().name;
  // Every parameter, defaults filled in, so that a solver input writer needs no triaxcal defaults;
  // statuses and intervals of a fitted set are kept in `parameters`.
  r.parameters = parameter_outputs(entry->info(), values, detail::parse_json(text, path));
  r.parameter_set = plugin::parameter_set_json(entry->info(), values, "resolved from " + path);
  // The check test's graphs: q, and the excess pore pressure (undrained) or the volumetric strain.
  const bool undrained = protocol.stages.front().drainage == Drainage::undrained;
  Curve c, second;
  c.test = second.test = "check test (" + s.check_drainage + ", p' = " +
                         std::to_string(static_cast<int>(std::lround(s.check_p))) + " kPa)";  // model only
  c.quantity = "q [kPa]";
  second.quantity = undrained ? "du [kPa]" : "e_v [%]";
  for (const StepRecord& step : sim.steps) {
    c.axial_strain.push_back(step.stage_axial_strain);  // engineering, since the shear stage start
    c.y.push_back(step.q);
    second.axial_strain.push_back(step.stage_axial_strain);
    second.y.push_back(undrained ? step.excess_pore_pressure : 100.0 * step.stage_volumetric_strain);
    r.check_peak_q = std::max(r.check_peak_q, step.q);
  }
  r.curves.push_back(c);
  r.curves.push_back(second);
  r.ok = true;
  r.message = "parameter set " + s.parameter_set + " (" + r.model + ") loaded";
  if (!sim.ok()) r.message += "; the check test stopped early: " + sim.message;
}

void from_calibration(const Project& project, const UnitSettings& s, UnitResult& r,
                      const CalibrationCallback& progress) {
  if (s.calibration.empty()) throw InputError("calibration file: not given (choose a calibration JSON)");
  const std::string path = project.resolve(s.calibration).string();
  const plugin::CalibrationRun run = plugin::run_calibration(detail::read_text_file(path), path, progress);
  const CalibrationSummary& sum = run.summary;
  r.model = sum.model;
  if (!sum.usable()) throw InputError(path + ": calibration " + sum.outcome_line());
  r.parameter_set = detail::parse_json(run.parameter_set, path + ": parameter set");
  r.parameters = parameter_outputs(*run.model, sum.values, r.parameter_set);
  json curves = json::array();
  for (const TestFit& t : sum.tests)
    for (const CurveFit& c : t.curves) {
      curves.push_back({{"test", t.id},
                        {"quantity", to_string(c.y)},
                        {"unit", unit_of(c.y)},
                        {"rmse", plugin::number_or_null(c.rmse)},
                        {"r_squared", plugin::number_or_null(c.r_squared)},
                        {"poor_fit", c.poor}});
      if (c.x != Quantity::axial_strain) continue;
      // One graph a test and quantity (a multi-stage specimen: a test and stage).
      double scale = 1.0;
      Curve m, f;
      m.test = f.test = t.id + (c.shear_stage > 0 ? " stage " + std::to_string(c.shear_stage) : "");
      m.quantity = f.quantity = graph_quantity(c.y, scale);
      m.measured = true;
      m.axial_strain = c.xs;
      f.axial_strain = c.xs;
      for (double v : c.measured) m.y.push_back(scale * v);
      for (double v : c.simulated) f.y.push_back(scale * v);
      r.curves.push_back(m);
      r.curves.push_back(f);
    }
  r.fit = {{"outcome", to_string(sum.outcome)},
           {"outcome_reason", sum.outcome_reason},
           {"termination", to_string(sum.termination)},
           {"message", sum.message},
           {"objective", plugin::number_or_null(sum.objective)},
           {"evaluations", sum.evaluations},
           {"warnings", sum.warnings},
           {"curves", curves}};
  r.ok = true;
  r.converged = sum.outcome == CalibrationOutcome::converged;
  r.message = "calibration " + s.calibration + " (" + r.model + "): " + sum.outcome_line() + "; objective " +
              format_number(sum.objective);
}

}  // namespace

std::string rounded(double value, bool has_interval, double low, double high) {
  if (!std::isfinite(value)) return "not a number";
  char b[64];
  // The unit of the last digit shown: the second significant digit of the interval's half-width,
  // else the fourth significant digit of the value.
  int exponent = 0;
  if (has_interval && std::isfinite(low) && std::isfinite(high) && high > low)
    exponent = static_cast<int>(std::floor(std::log10(0.5 * (high - low)))) - 1;
  else if (value != 0.0)
    exponent = static_cast<int>(std::floor(std::log10(std::abs(value)))) - 3;
  if (exponent < -12) {
    std::snprintf(b, sizeof b, "%.4g", value);
  } else if (exponent < 0) {
    std::snprintf(b, sizeof b, "%.*f", -exponent, value);
  } else {
    const double unit = std::pow(10.0, exponent);
    std::snprintf(b, sizeof b, "%.0f", std::round(value / unit) * unit);
  }
  std::string out = b;
  const bool interval = has_interval && std::isfinite(low) && std::isfinite(high) && high > low;
  if (!interval && out.find('.') != std::string::npos && out.find('e') == std::string::npos) {
    // Without an interval trailing zeros claim nothing: 0.18, not 0.1800.
    out.erase(out.find_last_not_of('0') + 1);
    if (out.back() == '.') out.pop_back();
  }
  if (out.find_first_not_of("-0.") == std::string::npos && out[0] == '-') out.erase(0, 1);  // no "-0"
  return out;
}

std::string reason_first(const std::string& message) {
  // Leading "<part>: " components without a space (a path, a key path, a model name) are the place.
  std::size_t start = 0, cut = std::string::npos;
  while (true) {
    const std::size_t colon = message.find(": ", start);
    if (colon == std::string::npos) break;
    const std::string part = message.substr(start, colon - start);
    static const std::regex line_column(R"(line [0-9]+(, column [0-9]+)?)");
    if (part.empty() || (part.find(' ') != std::string::npos && !std::regex_match(part, line_column))) break;
    cut = colon;
    start = colon + 2;
  }
  if (cut == std::string::npos || start >= message.size()) return message;
  return message.substr(start) + " (" + message.substr(0, cut) + ")";
}

json UnitResult::to_json(const std::string& computed) const {
  json j = {{"status", ok ? "ok" : "error"}, {"message", message}, {"computed", computed}};
  if (!model.empty()) j["model"] = model;
  if (ok) {
    json params = json::array();
    for (const ParameterOutput& p : parameters) {
      json o = {{"name", p.name}, {"unit", p.unit}, {"value", plugin::number_or_null(p.value)}};
      if (!p.status.empty()) o["status"] = p.status;
      if (!p.used) o["used"] = false;
      if (p.has_interval) o["interval_95"] = {p.low, p.high};
      params.push_back(o);
    }
    j["parameters"] = params;
    j["parameter_set"] = parameter_set;
    if (!fit.is_null()) j["fit"] = fit;
    if (fit.is_null()) j["check_peak_q"] = check_peak_q;
  }
  return j;
}

UnitResult compute_unit(const Project& project, const UnitSettings& settings, const CalibrationCallback& progress) {
  UnitResult r;
  try {
    switch (settings.source) {
      case Source::parameter_set: from_parameter_set(project, settings, r); break;
      case Source::calibration: from_calibration(project, settings, r, progress); break;
      case Source::none: r.message = "no source chosen"; break;
    }
  } catch (const InputError& e) {
    r = UnitResult{};
    r.message = e.what();
  } catch (const std::exception& e) {
    r = UnitResult{};
    r.message = std::string("internal error: ") + e.what();
  }
  return r;
}

}  // namespace triaxcal::gmsh
