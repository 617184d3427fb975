#include "triaxcal/parameter_file.hpp"

#include "json_checks.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

using detail::json;

ParameterFile parse_parameter_file(const std::string& text, const std::string& source) {
  const json root = detail::parse_json(text, source);
  detail::check_format(root, kParameterFormat, kParameterVersion, source);
  detail::check_keys(root, {"format", "version", "model", "parameters", "description", "provenance", "fit", "caution"},
                     source, "");
  ParameterFile file;
  file.source = source;
  file.model = detail::get_string(root, "model", source, "");
  if (!root.contains("parameters")) throw InputError(source + ": parameters: missing (an object of values is required)");
  const json& params = root.at("parameters");
  detail::require_object(params, source, "parameters");
  for (const auto& item : params.items()) {
    const detail::KeyPath path = detail::KeyPath("parameters") / item.key();
    if (item.value().is_number()) {
      file.values[item.key()] = item.value().get<double>();
    } else if (item.value().is_string()) {
      file.words[item.key()] = item.value().get<std::string>();  // a word parameter; checked against the model
    } else if (item.value().is_object()) {
      detail::check_keys(item.value(),
                         {"value", "unit", "status", "description", "standard_error", "interval_95", "tied_to",
                          "lower_bound", "upper_bound"},
                         source, path);
      if (item.value().contains("value") && item.value().at("value").is_string())
        file.words[item.key()] = item.value().at("value").get<std::string>();
      else
        file.values[item.key()] = detail::get_number(item.value(), "value", source, path);
      if (item.value().contains("unit")) file.units[item.key()] = detail::get_string(item.value(), "unit", source, path);
    } else {
      throw InputError(path.in(source) + ": expected a number, a word or an object with \"value\", found " +
                       item.value().dump());
    }
  }
  return file;
}

ParameterFile read_parameter_file(const std::string& path) {
  return parse_parameter_file(detail::read_text_file(path), path);
}

ParameterValues resolve_parameter_file(const ModelInfo& info, const ParameterFile& file) {
  if (file.model != info.name)
    throw InputError(file.source + ": model: the file is for \"" + file.model + "\", not \"" + info.name + "\"");
  for (const auto& [name, unit] : file.units) {
    const int i = parameter_index(info, name);
    if (i >= 0 && info.parameters[i].unit != unit)
      throw InputError((detail::KeyPath("parameters") / name / "unit").in(file.source) + ": expected \"" + info.parameters[i].unit +
                       "\", found \"" + unit + "\"");
  }
  // Word parameters take their word (ParameterInfo::words), never a number; the word becomes its index.
  std::map<std::string, double> values = file.values;
  for (const auto& [name, value] : file.values) {
    const int i = parameter_index(info, name);
    if (i >= 0 && !info.parameters[static_cast<std::size_t>(i)].words.empty())
      throw InputError(file.source + ": parameters." + name + ": expected one of " +
                       word_list(info.parameters[static_cast<std::size_t>(i)]) + ", found " + format_number(value));
  }
  for (const auto& [name, word] : file.words) {
    const int i = parameter_index(info, name);
    if (i < 0) {
      values[name] = 0.0;  // resolve_parameters names the unknown (or renamed) parameter
      continue;
    }
    const ParameterInfo& pi = info.parameters[static_cast<std::size_t>(i)];
    if (pi.words.empty())
      throw InputError(file.source + ": parameters." + name + ": expected a number (" + pi.unit + "), found \"" + word + "\"");
    const int w = word_index(pi, word);
    if (w < 0)
      throw InputError(file.source + ": parameters." + name + ": expected one of " + word_list(pi) + ", found \"" + word + "\"");
    values[name] = w;
  }
  return resolve_parameters(info, values, file.source);
}

}  // namespace triaxcal
