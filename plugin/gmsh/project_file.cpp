#include "project_file.hpp"

#include <fstream>
#include <sstream>

#include "../../core/src/json_checks.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/error.hpp"

namespace triaxcal::gmsh {

std::string to_string(Source source) {
  switch (source) {
    case Source::parameter_set: return "parameter_set";
    case Source::calibration: return "calibration";
    case Source::none: break;
  }
  return "none";
}

std::string label_of(Source source) {
  switch (source) {
    case Source::parameter_set: return "parameter set";
    case Source::calibration: return "calibration";
    case Source::none: break;
  }
  return "none";
}

Source parse_source(const std::string& text, const std::string& where) {
  for (Source s : {Source::none, Source::parameter_set, Source::calibration})
    if (text == to_string(s) || text == label_of(s)) return s;
  throw InputError(where + ": expected one of: none, parameter_set, calibration, found \"" + text + "\"");
}

std::filesystem::path Project::resolve(const std::string& file) const {
  const std::filesystem::path p(file);
  return p.is_absolute() ? p : (folder() / p).lexically_normal();
}

std::filesystem::path Project::export_path() const {
  if (!export_file.empty()) return resolve(export_file);
  return folder() / (path.stem().string() + ".soil-units.json");
}

namespace {

UnitSettings parse_settings(const json& u, const std::string& src, const std::string& at) {
  UnitSettings s;
  s.source = parse_source(detail::get_string_or(u, "source", "none", src, at), src + ": " + at + ".source");
  s.parameter_set = detail::get_string_or(u, "parameter_set", "", src, at);
  s.calibration = detail::get_string_or(u, "calibration", "", src, at);
  if (u.contains("check_test")) {
    const json& c = u.at("check_test");
    const std::string cat = at + ".check_test";
    detail::require_object(c, src, cat);
    detail::check_keys(c, {"p", "drainage", "void_ratio", "ocr", "axial_strain"}, src, cat);
    s.check_p = detail::get_number_or(c, "p", s.check_p, src, cat);
    s.check_drainage = detail::get_string_or(c, "drainage", s.check_drainage, src, cat);
    s.check_void_ratio = detail::get_number_or(c, "void_ratio", s.check_void_ratio, src, cat);
    s.check_ocr = detail::get_number_or(c, "ocr", s.check_ocr, src, cat);
    s.check_axial_strain = detail::get_number_or(c, "axial_strain", s.check_axial_strain, src, cat);
    if (s.check_drainage != "drained" && s.check_drainage != "undrained")
      throw InputError(src + ": " + cat + ".drainage: expected \"drained\" or \"undrained\", found \"" +
                       s.check_drainage + "\"");
  }
  return s;
}

}  // namespace

Project parse_project(const std::string& text, const std::filesystem::path& path) {
  Project p;
  p.path = path;
  if (text.find_first_not_of(" \t\r\n") == std::string::npos) return p;  // a new, empty project
  const std::string src = path.string();
  const json root = detail::parse_json(text, src);
  detail::check_format(root, kProjectFormat, kProjectVersion, src);
  detail::check_keys(root, {"format", "version", "description", "export", "units"}, src, "");
  p.description = detail::get_string_or(root, "description", "", src, "");
  p.export_file = detail::get_string_or(root, "export", "", src, "");
  if (root.contains("units")) {
    const json& units = root.at("units");
    detail::require_object(units, src, "units");
    for (const auto& item : units.items()) {
      const std::string at = "units." + item.key();
      const json& u = item.value();
      detail::require_object(u, src, at);
      detail::check_keys(u, {"dimension", "tag", "source", "parameter_set", "calibration", "check_test", "result"}, src,
                         at);
      ProjectUnit unit;
      unit.dimension = detail::get_int_or(u, "dimension", 0, src, at);
      unit.tag = detail::get_int_or(u, "tag", 0, src, at);
      unit.settings = parse_settings(u, src, at);
      if (u.contains("result")) unit.result = u.at("result");
      p.units[item.key()] = unit;
    }
  }
  return p;
}

Project read_project(const std::filesystem::path& path) {
  // Regular files of at most 64 MiB only, as every JSON file of ours (a device would be read forever).
  return parse_project(detail::read_text_file(path.string(), detail::kMaxJsonBytes), path);
}

json project_json(const Project& project) {
  json units = json::object();
  for (const auto& [name, u] : project.units) {
    const UnitSettings& s = u.settings;
    json j = {{"dimension", u.dimension},
              {"tag", u.tag},
              {"source", to_string(s.source)},
              {"parameter_set", s.parameter_set},
              {"calibration", s.calibration},
              {"check_test",
               {{"p", s.check_p},
                {"drainage", s.check_drainage},
                {"void_ratio", s.check_void_ratio},
                {"ocr", s.check_ocr},
                {"axial_strain", s.check_axial_strain}}}};
    if (!u.result.is_null()) j["result"] = u.result;
    units[name] = j;
  }
  json root = {{"format", kProjectFormat}, {"version", kProjectVersion}};
  if (!project.description.empty()) root["description"] = project.description;
  if (!project.export_file.empty()) root["export"] = project.export_file;
  root["units"] = units;
  return root;
}

void write_project(const Project& project) {
  write_file_atomically(project.path,
                        project_json(project).dump(2, ' ', false, json::error_handler_t::replace) + "\n");
}

}  // namespace triaxcal::gmsh
