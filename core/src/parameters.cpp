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
