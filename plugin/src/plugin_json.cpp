#include "plugin_json.hpp"

#include <cmath>

#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::plugin {

std::string dump(const json& value) { return value.dump(-1, ' ', false, json::error_handler_t::replace); }

json number_or_null(double value) { return std::isfinite(value) ? json(value) : json(nullptr); }

json model_json(const ModelInfo& info) {
  json parameters = json::array();
  for (const ParameterInfo& p : info.parameters) {
    parameters.push_back({{"name", p.name},
                          {"unit", p.unit},
                          {"default", number_or_null(p.default_value)},
                          {"lower", number_or_null(p.lower)},
                          {"upper", number_or_null(p.upper)},
                          {"lower_open", p.lower_open},
                          {"upper_open", p.upper_open},
                          {"bounds", format_bounds(p)},
                          {"description", p.description},
                          {"role", to_string(p.role)}});
    if (!p.words.empty()) parameters.back()["words"] = p.words;  // a word parameter: files write the word
  }
  return {{"name", info.name}, {"title", info.title}, {"parameters", parameters}, {"state_variables", info.state_names}};
}

json models_json() {
  json models = json::array();
  for (const ModelEntry& e : model_registry()) models.push_back(model_json(e.info()));
  return {{"format", kModelsFormat}, {"version", 1}, {"models", models}};
}

json parameter_set_json(const ModelInfo& info, const ParameterValues& values, const std::string& description) {
  json parameters = json::object();
  for (std::size_t i = 0; i < info.parameters.size() && i < values.size(); ++i)
    parameters[info.parameters[i].name] = {
        {"value", info.parameters[i].words.empty() ? json(values[i]) : json(word_of(info.parameters[i], values[i]))},
        {"unit", info.parameters[i].unit}};
  json out = {{"format", kParameterFormat}, {"version", kParameterVersion}, {"model", info.name}};
  if (!description.empty()) out["description"] = description;
  out["parameters"] = parameters;
  return out;
}

json curves_json(const ModelInfo& info, const std::string& test, const SimulationResult& result) {
  const std::size_t n = result.steps.size();
  json stage = json::array(), step = json::array(), cuts = json::array();
  struct Column {
    const char* name;
    const char* unit;
    double StepRecord::*field;
    bool natural_strain;  // a natural strain since the protocol start: written as engineering
  };
  static constexpr Column columns[] = {
      {"axial_strain", "-", &StepRecord::axial_strain, true},
      {"radial_strain", "-", &StepRecord::radial_strain, true},
      {"volumetric_strain", "-", &StepRecord::volumetric_strain, true},
      {"axial_stress", "kPa", &StepRecord::axial_stress, false},
      {"radial_stress", "kPa", &StepRecord::radial_stress, false},
      {"p", "kPa", &StepRecord::p, false},
      {"q", "kPa", &StepRecord::q, false},
      {"excess_pore_pressure", "kPa", &StepRecord::excess_pore_pressure, false},
      {"void_ratio", "-", &StepRecord::void_ratio, false},
      {"stress_ratio", "-", &StepRecord::stress_ratio, false},
      {"stage_axial_strain", "-", &StepRecord::stage_axial_strain, false},
      {"stage_volumetric_strain", "-", &StepRecord::stage_volumetric_strain, false},
  };
  json data = json::object(), units = json::object();
  for (const StepRecord& r : result.steps) {
    stage.push_back(r.stage);
    step.push_back(r.step);
    cuts.push_back(r.cuts);
  }
  data["stage"] = stage;
  data["step"] = step;
  for (const Column& c : columns) {
    json values = json::array();
    // Every strain written is an engineering strain (conventions.hpp): dL/L0, dV/V0 since the
    // protocol start, and the stage columns since the start of the record's stage.
    for (const StepRecord& r : result.steps)
      values.push_back(number_or_null(c.natural_strain ? engineering_strain(r.*(c.field)) : r.*(c.field)));
    data[c.name] = values;
    units[c.name] = c.unit;
  }
  data["cuts"] = cuts;
  json state = json::object();
  for (std::size_t k = 0; k < info.state_names.size() && k < static_cast<std::size_t>(kMaxStateVariables); ++k) {
    json values = json::array();
    for (std::size_t i = 0; i < n; ++i) values.push_back(number_or_null(result.steps[i].state[k]));
    state[info.state_names[k]] = values;
  }
  json stages = json::array();
  for (const StageSummary& s : result.stages)
    stages.push_back({{"stage", s.stage},
                      {"first", s.first},
                      {"last", s.last},
                      {"stopped_early", s.stopped_early},
                      {"peak_q", number_or_null(s.peak_q)},
                      {"end_q", number_or_null(s.end_q)}});
  return {{"format", kCurvesFormat},
          {"version", 1},
          {"model", info.name},
          {"test", test},
          {"termination", result.ok() ? "completed" : "failed"},
          {"message", result.message},
          {"units", units},
          {"columns", data},
          {"state_variables", state},
          {"stages", stages},
          {"total_cuts", result.total_cuts}};
}

}  // namespace triaxcal::plugin
