// triaxcal_calibrate: a calibration file's JSON in, the fitted parameter set and curves out, with
// a progress callback that can stop the run cleanly.

#include <string>

#include "../../core/src/json_checks.hpp"
#include "c_api_internal.hpp"
#include "calibration_run.hpp"
#include "triaxcal_c.h"

using namespace triaxcal;
using namespace triaxcal::plugin;

extern "C" {

TRIAXCAL_C_API int triaxcal_calibrate(const char* calibration_json, const char* source, triaxcal_progress_fn progress,
                                      void* user_data, triaxcal_text** out) {
  static constexpr const char* fn = "triaxcal_calibrate";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  if (!calibration_json) return null_argument(fn, "calibration_json");
  return guarded(fn, [&] {
    CalibrationCallback callback;
    if (progress)
      callback = [progress, user_data](const CalibrationProgress& p) {
        const std::string text = dump({{"stage", p.stage},
                                       {"evaluations", p.evaluations},
                                       {"objective", number_or_null(p.objective)},
                                       {"best", number_or_null(p.best)},
                                       {"elapsed", p.elapsed}});
        return progress(text.c_str(), user_data) == 0;
      };
    const CalibrationRun run = run_calibration(calibration_json, source ? source : "calibration_json", callback);
    put_text(out, dump(calibration_result_json(run)));
    if (run.summary.outcome == CalibrationOutcome::failed) {
      set_last_error(fn, run.summary.outcome_line().c_str());
      return int(TRIAXCAL_NO_USABLE_RESULT);
    }
    if (run.summary.termination == CalibrationTermination::stopped) {
      set_last_error(fn, run.summary.outcome_line().c_str(), "stopped by the progress callback: ");
      return int(TRIAXCAL_STOPPED);
    }
    return int(TRIAXCAL_OK);
  });
}

namespace {
// Indexed by triaxcal_outcome, which follows CalibrationOutcome's order (checked below).
constexpr CalibrationOutcome kOutcomes[] = {CalibrationOutcome::converged, CalibrationOutcome::stopped,
                                            CalibrationOutcome::poor_fit, CalibrationOutcome::failed};
static_assert(static_cast<int>(CalibrationOutcome::converged) == TRIAXCAL_OUTCOME_CONVERGED &&
                  static_cast<int>(CalibrationOutcome::stopped) == TRIAXCAL_OUTCOME_STOPPED &&
                  static_cast<int>(CalibrationOutcome::poor_fit) == TRIAXCAL_OUTCOME_POOR_FIT &&
                  static_cast<int>(CalibrationOutcome::failed) == TRIAXCAL_OUTCOME_FAILED,
              "triaxcal_outcome must follow CalibrationOutcome");
bool known_outcome(int outcome) { return outcome >= 0 && outcome < 4; }
}  // namespace

TRIAXCAL_C_API const char* triaxcal_outcome_name(int outcome) {
  static const std::string names[] = {to_string(kOutcomes[0]), to_string(kOutcomes[1]), to_string(kOutcomes[2]),
                                      to_string(kOutcomes[3])};
  return known_outcome(outcome) ? names[outcome].c_str() : "unknown";
}

TRIAXCAL_C_API const char* triaxcal_outcome_explanation(int outcome) {
  static const std::string lines[] = {explain(kOutcomes[0]), explain(kOutcomes[1]), explain(kOutcomes[2]),
                                      explain(kOutcomes[3])};
  return known_outcome(outcome) ? lines[outcome].c_str() : "";
}

TRIAXCAL_C_API int triaxcal_calibration_outcome(const char* calibration_result_json, int* outcome) {
  static constexpr const char* fn = "triaxcal_calibration_outcome";
  if (!outcome) return null_argument(fn, "outcome");
  if (!calibration_result_json) return null_argument(fn, "calibration_result_json");
  return guarded(fn, [&] {
    // Under the limits of every JSON text read (depth, number range, size): a 100000-deep array
    // would overflow the stack of nlohmann's recursive parse.
    const json root = detail::parse_json(calibration_result_json, "calibration_result_json");
    if (!root.is_object() || !root.contains("format") || root["format"] != kCalibrationResultFormat)
      throw InputError(std::string("calibration_result_json: format: expected \"") + kCalibrationResultFormat +
                       "\" (a result of triaxcal_calibrate)");
    const std::string word = root.contains("outcome") && root["outcome"].is_string() ? root["outcome"].get<std::string>() : "";
    CalibrationOutcome o{};
    if (!parse_outcome(word, o))
      throw InputError("calibration_result_json: outcome: expected converged, stopped, poor_fit or failed, found \"" +
                       word + "\"");
    *outcome = static_cast<int>(o);
    return int(TRIAXCAL_OK);
  });
}

}  // extern "C"
