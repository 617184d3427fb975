// The HDF5 archive of a calibration (layout in docs/calibration-format.md), through the HDF5 C API.

#include <hdf5.h>

#include <cmath>
#include <system_error>

#include "triaxcal/atomic_file.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/error.hpp"

namespace triaxcal {

namespace {

class Writer {
 public:
  explicit Writer(const std::string& path) : path_(path) {}

  [[noreturn]] void fail(const std::string& what) const {
    throw InputError(path_ + ": cannot write the HDF5 archive (" + what + ")");
  }
  hid_t check(hid_t id, const char* what) const {
    if (id < 0) fail(what);
    return id;
  }
  void check(herr_t status, const char* what) const {
    if (status < 0) fail(what);
  }

  hid_t group(hid_t parent, const std::string& name) const {
    return check(H5Gcreate2(parent, name.c_str(), H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), "group");
  }

  void attribute(hid_t loc, const std::string& name, const std::string& value) const {
    const hid_t type = check(H5Tcopy(H5T_C_S1), "string type");
    H5Tset_size(type, std::max<std::size_t>(1, value.size()));
    H5Tset_strpad(type, H5T_STR_NULLTERM);
    const hid_t space = check(H5Screate(H5S_SCALAR), "space");
    const hid_t attr = check(H5Acreate2(loc, name.c_str(), type, space, H5P_DEFAULT, H5P_DEFAULT), "attribute");
    const std::string padded = value.empty() ? std::string(1, '\0') : value;
    check(H5Awrite(attr, type, padded.c_str()), "attribute write");
    H5Aclose(attr);
    H5Sclose(space);
    H5Tclose(type);
  }
  void attribute(hid_t loc, const std::string& name, double value) const {
    const hid_t space = check(H5Screate(H5S_SCALAR), "space");
    const hid_t attr = check(H5Acreate2(loc, name.c_str(), H5T_NATIVE_DOUBLE, space, H5P_DEFAULT, H5P_DEFAULT), "attribute");
    check(H5Awrite(attr, H5T_NATIVE_DOUBLE, &value), "attribute write");
    H5Aclose(attr);
    H5Sclose(space);
  }
  void attribute(hid_t loc, const std::string& name, long value) const {
    const long long v = value;
    const hid_t space = check(H5Screate(H5S_SCALAR), "space");
    const hid_t attr = check(H5Acreate2(loc, name.c_str(), H5T_NATIVE_LLONG, space, H5P_DEFAULT, H5P_DEFAULT), "attribute");
    check(H5Awrite(attr, H5T_NATIVE_LLONG, &v), "attribute write");
    H5Aclose(attr);
    H5Sclose(space);
  }

  /// A 1-D (or 2-D with cols > 0) double dataset with a unit attribute.
  void doubles(hid_t loc, const std::string& name, const std::vector<double>& v, const std::string& unit,
               hsize_t cols = 0) const {
    hsize_t dims[2] = {cols > 0 ? v.size() / cols : v.size(), cols};
    const hid_t space = check(H5Screate_simple(cols > 0 ? 2 : 1, dims, nullptr), "space");
    const hid_t set = check(H5Dcreate2(loc, name.c_str(), H5T_NATIVE_DOUBLE, space, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), "dataset");
    if (!v.empty()) check(H5Dwrite(set, H5T_NATIVE_DOUBLE, H5S_ALL, H5S_ALL, H5P_DEFAULT, v.data()), "dataset write");
    if (!unit.empty()) attribute(set, "unit", unit);
    H5Dclose(set);
    H5Sclose(space);
  }
  void integers(hid_t loc, const std::string& name, const std::vector<long long>& v) const {
    hsize_t dims[1] = {v.size()};
    const hid_t space = check(H5Screate_simple(1, dims, nullptr), "space");
    const hid_t set = check(H5Dcreate2(loc, name.c_str(), H5T_NATIVE_LLONG, space, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), "dataset");
    if (!v.empty()) check(H5Dwrite(set, H5T_NATIVE_LLONG, H5S_ALL, H5S_ALL, H5P_DEFAULT, v.data()), "dataset write");
    H5Dclose(set);
    H5Sclose(space);
  }
  void strings(hid_t loc, const std::string& name, const std::vector<std::string>& v) const {
    const hid_t type = check(H5Tcopy(H5T_C_S1), "string type");
    H5Tset_size(type, H5T_VARIABLE);
    std::vector<const char*> p;
    for (const auto& s : v) p.push_back(s.c_str());
    hsize_t dims[1] = {v.size()};
    const hid_t space = check(H5Screate_simple(1, dims, nullptr), "space");
    const hid_t set = check(H5Dcreate2(loc, name.c_str(), type, space, H5P_DEFAULT, H5P_DEFAULT, H5P_DEFAULT), "dataset");
    if (!p.empty()) check(H5Dwrite(set, type, H5S_ALL, H5S_ALL, H5P_DEFAULT, p.data()), "dataset write");
    H5Dclose(set);
    H5Sclose(space);
    H5Tclose(type);
  }
  void text(hid_t loc, const std::string& name, const std::string& value) const { strings(loc, name, {value}); }

 private:
  std::string path_;
};

std::string group_name(const std::string& id) {
  std::string s = id.empty() ? "test" : id;
  for (char& c : s)
    if (c == '/' || c == '.') c = '_';
  return s;
}

void write_contents(const Writer& w, hid_t file, const CalibrationSummary& s, const ModelInfo& model,
                    const CalibrationProvenance& prov, const std::string& json) {
  w.attribute(file, "format", std::string("triaxcal-archive"));
  w.attribute(file, "version", 1L);
  w.attribute(file, "model", model.name);
  w.attribute(file, "model_title", model.title);
  w.attribute(file, "software", "triaxcal " + prov.software_version);
  w.attribute(file, "created", prov.created);
  w.attribute(file, "description", prov.description);
  w.attribute(file, "caution", prov.caution);
  w.text(file, "parameter_set", json);

  const hid_t params = w.group(file, "parameters");
  for (const FittedParameter& p : s.parameters) {
    w.doubles(params, p.name, {p.value}, p.unit);
    const hid_t set = H5Dopen2(params, p.name.c_str(), H5P_DEFAULT);
    w.attribute(set, "status", to_string(p.status));
    if (p.status == ParameterStatus::free) {
      w.attribute(set, "standard_error", p.standard_error);
      w.attribute(set, "interval_95_low", p.interval_low);
      w.attribute(set, "interval_95_high", p.interval_high);
      w.attribute(set, "lower_bound", p.lower);
      w.attribute(set, "upper_bound", p.upper);
      w.attribute(set, "start", p.start);
    }
    if (p.status == ParameterStatus::tied) w.attribute(set, "expression", p.expression);
    H5Dclose(set);
  }
  H5Gclose(params);

  const hid_t summary = w.group(file, "summary");
  w.attribute(summary, "outcome", to_string(s.outcome));
  w.attribute(summary, "outcome_reason", s.outcome_reason);
  w.attribute(summary, "termination", to_string(s.termination));
  w.attribute(summary, "message", s.message);
  w.attribute(summary, "objective", s.objective);
  w.attribute(summary, "start_objective", s.start_objective);
  w.attribute(summary, "evaluations", s.evaluations);
  w.attribute(summary, "failed_simulations", s.failed_simulations);
  w.attribute(summary, "jacobian_evaluations", s.jacobian_evaluations);
  w.attribute(summary, "exact_jacobians", s.exact_jacobians);
  w.attribute(summary, "difference_jacobians", s.difference_jacobians);
  w.attribute(summary, "work_limited_simulations", s.work_limited_simulations);
  w.attribute(summary, "local_runs", static_cast<long>(s.local_runs));
  w.attribute(summary, "local_runs_at_best", static_cast<long>(s.starts_at_best));
  w.attribute(summary, "failed_starts", static_cast<long>(s.failed_starts));
  w.attribute(summary, "wall_time_s", s.wall_time);
  w.attribute(summary, "threads", static_cast<long>(s.threads));
  w.attribute(summary, "global_algorithm", s.global_algorithm);
  w.attribute(summary, "local_algorithm", s.local_algorithm);
  w.attribute(summary, "loss", s.loss);
  w.attribute(summary, "options", s.options_text);
  w.strings(summary, "free_parameters", s.free_names);
  w.strings(summary, "warnings", s.warnings);
  if (s.covariance.size() > 0) {
    const auto P = static_cast<hsize_t>(s.covariance.rows());
    std::vector<double> cov, cor;
    for (Eigen::Index i = 0; i < s.covariance.rows(); ++i)
      for (Eigen::Index j = 0; j < s.covariance.cols(); ++j) {
        cov.push_back(s.covariance(i, j));
        cor.push_back(s.correlation(i, j));
      }
    w.doubles(summary, "covariance", cov, "units of the free parameters (row x column)", P);
    w.doubles(summary, "correlation", cor, "-", P);
  }
  H5Gclose(summary);

  const hid_t history = w.group(file, "history");
  std::vector<long long> evaluation, stage;
  std::vector<double> objective, best;
  for (const HistoryEntry& h : s.history) {
    evaluation.push_back(h.evaluation);
    stage.push_back(h.stage);
    objective.push_back(h.objective);
    best.push_back(h.best);
  }
  w.integers(history, "evaluation", evaluation);
  w.integers(history, "stage", stage);
  w.doubles(history, "objective", objective, "-");
  w.doubles(history, "best", best, "-");
  w.attribute(history, "stage_codes", std::string("0 = start and design, 1 = global, 2 = local"));
  H5Gclose(history);

  const hid_t tests = w.group(file, "tests");
  for (std::size_t t = 0; t < s.tests.size(); ++t) {
    const TestFit& tf = s.tests[t];
    const hid_t g = w.group(tests, group_name(tf.id));
    w.attribute(g, "id", tf.id);
    w.attribute(g, "simulated", std::string(tf.simulated ? "true" : "false"));
    w.attribute(g, "message", tf.message);
    w.attribute(g, "objective", tf.objective);
    const hid_t curves = w.group(g, "curves");
    for (const CurveFit& c : tf.curves) {
      // A quantity compared more than once in a test (each stage of a multi-stage specimen): _2, _3, ...
      std::string name = to_string(c.y);
      for (int n = 2; H5Lexists(curves, name.c_str(), H5P_DEFAULT) > 0; ++n) name = to_string(c.y) + "_" + std::to_string(n);
      const hid_t cg = w.group(curves, name);
      w.doubles(cg, to_string(c.x), c.xs, unit_of(c.x));
      w.doubles(cg, "measured", c.measured, unit_of(c.y));
      w.doubles(cg, "simulated", c.simulated, unit_of(c.y));
      w.attribute(cg, "rmse", c.rmse);
      w.attribute(cg, "used", std::string(c.used ? "true" : "false"));
      w.attribute(cg, "poor_fit", std::string(c.poor ? "true" : "false"));
      w.attribute(cg, "unit", unit_of(c.y));
      w.attribute(cg, "r_squared", c.r_squared);
      w.attribute(cg, "normalisation_range", c.range);
      H5Gclose(cg);
    }
    H5Gclose(curves);
    if (t < s.simulations.size() && !s.simulations[t].steps.empty()) {
      const SimulationResult& r = s.simulations[t];
      const hid_t sim = w.group(g, "simulation");
      w.attribute(sim, "termination", std::string(r.ok() ? "completed" : "failed"));
      w.attribute(sim, "message", r.message);
      const Quantity columns[] = {Quantity::axial_strain,   Quantity::radial_strain,   Quantity::volumetric_strain,
                                  Quantity::axial_stress,   Quantity::radial_stress,   Quantity::mean_stress,
                                  Quantity::deviator_stress, Quantity::excess_pore_pressure, Quantity::void_ratio,
                                  Quantity::stress_ratio};
      for (Quantity q : columns) {
        std::vector<double> v;
        v.reserve(r.steps.size());
        for (const StepRecord& rec : r.steps) v.push_back(value_of(rec, q));
        w.doubles(sim, to_string(q), v, unit_of(q));
      }
      std::vector<long long> stages;
      for (const StepRecord& rec : r.steps) stages.push_back(rec.stage);
      w.integers(sim, "stage", stages);
      for (std::size_t k = 0; k < model.state_names.size() && k < static_cast<std::size_t>(kMaxStateVariables); ++k) {
        std::vector<double> v;
        for (const StepRecord& rec : r.steps) v.push_back(rec.state[k]);
        w.doubles(sim, "state_" + model.state_names[k], v, "");
      }
      H5Gclose(sim);
    }
    H5Gclose(g);
  }
  H5Gclose(tests);

  const hid_t p = w.group(file, "provenance");
  w.attribute(p, "created", prov.created);
  w.attribute(p, "software", "triaxcal " + prov.software_version);
  std::vector<std::string> paths, hashes;
  for (const auto& [path, hash] : prov.inputs) {
    paths.push_back(path);
    hashes.push_back(hash);
  }
  w.strings(p, "input_files", paths);
  w.strings(p, "input_sha256", hashes);
  H5Gclose(p);
}

}  // namespace

void write_calibration_archive(const std::filesystem::path& path, const CalibrationSummary& summary, const ModelInfo& model,
                               const CalibrationProvenance& provenance, const std::string& parameter_set_json) {
  // The archive is built in memory (HDF5's core driver without a backing store) and written with
  // write_file_atomically: HDF5 itself never writes to the disk. A full disk is then an ordinary
  // write error with its message; when HDF5 wrote the file itself, a close that failed on a full disk
  // left the library in a state its shutdown at exit crashed on (segmentation fault, issue 13).
  H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
  const Writer w(path.string());
  const hid_t fapl = w.check(H5Pcreate(H5P_FILE_ACCESS), "file access list");
  // Strong: closing the file closes every object still open in it (on the error path).
  if (H5Pset_fapl_core(fapl, std::size_t{1} << 20, false) < 0 || H5Pset_fclose_degree(fapl, H5F_CLOSE_STRONG) < 0) {
    H5Pclose(fapl);
    w.fail("in-memory file driver");
  }
  const hid_t file = H5Fcreate(path.filename().string().c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, fapl);
  H5Pclose(fapl);
  if (file < 0) w.fail("create");
  std::string image;
  try {
    write_contents(w, file, summary, model, provenance, parameter_set_json);
    w.check(H5Fflush(file, H5F_SCOPE_GLOBAL), "flush");
    const ssize_t size = H5Fget_file_image(file, nullptr, 0);
    if (size <= 0) w.fail("file image");
    image.resize(static_cast<std::size_t>(size));
    if (H5Fget_file_image(file, image.data(), image.size()) != size) w.fail("file image");
  } catch (...) {
    H5Fclose(file);
    throw;
  }
  if (H5Fclose(file) < 0) w.fail("close");
  write_file_atomically(path, image);
}

}  // namespace triaxcal
