#include "calibration_run.hpp"

#include "../../core/src/json_checks.hpp"

#include "triaxcal/calibration_file.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::plugin {

CalibrationRun run_calibration(const std::string& text, const std::string& source, const CalibrationCallback& progress) {
  CalibrationFile file = parse_calibration_file(text, source);
  const TestSeries series = read_test_series(file.series);
  const ModelEntry* entry = nullptr;
  try {
    entry = &find_model(file.model);
  } catch (const InputError& e) {
    throw InputError(source + ": model: " + e.what());
  }
  CalibrationRun run;
  run.model = &entry->info();
  // Missing bounds and starts from the classical interpretation, before the problem is checked.
  run.notes = seed_from_interpretation(file, series, entry->info());
  auto create = entry->create;
  CalibrationProblem problem = build_calibration_problem(
      file, series, entry->info(), [create, source](const ParameterValues& v) { return create(v, source); });

  CalibrationProvenance prov;
  prov.software_version = kPluginVersion;
  prov.created = utc_now();
  prov.caution = kCaution;
  prov.description = file.description;
  prov.inputs.emplace_back(source, sha256_hex(text));
  prov.inputs.emplace_back(file.series, sha256_file(file.series));
  for (const CalibrationTest& t : problem.tests) {
    prov.tests.push_back(t.id);
    for (const Specimen& s : series.specimens)
      if (s.id == t.id) prov.inputs.emplace_back(s.data.path, sha256_file(s.data.path));
  }

  CalibrationOptions options = file.options;
  options.progress = progress;
  run.summary = calibrate(options, problem);
  if (run.summary.usable()) run.parameter_set = format_parameter_set(run.summary, entry->info(), prov);
  return run;
}

json calibration_result_json(const CalibrationRun& run) {
  const CalibrationSummary& s = run.summary;
  json tests = json::array();
  for (const TestFit& t : s.tests) {
    json curves = json::array();
    for (const CurveFit& c : t.curves) {
      json xs = json::array(), measured = json::array(), simulated = json::array();
      for (double v : c.xs) xs.push_back(number_or_null(v));
      for (double v : c.measured) measured.push_back(number_or_null(v));
      for (double v : c.simulated) simulated.push_back(number_or_null(v));
      curves.push_back({{"x", to_string(c.x)},
                        {"y", to_string(c.y)},
                        {"unit", unit_of(c.y)},
                        {"points", c.points},
                        {"rmse", number_or_null(c.rmse)},
                        {"r_squared", number_or_null(c.r_squared)},
                        {"used", c.used},
                        {"poor_fit", c.poor},
                        {"x_values", xs},
                        {"measured", measured},
                        {"simulated", simulated}});
    }
    tests.push_back({{"id", t.id},
                     {"simulated", t.simulated},
                     {"message", t.message},
                     {"objective", number_or_null(t.objective)},
                     {"curves", curves}});
  }
  return {{"format", kCalibrationResultFormat},
          {"version", 1},
          {"model", s.model},
          {"outcome", to_string(s.outcome)},
          {"outcome_reason", s.outcome_reason},
          {"outcome_explanation", explain(s.outcome)},
          {"termination", to_string(s.termination)},
          {"message", s.message},
          {"usable", s.usable()},
          {"objective", number_or_null(s.objective)},
          {"start_objective", number_or_null(s.start_objective)},
          {"evaluations", s.evaluations},
          {"failed_simulations", s.failed_simulations},
          {"wall_time", s.wall_time},
          {"warnings", s.warnings},
          {"notes", run.notes},
          {"parameter_set", run.parameter_set.empty() ? json(nullptr) : detail::parse_json(run.parameter_set, "parameter set")},
          {"tests", tests},
          {"caution", kCaution}};
}

}  // namespace triaxcal::plugin
