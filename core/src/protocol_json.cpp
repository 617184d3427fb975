#include "triaxcal/protocol_json.hpp"

#include <cmath>

#include "json_checks.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"

namespace triaxcal {

using detail::json;

namespace {

Drainage parse_drainage(const json& s, const std::string& src, const detail::KeyPath& path, Drainage fallback) {
  const std::string d = detail::get_string_or(s, "drainage", "", src, path);
  if (d.empty()) return fallback;
  if (d == "drained") return Drainage::drained;
  if (d == "undrained") return Drainage::undrained;
  throw InputError(detail::where(src, path / "drainage") + ": expected \"drained\" or \"undrained\", found \"" + d + "\"");
}

Stage parse_stage(const json& s, const std::string& src, const detail::KeyPath& path) {
  detail::require_object(s, src, path);
  const std::string type = detail::get_string(s, "type", src, path);
  Stage st;
  st.label = detail::get_string_or(s, "label", "", src, path);
  st.steps = detail::get_int_or(s, "steps", 100, src, path);
  auto num = [&](const char* key) { return detail::get_number_or(s, key, kNotGiven, src, path); };
  if (type == "isotropic_consolidation") {
    detail::check_keys(s, {"type", "label", "steps", "p", "drainage"}, src, path);
    st.type = StageType::isotropic_consolidation;
    st.target_p = num("p");
  } else if (type == "anisotropic_consolidation") {
    detail::check_keys(s, {"type", "label", "steps", "axial_stress", "radial_stress", "drainage"}, src, path);
    st.type = StageType::anisotropic_consolidation;
    st.target_axial = num("axial_stress");
    st.target_radial = num("radial_stress");
  } else if (type == "k0_consolidation") {
    detail::check_keys(s, {"type", "label", "steps", "axial_stress", "drainage"}, src, path);
    st.type = StageType::k0_consolidation;
    st.target_axial = num("axial_stress");
  } else if (type == "oedometer") {
    detail::check_keys(s, {"type", "label", "steps", "axial_stress", "axial_strain", "drainage"}, src, path);
    st.type = StageType::oedometer;
    st.target_axial = num("axial_stress");
    st.axial_strain = num("axial_strain");
  } else if (type == "shear" || type == "constant_p_shear") {
    detail::check_keys(s, {"type", "label", "steps", "axial_strain", "direction", "drainage", "stop"}, src, path);
    st.type = type == "shear" ? StageType::shear : StageType::constant_p_shear;
    st.axial_strain = num("axial_strain");
    const std::string direction = detail::get_string_or(s, "direction", "", src, path);
    if (!direction.empty()) {
      if (direction != "compression" && direction != "extension")
        throw InputError(detail::where(src, path / "direction") +
                         ": expected \"compression\" or \"extension\", found \"" + direction + "\"");
      if (!(st.axial_strain > 0.0))
        throw InputError(detail::where(src, path / "axial_strain") +
                         ": with a direction, give the magnitude (a positive decimal), found " +
                         (s.contains("axial_strain") ? s.at("axial_strain").dump() : std::string("nothing")));
      if (direction == "extension") st.axial_strain = -st.axial_strain;
    }
    if (s.contains("stop")) {
      const json& stop = s.at("stop");
      const detail::KeyPath sp = path / "stop";
      detail::check_keys(stop, {"criterion", "value"}, src, sp);
      const std::string c = detail::get_string(stop, "criterion", src, sp);
      if (c == "peak_deviator") st.stop = StopCriterion::peak_deviator;
      else if (c == "peak_stress_ratio") st.stop = StopCriterion::peak_stress_ratio;
      else if (c == "axial_strain") st.stop = StopCriterion::axial_strain;
      else
        throw InputError(detail::where(src, sp / "criterion") +
                         ": expected \"peak_deviator\", \"peak_stress_ratio\" or \"axial_strain\", found \"" + c + "\"");
      st.stop_value = detail::get_number_or(stop, "value", kNotGiven, src, sp);
    }
  } else if (type == "unload_reload") {
    detail::check_keys(s, {"type", "label", "steps", "deviator_stress", "drainage"}, src, path);
    st.type = StageType::unload_reload;
    st.target_deviator = num("deviator_stress");
  } else {
    throw InputError(detail::where(src, path / "type") + ": unknown stage type \"" + type +
                     "\" (expected isotropic_consolidation, anisotropic_consolidation, k0_consolidation, "
                     "oedometer, shear, constant_p_shear or unload_reload)");
  }
  st.drainage = parse_drainage(s, src, path, Drainage::drained);
  return st;
}

}  // namespace

TestProtocol parse_protocol(const std::string& text, const std::string& source) {
  const json root = detail::parse_json(text, source);
  detail::check_format(root, kProtocolFormat, kProtocolVersion, source);
  detail::check_keys(root, {"format", "version", "name", "description", "initial", "back_pressure",
                            "pore_fluid_stiffness", "stages"},
                     source, "");
  TestProtocol p;
  p.name = detail::get_string_or(root, "name", "", source, "");
  p.back_pressure = detail::get_number_or(root, "back_pressure", 0.0, source, "");
  p.pore_fluid_stiffness =
      detail::get_number_or(root, "pore_fluid_stiffness", std::numeric_limits<double>::infinity(), source, "");
  if (!root.contains("initial")) throw InputError(source + ": initial: missing (the initial effective stress is required)");
  const json& ini = root.at("initial");
  detail::check_keys(ini, {"p", "axial_stress", "radial_stress", "void_ratio", "preconsolidation_pressure", "ocr"},
                     source, "initial");
  const bool has_p = ini.contains("p");
  const bool has_axial = ini.contains("axial_stress") || ini.contains("radial_stress");
  if (has_p == has_axial)
    throw InputError(source + ": initial: give either p (isotropic, kPa) or axial_stress and radial_stress (kPa)");
  if (has_p) {
    const double p0 = detail::get_number(ini, "p", source, "initial");
    p.initial.stress = triaxial_stress(p0, p0);
  } else {
    p.initial.stress = triaxial_stress(detail::get_number(ini, "axial_stress", source, "initial"),
                                       detail::get_number(ini, "radial_stress", source, "initial"));
  }
  p.initial.void_ratio = detail::get_number_or(ini, "void_ratio", kNotGiven, source, "initial");
  p.initial.preconsolidation_pressure =
      detail::get_number_or(ini, "preconsolidation_pressure", kNotGiven, source, "initial");
  p.initial.overconsolidation_ratio = detail::get_number_or(ini, "ocr", kNotGiven, source, "initial");
  if (!std::isnan(p.initial.void_ratio) && !(p.initial.void_ratio > 0.0))
    throw InputError(source + ": initial.void_ratio: must be positive, found " + ini.at("void_ratio").dump());
  if (!std::isnan(p.initial.overconsolidation_ratio) && !(p.initial.overconsolidation_ratio >= 1.0))
    throw InputError(source + ": initial.ocr: must be at least 1, found " + ini.at("ocr").dump());
  if (!root.contains("stages")) throw InputError(source + ": stages: missing (a list of stages is required)");
  const json& stages = root.at("stages");
  if (!stages.is_array()) throw InputError(source + ": stages: expected a list, found " + std::string(stages.type_name()));
  for (std::size_t i = 0; i < stages.size(); ++i)
    p.stages.push_back(parse_stage(stages[i], source, detail::KeyPath("stages")[i]));
  try {
    validate_protocol(p);
  } catch (const InputError& e) {
    throw InputError(source + ": " + e.what());
  }
  return p;
}

TestProtocol read_protocol_file(const std::string& path) {
  return parse_protocol(detail::read_text_file(path), path);
}

}  // namespace triaxcal
