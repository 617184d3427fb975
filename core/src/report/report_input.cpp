#include "triaxcal/report_input.hpp"

#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>

#include "../json_checks.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/results_csv.hpp"

namespace triaxcal::report {

namespace {

using nlohmann::json;
using nlohmann::ordered_json;

// ---------------------------------------------------------------- writing

ordered_json number(double v) { return std::isfinite(v) ? ordered_json(v) : ordered_json(nullptr); }

ordered_json numbers(const std::vector<double>& v) {
  ordered_json a = ordered_json::array();
  for (double x : v) a.push_back(number(x));
  return a;
}

ordered_json xy(const XY& c) { return {{"x", numbers(c.x)}, {"y", numbers(c.y)}}; }
ordered_json pair(const CurvePair& c) { return {{"measured", xy(c.measured)}, {"simulated", xy(c.simulated)}}; }
ordered_json test_curve(const TestCurve& c) {
  return {{"quantity", c.quantity}, {"unit", c.unit}, {"stage", c.stage}, {"measured", xy(c.measured)},
          {"simulated", xy(c.simulated)}, {"fitted_from", number(c.fitted_from)}, {"fitted_to", number(c.fitted_to)}};
}
ordered_json line(const Line& l) {
  return {{"name", l.name}, {"intercept", number(l.intercept)}, {"slope", number(l.slope)},
          {"x_from", number(l.x_from)}, {"x_to", number(l.x_to)}};
}

const char* drainage_name(Drainage d) {
  switch (d) {
    case Drainage::drained: return "drained";
    case Drainage::undrained: return "undrained";
    case Drainage::oedometer: return "oedometer";
    case Drainage::other: return "other";
  }
  return "other";
}

// ---------------------------------------------------------------- reading

struct Reader {
  std::string source;

  [[noreturn]] void fail(const detail::KeyPath& path, const std::string& what) const {
    throw InputError(detail::where(source, path) + ": " + what);
  }
  void object(const json& j, const detail::KeyPath& path, std::initializer_list<const char*> keys) const {
    detail::require_object(j, source, path);
    detail::check_keys(j, keys, source, path);
  }
  double num(const json& j, const char* key, const detail::KeyPath& path, double fallback = kUnknown) const {
    if (!j.contains(key) || j[key].is_null()) return fallback;
    if (!j[key].is_number()) fail(path / key, "expected a number or null, found " + j[key].dump());
    return j[key].get<double>();
  }
  /// A count: an integer from 0 to `high` (never wrapped).
  long integer(const json& j, const char* key, const detail::KeyPath& path, long fallback = 0,
               long high = std::numeric_limits<long>::max()) const {
    if (!j.contains(key)) return fallback;
    return static_cast<long>(detail::get_integer_in(j[key], 0, high, source, path / key));
  }
  bool boolean(const json& j, const char* key, const detail::KeyPath& path, bool fallback) const {
    if (!j.contains(key)) return fallback;
    if (!j[key].is_boolean()) fail(path / key, "expected true or false, found " + j[key].dump());
    return j[key].get<bool>();
  }
  std::string str(const json& j, const char* key, const detail::KeyPath& path, const std::string& fallback = "") const {
    if (!j.contains(key)) return fallback;
    if (!j[key].is_string()) fail(path / key, "expected a string, found " + j[key].dump());
    return j[key].get<std::string>();
  }
  const json* array(const json& j, const char* key, const detail::KeyPath& path) const {
    if (!j.contains(key)) return nullptr;
    if (!j[key].is_array()) fail(path / key, "expected an array, found " + j[key].dump());
    return &j[key];
  }
  std::vector<double> nums(const json& j, const char* key, const detail::KeyPath& path) const {
    std::vector<double> out;
    if (const json* a = array(j, key, path))
      for (std::size_t i = 0; i < a->size(); ++i) {
        const json& v = (*a)[i];
        if (v.is_null()) out.push_back(kUnknown);
        else if (v.is_number()) out.push_back(v.get<double>());
        else fail((path / key)[i], "expected a number or null, found " + v.dump());
      }
    return out;
  }
  XY xy(const json& j, const char* key, const detail::KeyPath& path) const {
    XY c;
    if (!j.contains(key)) return c;
    const detail::KeyPath p = path / key;
    object(j[key], p, {"x", "y"});
    c.x = nums(j[key], "x", p);
    c.y = nums(j[key], "y", p);
    if (c.x.size() != c.y.size())
      fail(p, "x has " + std::to_string(c.x.size()) + " values and y " + std::to_string(c.y.size()) +
                  " (expected equal lengths)");
    return c;
  }
  CurvePair pair(const json& j, const char* key, const detail::KeyPath& path) const {
    CurvePair c;
    if (!j.contains(key)) return c;
    const detail::KeyPath p = path / key;
    object(j[key], p, {"measured", "simulated"});
    c.measured = xy(j[key], "measured", p);
    c.simulated = xy(j[key], "simulated", p);
    return c;
  }
  Line line(const json& j, const detail::KeyPath& p) const {
    object(j, p, {"name", "intercept", "slope", "x_from", "x_to"});
    return {str(j, "name", p), num(j, "intercept", p), num(j, "slope", p), num(j, "x_from", p), num(j, "x_to", p)};
  }
  template <class F>
  void each(const json& j, const char* key, const detail::KeyPath& path, F f) const {
    if (const json* a = array(j, key, path))
      for (std::size_t i = 0; i < a->size(); ++i) f((*a)[i], (path / key)[i]);
  }
  std::vector<std::string> strings(const json& j, const char* key, const detail::KeyPath& path) const {
    std::vector<std::string> out;
    each(j, key, path, [&](const json& v, const detail::KeyPath& p) {
      if (!v.is_string()) fail(p, "expected a string, found " + v.dump());
      out.push_back(v.get<std::string>());
    });
    return out;
  }
};

Drainage parse_drainage(const std::string& s, const Reader& r, const detail::KeyPath& path) {
  if (s == "drained") return Drainage::drained;
  if (s == "undrained") return Drainage::undrained;
  if (s == "oedometer") return Drainage::oedometer;
  if (s == "other" || s.empty()) return Drainage::other;
  r.fail(path, "expected drained, undrained, oedometer or other, found \"" + s + "\"");
}

// ---------------------------------------------------------------- fit files (fallback)

double parse_or_nan(const std::string& s) {
  if (s.empty()) return kUnknown;
  try {
    return std::stod(s);
  } catch (...) {
    return kUnknown;
  }
}

// The outcome of a result written before outcomes were recorded (report input version 1, or a
// parameter set without fit.outcome), from its termination and its curves' R^2 against the default
// threshold of CalibrationOptions::min_r_squared. Tests that could not be simulated count as a
// poor fit here: such files still carry a parameter set.
void derive_outcome(ReportData& d, const std::string& source) {
  const std::string note = " (derived: " + source + " records no outcome)";
  if (d.termination == "no_usable_result" || d.termination == "not_run") {
    d.outcome = CalibrationOutcome::failed;
    d.outcome_reason = "no usable parameter set" + note;
    return;
  }
  const double threshold = CalibrationOptions{}.min_r_squared;
  std::string poor;
  for (const TestReport& t : d.tests) {
    if (!t.used) continue;
    if (!t.simulated) poor += (poor.empty() ? "" : ", ") + t.id + " (not simulated)";
    for (const CurveQuality& q : t.quality)
      if (std::isfinite(q.r_squared) && q.r_squared < threshold) {
        char b[32];
        std::snprintf(b, sizeof b, "%.3f", q.r_squared);
        poor += (poor.empty() ? "" : ", ") + t.id + " " + q.name.substr(0, q.name.find(" vs ")) + " (R^2 = " + b + ")";
      }
  }
  if (!poor.empty()) {
    d.outcome = CalibrationOutcome::poor_fit;
    d.outcome_reason = "the model does not follow " + poor + note;
  } else if (d.termination == "converged") {
    d.outcome = CalibrationOutcome::converged;
    d.outcome_reason = "termination converged" + note;
  } else {
    d.outcome = CalibrationOutcome::stopped;
    d.outcome_reason = "termination " + (d.termination.empty() ? std::string("not recorded") : d.termination) + note;
  }
}

ReportData from_fit_files(const std::filesystem::path& params_path, const std::filesystem::path& csv_path) {
  const std::string source = params_path.string();
  const json root = detail::parse_json(detail::read_text_file(source), source);
  detail::require_object(root, source, "");
  // Read leniently (keys of a later version are skipped) but typed: a key of the wrong type is an
  // input error with its path, never a library exception.
  const Reader reader{source};
  ReportData d;
  d.title = "Calibration report";
  d.model = reader.str(root, "model", "");
  d.project = reader.str(root, "description", "");
  d.message = "";
  if (root.contains("parameters") && root["parameters"].is_object()) {
    for (const auto& [name, p] : root["parameters"].items()) {
      ParameterRow row;
      row.name = name;
      if (!p.is_object()) continue;
      const detail::KeyPath pp = detail::KeyPath("parameters") / name;
      row.unit = reader.str(p, "unit", pp);
      row.status = reader.str(p, "status", pp, "fixed");
      auto n = [&](const char* k) { return p.contains(k) && p[k].is_number() ? p[k].get<double>() : kUnknown; };
      row.value = n("value");
      row.lower = n("lower_bound");
      row.upper = n("upper_bound");
      row.standard_error = n("standard_error");
      if (p.contains("interval_95") && p["interval_95"].is_array() && p["interval_95"].size() == 2) {
        if (p["interval_95"][0].is_number()) row.interval_low = p["interval_95"][0].get<double>();
        if (p["interval_95"][1].is_number()) row.interval_high = p["interval_95"][1].get<double>();
      }
      row.expression = reader.str(p, "tied_to", pp);
      d.parameters.push_back(row);
    }
  }
  std::map<std::string, std::size_t> index;
  bool recorded_outcome = false;
  if (root.contains("fit") && root["fit"].is_object()) {
    const json& fit = root["fit"];
    d.termination = reader.str(fit, "termination", "fit");
    d.message = reader.str(fit, "message", "fit");
    if (fit.contains("outcome") && fit["outcome"].is_string() &&
        parse_outcome(fit["outcome"].get<std::string>(), d.outcome)) {
      recorded_outcome = true;
      d.outcome_reason = reader.str(fit, "outcome_reason", "fit");
    }
    if (fit.contains("objective") && fit["objective"].is_number()) d.objective = fit["objective"].get<double>();
    d.evaluations = reader.integer(fit, "evaluations", "fit");
    if (fit.contains("wall_time_s") && fit["wall_time_s"].is_number()) d.wall_time = fit["wall_time_s"].get<double>();
    if (fit.contains("warnings") && fit["warnings"].is_array())
      for (const auto& w : fit["warnings"])
        if (w.is_string()) d.warnings.push_back(w.get<std::string>());
    for (const char* k : {"global_algorithm", "local_algorithm", "loss"})
      if (fit.contains(k) && fit[k].is_string()) d.provenance.emplace_back(k, fit[k].get<std::string>());
    if (fit.contains("options") && fit["options"].is_object())
      for (const auto& [k, v] : fit["options"].items())
        d.provenance.emplace_back("option " + k, v.is_string() ? v.get<std::string>() : v.dump());
    if (fit.contains("tests") && fit["tests"].is_array())
      for (std::size_t i = 0; i < fit["tests"].size(); ++i) {
        const json& t = fit["tests"][i];
        const detail::KeyPath tp = (detail::KeyPath("fit") / "tests")[i];
        TestReport tr;
        tr.id = reader.str(t, "id", tp);
        tr.simulated = reader.boolean(t, "simulated", tp, true);
        if (!tr.simulated) tr.message = "the simulation at the fitted parameters failed (see the fit output)";
        if (t.contains("curves") && t["curves"].is_array())
          for (std::size_t k = 0; k < t["curves"].size(); ++k) {
            const json& c = t["curves"][k];
            const detail::KeyPath cp = (tp / "curves")[k];
            CurveQuality q;
            q.name = reader.str(c, "quantity", cp) + " vs axial strain";
            q.unit = reader.str(c, "unit", cp);
            q.points = static_cast<int>(reader.integer(c, "points", cp, 0, std::numeric_limits<int>::max()));
            if (c.contains("rmse") && c["rmse"].is_number()) q.rmse = c["rmse"].get<double>();
            if (c.contains("r_squared") && c["r_squared"].is_number()) q.r_squared = c["r_squared"].get<double>();
            tr.quality.push_back(q);
          }
        index[tr.id] = d.tests.size();
        d.tests.push_back(tr);
      }
  }
  if (root.contains("provenance") && root["provenance"].is_object()) {
    const json& p = root["provenance"];
    if (p.contains("software") && p["software"].is_string()) d.provenance.emplace(d.provenance.begin(), "software", p["software"].get<std::string>());
    if (p.contains("created") && p["created"].is_string()) d.provenance.emplace_back("created", p["created"].get<std::string>());
    if (p.contains("inputs") && p["inputs"].is_array())
      for (std::size_t i = 0; i < p["inputs"].size(); ++i) {
        const detail::KeyPath ip = (detail::KeyPath("provenance") / "inputs")[i];
        const json& in = p["inputs"][i];
        if (in.is_object()) d.provenance.emplace_back("input " + reader.str(in, "path", ip), "sha256 " + reader.str(in, "sha256", ip));
      }
  }
  if (root.contains("caution") && root["caution"].is_string()) d.caution = root["caution"].get<std::string>();

  // Curves: test,stage,quantity,stage_axial_strain[-],measured,simulated,unit (the compared points;
  // files before stages were numbered: test,quantity,axial_strain[-],...). RFC 4180 records (test
  // ids may hold commas and quotes: results_csv.hpp).
  const std::vector<CsvRecord> records = parse_csv(detail::read_text_file(csv_path.string()), csv_path.string());
  std::string header;
  if (!records.empty())
    for (const std::string& f : records.front().fields) header += (header.empty() ? "" : ",") + f;
  const char* kHeader = "test,stage,quantity,stage_axial_strain[-],measured,simulated,unit";
  const char* kOldHeader = "test,quantity,axial_strain[-],measured,simulated,unit";
  const bool staged = header.rfind(kHeader, 0) == 0;
  if (!staged && header.rfind(kOldHeader, 0) != 0)
    throw InputError(csv_path.string() + ": line 1: expected the header \"" + kHeader + "\", found \"" + header + "\"");
  const std::size_t columns = staged ? 7 : 6;
  // Each (test, quantity, stage) is one curve; quality rows (one a curve, in file order) get their residuals.
  std::map<std::string, std::map<std::string, std::size_t>> curve_index;  // id -> "quantity/stage" -> curves index
  for (std::size_t r = 1; r < records.size(); ++r) {
    const auto& cells = records[r].fields;
    if (cells.size() < columns)
      throw InputError(csv_path.string() + ": line " + std::to_string(records[r].line) + ": expected " +
                       std::to_string(columns) + " columns, found " + std::to_string(cells.size()));
    const std::string& id = cells[0];
    const std::size_t o = staged ? 1 : 0;
    const double stage_number = staged ? parse_or_nan(cells[1]) : 0.0;
    const int stage = stage_number >= 1.0 && stage_number <= 1000.0 ? static_cast<int>(stage_number) : 0;
    const std::string& quantity = cells[1 + o];
    if (!index.count(id)) {
      index[id] = d.tests.size();
      TestReport t;
      t.id = id;
      d.tests.push_back(t);
    }
    TestReport& t = d.tests[index[id]];
    const double x = parse_or_nan(cells[2 + o]), m = parse_or_nan(cells[3 + o]), sim = parse_or_nan(cells[4 + o]);
    if (quantity == "excess_pore_pressure") t.drainage = Drainage::undrained;
    if (quantity == "volumetric_strain" && t.drainage == Drainage::other) t.drainage = Drainage::drained;
    const std::string key = quantity + "/" + std::to_string(stage);
    auto& curves_of = curve_index[id];
    if (!curves_of.count(key)) {
      curves_of[key] = t.curves.size();
      TestCurve c;
      c.quantity = quantity;
      c.unit = cells[5 + o];
      c.stage = stage;
      t.curves.push_back(c);
    }
    TestCurve& c = t.curves[curves_of[key]];
    c.measured.x.push_back(x);
    c.measured.y.push_back(m);
    if (std::isfinite(sim)) {
      c.simulated.x.push_back(x);
      c.simulated.y.push_back(sim);
    }
  }
  // A file numbers stage 1 also for a specimen with one shear stage: shown as the only stage.
  for (TestReport& t : d.tests) {
    int most = 0;
    for (const TestCurve& c : t.curves) most = std::max(most, c.stage);
    if (most <= 1)
      for (TestCurve& c : t.curves) c.stage = 0;
  }
  // Residuals of each quality row from the curve of the same quantity, in order (stage by stage).
  for (TestReport& t : d.tests) {
    if (t.drainage == Drainage::other && !t.curves.empty()) t.drainage = Drainage::drained;
    std::map<std::string, int> seen;
    for (CurveQuality& q : t.quality) {
      const std::string quantity = q.name.substr(0, q.name.find(" vs "));
      int k = seen[quantity]++;
      const TestCurve* c = nullptr;
      for (const TestCurve& tc : t.curves)
        if (tc.quantity == quantity && k-- == 0) {
          c = &tc;
          break;
        }
      if (!c || c->simulated.x.size() != c->measured.x.size()) continue;
      double lo = 0, hi = 0;
      if (!c->measured.y.empty()) {
        lo = *std::min_element(c->measured.y.begin(), c->measured.y.end());
        hi = *std::max_element(c->measured.y.begin(), c->measured.y.end());
      }
      if (!(hi > lo)) continue;
      for (std::size_t i = 0; i < c->measured.x.size(); ++i) {
        q.residuals.x.push_back(c->measured.x[i]);
        q.residuals.y.push_back((c->simulated.y[i] - c->measured.y[i]) / (hi - lo));
      }
    }
  }
  if (!recorded_outcome) derive_outcome(d, source);
  d.provenance.emplace_back("report built from", params_path.filename().string() + " and " +
                                                     csv_path.filename().string() +
                                                     " (no report input: no optimiser history, no stress paths)");
  return d;
}

std::vector<std::filesystem::path> with_suffix(const std::filesystem::path& dir, const std::string& suffix) {
  std::vector<std::filesystem::path> out;
  for (const auto& e : std::filesystem::directory_iterator(dir)) {
    const std::string name = e.path().filename().string();
    if (e.is_regular_file() && name.size() > suffix.size() && name.compare(name.size() - suffix.size(), suffix.size(), suffix) == 0)
      out.push_back(e.path());
  }
  std::sort(out.begin(), out.end());
  return out;
}

}  // namespace

std::string report_input_json(const ReportData& d) {
  ordered_json root;
  root["format"] = kReportInputFormat;
  root["version"] = kReportInputVersion;
  root["title"] = d.title;
  root["project"] = d.project;
  root["model"] = d.model;
  root["model_description"] = d.model_description;
  root["outcome"] = to_string(d.outcome);
  root["outcome_reason"] = d.outcome_reason;
  root["termination"] = d.termination;
  root["message"] = d.message;
  root["objective"] = number(d.objective);
  root["start_objective"] = number(d.start_objective);
  root["evaluations"] = d.evaluations;
  root["wall_time"] = number(d.wall_time);
  ordered_json tests = ordered_json::array();
  for (const TestReport& t : d.tests) {
    ordered_json q = ordered_json::array();
    for (const CurveQuality& c : t.quality)
      q.push_back({{"name", c.name}, {"unit", c.unit}, {"points", c.points}, {"rmse", number(c.rmse)},
                   {"r_squared", number(c.r_squared)}, {"residuals", xy(c.residuals)}, {"x_name", c.x_name},
                   {"x_scale", c.x_scale}, {"x_unit", c.x_unit}});
    ordered_json curves = ordered_json::array();
    for (const TestCurve& c : t.curves) curves.push_back(test_curve(c));
    tests.push_back({{"id", t.id}, {"description", t.description}, {"drainage", drainage_name(t.drainage)},
                     {"used", t.used}, {"simulated", t.simulated}, {"message", t.message},
                     {"objective", number(t.objective)}, {"weight", t.weight}, {"curves", curves},
                     {"stress_path", pair(t.stress_path)}, {"compression", pair(t.compression)}, {"quality", q}});
  }
  root["tests"] = tests;
  ordered_json params = ordered_json::array();
  for (const ParameterRow& p : d.parameters)
    params.push_back({{"name", p.name}, {"unit", p.unit}, {"status", p.status}, {"expression", p.expression},
                      {"value", number(p.value)}, {"start", number(p.start)}, {"lower", number(p.lower)},
                      {"upper", number(p.upper)}, {"standard_error", number(p.standard_error)},
                      {"interval_low", number(p.interval_low)}, {"interval_high", number(p.interval_high)},
                      {"at_bound", p.at_bound}, {"description", p.description}});
  root["parameters"] = params;
  ordered_json matrix = ordered_json::array();
  for (const auto& r : d.correlation.matrix) matrix.push_back(numbers(r));
  root["correlation"] = {{"names", d.correlation.names}, {"matrix", matrix}, {"strong", d.correlation.strong}};
  ordered_json comps = ordered_json::array();
  for (const Comparison& c : d.comparisons) {
    comps.push_back({{"quantity", c.quantity}, {"unit", c.unit}, {"classical", number(c.classical)},
                     {"model", number(c.model)}, {"basis", c.basis}});
    if (!c.note.empty()) comps.back()["note"] = c.note;
  }
  root["comparisons"] = comps;
  ordered_json pts = ordered_json::array();
  for (const StressPoint& p : d.strength.points)
    pts.push_back({{"label", p.label}, {"s", number(p.s)}, {"t", number(p.t)}, {"used", p.used}});
  ordered_json pq = ordered_json::array();
  for (const Line& l : d.strength.pq_lines) pq.push_back(line(l));
  root["strength"] = {{"points", pts},
                      {"regression", line(d.strength.regression)},
                      {"design", line(d.strength.design)},
                      {"model", line(d.strength.model)},
                      {"range_low", number(d.strength.range_low)},
                      {"range_high", number(d.strength.range_high)},
                      {"design_stress", number(d.strength.design_stress)},
                      {"pq_lines", pq},
                      {"criterion", d.strength.criterion}};
  ordered_json hist = ordered_json::array();
  for (const HistoryPoint& h : d.history)
    hist.push_back(ordered_json::array({h.evaluation, number(h.objective), number(h.best), h.stage}));
  root["history"] = hist;
  root["warnings"] = d.warnings;
  if (!d.fit_stages.empty()) root["fit_stages"] = d.fit_stages;
  if (!d.intervals_from.empty()) root["intervals_from"] = d.intervals_from;
  ordered_json ex = ordered_json::array();
  for (const Excluded& e : d.excluded) ex.push_back({{"id", e.id}, {"reason", e.reason}});
  root["excluded"] = ex;
  ordered_json prov = ordered_json::array();
  for (const auto& [k, v] : d.provenance) prov.push_back(ordered_json::array({k, v}));
  root["provenance"] = prov;
  root["caution"] = d.caution;
  return root.dump(1) + "\n";
}

ReportData parse_report_input(const std::string& text, const std::string& source) {
  const json root = detail::parse_json(text, source);
  detail::require_object(root, source, "");
  // Version 1 wrote the outcome as success/partial/failed; it is read and its outcome derived again.
  // Versions 1 and 2 held one deviator / pore_pressure / volumetric pair a test instead of "curves".
  const bool version1 = root.contains("version") && root.at("version") == 1;
  const bool version2 = root.contains("version") && root.at("version") == 2;
  detail::check_format(root, kReportInputFormat, version1 ? 1 : (version2 ? 2 : kReportInputVersion), source);
  const Reader r{source};
  r.object(root, "",
           {"format", "version", "title", "project", "model", "model_description", "outcome", "outcome_reason",
            "termination", "message",
            "objective", "start_objective", "evaluations", "wall_time", "tests", "parameters", "correlation",
            "comparisons", "strength", "history", "warnings", "excluded", "provenance", "caution", "fit_stages",
            "intervals_from"});
  ReportData d;
  d.title = r.str(root, "title", "", d.title);
  d.project = r.str(root, "project", "");
  d.model = r.str(root, "model", "");
  d.model_description = r.str(root, "model_description", "");
  const std::string outcome = r.str(root, "outcome", "");
  if (version1) {
    if (!outcome.empty() && outcome != "success" && outcome != "partial" && outcome != "failed")
      r.fail("outcome", "expected success, partial or failed (version 1), found \"" + outcome + "\"");
  } else if (!parse_outcome(outcome, d.outcome)) {
    r.fail("outcome", "expected converged, stopped, poor_fit or failed, found \"" + outcome + "\"");
  }
  d.outcome_reason = r.str(root, "outcome_reason", "");
  d.termination = r.str(root, "termination", "");
  d.message = r.str(root, "message", "");
  d.objective = r.num(root, "objective", "");
  d.start_objective = r.num(root, "start_objective", "");
  d.evaluations = r.integer(root, "evaluations", "");
  d.wall_time = r.num(root, "wall_time", "");
  r.each(root, "tests", "", [&](const json& j, const detail::KeyPath& p) {
    if (version1 || version2)
      r.object(j, p, {"id", "description", "drainage", "used", "simulated", "message", "objective", "weight", "deviator",
                      "pore_pressure", "volumetric", "stress_path", "compression", "quality"});
    else
      r.object(j, p, {"id", "description", "drainage", "used", "simulated", "message", "objective", "weight", "curves",
                      "stress_path", "compression", "quality"});
    TestReport t;
    t.id = detail::get_string(j, "id", source, p);
    t.description = r.str(j, "description", p);
    t.drainage = parse_drainage(r.str(j, "drainage", p, "other"), r, p / "drainage");
    t.used = r.boolean(j, "used", p, true);
    t.simulated = r.boolean(j, "simulated", p, true);
    t.message = r.str(j, "message", p);
    t.objective = r.num(j, "objective", p);
    t.weight = r.num(j, "weight", p, 1.0);
    if (version1 || version2) {
      const std::pair<const char*, const char*> old_pairs[] = {
          {"deviator", "deviator_stress"}, {"pore_pressure", "excess_pore_pressure"}, {"volumetric", "volumetric_strain"}};
      for (const auto& [key, quantity] : old_pairs) {
        const CurvePair c = r.pair(j, key, p);
        if (c.empty()) continue;
        TestCurve tc;
        tc.quantity = quantity;
        tc.unit = std::string(quantity) == "volumetric_strain" ? "-" : "kPa";
        tc.measured = c.measured;
        tc.simulated = c.simulated;
        t.curves.push_back(tc);
      }
    }
    r.each(j, "curves", p, [&](const json& c, const detail::KeyPath& cp) {
      r.object(c, cp, {"quantity", "unit", "stage", "measured", "simulated", "fitted_from", "fitted_to"});
      TestCurve tc;
      tc.quantity = detail::get_string(c, "quantity", source, cp);
      tc.unit = r.str(c, "unit", cp, tc.unit);
      const long stage = r.integer(c, "stage", cp, 0, 1000);
      tc.stage = static_cast<int>(stage);
      tc.measured = r.xy(c, "measured", cp);
      tc.simulated = r.xy(c, "simulated", cp);
      tc.fitted_from = r.num(c, "fitted_from", cp);
      tc.fitted_to = r.num(c, "fitted_to", cp);
      t.curves.push_back(tc);
    });
    t.stress_path = r.pair(j, "stress_path", p);
    t.compression = r.pair(j, "compression", p);
    r.each(j, "quality", p, [&](const json& q, const std::string& qp) {
      r.object(q, qp, {"name", "unit", "points", "rmse", "r_squared", "residuals", "x_name", "x_scale", "x_unit"});
      CurveQuality c;
      c.name = r.str(q, "name", qp);
      c.unit = r.str(q, "unit", qp);
      c.points = static_cast<int>(r.integer(q, "points", qp, 0, std::numeric_limits<int>::max()));
      c.rmse = r.num(q, "rmse", qp);
      c.r_squared = r.num(q, "r_squared", qp);
      c.residuals = r.xy(q, "residuals", qp);
      c.x_name = r.str(q, "x_name", qp, c.x_name);
      c.x_scale = r.num(q, "x_scale", qp, c.x_scale);
      c.x_unit = r.str(q, "x_unit", qp, c.x_unit);
      t.quality.push_back(c);
    });
    d.tests.push_back(t);
  });
  r.each(root, "parameters", "", [&](const json& j, const detail::KeyPath& p) {
    r.object(j, p, {"name", "unit", "status", "expression", "value", "start", "lower", "upper", "standard_error",
                    "interval_low", "interval_high", "at_bound", "description"});
    ParameterRow row;
    row.name = detail::get_string(j, "name", source, p);
    row.unit = r.str(j, "unit", p);
    row.status = r.str(j, "status", p, "fixed");
    if (row.status != "free" && row.status != "fixed" && row.status != "tied")
      r.fail(p / "status", "expected free, fixed or tied, found \"" + row.status + "\"");
    row.expression = r.str(j, "expression", p);
    row.value = r.num(j, "value", p);
    row.start = r.num(j, "start", p);
    row.lower = r.num(j, "lower", p);
    row.upper = r.num(j, "upper", p);
    row.standard_error = r.num(j, "standard_error", p);
    row.interval_low = r.num(j, "interval_low", p);
    row.interval_high = r.num(j, "interval_high", p);
    row.at_bound = r.boolean(j, "at_bound", p, false);
    row.description = r.str(j, "description", p);
    d.parameters.push_back(row);
  });
  if (root.contains("correlation")) {
    const json& c = root["correlation"];
    r.object(c, "correlation", {"names", "matrix", "strong"});
    d.correlation.names = r.strings(c, "names", "correlation");
    d.correlation.strong = r.num(c, "strong", "correlation", 0.9);
    r.each(c, "matrix", "correlation", [&](const json& row, const detail::KeyPath& p) {
      if (!row.is_array()) r.fail(p, "expected an array of numbers, found " + row.dump());
      std::vector<double> v;
      for (const auto& x : row) v.push_back(x.is_number() ? x.get<double>() : kUnknown);
      if (v.size() != d.correlation.names.size())
        r.fail(p, "has " + std::to_string(v.size()) + " values (expected " +
                      std::to_string(d.correlation.names.size()) + ", one a name)");
      d.correlation.matrix.push_back(v);
    });
    if (d.correlation.matrix.size() != d.correlation.names.size())
      r.fail("correlation.matrix", "has " + std::to_string(d.correlation.matrix.size()) + " rows (expected " +
                                       std::to_string(d.correlation.names.size()) + ", one a name)");
  }
  r.each(root, "comparisons", "", [&](const json& j, const detail::KeyPath& p) {
    r.object(j, p, {"quantity", "unit", "classical", "model", "basis", "note"});
    d.comparisons.push_back({r.str(j, "quantity", p), r.str(j, "unit", p), r.num(j, "classical", p), r.num(j, "model", p),
                             r.str(j, "basis", p), r.str(j, "note", p)});
  });
  if (root.contains("strength")) {
    const json& s = root["strength"];
    const detail::KeyPath p = "strength";
    r.object(s, p, {"points", "regression", "design", "model", "range_low", "range_high", "design_stress", "pq_lines", "criterion"});
    r.each(s, "points", p, [&](const json& j, const std::string& pp) {
      r.object(j, pp, {"label", "s", "t", "used"});
      d.strength.points.push_back({r.str(j, "label", pp), r.num(j, "s", pp), r.num(j, "t", pp), r.boolean(j, "used", pp, true)});
    });
    if (s.contains("regression")) d.strength.regression = r.line(s["regression"], p / "regression");
    if (s.contains("design")) d.strength.design = r.line(s["design"], p / "design");
    if (s.contains("model")) d.strength.model = r.line(s["model"], p / "model");
    d.strength.range_low = r.num(s, "range_low", p);
    d.strength.range_high = r.num(s, "range_high", p);
    d.strength.design_stress = r.num(s, "design_stress", p);
    r.each(s, "pq_lines", p, [&](const json& j, const std::string& pp) { d.strength.pq_lines.push_back(r.line(j, pp)); });
    d.strength.criterion = r.str(s, "criterion", p);
  }
  r.each(root, "history", "", [&](const json& j, const detail::KeyPath& p) {
    if (!j.is_array() || j.size() != 4 || !j[0].is_number_integer() || !j[3].is_number_integer())
      r.fail(p, "expected [evaluation, objective, best, stage], found " + j.dump());
    HistoryPoint h;
    h.evaluation = static_cast<long>(detail::get_integer_in(j[0], 0, std::numeric_limits<long>::max(), r.source, p[0]));
    h.objective = j[1].is_number() ? j[1].get<double>() : kUnknown;
    h.best = j[2].is_number() ? j[2].get<double>() : kUnknown;
    h.stage = static_cast<int>(detail::get_integer_in(j[3], 0, std::numeric_limits<int>::max(), r.source, p[3]));
    d.history.push_back(h);
  });
  d.warnings = r.strings(root, "warnings", "");
  if (root.contains("fit_stages")) d.fit_stages = r.strings(root, "fit_stages", "");
  d.intervals_from = r.str(root, "intervals_from", "");
  r.each(root, "excluded", "", [&](const json& j, const detail::KeyPath& p) {
    r.object(j, p, {"id", "reason"});
    d.excluded.push_back({r.str(j, "id", p), r.str(j, "reason", p)});
  });
  r.each(root, "provenance", "", [&](const json& j, const detail::KeyPath& p) {
    if (!j.is_array() || j.size() != 2 || !j[0].is_string() || !j[1].is_string())
      r.fail(p, "expected [key, value] strings, found " + j.dump());
    d.provenance.emplace_back(j[0].get<std::string>(), j[1].get<std::string>());
  });
  d.caution = r.str(root, "caution", "", kCautionText);
  if (d.caution.empty()) d.caution = kCautionText;
  if (version1) derive_outcome(d, source);
  return d;
}

ReportData read_result_directory(const std::filesystem::path& dir, std::string& stem) {
  namespace fs = std::filesystem;
  if (!fs::is_directory(dir)) throw InputError(dir.string() + ": not a directory");
  const auto inputs = with_suffix(dir, ".report.json");
  if (inputs.size() > 1)
    throw InputError(dir.string() + ": " + std::to_string(inputs.size()) +
                     " report inputs (*.report.json); expected one");
  if (inputs.size() == 1) {
    const std::string name = inputs[0].filename().string();
    stem = name.substr(0, name.size() - std::string(".report.json").size());
    return parse_report_input(detail::read_text_file(inputs[0].string()), inputs[0].string());
  }
  const auto params = with_suffix(dir, ".parameters.json");
  if (params.empty())
    throw InputError(dir.string() + ": no report input (<name>.report.json) and no fit result "
                     "(<name>.parameters.json with <name>.curves.csv)");
  if (params.size() > 1)
    throw InputError(dir.string() + ": " + std::to_string(params.size()) +
                     " parameter sets (*.parameters.json); expected one");
  const std::string name = params[0].filename().string();
  stem = name.substr(0, name.size() - std::string(".parameters.json").size());
  const fs::path csv = dir / (stem + ".curves.csv");
  if (!fs::exists(csv)) throw InputError(csv.string() + ": missing (written by triaxcal fit beside the parameter set)");
  return from_fit_files(params[0], csv);
}

}  // namespace triaxcal::report
