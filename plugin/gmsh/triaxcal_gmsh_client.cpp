// triaxcal-gmsh: the ONELAB client that Gmsh starts for a *.txproj project (plugin/gmsh/README.md).
// It talks to Gmsh through the header-only socket client of onelab.h and links no Gmsh library.
//
// Gmsh starts it as `triaxcal-gmsh -onelab NAME SOCKET` with NAME/Action = initialize, check or
// compute. On initialize and check it reads the physical groups Gmsh publishes, offers one soil
// unit a group of the model's dimension (settings restored from the project file, the user's edits
// in the tree kept) and saves the project file. On compute it also loads each unit's parameter set
// or runs its calibration, writes read-only outputs, merges graph views, writes the export file of
// all units' parameter sets and keeps the results in the project file. A unit that fails reports
// in Gmsh's console and leaves the other units' results alone.

#include <onelab.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

#include "graph_views.hpp"
#include "plugin_json.hpp"
#include "project_file.hpp"
#include "soil_unit.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::gmsh {

namespace fs = std::filesystem;
using nlohmann::json;

namespace {

constexpr const char* kHighlight = "LightYellow";

/// A physical group as Gmsh publishes it in its ONELAB database.
struct Group {
  std::string name;  ///< the key of its soil unit
  int dimension = 0;
  int tag = 0;
};

/// A path component of the tree: "/" would open a subtree.
std::string component(std::string name) {
  for (char& c : name)
    if (c == '/') c = '_';
  return name;
}

class Session {
 public:
  Session(onelab::remoteNetworkClient& client, std::string name) : c_(client), root_(std::move(name)) {}

  int run() {
    const std::string action = get_string(root_ + "/Action");
    const fs::path project_path = locate_project();
    std::error_code missing;
    const bool exists = fs::exists(project_path, missing);
    try {
      if (exists) {
        project_ = read_project(project_path);
      } else {
        // A missing project file starts a new project, as an empty one does (saved below).
        project_ = Project{};
        project_.path = project_path;
        c_.sendInfo("triaxcal: " + project_path.string() + " does not exist: a new project is started there");
      }
    } catch (const InputError& e) {
      // Never overwrite a project file we cannot read: the user's settings are in it.
      c_.sendError(std::string("triaxcal: ") + e.what() + " (the project file is left as it is)");
      return 1;
    }
    const std::string before = exists ? project_json(project_).dump() : std::string();
    declare_project();
    const std::vector<Group> groups = soil_groups();
    sync_units(groups);
    if (action == "compute") {
      compute(groups);
    } else {
      const std::vector<std::string> flagged = check_files(groups);
      publish_saved_results(groups, flagged);
      merge_views(groups, false);
    }
    if (project_json(project_).dump() != before) {
      try {
        write_project(project_);
      } catch (const InputError& e) {
        c_.sendError(std::string("triaxcal: ") + e.what());
        return 1;
      }
    }
    return 0;
  }

 private:
  onelab::remoteNetworkClient& c_;
  std::string root_;
  Project project_;

  std::string input(const std::string& unit, const char* leaf) const {
    return root_ + "/1Soil units/" + component(unit) + "/" + leaf;
  }
  std::string output(const std::string& unit, const std::string& leaf) const {
    return root_ + "/2Results/" + component(unit) + "/" + leaf;
  }

  bool find_string(const std::string& name, std::string& value) {
    std::vector<onelab::string> v;
    c_.get(v, name);
    if (v.empty()) return false;
    value = v[0].getValue();
    return true;
  }
  bool find_number(const std::string& name, double& value) {
    std::vector<onelab::number> v;
    c_.get(v, name);
    if (v.empty() || v[0].getValues().empty()) return false;
    value = v[0].getValue();
    return true;
  }
  std::string get_string(const std::string& name) {
    std::string v;
    find_string(name, v);
    return v;
  }

  /// `triaxcal/Model name` is the project file as Gmsh was given it, relative to Gmsh's working
  /// folder (which is ours) or to the model's folder. Empty when the client was started from Gmsh's
  /// Solver menu with no project file open (the way to start a new project: Gmsh 4.8 does not open a
  /// missing or zero-byte file, so no client runs for one given on the command line): then the
  /// project is <model folder>/<model name>.txproj, made if missing, and the name is set so that
  /// the next run (the Run button) finds it.
  fs::path locate_project() {
    fs::path given(get_string(root_ + "/Model name"));
    if (given.empty()) {
      const fs::path model(get_string("Gmsh/Model name"));
      if (model.empty() || model.stem().empty())
        throw InputError(root_ + "/Model name: empty (open a model with Gmsh, then a *.txproj project file or Solver > " +
                         root_ + ")");
      given = (model.has_parent_path() ? model.parent_path() : fs::path(get_string("Gmsh/Model absolute path"))) /
              (model.stem().string() + ".txproj");
      onelab::string name(root_ + "/Model name", given.string());
      name.setKind("file");
      c_.set(name);
    }
    if (given.is_absolute()) return given;
    std::error_code ec;
    if (fs::exists(given, ec)) return fs::absolute(given).lexically_normal();
    const fs::path model_dir(get_string("Gmsh/Model absolute path"));
    return (model_dir / given).lexically_normal();
  }

  void declare_project() {
    onelab::string p(root_ + "/0Project/0Project file", project_.path.string());
    p.setReadOnly(true);
    p.setHelp("the triaxcal project file: soil-unit settings and results by physical group name");
    c_.set(p);
    std::string exported;
    if (find_string(root_ + "/0Project/1Export file", exported)) {
      project_.export_file = exported;
    } else {
      onelab::string e(root_ + "/0Project/1Export file", project_.export_path().string());
      e.setHelp("every soil unit's parameter set in one JSON (format triaxcal-soil-units), written on each compute");
      c_.set(e);
      project_.export_file = project_.export_path().string();
    }
    if (project_.export_file == (project_.folder() / (project_.path.stem().string() + ".soil-units.json")).string())
      project_.export_file.clear();  // the default: keep the project file portable
  }

  /// Physical groups of the model's dimension (the soil layers); lower-dimensional ones (boundaries)
  /// carry no soil. Unnamed groups cannot be keyed across renumbering and are reported.
  std::vector<Group> soil_groups() {
    double count = 0.0, model_dim = 0.0;
    find_number("Gmsh/Number of physical groups", count);
    find_number("Gmsh/Model dimension", model_dim);
    std::vector<Group> all;
    int top = 0;
    for (int i = 1; i <= static_cast<int>(count); ++i) {
      const std::string base = "Gmsh/Physical group " + std::to_string(i) + "/";
      Group g;
      double d = 0.0, t = 0.0;
      find_number(base + "Dimension", d);
      find_number(base + "Number", t);
      g.dimension = static_cast<int>(d);
      g.tag = static_cast<int>(t);
      g.name = get_string(base + "Name");
      top = std::max(top, g.dimension);
      all.push_back(g);
    }
    const int dim = model_dim > 0 ? std::max(static_cast<int>(model_dim), top) : top;
    std::vector<Group> soil;
    for (const Group& g : all) {
      if (g.dimension != dim) continue;
      if (g.name.empty()) {
        c_.sendWarning("triaxcal: physical group " + std::to_string(g.tag) + " (dimension " +
                       std::to_string(g.dimension) +
                       ") has no name: name it (Physical Surface(\"name\") = ...) to give it a soil unit");
        continue;
      }
      soil.push_back(g);
    }
    if (soil.empty()) c_.sendWarning("triaxcal: the model has no named physical group of dimension " +
                                     std::to_string(dim) + ": there is no soil unit to set");
    for (const auto& [name, unit] : project_.units) {
      bool present = false;
      for (const Group& g : soil) present = present || g.name == name;
      if (!present)
        c_.sendInfo("triaxcal: soil unit '" + name + "' of the project file is not in this model (kept in the project)");
    }
    return soil;
  }

  void string_input(const std::string& name, std::string& value, const std::vector<std::string>& choices,
                    const char* kind, const char* help) {
    std::string edited;
    if (find_string(name, edited)) {
      value = edited;  // the tree has it: the user's (possibly just edited) value wins
      return;
    }
    onelab::string p(name, value);
    if (!choices.empty()) p.setChoices(choices);
    if (kind) p.setKind(kind);
    p.setHelp(help);
    c_.set(p);
  }

  void number_input(const std::string& name, double& value, double lo, double hi, double step, const char* help) {
    double edited = 0.0;
    if (find_number(name, edited)) {
      value = edited;
      return;
    }
    onelab::number p(name, value);
    p.setMin(lo);
    p.setMax(hi);
    p.setStep(step);
    p.setHelp(help);
    c_.set(p);
  }

  /// One subtree of inputs a soil unit: restored from the project file where the tree lacks them,
  /// taken from the tree where the user has set them; the project then holds the merged settings.
  void sync_units(const std::vector<Group>& groups) {
    for (const Group& g : groups) {
      ProjectUnit& unit = project_.units[g.name];
      unit.dimension = g.dimension;
      unit.tag = g.tag;
      UnitSettings& s = unit.settings;
      std::string source = label_of(s.source);
      string_input(input(g.name, "0Source"), source, {"none", "parameter set", "calibration"}, nullptr,
                   "where this soil unit's parameters come from");
      try {
        s.source = parse_source(source, input(g.name, "0Source"));
      } catch (const InputError& e) {
        c_.sendError(std::string("triaxcal: ") + e.what());
      }
      string_input(input(g.name, "1Parameter set file"), s.parameter_set, {}, "file",
                   "a parameter-set JSON (format triaxcal-parameters), e.g. written by triaxcal fit");
      string_input(input(g.name, "2Calibration file"), s.calibration, {}, "file",
                   "a calibration JSON (format triaxcal-calibration): its test series and model are fitted on compute");
      number_input(input(g.name, "3Check test p' [kPa]"), s.check_p, 1.0, 10000.0, 10.0,
                   "mean effective stress at the start of the check test drawn for a parameter set");
      string_input(input(g.name, "4Check test drainage"), s.check_drainage, {"drained", "undrained"}, nullptr,
                   "drainage of the check test's compression");
      number_input(input(g.name, "5Check test void ratio"), s.check_void_ratio, 0.1, 5.0, 0.05,
                   "initial void ratio of the check test (models that need it)");
      number_input(input(g.name, "6Check test OCR"), s.check_ocr, 1.0, 50.0, 0.5,
                   "overconsolidation ratio of the check test (models that need it)");
    }
  }

  void clear_outputs(const std::string& unit) {
    const std::string prefix = root_ + "/2Results/" + component(unit) + "/";
    std::vector<onelab::number> numbers;
    c_.get(numbers, "");
    for (const auto& n : numbers)
      if (n.getName().rfind(prefix, 0) == 0) c_.clear(n.getName());
    std::vector<onelab::string> strings;
    c_.get(strings, "");
    for (const auto& s : strings)
      if (s.getName().rfind(prefix, 0) == 0) c_.clear(s.getName());
  }

  void out_string(const std::string& name, const std::string& value, bool highlight = false) {
    onelab::string p(name, value);
    p.setReadOnly(true);
    if (highlight) p.setAttribute("Highlight", kHighlight);
    c_.set(p);
  }

  /// The outputs of one unit from a result object of the project file (as UnitResult::to_json).
  void publish(const std::string& unit, const json& result) {
    clear_outputs(unit);
    const std::string status = result.value("status", "");
    if (status != "ok") {
      out_string(output(unit, "0Status"), "error: " + reason_first(result.value("message", "")), true);
      return;
    }
    // A calibrated unit's status is its outcome in plain words (docs/calibration-format.md, "Outcome"):
    // only converged reads "ok"; stopped and poor fit are warnings with their reason.
    std::string outcome_word;
    if (result.contains("fit")) outcome_word = result.at("fit").value("outcome", "");
    if (outcome_word.empty() || outcome_word == "converged") {
      out_string(output(unit, "0Status"), outcome_word.empty() ? "ok" : "ok: converged");
    } else {
      CalibrationOutcome o{};
      const std::string what = parse_outcome(outcome_word, o) ? explain(o) : outcome_word;
      out_string(output(unit, "0Status"),
                 "warning: " + what + ": " + result.at("fit").value("outcome_reason", ""), true);
    }
    out_string(output(unit, "1Model"), result.value("model", ""));
    // Model order, as UnitResult::to_json keeps them; only the parameters the model uses at these
    // values (ModelInfo::unused); each value rounded to meaningful digits with its interval beside it.
    int k = -1;  // the model's order, so that a name keeps its place whichever are shown
    for (const json& p : result.value("parameters", json::array())) {
      ++k;
      if (!p.contains("value") || !p.at("value").is_number()) continue;
      if (p.contains("used") && p.at("used").is_boolean() && !p.at("used").get<bool>()) continue;
      const std::string name = p.value("name", "");
      const std::string unit_text = p.value("unit", "");
      const std::string status_text = p.value("status", "");
      const bool interval = p.contains("interval_95") && p.at("interval_95").is_array() && p.at("interval_95").size() == 2 &&
                            p.at("interval_95")[0].is_number() && p.at("interval_95")[1].is_number();
      const double value = p.at("value").get<double>();
      const double low = interval ? p.at("interval_95")[0].get<double>() : 0.0;
      const double high = interval ? p.at("interval_95")[1].get<double>() : 0.0;
      std::string text = rounded(value, interval, low, high);
      if (interval) text += "   (95 % interval " + rounded(low, true, low, high) + " to " + rounded(high, true, low, high) + ")";
      else if (status_text == "fixed" || status_text == "tied") text += "   (" + status_text + ")";
      char order[16];
      std::snprintf(order, sizeof order, "2%02d", k);
      onelab::string o(output(unit, std::string(order) + name + (unit_text.empty() || unit_text == "-" ? "" : " [" + unit_text + "]")),
                       text);
      o.setReadOnly(true);
      o.setAttribute("Highlight", kHighlight);
      o.setHelp(status_text.empty() ? "value of the parameter set" : status_text + " parameter of the calibration");
      c_.set(o);
    }
    if (result.contains("fit")) {
      const json& fit = result.at("fit");
      out_string(output(unit, "4Fit outcome"), fit.value("outcome", ""), true);
      out_string(output(unit, "4Fit termination"), fit.value("termination", ""), true);
      if (fit.contains("objective") && fit.at("objective").is_number())
        out_string(output(unit, "5Fit objective"), rounded(fit.at("objective").get<double>()), true);
      // R^2 in test order (the calibration file's), numbered so that the tree keeps that order.
      int n = 0;
      if (fit.contains("curves"))
        for (const json& c : fit.at("curves"))
          if (c.contains("r_squared") && c.at("r_squared").is_number()) {
            char order[16];
            std::snprintf(order, sizeof order, "6%02d", n++);
            char r2[32];
            std::snprintf(r2, sizeof r2, "%.4f", c.at("r_squared").get<double>());
            out_string(output(unit, std::string(order) + "Fit R2 " + c.value("test", "") + " " + c.value("quantity", "")), r2, true);
          }
    } else if (result.contains("check_peak_q") && result.at("check_peak_q").is_number()) {
      out_string(output(unit, "7Check test peak q [kPa]"), rounded(result.at("check_peak_q").get<double>()), true);
    }
  }

  /// At initialize and check: show what the last compute stored, unless the tree already shows it
  /// or the unit's file is flagged.
  void publish_saved_results(const std::vector<Group>& groups, const std::vector<std::string>& flagged) {
    for (const Group& g : groups) {
      if (std::find(flagged.begin(), flagged.end(), g.name) != flagged.end()) continue;
      const ProjectUnit& u = project_.units[g.name];
      std::string shown;
      if (u.result.is_object() && !find_string(output(g.name, "0Status"), shown)) publish(g.name, u.result);
    }
  }

  /// At initialize and check (when the tree is filled and after each edit): a unit's file that is
  /// missing or unreadable, or a calibration whose test series is missing, is flagged in its status
  /// and in Gmsh's console before any Run. Returns the flagged units.
  std::vector<std::string> check_files(const std::vector<Group>& groups) {
    std::vector<std::string> flagged;
    for (const Group& g : groups) {
      const UnitSettings& s = project_.units[g.name].settings;
      if (s.source == Source::none) continue;
      std::string problem;
      const std::string& file = s.source == Source::calibration ? s.calibration : s.parameter_set;
      const char* what = s.source == Source::calibration ? "calibration file" : "parameter set file";
      std::error_code ec;
      if (file.empty()) {
        problem = std::string(what) + " not given (choose one)";
      } else if (!fs::is_regular_file(project_.resolve(file), ec)) {
        problem = std::string(what) + " not found: " + project_.resolve(file).string();
      } else if (s.source == Source::calibration) {
        try {
          const CalibrationFile cf = read_calibration_file(project_.resolve(file).string());
          const fs::path series = fs::path(cf.series).is_absolute()
                                      ? fs::path(cf.series)
                                      : (project_.resolve(file).parent_path() / cf.series).lexically_normal();
          if (!fs::is_regular_file(series, ec)) problem = "test series not found: " + series.string() + " (" + file + ": series)";
        } catch (const InputError& e) {
          problem = reason_first(e.what());
        }
      }
      if (problem.empty()) continue;
      flagged.push_back(g.name);
      clear_outputs(g.name);
      out_string(output(g.name, "0Status"), "error: " + problem, true);
      c_.sendError("triaxcal: soil unit '" + g.name + "': " + problem);
    }
    return flagged;
  }

  /// The legend line of a unit: its source, model and status.
  std::string legend_of(const ProjectUnit& u) const {
    if (u.settings.source == Source::none) return "no source chosen";
    std::string text = label_of(u.settings.source);
    if (!u.result.is_object()) return text + ": not computed yet";
    const std::string model = u.result.value("model", "");
    if (!model.empty()) text += " (" + model + ")";
    if (u.result.value("status", "") != "ok") return text + ": error";
    std::string outcome;
    if (u.result.contains("fit") && u.result.at("fit").is_object()) outcome = u.result.at("fit").value("outcome", "");
    return text + ": " + (outcome.empty() ? std::string("ok") : outcome);
  }

  /// Colours and legend of every unit, and on compute the graphs of `curves` (by unit), merged
  /// into Gmsh from <project>.triaxcal-views.pos (a check: <project>.triaxcal-legend.pos).
  void merge_views(const std::vector<Group>& groups, bool graphs, const std::map<std::string, std::vector<Curve>>& curves = {}) {
    std::vector<UnitView> views;
    for (const Group& g : groups) {
      UnitView v;
      v.unit = g.name;
      v.dimension = g.dimension;
      v.tag = g.tag;
      v.legend = legend_of(project_.units[g.name]);
      const auto it = curves.find(g.name);
      if (it != curves.end()) v.curves = it->second;
      views.push_back(std::move(v));
    }
    // A check writes the legend alone to a file of its own: the views file keeps the last compute's graphs.
    const fs::path pos =
        project_.folder() / (project_.path.stem().string() + (graphs ? ".triaxcal-views.pos" : ".triaxcal-legend.pos"));
    try {
      write_file_atomically(pos, views_pos(views, graphs));
      c_.sendMergeFileRequest(pos.string());
    } catch (const InputError& e) {
      c_.sendError(std::string("triaxcal: ") + e.what());
    }
  }

  void compute(const std::vector<Group>& groups) {
    std::map<std::string, std::vector<Curve>> views;
    int computed = 0, failed = 0;
    const std::string now = utc_now();
    for (const Group& g : groups) {
      ProjectUnit& unit = project_.units[g.name];
      if (unit.settings.source == Source::none) {
        clear_outputs(g.name);
        unit.result = nullptr;
        continue;
      }
      c_.sendInfo("triaxcal: soil unit '" + g.name + "': " + label_of(unit.settings.source) + " ...");
      auto last = std::chrono::steady_clock::now();
      const std::string name = g.name;
      CalibrationCallback progress = [this, &last, name](const CalibrationProgress& p) {
        const auto t = std::chrono::steady_clock::now();
        if (t - last > std::chrono::milliseconds(250)) {
          last = t;
          c_.sendProgress("triaxcal: " + name + ": " + p.stage + ", " + std::to_string(p.evaluations) +
                          " evaluations, best objective " + format_number(p.best));
        }
        return true;
      };
      const UnitResult r = compute_unit(project_, unit.settings, progress);
      ++computed;
      unit.result = r.to_json(now);
      publish(g.name, unit.result);
      if (r.ok) {
        if (r.converged)
          c_.sendInfo("triaxcal: soil unit '" + g.name + "': " + r.message);
        else
          c_.sendWarning("triaxcal: soil unit '" + g.name + "': " + r.message);
        views[g.name] = r.curves;
      } else {
        ++failed;
        c_.sendError("triaxcal: soil unit '" + g.name + "': " + reason_first(r.message));
      }
    }
    // Colours, legend and graph views (replacing the previous ones).
    merge_views(groups, true, views);
    write_export(groups);
    c_.sendInfo("triaxcal: " + std::to_string(computed - failed) + " of " + std::to_string(computed) +
                " soil unit(s) computed" + (failed ? ", " + std::to_string(failed) + " failed (see the errors above)" : ""));
    c_.sendInfo(std::string("triaxcal: ") + plugin::kCaution);
  }

  /// Every unit with a result as one JSON a solver input writer can read (format triaxcal-soil-units).
  void write_export(const std::vector<Group>& groups) {
    json units = json::object();
    for (const Group& g : groups) {
      const ProjectUnit& u = project_.units[g.name];
      if (u.settings.source == Source::none || !u.result.is_object()) continue;
      // Every unit with a source, with its status: a failed one says why and has no parameter set,
      // so a solver input writer sees it instead of missing it.
      const bool ok = u.result.value("status", "") == "ok";
      units[g.name] = {{"dimension", g.dimension},
                       {"tag", g.tag},
                       {"source", to_string(u.settings.source)},
                       {"file", u.settings.source == Source::calibration ? u.settings.calibration : u.settings.parameter_set},
                       {"status", ok ? "ok" : "error"}};
      if (!u.result.value("model", "").empty()) units[g.name]["model"] = u.result.value("model", "");
      if (!ok) {
        units[g.name]["message"] = u.result.value("message", "");
        continue;
      }
      units[g.name]["parameter_set"] = u.result.at("parameter_set");
      // A calibrated unit carries its outcome, so a solver input writer can refuse a stopped or poor fit.
      if (u.result.contains("fit") && u.result.at("fit").is_object())
        units[g.name]["outcome"] = u.result.at("fit").value("outcome", "");
    }
    const json doc = {{"format", kExportFormat},
                      {"version", 1},
                      {"project", project_.path.string()},
                      {"model_file", get_string("Gmsh/Model name")},
                      {"created", utc_now()},
                      {"software", std::string("triaxcal ") + plugin::kPluginVersion},
                      {"caution", plugin::kCaution},
                      {"units", units}};
    try {
      write_file_atomically(project_.export_path(), plugin::dump(doc) + "\n");
      c_.sendInfo("triaxcal: " + std::to_string(units.size()) + " soil unit(s) with their status written to " +
                  project_.export_path().string());
    } catch (const InputError& e) {
      c_.sendError(std::string("triaxcal: ") + e.what());
    }
  }
};

}  // namespace

}  // namespace triaxcal::gmsh

namespace {

void usage(FILE* to) {
  std::fprintf(to,
               "triaxcal-gmsh %s: the triaxcal ONELAB client for Gmsh.\n"
               "Gmsh starts it (triaxcal-gmsh -onelab NAME SOCKET); declare it with the options snippet\n"
               "triaxcal.opt and open a project:  gmsh -option triaxcal.opt MODEL.geo PROJECT.txproj\n",
               triaxcal::plugin::kPluginVersion);
}

}  // namespace

int main(int argc, char** argv) {
  std::string name, address;
  for (int i = 1; i < argc; ++i) {
    if (std::strcmp(argv[i], "--version") == 0) {
      std::printf("triaxcal-gmsh %s\n", triaxcal::plugin::kPluginVersion);
      return 0;
    }
    if (std::strcmp(argv[i], "--help") == 0 || std::strcmp(argv[i], "-h") == 0) {
      usage(stdout);
      return 0;
    }
    if (std::strcmp(argv[i], "-onelab") == 0 && i + 2 < argc) {
      name = argv[i + 1];
      address = argv[i + 2];
      i += 2;
    }
  }
  if (name.empty()) {
    usage(stderr);
    return 2;
  }
  onelab::remoteNetworkClient client(name, address);
  if (!client.getGmshClient()) {
    std::fprintf(stderr, "triaxcal-gmsh: cannot connect to Gmsh at %s\n", address.c_str());
    return 1;
  }
  try {
    triaxcal::gmsh::Session session(client, name);
    return session.run();
  } catch (const std::exception& e) {
    client.sendError(std::string("triaxcal: ") + e.what());
  } catch (...) {
    client.sendError("triaxcal: internal error: unknown exception");
  }
  return 1;
}
