// The test-series JSON: specimens, stages and data-file declarations, strictly, with messages that
// name the file and the key path (docs/test-series-format.md).
#include "series_json.hpp"

#include <cmath>
#include <filesystem>
#include <map>

#include "../json_checks.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::detail {

namespace {

bool given(double v) { return !std::isnan(v); }

std::string fmt(double v) { return format_number(v); }

double positive(const json& o, const char* key, const std::string& src, const detail::KeyPath& path, bool required) {
  const double v = required ? detail::get_number(o, key, src, path) : detail::get_number_or(o, key, kNotGiven, src, path);
  if (given(v) && !(v > 0.0))
    throw InputError(detail::where(src, path / key) + ": must be positive, found " + o.at(key).dump());
  return v;
}

double decimal_in(const json& o, const char* key, double lo, double hi, const std::string& src, const detail::KeyPath& path) {
  const double v = detail::get_number_or(o, key, kNotGiven, src, path);
  if (given(v) && !(v >= lo && v <= hi))
    throw InputError(detail::where(src, path / key) + ": must be in [" + fmt(lo) + ", " + fmt(hi) +
                     "] (a decimal, not a percentage), found " + o.at(key).dump());
  return v;
}

std::pair<double, double> strain_pair(const json& v, const std::string& src, const detail::KeyPath& path) {
  if (!v.is_array() || v.size() != 2 || !v[0].is_number() || !v[1].is_number())
    throw InputError(detail::where(src, path) + ": expected [from, to] (two axial strains, decimal), found " + v.dump());
  const double a = v[0].get<double>(), b = v[1].get<double>();
  if (!(a < b))
    throw InputError(detail::where(src, path) + ": expected from < to, found " + v.dump());
  return {a, b};
}

/// Values at failure as a lab reported them (docs/test-series-format.md "Failure values").
ReportedFailure parse_failure(const json& f, const std::string& src, const detail::KeyPath& path) {
  detail::require_object(f, src, path);
  detail::check_keys(f, {"deviator_stress", "pore_pressure", "pore_pressure_start", "axial_strain", "volumetric_strain", "criterion"},
                     src, path);
  ReportedFailure r;
  r.deviator_stress = positive(f, "deviator_stress", src, path, true);
  r.pore_pressure = detail::get_number_or(f, "pore_pressure", kNotGiven, src, path);
  r.pore_pressure_start = detail::get_number_or(f, "pore_pressure_start", kNotGiven, src, path);
  r.axial_strain = decimal_in(f, "axial_strain", 0.0, 1.0, src, path);
  r.volumetric_strain = decimal_in(f, "volumetric_strain", -1.0, 1.0, src, path);
  r.criterion = detail::get_string_or(f, "criterion", "", src, path);
  return r;
}

SpecimenStage parse_stage(const json& s, const std::string& src, const detail::KeyPath& path) {
  detail::require_object(s, src, path);
  SpecimenStage st;
  const std::string type = detail::get_string(s, "type", src, path);
  st.label = detail::get_string_or(s, "label", "", src, path);
  st.data_stage = detail::get_int_or(s, "data_stage", -1, src, path);
  if (type == "saturation") {
    detail::check_keys(s, {"type", "label", "b_value", "cell_pressure", "back_pressure"}, src, path);
    st.type = SpecimenStageType::saturation;
    st.b_value = decimal_in(s, "b_value", 0.0, 1.05, src, path);
    st.cell_pressure = detail::get_number_or(s, "cell_pressure", kNotGiven, src, path);
    st.back_pressure = detail::get_number_or(s, "back_pressure", kNotGiven, src, path);
    if (given(st.cell_pressure) && given(st.back_pressure) && !(st.cell_pressure >= st.back_pressure))
      throw InputError(detail::where(src, path / "cell_pressure") + ": " + fmt(st.cell_pressure) +
                       " kPa is below the back pressure " + fmt(st.back_pressure) +
                       " kPa (the effective stress after saturation must not be negative)");
  } else if (type == "consolidation") {
    detail::check_keys(s, {"type", "label", "path", "effective_stress", "axial_stress", "radial_stress",
                           "end_axial_strain", "end_volumetric_strain", "data_stage"},
                       src, path);
    st.type = SpecimenStageType::consolidation;
    const std::string p = detail::get_string(s, "path", src, path);
    if (p == "isotropic") {
      st.path = ConsolidationPath::isotropic;
      const double v = positive(s, "effective_stress", src, path, true);
      st.axial_stress = st.radial_stress = v;
      if (s.contains("axial_stress") || s.contains("radial_stress"))
        throw InputError(detail::where(src, path) +
                         ": isotropic consolidation takes effective_stress only (axial_stress and radial_stress are for "
                         "anisotropic and k0)");
    } else if (p == "anisotropic" || p == "k0") {
      st.path = p == "k0" ? ConsolidationPath::k0 : ConsolidationPath::anisotropic;
      st.axial_stress = positive(s, "axial_stress", src, path, true);
      st.radial_stress = positive(s, "radial_stress", src, path, p == "anisotropic");
      if (s.contains("effective_stress"))
        throw InputError(detail::where(src, path / "effective_stress") + ": only for isotropic consolidation (give axial_stress" +
                         std::string(p == "k0" ? " and optionally the measured radial_stress" : " and radial_stress") + ")");
    } else {
      throw InputError(detail::where(src, path / "path") +
                       ": expected \"isotropic\", \"anisotropic\" or \"k0\", found \"" + p + "\"");
    }
    st.end_axial_strain = decimal_in(s, "end_axial_strain", -0.5, 0.5, src, path);
    st.end_volumetric_strain = decimal_in(s, "end_volumetric_strain", -0.5, 0.5, src, path);
  } else if (type == "shear") {
    detail::check_keys(s, {"type", "label", "test", "direction", "cell_pressure", "data_stage", "strain_range", "unload_reload",
                           "failure"},
                       src, path);
    st.type = SpecimenStageType::shear;
    const std::string t = detail::get_string(s, "test", src, path);
    if (t == "CU") st.shear = ShearType::cu;
    else if (t == "CD") st.shear = ShearType::cd;
    else if (t == "UU") st.shear = ShearType::uu;
    else
      throw InputError(detail::where(src, path / "test") + ": expected \"CU\", \"CD\" or \"UU\", found \"" + t + "\"");
    const std::string d = detail::get_string_or(s, "direction", "compression", src, path);
    if (d == "compression") st.direction = ShearDirection::compression;
    else if (d == "extension") st.direction = ShearDirection::extension;
    else
      throw InputError(detail::where(src, path / "direction") + ": expected \"compression\" or \"extension\", found \"" + d + "\"");
    st.cell_pressure = detail::get_number_or(s, "cell_pressure", kNotGiven, src, path);
    if (s.contains("strain_range")) {
      const auto r = strain_pair(s.at("strain_range"), src, path / "strain_range");
      st.strain_from = r.first;
      st.strain_to = r.second;
    }
    if (s.contains("failure")) st.failure = parse_failure(s.at("failure"), src, path / "failure");
    if (s.contains("unload_reload")) {
      const json& loops = s.at("unload_reload");
      if (!loops.is_array())
        throw InputError(detail::where(src, path / "unload_reload") + ": expected a list of [from, to] strain ranges, found " +
                         loops.dump());
      for (std::size_t i = 0; i < loops.size(); ++i) {
        const auto r = strain_pair(loops[i], src, (path / "unload_reload")[i]);
        st.loops.push_back({r.first, r.second});
      }
    }
  } else if (type == "oedometer") {
    detail::check_keys(s, {"type", "label", "stress_steps", "data_stage"}, src, path);
    st.type = SpecimenStageType::oedometer;
    if (!s.contains("stress_steps"))
      throw InputError(detail::where(src, path / "stress_steps") +
                       ": missing (the effective axial stress at the end of each load step, kPa, in order)");
    const json& steps = s.at("stress_steps");
    if (!steps.is_array() || steps.empty())
      throw InputError(detail::where(src, path / "stress_steps") +
                       ": expected a non-empty list of effective axial stresses (kPa), found " + steps.dump());
    for (std::size_t i = 0; i < steps.size(); ++i) {
      const detail::KeyPath ip = (path / "stress_steps")[i];
      if (!steps[i].is_number() || !(steps[i].get<double>() > 0.0))
        throw InputError(detail::where(src, ip) + ": expected a positive effective axial stress (kPa), found " + steps[i].dump());
      const double v = steps[i].get<double>();
      if (!st.stress_steps.empty() && v == st.stress_steps.back())
        throw InputError(detail::where(src, ip) + ": " + fmt(v) + " kPa equals the previous step (each step changes the axial stress)");
      st.stress_steps.push_back(v);
    }
  } else {
    throw InputError(detail::where(src, path / "type") + ": unknown stage type \"" + type +
                     "\" (expected saturation, consolidation, shear or oedometer)");
  }
  return st;
}

struct QuantityDef {
  const char* name;
  QuantityKind kind;
  bool reduced;
  bool raw;
};

constexpr QuantityDef kQuantities[] = {
    {"stage", QuantityKind::count, true, true},
    {"axial_strain", QuantityKind::strain, true, false},
    {"deviator_stress", QuantityKind::stress, true, false},
    {"pore_pressure", QuantityKind::stress, true, true},
    {"excess_pore_pressure", QuantityKind::stress, true, false},
    {"volumetric_strain", QuantityKind::strain, true, false},
    {"volume_change", QuantityKind::volume, true, false},
    {"cell_pressure", QuantityKind::stress, true, true},
    {"axial_load", QuantityKind::force, false, true},
    {"axial_displacement", QuantityKind::length, false, true},
    {"back_pressure", QuantityKind::stress, false, true},
    {"volume_gauge", QuantityKind::volume, false, true},
    {"axial_stress", QuantityKind::stress, true, false},  // oedometer: effective axial (vertical) stress
    {"void_ratio", QuantityKind::count, true, false},     // oedometer, optional
};

/// The data file's path: relative paths from the series file's folder. A file outside that folder
/// (after resolving "..", and symbolic links where the file exists) is refused unless the series
/// allows it: a series from elsewhere must not make triaxcal read arbitrary files.
std::string data_file_path(const std::string& file, const std::string& src, const detail::KeyPath& path,
                           const std::filesystem::path& folder, bool allow_outside) {
  namespace fs = std::filesystem;
  const fs::path fp(file);
  const fs::path resolved = fp.is_absolute() ? fp : (folder / fp).lexically_normal();
  if (allow_outside) return resolved.string();
  std::error_code ec;
  const fs::path base = fs::weakly_canonical(fs::absolute(folder.empty() ? fs::path(".") : folder, ec), ec);
  const fs::path target = fs::weakly_canonical(fs::absolute(resolved, ec), ec);
  const fs::path rel = target.lexically_relative(base);
  if (ec || rel.empty() || *rel.begin() == ".." || rel.is_absolute())
    throw InputError(detail::where(src, path / "file") + ": \"" + file +
                     "\" is outside the folder of the series file (data files are read from that folder and its "
                     "subfolders; a series that reads files elsewhere declares \"allow_data_outside_folder\": true)");
  return resolved.string();
}

DataFileSpec parse_data(const json& d, const std::string& src, const detail::KeyPath& path, const std::filesystem::path& folder,
                        bool allow_outside) {
  detail::check_keys(d, {"file", "kind", "delimiter", "decimal", "skip_rows", "skip_after_header", "strain_origin", "columns",
                         "membrane"},
                     src, path);
  DataFileSpec spec;
  const std::string file = detail::get_string(d, "file", src, path);
  spec.path = data_file_path(file, src, path, folder, allow_outside);
  const std::string kind = detail::get_string(d, "kind", src, path);
  if (kind != "reduced" && kind != "raw")
    throw InputError(detail::where(src, path / "kind") + ": expected \"reduced\" or \"raw\", found \"" + kind + "\"");
  spec.raw = kind == "raw";
  const std::string delim = detail::get_string_or(d, "delimiter", "detect", src, path);
  if (delim == "comma") spec.delimiter = ',';
  else if (delim == "semicolon") spec.delimiter = ';';
  else if (delim == "tab") spec.delimiter = '\t';
  else if (delim == "detect") spec.delimiter = 0;
  else
    throw InputError(detail::where(src, path / "delimiter") + ": expected \"comma\", \"semicolon\", \"tab\" or \"detect\", found \"" +
                     delim + "\"");
  const std::string dec = detail::get_string_or(d, "decimal", "point", src, path);
  if (dec == "point") spec.decimal = '.';
  else if (dec == "comma") spec.decimal = ',';
  else throw InputError(detail::where(src, path / "decimal") + ": expected \"point\" or \"comma\", found \"" + dec + "\"");
  if (spec.decimal == ',' && spec.delimiter == ',')
    throw InputError(detail::where(src, path / "delimiter") +
                     ": \"comma\" cannot be the delimiter when the decimal separator is a comma (use \"semicolon\" or \"tab\")");
  if (d.contains("strain_origin")) {
    const std::string origin = detail::get_string(d, "strain_origin", src, path);
    if (origin == "stage_start") spec.strain_origin = StrainOrigin::stage_start;
    else if (origin == "data_start") spec.strain_origin = StrainOrigin::data_start;
    else
      throw InputError(detail::where(src, path / "strain_origin") + ": expected \"stage_start\" (strains relative to the start of each " +
                       "row's stage) or \"data_start\" (continuous from the start of the first stage with rows), found \"" + origin + "\"");
    if (spec.raw)
      throw InputError(detail::where(src, path / "strain_origin") +
                       ": only for reduced data (raw readings are continuous; strains are computed from the first row)");
  } else if (spec.raw) {
    spec.strain_origin = StrainOrigin::data_start;
  }
  spec.skip_rows = detail::get_int_or(d, "skip_rows", 0, src, path);
  spec.skip_after_header = detail::get_int_or(d, "skip_after_header", 0, src, path);
  if (spec.skip_rows < 0)
    throw InputError(detail::where(src, path / "skip_rows") + ": must be 0 or more, found " + d.at("skip_rows").dump());
  if (spec.skip_after_header < 0)
    throw InputError(detail::where(src, path / "skip_after_header") + ": must be 0 or more, found " +
                     d.at("skip_after_header").dump());
  if (!d.contains("columns")) throw InputError(detail::where(src, path / "columns") + ": missing (declare the columns and their units)");
  const json& cols = d.at("columns");
  detail::require_object(cols, src, path / "columns");
  std::string allowed;
  for (const QuantityDef& q : kQuantities)
    if (spec.raw ? q.raw : q.reduced) allowed += (allowed.empty() ? "" : ", ") + std::string(q.name);
  for (const auto& item : cols.items()) {
    const detail::KeyPath cp = path / "columns" / item.key();
    const QuantityDef* def = nullptr;
    for (const QuantityDef& q : kQuantities)
      if (item.key() == q.name && (spec.raw ? q.raw : q.reduced)) def = &q;
    if (!def)
      throw InputError(detail::where(src, cp) + ": unknown quantity '" + item.key() + "' for " + kind +
                       " data (expected one of: " + allowed + ")");
    detail::check_keys(item.value(), {"header", "unit"}, src, cp);
    DataFileSpec::Column c;
    c.quantity = item.key();
    c.header = detail::get_string(item.value(), "header", src, cp);
    if (!item.value().contains("unit"))
      throw InputError(detail::where(src, cp / "unit") + ": missing (declare the unit of column '" + c.header + "')");
    c.unit = detail::get_string(item.value(), "unit", src, cp);
    unit_factor(def->kind, c.unit, detail::where(src, cp / "unit"));
    spec.columns.push_back(c);
  }
  if (d.contains("membrane")) {
    const json& m = d.at("membrane");
    detail::check_keys(m, {"thickness", "modulus"}, src, path / "membrane");
    spec.membrane_thickness = positive(m, "thickness", src, path / "membrane", true);
    spec.membrane_modulus = positive(m, "modulus", src, path / "membrane", true);
    if (!spec.raw)
      throw InputError(detail::where(src, path / "membrane") +
                       ": the membrane correction applies to raw data only (reduced data are taken as corrected)");
  }
  return spec;
}

}  // namespace

QuantityKind kind_of(const std::string& quantity) {
  for (const QuantityDef& q : kQuantities)
    if (quantity == q.name) return q.kind;
  return QuantityKind::count;
}

ParsedSeries parse_series_json(const std::string& path) {
  const std::string src = path;
  const json root = detail::parse_json(detail::read_text_file(path), src);
  detail::check_format(root, kTestSeriesFormat, kTestSeriesVersion, src);
  detail::check_keys(root, {"format", "version", "name", "description", "allow_data_outside_folder", "specimens"}, src, "");
  bool allow_outside = false;
  if (root.contains("allow_data_outside_folder")) {
    if (!root.at("allow_data_outside_folder").is_boolean())
      throw InputError(src + ": allow_data_outside_folder: expected true or false, found " +
                       root.at("allow_data_outside_folder").dump());
    allow_outside = root.at("allow_data_outside_folder").get<bool>();
  }
  ParsedSeries out;
  out.series.source = path;
  out.series.name = detail::get_string_or(root, "name", "", src, "");
  out.series.description = detail::get_string_or(root, "description", "", src, "");
  if (!root.contains("specimens")) throw InputError(src + ": specimens: missing (a list of specimens is required)");
  const json& list = root.at("specimens");
  if (!list.is_array() || list.empty())
    throw InputError(src + ": specimens: expected a non-empty list, found " + list.dump().substr(0, 40));
  const std::filesystem::path folder = std::filesystem::path(path).parent_path();
  std::map<std::string, std::string> ids;
  for (std::size_t i = 0; i < list.size(); ++i) {
    const detail::KeyPath sp = detail::KeyPath("specimens")[i];
    const json& o = list[i];
    detail::check_keys(o, {"id", "borehole", "depth", "description", "height", "diameter", "void_ratio", "water_content",
                           "specific_gravity", "degree_of_saturation", "relative_density", "initial_effective_stress",
                           "stages", "data", "material"},
                       src, sp);
    Specimen s;
    s.id = detail::get_string(o, "id", src, sp);
    if (s.id.empty()) throw InputError((sp / "id").in(src) + ": must not be empty");
    if (const auto it = ids.find(s.id); it != ids.end())
      throw InputError((sp / "id").in(src) + ": duplicate specimen id '" + s.id + "' (also " + it->second + ".id)");
    ids[s.id] = sp;
    s.borehole = detail::get_string_or(o, "borehole", "", src, sp);
    s.depth = detail::get_string_or(o, "depth", "", src, sp);
    s.description = detail::get_string_or(o, "description", "", src, sp);
    s.material = detail::get_string_or(o, "material", "", src, sp);
    s.height = positive(o, "height", src, sp, true);
    s.diameter = positive(o, "diameter", src, sp, true);
    s.void_ratio = positive(o, "void_ratio", src, sp, false);
    s.water_content = decimal_in(o, "water_content", 0.0, 5.0, src, sp);
    s.specific_gravity = positive(o, "specific_gravity", src, sp, false);
    s.degree_of_saturation = decimal_in(o, "degree_of_saturation", 0.0, 1.0, src, sp);
    s.relative_density = decimal_in(o, "relative_density", 0.0, 1.0, src, sp);
    s.initial_effective_stress = positive(o, "initial_effective_stress", src, sp, false);
    if (!given(s.void_ratio) && given(s.water_content) && given(s.specific_gravity)) {
      // e0 = w Gs / Sr (phase relations); Sr = 1 unless declared.
      const double sr = given(s.degree_of_saturation) && s.degree_of_saturation > 0.0 ? s.degree_of_saturation : 1.0;
      s.void_ratio = s.water_content * s.specific_gravity / sr;
    }
    if (!o.contains("stages")) throw InputError((sp / "stages").in(src) + ": missing (a list of stages is required)");
    const json& stages = o.at("stages");
    if (!stages.is_array())
      throw InputError((sp / "stages").in(src) + ": expected a list, found " + std::string(stages.type_name()));
    for (std::size_t k = 0; k < stages.size(); ++k)
      s.stages.push_back(parse_stage(stages[k], src, (sp / "stages")[k]));
    const std::vector<int> oedometer = s.oedometer_stages();
    if (!oedometer.empty() && s.stages.size() > 1)
      throw InputError((sp / "stages")[static_cast<std::size_t>(oedometer.front())].in(src) +
                       ": an oedometer stage must be the specimen's only stage (found " + std::to_string(s.stages.size()) +
                       " stages; give the triaxial stages a specimen of their own)");
    if (s.shear_stages().empty() && oedometer.empty())
      throw InputError((sp / "stages").in(src) + ": specimen '" + s.id +
                       "' has no shear stage (at least one stage of type \"shear\" is required, or a single \"oedometer\" stage)");
    if (!oedometer.empty() && s.stages.front().data_stage < 0) s.stages.front().data_stage = 1;
    int shear_no = 0;
    for (std::size_t k = 0; k < s.stages.size(); ++k) {
      SpecimenStage& st = s.stages[k];
      if (st.type == SpecimenStageType::saturation) {
        if (given(st.back_pressure)) s.back_pressure = st.back_pressure;
        if (given(st.b_value)) s.b_value = st.b_value;
      }
      if (st.type == SpecimenStageType::shear) {
        ++shear_no;
        if (st.data_stage < 0) st.data_stage = shear_no;
        if (st.shear == ShearType::uu && !given(st.cell_pressure))
          throw InputError(((sp / "stages")[k] / "cell_pressure").in(src) +
                           ": missing (a UU stage needs its total cell pressure, kPa)");
        bool consolidated = false;
        for (std::size_t j = 0; j < k; ++j) consolidated = consolidated || s.stages[j].type == SpecimenStageType::consolidation;
        if (st.shear != ShearType::uu && !consolidated)
          throw InputError((sp / "stages")[k].in(src) + ": a " + to_string(st.shear) +
                           " stage needs a consolidation stage before it");
      }
    }
    if (s.shear_stages().size() > 1) {
      std::map<int, int> seen;
      for (std::size_t k = 0; k < s.stages.size(); ++k) {
        if (s.stages[k].data_stage < 0) continue;
        if (const auto it = seen.find(s.stages[k].data_stage); it != seen.end())
          throw InputError(((sp / "stages")[k] / "data_stage").in(src) + ": " +
                           std::to_string(s.stages[k].data_stage) + " is also used by stages[" + std::to_string(it->second) + "]");
        seen[s.stages[k].data_stage] = static_cast<int>(k);
      }
    }
    // Failure values: a specimen without a data file is known by the values at failure of its shear
    // stages; each needs them, with the pore pressure at failure and the cell pressure for CU and CD.
    // Beside a data file they are the lab's reported values, compared with the curves by interpret.
    for (std::size_t k = 0; k < s.stages.size(); ++k) {
      const SpecimenStage& st = s.stages[k];
      if (!st.failure.given() || o.contains("data")) continue;  // beside curves, the values are only compared
      const detail::KeyPath kp = (sp / "stages")[k];
      if (st.shear != ShearType::uu) {
        if (!given(st.cell_pressure))
          throw InputError((kp / "cell_pressure").in(src) + ": missing (a " + to_string(st.shear) +
                           " stage with failure values needs the total cell pressure during shear, kPa)");
        if (!given(st.failure.pore_pressure))
          throw InputError((kp / "failure" / "pore_pressure").in(src) + ": missing (a " + to_string(st.shear) +
                           " stage needs the pore pressure at failure, kPa)");
        if (!(st.cell_pressure - st.failure.pore_pressure > 0.0))
          throw InputError((kp / "failure" / "pore_pressure").in(src) + ": " + fmt(st.failure.pore_pressure) +
                           " kPa is not below the cell pressure " + fmt(st.cell_pressure) +
                           " kPa (the effective radial stress at failure, cell - u_f, must be positive)");
      }
    }
    if (!o.contains("data")) {
      for (std::size_t k = 0; k < s.stages.size(); ++k)
        if ((s.stages[k].type == SpecimenStageType::shear && !s.stages[k].failure.given()) ||
            s.stages[k].type == SpecimenStageType::oedometer)
          throw InputError((sp / "data").in(src) + ": missing (the data file and its columns are required; a specimen without " +
                           "one needs \"failure\" values on every shear stage, stages[" + std::to_string(k) + "] has none)");
    } else {
      s.data = parse_data(o.at("data"), src, sp / "data", folder, allow_outside);
    }
    out.specimens.push_back({s, sp});
  }
  return out;
}

}  // namespace triaxcal::detail
