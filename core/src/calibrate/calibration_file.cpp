#include "triaxcal/calibration_file.hpp"

#include <algorithm>
#include <cassert>
#include <cmath>
#include <filesystem>

#include "../json_checks.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

using detail::json;

namespace {

std::pair<double, double> range_of(const json& v, const std::string& src, const detail::KeyPath& path) {
  if (!v.is_array() || v.size() != 2 || !v[0].is_number() || !v[1].is_number())
    throw InputError(path.in(src) + ": expected [from, to] (two axial strains, decimal), found " + v.dump());
  const double a = v[0].get<double>(), b = v[1].get<double>();
  if (!(a < b)) throw InputError(path.in(src) + ": expected from < to, found " + v.dump());
  return {a, b};
}

template <typename E>
E choose(const std::string& found, std::initializer_list<std::pair<const char*, E>> options, const std::string& where) {
  std::string list;
  for (const auto& [name, value] : options) {
    if (found == name) return value;
    list += (list.empty() ? "\"" : ", \"") + std::string(name) + "\"";
  }
  throw InputError(where + ": expected one of " + list + ", found \"" + found + "\"");
}

ParameterSpec parse_parameter(const std::string& name, const json& v, const std::string& src) {
  const detail::KeyPath path = detail::KeyPath("parameters") / name;
  ParameterSpec s;
  s.name = name;
  if (v.is_number()) {
    s.status = ParameterStatus::fixed;
    s.value = v.get<double>();
    return s;
  }
  if (v.is_string()) {  // a word parameter, fixed; checked against the model by build_calibration_problem
    s.status = ParameterStatus::fixed;
    s.word = v.get<std::string>();
    return s;
  }
  detail::require_object(v, src, path);
  const std::string status = detail::get_string(v, "status", src, path);
  s.status = choose<ParameterStatus>(
      status, {{"free", ParameterStatus::free}, {"fixed", ParameterStatus::fixed}, {"tied", ParameterStatus::tied}},
      (path / "status").in(src));
  switch (s.status) {
    case ParameterStatus::fixed:
      detail::check_keys(v, {"status", "value", "from", "note"}, src, path);
      if (v.contains("from")) {
        // Fixed at the interpretation's value of the parameter's role (seed_from_interpretation).
        const std::string from = detail::get_string(v, "from", src, path);
        if (from != "interpretation")
          throw InputError((path / "from").in(src) + ": expected \"interpretation\", found \"" + from + "\"");
        if (v.contains("value"))
          throw InputError(path.in(src) + ": give \"value\" or \"from\": \"interpretation\", not both");
        s.from_interpretation = true;
      } else if (v.contains("value") && v.at("value").is_string())
        s.word = v.at("value").get<std::string>();
      else
        s.value = detail::get_number_or(v, "value", kNotGiven, src, path);
      break;
    case ParameterStatus::tied:
      detail::check_keys(v, {"status", "expression", "note"}, src, path);
      s.expression = detail::get_string(v, "expression", src, path);
      break;
    case ParameterStatus::free: {
      detail::check_keys(v, {"status", "lower", "upper", "start", "scale", "note"}, src, path);
      // Either bound may be left out: seed_from_interpretation derives it (NaN until then).
      s.lower = detail::get_number_or(v, "lower", kNotGiven, src, path);
      s.upper = detail::get_number_or(v, "upper", kNotGiven, src, path);
      s.start = detail::get_number_or(v, "start", kNotGiven, src, path);
      const std::string scale = detail::get_string_or(v, "scale", "linear", src, path);
      s.scale = choose<ParameterScale>(scale, {{"linear", ParameterScale::linear}, {"log", ParameterScale::log}},
                                       (path / "scale").in(src));
      break;
    }
  }
  return s;
}

CalibrationOptions parse_options(const json& o, const std::string& src) {
  const detail::KeyPath path = "options";
  detail::check_keys(o,
                     {"global", "global_evaluations", "global_runs", "local", "local_evaluations", "starts", "design_points",
                      "relative_tolerance", "x_tolerance", "max_seconds", "seed", "threads", "loss", "loss_scale", "sensitivities",
                      "failure_penalty", "uncertainty", "jacobian_step", "correlation_warning", "min_r_squared",
                      "stress_precision", "strain_precision", "noise_from_residuals", "same_optimum_tolerance"},
                     src, path);
  CalibrationOptions c;
  c.global = choose<GlobalAlgorithm>(detail::get_string_or(o, "global", "none", src, path),
                                     {{"none", GlobalAlgorithm::none},
                                      {"crs2", GlobalAlgorithm::crs2},
                                      {"isres", GlobalAlgorithm::isres},
                                      {"direct_l", GlobalAlgorithm::direct_l}},
                                     src + ": options.global");
  c.local = choose<LocalAlgorithm>(detail::get_string_or(o, "local", "least_squares", src, path),
                                   {{"none", LocalAlgorithm::none},
                                    {"least_squares", LocalAlgorithm::least_squares},
                                    {"bobyqa", LocalAlgorithm::bobyqa},
                                    {"cobyla", LocalAlgorithm::cobyla},
                                    {"sbplx", LocalAlgorithm::sbplx},
                                    {"nelder_mead", LocalAlgorithm::nelder_mead}},
                                   src + ": options.local");
  c.sensitivities = choose<Sensitivities>(detail::get_string_or(o, "sensitivities", "exact", src, path),
                                         {{"exact", Sensitivities::exact},
                                          {"finite_differences", Sensitivities::finite_differences}},
                                         src + ": options.sensitivities");
  c.loss = choose<Loss>(detail::get_string_or(o, "loss", "linear", src, path),
                        {{"linear", Loss::linear}, {"soft_l1", Loss::soft_l1}, {"huber", Loss::huber}},
                        src + ": options.loss");
  c.global_evaluations = detail::get_int_or(o, "global_evaluations", static_cast<int>(c.global_evaluations), src, path);
  c.global_runs = detail::get_int_or(o, "global_runs", c.global_runs, src, path);
  c.local_evaluations = detail::get_int_or(o, "local_evaluations", static_cast<int>(c.local_evaluations), src, path);
  c.starts = detail::get_int_or(o, "starts", c.starts, src, path);
  c.design_points = detail::get_int_or(o, "design_points", c.design_points, src, path);
  c.relative_tolerance = detail::get_number_or(o, "relative_tolerance", c.relative_tolerance, src, path);
  c.x_tolerance = detail::get_number_or(o, "x_tolerance", c.x_tolerance, src, path);
  c.max_seconds = detail::get_number_or(o, "max_seconds", c.max_seconds, src, path);
  const int seed = detail::get_int_or(o, "seed", static_cast<int>(c.seed), src, path);
  if (seed < 0) throw InputError(src + ": options.seed: must be 0 or more, found " + std::to_string(seed));
  c.seed = static_cast<unsigned long>(seed);
  c.threads = detail::get_int_or(o, "threads", c.threads, src, path);
  c.loss_scale = detail::get_number_or(o, "loss_scale", c.loss_scale, src, path);
  c.failure_penalty = detail::get_number_or(o, "failure_penalty", c.failure_penalty, src, path);
  if (o.contains("uncertainty")) {
    if (!o.at("uncertainty").is_boolean())
      throw InputError(src + ": options.uncertainty: expected true or false, found " + o.at("uncertainty").dump());
    c.uncertainty = o.at("uncertainty").get<bool>();
  }
  c.jacobian_step = detail::get_number_or(o, "jacobian_step", c.jacobian_step, src, path);
  c.same_optimum_tolerance = detail::get_number_or(o, "same_optimum_tolerance", c.same_optimum_tolerance, src, path);
  c.correlation_warning = detail::get_number_or(o, "correlation_warning", c.correlation_warning, src, path);
  c.min_r_squared = detail::get_number_or(o, "min_r_squared", c.min_r_squared, src, path);
  c.stress_precision = detail::get_number_or(o, "stress_precision", c.stress_precision, src, path);
  c.strain_precision = detail::get_number_or(o, "strain_precision", c.strain_precision, src, path);
  if (o.contains("noise_from_residuals")) {
    if (!o.at("noise_from_residuals").is_boolean())
      throw InputError(src + ": options.noise_from_residuals: expected true or false, found " +
                       o.at("noise_from_residuals").dump());
    c.noise_from_residuals = o.at("noise_from_residuals").get<bool>();
  }
  try {
    c.validate();
  } catch (const InputError& e) {
    throw InputError(src + ": " + e.what());
  }
  return c;
}

/// The "interpretation" object: which failure criterion, over which stress range, for which design
/// stress the classical interpretation beside the fit is made (docs/calibration-format.md).
InterpretOptions parse_interpretation(const json& o, const std::string& src) {
  const detail::KeyPath path = "interpretation";
  detail::require_object(o, src, path);
  detail::check_keys(o, {"criterion", "limiting_strain", "stress_range", "design_stress"}, src, path);
  InterpretOptions i;
  i.criterion = choose<FailureCriterion>(detail::get_string_or(o, "criterion", "max_deviator", src, path),
                                         {{"max_deviator", FailureCriterion::max_deviator},
                                          {"max_stress_ratio", FailureCriterion::max_stress_ratio},
                                          {"limiting_strain", FailureCriterion::limiting_strain},
                                          {"end_of_test", FailureCriterion::end_of_test}},
                                         src + ": interpretation.criterion");
  if (o.contains("limiting_strain") && i.criterion != FailureCriterion::limiting_strain)
    throw InputError(src + ": interpretation.limiting_strain: only with \"criterion\": \"limiting_strain\", found criterion \"" +
                     detail::get_string_or(o, "criterion", "max_deviator", src, path) + "\"");
  i.limiting_strain = detail::get_number_or(o, "limiting_strain", i.limiting_strain, src, path);
  if (!(i.limiting_strain > 0.0 && i.limiting_strain < 1.0))
    throw InputError(src + ": interpretation.limiting_strain: must be a decimal axial strain in (0, 1), found " +
                     o.at("limiting_strain").dump());
  if (o.contains("stress_range")) {
    const json& r = o.at("stress_range");
    if (!r.is_array() || r.size() != 2 || !r[0].is_number() || !r[1].is_number() || !(r[0].get<double>() >= 0.0) ||
        !(r[1].get<double>() > r[0].get<double>()))
      throw InputError(src + ": interpretation.stress_range: expected [low, high] in kPa of s' at failure with 0 <= low < high, found " +
                       r.dump());
    i.stress_low = r[0].get<double>();
    i.stress_high = r[1].get<double>();
  }
  if (o.contains("design_stress")) {
    const json& v = o.at("design_stress");
    if (!v.is_number() || !(v.get<double>() > 0.0))
      throw InputError(src + ": interpretation.design_stress: expected a positive stress in kPa, found " + v.dump());
    i.design_stress = v.get<double>();
  }
  return i;
}

}  // namespace

CalibrationFile parse_calibration_file(const std::string& text, const std::string& source) {
  const json root = detail::parse_json(text, source);
  detail::check_format(root, kCalibrationFormat, kCalibrationVersion, source);
  detail::check_keys(root,
                     {"format", "version", "description", "series", "model", "steps_per_shear_stage", "simulation_tolerance",
                      "fixed_steps", "tests", "parameters", "constraints", "options", "interpretation", "fit_stages"},
                     source, "");
  CalibrationFile f;
  f.source = source;
  f.description = detail::get_string_or(root, "description", "", source, "");
  const std::filesystem::path series(detail::get_string(root, "series", source, ""));
  const std::filesystem::path folder = std::filesystem::path(source).parent_path();
  f.series = series.is_absolute() ? series.string() : (folder / series).lexically_normal().string();
  f.model = detail::get_string(root, "model", source, "");
  f.steps_per_shear_stage = detail::get_int_or(root, "steps_per_shear_stage", f.steps_per_shear_stage, source, "");
  if (f.steps_per_shear_stage < 2 || f.steps_per_shear_stage > 100000)
    throw InputError(source + ": steps_per_shear_stage: must be in [2, 100000], found " +
                     std::to_string(f.steps_per_shear_stage));
  f.simulation_tolerance = detail::get_number_or(root, "simulation_tolerance", f.simulation_tolerance, source, "");
  // The driver's range (DriverOptions::validate), named by this file's key.
  if (!(f.simulation_tolerance >= 1e-10 && f.simulation_tolerance <= 0.1))
    throw InputError(source + ": simulation_tolerance: must be in [1e-10, 0.1] (the local relative error of the simulation), found " +
                     root.at("simulation_tolerance").dump());
  if (root.contains("fixed_steps")) {
    if (!root.at("fixed_steps").is_boolean())
      throw InputError(source + ": fixed_steps: expected true or false, found " + root.at("fixed_steps").dump());
    f.fixed_steps = root.at("fixed_steps").get<bool>();
  }

  if (!root.contains("tests")) throw InputError(source + ": tests: missing (a list of the specimens to fit is required)");
  const json& tests = root.at("tests");
  if (!tests.is_array() || tests.empty())
    throw InputError(source + ": tests: expected a non-empty list, found " + tests.dump().substr(0, 40));
  for (std::size_t i = 0; i < tests.size(); ++i) {
    const detail::KeyPath path = detail::KeyPath("tests")[i];
    const json& t = tests[i];
    detail::check_keys(t, {"specimen", "weight", "axial_strain_range", "curves"}, source, path);
    CalibrationTestSpec spec;
    spec.specimen = detail::get_string(t, "specimen", source, path);
    spec.weight = detail::get_number_or(t, "weight", 1.0, source, path);
    if (!(spec.weight >= 0.0)) throw InputError((path / "weight").in(source) + ": must be 0 or more, found " + t.at("weight").dump());
    if (t.contains("axial_strain_range")) {
      const auto r = range_of(t.at("axial_strain_range"), source, path / "axial_strain_range");
      spec.strain_min = r.first;
      spec.strain_max = r.second;
    }
    if (!t.contains("curves")) throw InputError((path / "curves").in(source) + ": missing (a list of quantities to compare)");
    const json& curves = t.at("curves");
    if (!curves.is_array() || curves.empty())
      throw InputError((path / "curves").in(source) + ": expected a non-empty list, found " + curves.dump().substr(0, 40));
    for (std::size_t c = 0; c < curves.size(); ++c) {
      const detail::KeyPath cp = (path / "curves")[c];
      CalibrationCurveSpec cs;
      if (curves[c].is_string()) {
        cs.y = parse_quantity(curves[c].get<std::string>(), cp.in(source));
      } else {
        detail::check_keys(curves[c], {"quantity", "weight"}, source, cp);
        cs.y = parse_quantity(detail::get_string(curves[c], "quantity", source, cp), (cp / "quantity").in(source));
        cs.weight = detail::get_number_or(curves[c], "weight", 1.0, source, cp);
        if (!(cs.weight >= 0.0))
          throw InputError((cp / "weight").in(source) + ": must be 0 or more, found " + curves[c].at("weight").dump());
      }
      if (cs.y == Quantity::axial_strain)
        throw InputError(cp.in(source) + ": axial_strain is the x of every curve; compare another quantity");
      spec.curves.push_back(cs);
    }
    f.tests.push_back(std::move(spec));
  }

  if (!root.contains("parameters")) throw InputError(source + ": parameters: missing (say which parameters are free)");
  const json& params = root.at("parameters");
  detail::require_object(params, source, "parameters");
  for (const auto& item : params.items()) f.parameters.push_back(parse_parameter(item.key(), item.value(), source));

  if (root.contains("fit_stages")) {
    // A staged fit (docs/calibration-format.md, "Staged fit"); the names are checked against the
    // model and the free parameters by build_calibration_problem.
    const json& a = root.at("fit_stages");
    const detail::KeyPath path("fit_stages");
    if (!a.is_array() || a.empty())
      throw InputError(path.in(source) + ": expected a list of one or more stages such as {\"free\": [\"csl_lambda\"]}, found " +
                       (a.is_array() ? std::string("an empty list") : a.dump().substr(0, 40)));
    for (std::size_t i = 0; i < a.size(); ++i) {
      detail::require_object(a[i], source, path[i]);
      detail::check_keys(a[i], {"free", "note"}, source, path[i]);
      if (!a[i].contains("free") || !a[i].at("free").is_array())
        throw InputError((path[i] / "free").in(source) + ": expected a list of free parameter names");
      FitStage st;
      const json& names = a[i].at("free");
      for (std::size_t j = 0; j < names.size(); ++j) {
        if (!names[j].is_string())
          throw InputError((path[i] / "free")[j].in(source) + ": expected a parameter name, found " + names[j].dump().substr(0, 40));
        st.free.push_back(names[j].get<std::string>());
      }
      st.note = detail::get_string_or(a[i], "note", "", source, path[i]);
      f.fit_stages.push_back(std::move(st));
    }
  }
  if (root.contains("constraints")) {
    const json& c = root.at("constraints");
    if (!c.is_array()) throw InputError(source + ": constraints: expected a list of strings such as \"dilation_angle <= friction_angle\"");
    for (std::size_t i = 0; i < c.size(); ++i) {
      if (!c[i].is_string())
        throw InputError(detail::KeyPath("constraints")[i].in(source) + ": expected a string, found " + c[i].dump());
      f.constraints.push_back(c[i].get<std::string>());
    }
  }
  if (root.contains("options")) f.options = parse_options(root.at("options"), source);
  if (root.contains("interpretation")) f.interpretation = parse_interpretation(root.at("interpretation"), source);
  return f;
}

CalibrationFile read_calibration_file(const std::string& path) {
  return parse_calibration_file(detail::read_text_file(path), path);
}

namespace {

const std::vector<double>* column(const ReducedCurves& c, Quantity q) {
  switch (q) {
    case Quantity::volumetric_strain: return &c.volumetric_strain;
    case Quantity::axial_stress: return &c.axial_stress;
    case Quantity::radial_stress: return &c.radial_stress;
    case Quantity::mean_stress: return &c.mean_stress;
    case Quantity::deviator_stress: return &c.deviator_stress;
    case Quantity::excess_pore_pressure: return &c.excess_pore_pressure;
    case Quantity::void_ratio: return &c.void_ratio;
    default: return nullptr;
  }
}

/// Which rows of a specimen one measured curve holds and which records it is compared with.
struct StageWindow {
  int specimen_stage = -1;  ///< rows of this specimen stage; -1 = every row
  int zero_stage = -1;      ///< MeasuredCurve::strain_zero_stage
  int stage = -1;           ///< MeasuredCurve::stage
};

/// A triaxial specimen: one window per shear stage, compared on its own strains (from the stage's
/// start) with the records of its own protocol stage. A stage split around unload-reload loops spans
/// several protocol stages: it is compared with the records from its start to the protocol's end,
/// which only the specimen's last stage can be. Consolidation rows are not compared. An oedometer
/// specimen: every row, strains from the protocol start.
std::vector<StageWindow> compared_stages(const Specimen& specimen, const SpecimenProtocol& sp, const std::string& where) {
  if (specimen.is_oedometer()) return {StageWindow{-1, sp.data_zero_stage, -1}};
  std::vector<StageWindow> out;
  const int protocol_last = static_cast<int>(sp.protocol.stages.size()) - 1;
  for (const int k : specimen.shear_stages()) {
    const auto [first, last] = sp.stages_of(k);
    if (first > last) continue;
    if (first != last && last != protocol_last)
      throw InputError(where + ": specimen '" + specimen.id + "', stages[" + std::to_string(k) +
                       "]: a shear stage with unload-reload loops that is followed by another stage cannot be compared yet (its "
                       "curves would span several protocol stages; only the last stage of a specimen may have loops in a fit)");
    out.push_back({k, first, first == last ? first : -1});
  }
  return out;
}

}  // namespace

CalibrationProblem build_calibration_problem(const CalibrationFile& file, const TestSeries& series, const ModelInfo& model,
                                             ModelFactory create) {
  const std::string& src = file.source;
  CalibrationProblem p;
  p.model = &model;
  p.create = std::move(create);
  p.parameters = file.parameters;
  // Former names say the new one; word parameters are fixed at a word, which becomes its index.
  for (ParameterSpec& ps : p.parameters) {
    const std::string where = src + ": parameters." + ps.name;
    const int index = parameter_index(model, ps.name);
    if (index < 0) {
      const std::string renamed = renamed_message(model, ps.name, src);
      if (!renamed.empty()) throw InputError(renamed);
      continue;  // the engine names the unknown parameter
    }
    const ParameterInfo& pi = model.parameters[static_cast<std::size_t>(index)];
    if (ps.from_interpretation && std::isnan(ps.value))  // never the model default in its place
      throw InputError(where + ": fixed from the interpretation, but no value was taken from it (seed_from_interpretation "
                               "was not called)");
    if (pi.words.empty()) {
      if (!ps.word.empty())
        throw InputError(where + ": expected a number (" + pi.unit + "), found \"" + ps.word + "\"");
      continue;
    }
    if (ps.status != ParameterStatus::fixed)
      throw InputError(where + ": a word parameter is fixed at one of " + word_list(pi) + ", not " + to_string(ps.status));
    if (ps.word.empty() && !std::isnan(ps.value))
      throw InputError(where + ": expected one of " + word_list(pi) + ", found " + format_number(ps.value));
    if (ps.word.empty()) continue;  // the model default
    const int w = word_index(pi, ps.word);
    if (w < 0) throw InputError(where + ": expected one of " + word_list(pi) + ", found \"" + ps.word + "\"");
    ps.value = w;
  }
  p.constraints = file.constraints;
  p.fit_stages = file.fit_stages;
  p.driver.tolerance = file.simulation_tolerance;
  p.driver.fixed_steps = file.fixed_steps;
  for (std::size_t i = 0; i < file.tests.size(); ++i) {
    const CalibrationTestSpec& spec = file.tests[i];
    const detail::KeyPath path = detail::KeyPath("tests")[i];
    const Specimen* specimen = nullptr;
    std::string known;
    for (const Specimen& s : series.specimens) {
      if (s.id == spec.specimen) specimen = &s;
      known += (known.empty() ? "" : ", ") + s.id;
    }
    if (specimen == nullptr)
      throw InputError((path / "specimen").in(src) + ": \"" + spec.specimen + "\" is not in the test series " + series.source +
                       " (known: " + known + ")");
    CalibrationTest test;
    test.id = specimen->id;
    test.weight = spec.weight;
    SpecimenProtocol sp;
    try {
      sp = specimen_protocol_with_map(*specimen, file.steps_per_shear_stage);
    } catch (const InputError& e) {
      throw InputError(path.in(src) + ": " + e.what());
    }
    test.protocol = sp.protocol;
    const std::vector<StageWindow> windows = compared_stages(*specimen, sp, path.in(src));
    for (std::size_t c = 0; c < spec.curves.size(); ++c) {
      const CalibrationCurveSpec& cs = spec.curves[c];
      const std::vector<double>* ys = column(specimen->curves, cs.y);
      if (ys == nullptr || ys->size() != specimen->curves.size())
        throw InputError((path / "curves")[c].in(src) + ": specimen '" + specimen->id + "' has no " +
                         to_string(cs.y) + " data");
      const std::size_t before = test.curves.size();
      for (const StageWindow& w : windows) {
        MeasuredCurve m;
        m.x = Quantity::axial_strain;
        m.y = cs.y;
        m.weight = cs.weight;
        m.strain_zero_stage = w.zero_stage;
        m.stage = w.stage;
        if (windows.size() > 1)
          for (std::size_t k = 0; k < windows.size(); ++k)
            if (&windows[k] == &w) m.shear_stage = static_cast<int>(k) + 1;
        m.x_min = spec.strain_min;
        m.x_max = spec.strain_max;
        // Points with a value missing (e.g. void ratio unknown) are not compared.
        for (std::size_t k = 0; k < ys->size(); ++k) {
          if (w.specimen_stage >= 0 && specimen->curves.stage[k] != w.specimen_stage) continue;
          const double x = specimen->curves.axial_strain[k], y = (*ys)[k];
          if (std::isfinite(x) && std::isfinite(y)) {
            m.xs.push_back(x);
            m.ys.push_back(y);
          }
        }
        if (!m.xs.empty()) test.curves.push_back(std::move(m));
      }
      if (test.curves.size() == before)
        throw InputError((path / "curves")[c].in(src) + ": specimen '" + specimen->id + "' has no " +
                         to_string(cs.y) + " values (every one is unknown)");
    }
    p.tests.push_back(std::move(test));
  }
  try {
    validate_problem(p);
  } catch (const InputError& e) {
    throw InputError(src + ": " + e.what());
  }
  return p;
}

namespace {

double mean_of(const std::vector<double>& v) {
  double sum = 0.0;
  int n = 0;
  for (double x : v)
    if (std::isfinite(x)) {
      sum += x;
      ++n;
    }
  return n > 0 ? sum / n : kNotGiven;
}

/// A value of the interpretation and what it comes from.
struct Seed {
  double value = kNotGiven;
  std::string basis;
};

/// The interpretation's value for each parameter role it can seed (kNotGiven where it has none).
/// Seeds go by ParameterInfo::role, never by a model's parameter names.
class InterpretationSeeds {
 public:
  InterpretationSeeds(const TestSeries& series, const InterpretOptions& options) {
    try {
      in_ = interpret(series, options);
      ok_ = true;
    } catch (const std::exception& e) {
      failure_ = e.what();
    }
    if (!ok_) return;
    std::vector<double> dilation, initial_stiffness, lambdas, kappas, constrained, cu, uu_stiffness;
    for (const StageInterpretation& s : in_.stages) {
      if (s.test == ShearType::cd) {
        dilation.push_back(s.dilation_angle);
        initial_stiffness.push_back(s.initial_stiffness);
      }
      if (s.test == ShearType::uu) {
        cu.push_back(s.undrained_strength);
        uu_stiffness.push_back(s.initial_stiffness);
      }
    }
    for (const auto& c : in_.compressibility) {
      lambdas.push_back(c.lambda);
      kappas.push_back(c.kappa);
      // The constrained modulus is taken at s_a' = InterpretOptions::reference_pressure.
      if (c.constrained_modulus_stress == options.reference_pressure) constrained.push_back(c.constrained_modulus);
    }
    dilation_mean_ = mean_of(dilation);
    initial_mean_ = mean_of(initial_stiffness);
    lambda_mean_ = mean_of(lambdas);
    kappa_mean_ = mean_of(kappas);
    constrained_mean_ = mean_of(constrained);
    cu_mean_ = mean_of(cu);
    uu_stiffness_mean_ = mean_of(uu_stiffness);
    reference_pressure_ = options.reference_pressure;
  }

  /// Roles with a rule: seed_for gives them a value when the series has the data.
  static bool known(ParameterRole role) {
    switch (role) {
      case ParameterRole::friction_angle:
      case ParameterRole::cohesion:
      case ParameterRole::dilation_angle:
      case ParameterRole::youngs_modulus:
      case ParameterRole::secant_stiffness_ref:
      case ParameterRole::stiffness_exponent:
      case ParameterRole::unload_reload_stiffness_ref:
      case ParameterRole::oedometer_stiffness_ref:
      case ParameterRole::critical_state_ratio:
      case ParameterRole::critical_state_friction_angle:
      case ParameterRole::compression_index:
      case ParameterRole::swelling_index:
      case ParameterRole::undrained_shear_strength:
      case ParameterRole::undrained_youngs_modulus:
      case ParameterRole::csl_void_ratio_ref:
      case ParameterRole::csl_slope: return true;
      default: return false;
    }
  }

  Seed seed_for(ParameterRole role) const {
    if (!ok_) return {};
    const StrengthEnvelope* env = in_.envelopes.empty() ? nullptr : &in_.envelopes.front();
    switch (role) {
      case ParameterRole::friction_angle: return {env ? env->phi : kNotGiven, "s'-t envelope"};
      case ParameterRole::cohesion:
        return {env && std::isfinite(env->cohesion) ? std::max(0.0, env->cohesion) : kNotGiven, "s'-t envelope"};
      case ParameterRole::dilation_angle: return {dilation_mean_, "mean peak dilation of the CD stages"};
      case ParameterRole::youngs_modulus: return {initial_mean_, "mean initial stiffness of the CD stages"};
      case ParameterRole::secant_stiffness_ref: return {in_.secant_law.reference, "secant stiffness law at " + pressure()};
      case ParameterRole::stiffness_exponent: return {in_.secant_law.exponent, "secant stiffness law"};
      case ParameterRole::unload_reload_stiffness_ref:
        return {in_.unload_reload_law.reference, "unload-reload stiffness law at " + pressure()};
      case ParameterRole::oedometer_stiffness_ref:
        return {constrained_mean_,
                "mean constrained modulus of the oedometer stages at s_a' = " + format_number(reference_pressure_) + " kPa"};
      case ParameterRole::critical_state_ratio: return {in_.critical_m, "critical states"};
      case ParameterRole::critical_state_friction_angle:
        return std::isfinite(in_.phi_cs) ? Seed{in_.phi_cs, "critical states"} : Seed{in_.phi_cv_rowe, "Rowe's stress-dilatancy"};
      case ParameterRole::compression_index: return {lambda_mean_, "consolidation and oedometer stages"};
      case ParameterRole::swelling_index: return {kappa_mean_, "consolidation and oedometer stages"};
      case ParameterRole::undrained_shear_strength: return {cu_mean_, "mean undrained strength of the UU stages"};
      case ParameterRole::undrained_youngs_modulus: return {uu_stiffness_mean_, "mean initial stiffness of the UU stages"};
      case ParameterRole::csl_void_ratio_ref: return {in_.csl_power.intercept, csl()};
      case ParameterRole::csl_slope:
        return {std::isfinite(in_.csl_power.slope) ? -in_.csl_power.slope : kNotGiven, csl()};
      default: return {};
    }
  }

  bool ok() const { return ok_; }
  const std::string& failure() const { return failure_; }

 private:
  std::string pressure() const { return "s3' = " + format_number(reference_pressure_) + " kPa"; }
  std::string csl() const {
    return "power-law critical-state line of " + std::to_string(in_.csl_power.n) + " steady end states, xi = " +
           format_number(in_.csl_exponent);
  }

  Interpretation in_;
  bool ok_ = false;
  std::string failure_;
  double dilation_mean_ = kNotGiven, initial_mean_ = kNotGiven, lambda_mean_ = kNotGiven, kappa_mean_ = kNotGiven;
  double constrained_mean_ = kNotGiven, reference_pressure_ = kNotGiven, cu_mean_ = kNotGiven;
  double uu_stiffness_mean_ = kNotGiven;
};

/// How bounds follow from the interpretation's value v (docs/calibration-format.md). Widths are
/// common practice for a first search box, no source: wide enough that a fit is not pinned by them,
/// narrow enough to keep a global search among physically sensible values.
struct BoundsRule {
  double lower = kNotGiven, upper = kNotGiven;
  std::string text;    ///< the rule, for the note
  bool usable = true;  ///< false: v cannot set bounds by this rule (e.g. a stiffness <= 0)
  std::string needs;   ///< what v must be when not usable
};

BoundsRule box(double lower, double upper, const char* text) {
  BoundsRule r;
  r.lower = lower;
  r.upper = upper;
  r.text = text;
  return r;
}

BoundsRule unusable(const char* needs) {
  BoundsRule r;
  r.usable = false;
  r.needs = needs;
  return r;
}

BoundsRule bounds_rule(ParameterRole role, double v) {
  switch (role) {
    case ParameterRole::youngs_modulus:
    case ParameterRole::secant_stiffness_ref:
    case ParameterRole::oedometer_stiffness_ref:
    case ParameterRole::unload_reload_stiffness_ref:
    case ParameterRole::compression_index:
    case ParameterRole::swelling_index:
    case ParameterRole::undrained_youngs_modulus: return v > 0.0 ? box(v / 4.0, 4.0 * v, "v/4 to 4 v") : unusable("> 0");
    case ParameterRole::undrained_shear_strength:
      return v > 0.0 ? box(v / 2.0, 2.0 * v, "v/2 to 2 v") : unusable("> 0");
    case ParameterRole::friction_angle:
    case ParameterRole::critical_state_friction_angle: return box(v - 8.0, v + 8.0, "v +- 8 deg");
    case ParameterRole::dilation_angle: return box(0.0, std::max(v + 8.0, 5.0), "0 to max(v + 8, 5) deg");
    case ParameterRole::cohesion: return box(0.0, std::max(3.0 * v, 20.0), "0 to max(3 v, 20 kPa)");
    case ParameterRole::stiffness_exponent:
      return box(std::max(0.1, v - 0.3), std::min(1.0, v + 0.3), "max(0.1, v - 0.3) to min(1, v + 0.3)");
    case ParameterRole::critical_state_ratio: return v > 0.0 ? box(0.75 * v, 1.25 * v, "0.75 v to 1.25 v") : unusable("> 0");
    case ParameterRole::csl_void_ratio_ref: return box(v - 0.1, v + 0.1, "v +- 0.1");
    case ParameterRole::csl_slope: return v > 0.0 ? box(v / 4.0, 4.0 * v, "v/4 to 4 v") : unusable("> 0");
    default: return unusable("");  // not reached: seed_for gives no value for other roles
  }
}

/// The model's range with open ends moved inward by 1e-4 max(1, |end|): a derived bound must be a
/// value the model accepts (the engine checks lower and upper against the open range).
std::pair<double, double> closed_range(const ParameterInfo& pi) {
  const auto step = [](double end) { return 1e-4 * std::max(1.0, std::abs(end)); };
  const double lo = pi.lower_open && std::isfinite(pi.lower) ? pi.lower + step(pi.lower) : pi.lower;
  const double hi = pi.upper_open && std::isfinite(pi.upper) ? pi.upper - step(pi.upper) : pi.upper;
  return {lo, hi};
}

std::string with_unit(const std::string& number, const ParameterInfo& pi) {
  return pi.unit.empty() || pi.unit == "-" ? number : number + " " + pi.unit;
}

std::string missing_of(bool lower, bool upper) {
  return lower && upper ? "lower and upper are needed" : (lower ? "lower is needed" : "upper is needed");
}

/// The material of the fitted specimens when they all have the same one, else "" (all specimens).
std::string material_of_tests(const CalibrationFile& file, const TestSeries& series) {
  std::string material;
  bool first = true;
  for (const CalibrationTestSpec& t : file.tests)
    for (const Specimen& s : series.specimens)
      if (s.id == t.specimen) {
        if (!first && s.material != material) return "";
        material = s.material;
        first = false;
      }
  return material;
}

/// The reference pressure of the stiffness laws: the model's fixed reference_pressure where it has
/// one (E_ref is the stiffness at s3' = reference_pressure), else the interpretation's default.
double reference_pressure_of(const CalibrationFile& file, const ModelInfo& model) {
  const int i = parameter_with_role(model, ParameterRole::reference_pressure);
  if (i < 0) return InterpretOptions{}.reference_pressure;
  const ParameterInfo& pi = model.parameters[static_cast<std::size_t>(i)];
  double value = pi.default_value;
  for (const ParameterSpec& p : file.parameters)
    if (p.name == pi.name)
      value = p.status == ParameterStatus::fixed ? (std::isnan(p.value) ? value : p.value) : kNotGiven;
  return std::isfinite(value) && value > 0.0 ? value : InterpretOptions{}.reference_pressure;
}

/// The exponent xi of the power-law critical-state line: the model's csl_exponent where it is fixed
/// (the line's e_Gamma and lambda_c then belong to the model's xi), else the file's interpretation's.
double csl_exponent_of(const CalibrationFile& file, const ModelInfo& model) {
  const int i = parameter_with_role(model, ParameterRole::csl_exponent);
  if (i < 0) return file.interpretation.csl_exponent;
  const ParameterInfo& pi = model.parameters[static_cast<std::size_t>(i)];
  double value = pi.default_value;
  for (const ParameterSpec& p : file.parameters)
    if (p.name == pi.name)
      value = p.status == ParameterStatus::fixed && !p.from_interpretation ? (std::isnan(p.value) ? value : p.value) : kNotGiven;
  return std::isfinite(value) && value > 0.0 && value <= 2.0 ? value : file.interpretation.csl_exponent;
}

}  // namespace

InterpretOptions interpretation_options(const CalibrationFile& file, const TestSeries& series, const ModelInfo& model) {
  InterpretOptions options = file.interpretation;
  options.material = material_of_tests(file, series);
  options.reference_pressure = reference_pressure_of(file, model);
  options.csl_exponent = csl_exponent_of(file, model);
  return options;
}

std::vector<std::string> seed_from_interpretation(CalibrationFile& file, const TestSeries& series, const ModelInfo& model) {
  std::vector<std::string> notes;
  bool needed = false;
  for (const ParameterSpec& p : file.parameters)
    needed = needed || (p.status == ParameterStatus::free && (std::isnan(p.start) || std::isnan(p.lower) || std::isnan(p.upper))) ||
             (p.status == ParameterStatus::fixed && p.from_interpretation);
  if (!needed) return notes;

  const InterpretationSeeds seeds(series, interpretation_options(file, series, model));
  const std::string& src = file.source;

  for (ParameterSpec& p : file.parameters) {
    if (p.status == ParameterStatus::fixed && p.from_interpretation) {
      const int index = parameter_index(model, p.name);
      if (index < 0) continue;  // build_calibration_problem names the unknown parameter
      const ParameterInfo& pi = model.parameters[static_cast<std::size_t>(index)];
      const Seed seed = seeds.seed_for(pi.role);
      if (!std::isfinite(seed.value)) {
        std::string why = "the interpretation of the series gives no value for " + p.name;
        if (!seeds.ok()) why += " (the interpretation failed: " + seeds.failure() + ")";
        else if (InterpretationSeeds::known(pi.role)) why += " (it would come from the " + seed.basis + ")";
        throw InputError(src + ": parameters." + p.name + ": fixed from the interpretation: " + why);
      }
      p.value = seed.value;  // build_calibration_problem checks it against the model's range
      notes.push_back(p.name + ": fixed at " + with_unit(format_number(seed.value), pi) + " from the interpretation (" + seed.basis + ")");
      continue;
    }
    if (p.status != ParameterStatus::free) continue;
    const int index = parameter_index(model, p.name);
    if (index < 0) continue;  // build_calibration_problem names the unknown parameter
    const ParameterInfo& pi = model.parameters[static_cast<std::size_t>(index)];
    const std::string where = src + ": parameters." + p.name + ": ";
    const Seed seed = seeds.seed_for(pi.role);
    const bool lower_missing = std::isnan(p.lower), upper_missing = std::isnan(p.upper);

    if (lower_missing || upper_missing) {
      const std::string missing = where + missing_of(lower_missing, upper_missing) + ": ";
      if (!std::isfinite(seed.value)) {
        std::string why = "the interpretation of the series gives no value for " + p.name;
        if (!seeds.ok()) why += " (the interpretation failed: " + seeds.failure() + ")";
        else if (InterpretationSeeds::known(pi.role)) why += " (it would come from the " + seed.basis + ")";
        throw InputError(missing + why);
      }
      // Take v into the model's range first, so that the rule gives a box the model accepts.
      const auto [range_lo, range_hi] = closed_range(pi);
      assert(range_lo < range_hi && "a model's range leaves no room for a value");
      const double v = std::clamp(seed.value, range_lo, range_hi);
      const BoundsRule rule = bounds_rule(pi.role, v);
      if (!rule.usable)
        throw InputError(missing + "the interpretation of the series gives " + p.name + " = " + format_number(seed.value) +
                         " (" + seed.basis + "), which cannot set bounds (it must be " + rule.needs + ")");
      std::string extra;
      if (v != seed.value) extra += "; v = " + format_number(seed.value) + " taken as " + format_number(v) + ", inside the model's range " + format_bounds(pi);
      double lower = rule.lower, upper = rule.upper;
      if ((lower_missing && lower < range_lo) || (upper_missing && upper > range_hi))
        extra += "; cut to the model's range " + format_bounds(pi);
      lower = std::max(lower, range_lo);
      upper = std::min(upper, range_hi);
      // A start given in the file widens the derived side to include it (not beyond the model's range).
      if (std::isfinite(p.start)) {
        if (lower_missing && p.start < lower && p.start >= range_lo) {
          lower = p.start;
          extra += "; widened to include the start " + format_number(p.start);
        }
        if (upper_missing && p.start > upper && p.start <= range_hi) {
          upper = p.start;
          extra += "; widened to include the start " + format_number(p.start);
        }
      }
      if (lower_missing) p.lower = lower;
      if (upper_missing) p.upper = upper;
      const std::string from = " from the interpretation (" + seed.basis + ", v = " + format_number(seed.value) + ", " + rule.text + extra + ")";
      if (!(p.lower < p.upper)) {
        if (lower_missing && upper_missing)  // only where a model's range is narrower than the rule
          throw InputError(where + "the bounds [" + format_number(p.lower) + ", " + format_number(p.upper) + "]" + from +
                           " leave no room; give lower and upper");
        // One bound given: the derived one falls on the wrong side of it.
        throw InputError(where + "the " + (upper_missing ? "upper" : "lower") + " bound " +
                         format_number(upper_missing ? p.upper : p.lower) + from + " is not " +
                         (upper_missing ? "above the given lower = " + format_number(p.lower)
                                        : "below the given upper = " + format_number(p.upper)) +
                         "; give " + (upper_missing ? "upper" : "lower") + " too");
      }
      if (lower_missing && upper_missing)
        notes.push_back(p.name + ": bounds [" + format_number(p.lower) + ", " + with_unit(format_number(p.upper) + "]", pi) + from);
      else if (lower_missing)
        notes.push_back(p.name + ": lower bound " + with_unit(format_number(p.lower), pi) + from + ", upper " +
                        format_number(p.upper) + " as given");
      else
        notes.push_back(p.name + ": upper bound " + with_unit(format_number(p.upper), pi) + from + ", lower " +
                        format_number(p.lower) + " as given");
    }

    // A box that is reversed is left to build_calibration_problem, which says so.
    if (!std::isnan(p.start) || !std::isfinite(seed.value) || !(p.lower < p.upper)) continue;
    p.start = std::clamp(seed.value, p.lower, p.upper);
    notes.push_back(p.name + ": start " + format_number(p.start) + " from the interpretation (" + seed.basis + ")" +
                    (p.start != seed.value ? ", clamped from " + format_number(seed.value) : ""));
  }
  return notes;
}

}  // namespace triaxcal
