#include "triaxcal/calibration_file.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>

#include "../json_checks.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

using detail::json;

namespace {

std::pair<double, double> range_of(const json& v, const std::string& src, const std::string& path) {
  if (!v.is_array() || v.size() != 2 || !v[0].is_number() || !v[1].is_number())
    throw InputError(src + ": " + path + ": expected [from, to] (two axial strains, decimal), found " + v.dump());
  const double a = v[0].get<double>(), b = v[1].get<double>();
  if (!(a < b)) throw InputError(src + ": " + path + ": expected from < to, found " + v.dump());
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
  const std::string path = "parameters." + name;
  ParameterSpec s;
  s.name = name;
  if (v.is_number()) {
    s.status = ParameterStatus::fixed;
    s.value = v.get<double>();
    return s;
  }
  detail::require_object(v, src, path);
  const std::string status = detail::get_string(v, "status", src, path);
  s.status = choose<ParameterStatus>(
      status, {{"free", ParameterStatus::free}, {"fixed", ParameterStatus::fixed}, {"tied", ParameterStatus::tied}},
      src + ": " + path + ".status");
  switch (s.status) {
    case ParameterStatus::fixed:
      detail::check_keys(v, {"status", "value", "note"}, src, path);
      s.value = detail::get_number_or(v, "value", kNotGiven, src, path);
      break;
    case ParameterStatus::tied:
      detail::check_keys(v, {"status", "expression", "note"}, src, path);
      s.expression = detail::get_string(v, "expression", src, path);
      break;
    case ParameterStatus::free: {
      detail::check_keys(v, {"status", "lower", "upper", "start", "scale", "note"}, src, path);
      s.lower = detail::get_number(v, "lower", src, path);
      s.upper = detail::get_number(v, "upper", src, path);
      s.start = detail::get_number_or(v, "start", kNotGiven, src, path);
      const std::string scale = detail::get_string_or(v, "scale", "linear", src, path);
      s.scale = choose<ParameterScale>(scale, {{"linear", ParameterScale::linear}, {"log", ParameterScale::log}},
                                       src + ": " + path + ".scale");
      break;
    }
  }
  return s;
}

CalibrationOptions parse_options(const json& o, const std::string& src) {
  const std::string path = "options";
  detail::check_keys(o,
                     {"global", "global_evaluations", "local", "local_evaluations", "starts", "design_points",
                      "relative_tolerance", "x_tolerance", "max_seconds", "seed", "threads", "loss", "loss_scale",
                      "failure_penalty", "uncertainty", "jacobian_step", "correlation_warning"},
                     src, path);
  CalibrationOptions c;
  c.global = choose<GlobalAlgorithm>(detail::get_string_or(o, "global", "none", src, path),
                                     {{"none", GlobalAlgorithm::none},
                                      {"crs2", GlobalAlgorithm::crs2},
                                      {"isres", GlobalAlgorithm::isres},
                                      {"direct_l", GlobalAlgorithm::direct_l}},
                                     src + ": options.global");
  c.local = choose<LocalAlgorithm>(detail::get_string_or(o, "local", "bobyqa", src, path),
                                   {{"none", LocalAlgorithm::none},
                                    {"bobyqa", LocalAlgorithm::bobyqa},
                                    {"cobyla", LocalAlgorithm::cobyla},
                                    {"sbplx", LocalAlgorithm::sbplx},
                                    {"nelder_mead", LocalAlgorithm::nelder_mead}},
                                   src + ": options.local");
  c.loss = choose<Loss>(detail::get_string_or(o, "loss", "linear", src, path),
                        {{"linear", Loss::linear}, {"soft_l1", Loss::soft_l1}, {"huber", Loss::huber}},
                        src + ": options.loss");
  c.global_evaluations = detail::get_int_or(o, "global_evaluations", static_cast<int>(c.global_evaluations), src, path);
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
  c.correlation_warning = detail::get_number_or(o, "correlation_warning", c.correlation_warning, src, path);
  try {
    c.validate();
  } catch (const InputError& e) {
    throw InputError(src + ": " + e.what());
  }
  return c;
}

}  // namespace

CalibrationFile parse_calibration_file(const std::string& text, const std::string& source) {
  const json root = detail::parse_json(text, source);
  detail::check_format(root, kCalibrationFormat, kCalibrationVersion, source);
  detail::check_keys(root,
                     {"format", "version", "description", "series", "model", "steps_per_shear_stage", "tests",
                      "parameters", "constraints", "options"},
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

  if (!root.contains("tests")) throw InputError(source + ": tests: missing (a list of the specimens to fit is required)");
  const json& tests = root.at("tests");
  if (!tests.is_array() || tests.empty())
    throw InputError(source + ": tests: expected a non-empty list, found " + tests.dump().substr(0, 40));
  for (std::size_t i = 0; i < tests.size(); ++i) {
    const std::string path = "tests[" + std::to_string(i) + "]";
    const json& t = tests[i];
    detail::check_keys(t, {"specimen", "weight", "axial_strain_range", "curves"}, source, path);
    CalibrationTestSpec spec;
    spec.specimen = detail::get_string(t, "specimen", source, path);
    spec.weight = detail::get_number_or(t, "weight", 1.0, source, path);
    if (!(spec.weight >= 0.0)) throw InputError(source + ": " + path + ".weight: must be 0 or more, found " + t.at("weight").dump());
    if (t.contains("axial_strain_range")) {
      const auto r = range_of(t.at("axial_strain_range"), source, path + ".axial_strain_range");
      spec.strain_min = r.first;
      spec.strain_max = r.second;
    }
    if (!t.contains("curves")) throw InputError(source + ": " + path + ".curves: missing (a list of quantities to compare)");
    const json& curves = t.at("curves");
    if (!curves.is_array() || curves.empty())
      throw InputError(source + ": " + path + ".curves: expected a non-empty list, found " + curves.dump().substr(0, 40));
    for (std::size_t c = 0; c < curves.size(); ++c) {
      const std::string cp = path + ".curves[" + std::to_string(c) + "]";
      CalibrationCurveSpec cs;
      if (curves[c].is_string()) {
        cs.y = parse_quantity(curves[c].get<std::string>(), source + ": " + cp);
      } else {
        detail::check_keys(curves[c], {"quantity", "weight"}, source, cp);
        cs.y = parse_quantity(detail::get_string(curves[c], "quantity", source, cp), source + ": " + cp + ".quantity");
        cs.weight = detail::get_number_or(curves[c], "weight", 1.0, source, cp);
        if (!(cs.weight >= 0.0))
          throw InputError(source + ": " + cp + ".weight: must be 0 or more, found " + curves[c].at("weight").dump());
      }
      if (cs.y == Quantity::axial_strain)
        throw InputError(source + ": " + cp + ": axial_strain is the x of every curve; compare another quantity");
      spec.curves.push_back(cs);
    }
    f.tests.push_back(std::move(spec));
  }

  if (!root.contains("parameters")) throw InputError(source + ": parameters: missing (say which parameters are free)");
  const json& params = root.at("parameters");
  detail::require_object(params, source, "parameters");
  for (const auto& item : params.items()) f.parameters.push_back(parse_parameter(item.key(), item.value(), source));

  if (root.contains("constraints")) {
    const json& c = root.at("constraints");
    if (!c.is_array()) throw InputError(source + ": constraints: expected a list of strings such as \"dilation_angle <= friction_angle\"");
    for (std::size_t i = 0; i < c.size(); ++i) {
      if (!c[i].is_string())
        throw InputError(source + ": constraints[" + std::to_string(i) + "]: expected a string, found " + c[i].dump());
      f.constraints.push_back(c[i].get<std::string>());
    }
  }
  if (root.contains("options")) f.options = parse_options(root.at("options"), source);
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

}  // namespace

CalibrationProblem build_calibration_problem(const CalibrationFile& file, const TestSeries& series, const ModelInfo& model,
                                             ModelFactory create) {
  const std::string& src = file.source;
  CalibrationProblem p;
  p.model = &model;
  p.create = std::move(create);
  p.parameters = file.parameters;
  p.constraints = file.constraints;
  for (std::size_t i = 0; i < file.tests.size(); ++i) {
    const CalibrationTestSpec& spec = file.tests[i];
    const std::string path = "tests[" + std::to_string(i) + "]";
    const Specimen* specimen = nullptr;
    std::string known;
    for (const Specimen& s : series.specimens) {
      if (s.id == spec.specimen) specimen = &s;
      known += (known.empty() ? "" : ", ") + s.id;
    }
    if (specimen == nullptr)
      throw InputError(src + ": " + path + ".specimen: \"" + spec.specimen + "\" is not in the test series " + series.source +
                       " (known: " + known + ")");
    CalibrationTest test;
    test.id = specimen->id;
    test.weight = spec.weight;
    SpecimenProtocol sp;
    try {
      sp = specimen_protocol_with_map(*specimen, file.steps_per_shear_stage);
    } catch (const InputError& e) {
      throw InputError(src + ": " + path + ": " + e.what());
    }
    test.protocol = sp.protocol;
    for (std::size_t c = 0; c < spec.curves.size(); ++c) {
      const CalibrationCurveSpec& cs = spec.curves[c];
      const std::vector<double>* ys = column(specimen->curves, cs.y);
      if (ys == nullptr || ys->size() != specimen->curves.size())
        throw InputError(src + ": " + path + ".curves[" + std::to_string(c) + "]: specimen '" + specimen->id + "' has no " +
                         to_string(cs.y) + " data");
      MeasuredCurve m;
      m.x = Quantity::axial_strain;
      m.y = cs.y;
      m.weight = cs.weight;
      m.strain_zero_stage = sp.data_zero_stage;
      m.x_min = spec.strain_min;
      m.x_max = spec.strain_max;
      // Points with a value missing (e.g. void ratio unknown) are not compared.
      for (std::size_t k = 0; k < ys->size(); ++k) {
        const double x = specimen->curves.axial_strain[k], y = (*ys)[k];
        if (std::isfinite(x) && std::isfinite(y)) {
          m.xs.push_back(x);
          m.ys.push_back(y);
        }
      }
      test.curves.push_back(std::move(m));
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

}  // namespace

std::vector<std::string> seed_starts_from_interpretation(CalibrationProblem& problem, const TestSeries& series) {
  std::vector<std::string> notes;
  Interpretation in;
  try {
    in = interpret(series, InterpretOptions{});
  } catch (const std::exception&) {
    return notes;  // no interpretation, no seeds: the middle of each box
  }
  std::vector<double> dilation, initial_stiffness, lambdas, kappas;
  for (const StageInterpretation& s : in.stages) {
    if (s.test == ShearType::cd) dilation.push_back(s.dilation_angle);
    if (s.test == ShearType::cd) initial_stiffness.push_back(s.initial_stiffness);
  }
  for (const auto& c : in.compressibility) {
    lambdas.push_back(c.lambda);
    kappas.push_back(c.kappa);
  }
  const StrengthEnvelope* env = in.envelopes.empty() ? nullptr : &in.envelopes.front();
  auto seed_for = [&](const std::string& name) -> std::pair<double, std::string> {
    if (name == "friction_angle" && env) return {env->phi, "s'-t envelope"};
    if (name == "cohesion" && env) return {std::max(0.0, env->cohesion), "s'-t envelope"};
    if (name == "dilation_angle") return {mean_of(dilation), "mean peak dilation of the CD stages"};
    if (name == "youngs_modulus") return {mean_of(initial_stiffness), "mean initial stiffness of the CD stages"};
    if (name == "secant_stiffness_ref") return {in.secant_law.reference, "secant stiffness law"};
    if (name == "stress_exponent") return {in.secant_law.exponent, "secant stiffness law"};
    if (name == "unloading_stiffness_ref") return {in.unload_reload_law.reference, "unload-reload stiffness law"};
    if (name == "critical_state_ratio") return {in.critical_m, "critical states"};
    if (name == "critical_state_friction_angle")
      return std::isfinite(in.phi_cs) ? std::pair<double, std::string>{in.phi_cs, "critical states"}
                                      : std::pair<double, std::string>{in.phi_cv_rowe, "Rowe's stress-dilatancy"};
    if (name == "lambda") return {mean_of(lambdas), "consolidation stages"};
    if (name == "kappa") return {mean_of(kappas), "consolidation stages"};
    return {kNotGiven, ""};
  };
  for (ParameterSpec& p : problem.parameters) {
    if (p.status != ParameterStatus::free || !std::isnan(p.start)) continue;
    const auto [value, basis] = seed_for(p.name);
    if (!std::isfinite(value)) continue;
    p.start = std::clamp(value, p.lower, p.upper);
    notes.push_back(p.name + ": start " + format_number(p.start) + " from the interpretation (" + basis + ")" +
                    (p.start != value ? ", clamped from " + format_number(value) : ""));
  }
  return notes;
}

}  // namespace triaxcal
