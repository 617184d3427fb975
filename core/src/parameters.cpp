#include "triaxcal/parameters.hpp"

#include <cmath>
#include <cstdio>
#include <limits>

#include "triaxcal/error.hpp"

namespace triaxcal {

std::string format_number(double value) {
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  if (std::isnan(value)) return "nan";
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.6g", value);
  return buffer;
}

std::string format_bounds(const ParameterInfo& info) {
  return std::string(info.lower_open ? "(" : "[") + format_number(info.lower) + ", " +
         format_number(info.upper) + (info.upper_open ? ")" : "]");
}

int parameter_index(const ModelInfo& info, const std::string& name) {
  for (std::size_t i = 0; i < info.parameters.size(); ++i)
    if (info.parameters[i].name == name) return static_cast<int>(i);
  return -1;
}

std::string new_name_of(const ModelInfo& info, const std::string& name) {
  for (const auto& [old_name, new_name] : info.renamed)
    if (old_name == name) return new_name;
  return "";
}

std::string renamed_message(const ModelInfo& info, const std::string& name, const std::string& where) {
  const std::string now = new_name_of(info, name);
  if (now.empty()) return "";
  return where + ": " + info.name + ": parameter '" + name + "' is now called '" + now + "'";
}

int word_index(const ParameterInfo& info, const std::string& word) {
  for (std::size_t i = 0; i < info.words.size(); ++i)
    if (info.words[i] == word) return static_cast<int>(i);
  return -1;
}

std::string word_list(const ParameterInfo& info) {
  std::string list;
  for (std::size_t i = 0; i < info.words.size(); ++i) {
    if (i > 0) list += i + 1 == info.words.size() ? " or " : ", ";
    list += "\"" + info.words[i] + "\"";
  }
  return list;
}

std::string word_of(const ParameterInfo& info, double value) {
  if (info.words.empty()) return format_number(value);
  if (!(value >= 0.0) || value != std::floor(value) || value >= static_cast<double>(info.words.size())) return "";
  return info.words[static_cast<std::size_t>(value)];
}

int parameter_with_role(const ModelInfo& info, ParameterRole role) {
  if (role == ParameterRole::none) return -1;
  for (std::size_t i = 0; i < info.parameters.size(); ++i)
    if (info.parameters[i].role == role) return static_cast<int>(i);
  return -1;
}

const char* to_string(ParameterRole role) {
  switch (role) {
    case ParameterRole::none: return "none";
    case ParameterRole::friction_angle: return "friction_angle";
    case ParameterRole::cohesion: return "cohesion";
    case ParameterRole::dilation_angle: return "dilation_angle";
    case ParameterRole::critical_state_ratio: return "critical_state_ratio";
    case ParameterRole::critical_state_friction_angle: return "critical_state_friction_angle";
    case ParameterRole::youngs_modulus: return "youngs_modulus";
    case ParameterRole::shear_modulus: return "shear_modulus";
    case ParameterRole::secant_stiffness_ref: return "secant_stiffness_ref";
    case ParameterRole::unload_reload_stiffness_ref: return "unload_reload_stiffness_ref";
    case ParameterRole::oedometer_stiffness_ref: return "oedometer_stiffness_ref";
    case ParameterRole::stiffness_exponent: return "stiffness_exponent";
    case ParameterRole::reference_pressure: return "reference_pressure";
    case ParameterRole::poissons_ratio: return "poissons_ratio";
    case ParameterRole::compression_index: return "compression_index";
    case ParameterRole::swelling_index: return "swelling_index";
    case ParameterRole::earth_pressure_at_rest: return "earth_pressure_at_rest";
    case ParameterRole::tensile_strength: return "tensile_strength";
    case ParameterRole::undrained_shear_strength: return "undrained_shear_strength";
    case ParameterRole::undrained_youngs_modulus: return "undrained_youngs_modulus";
    case ParameterRole::csl_void_ratio_ref: return "csl_void_ratio_ref";
    case ParameterRole::csl_slope: return "csl_slope";
    case ParameterRole::csl_exponent: return "csl_exponent";
  }
  return "none";
}

void check_bounds(const ModelInfo& model, const ParameterInfo& info, double value, const std::string& where) {
  const bool below = info.lower_open ? !(value > info.lower) : !(value >= info.lower);
  const bool above = info.upper_open ? !(value < info.upper) : !(value <= info.upper);
  if (below || above || std::isnan(value)) {
    throw InputError(where + ": " + model.name + ": " + info.name + " = " + format_number(value) +
                     " is outside " + format_bounds(info) + " (" + info.unit + ")");
  }
}

ParameterValues resolve_parameters(const ModelInfo& info, const std::map<std::string, double>& given,
                                   const std::string& where) {
  for (const auto& [name, value] : given) {
    (void)value;
    if (parameter_index(info, name) < 0) {
      const std::string renamed = renamed_message(info, name, where);
      if (!renamed.empty()) throw InputError(renamed);
      std::string known;
      for (const auto& p : info.parameters) known += (known.empty() ? "" : ", ") + p.name;
      throw InputError(where + ": " + info.name + " has no parameter '" + name + "' (known: " + known + ")");
    }
  }
  ParameterValues values;
  values.reserve(info.parameters.size());
  for (const auto& p : info.parameters) {
    const auto it = given.find(p.name);
    double value = p.default_value;
    if (it != given.end()) {
      value = it->second;
    } else if (std::isnan(p.default_value)) {
      throw InputError(where + ": " + info.name + ": parameter '" + p.name + "' (" + p.unit +
                       ") is required and has no default");
    }
    check_bounds(info, p, value, where);
    values.push_back(value);
  }
  return values;
}

}  // namespace triaxcal
