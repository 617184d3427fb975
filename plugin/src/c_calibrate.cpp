// triaxcal_calibrate: a calibration file's JSON in, the fitted parameter set and curves out, with
// a progress callback that can stop the run cleanly.

#include <string>

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
    switch (run.summary.termination) {
      case CalibrationTermination::stopped:
        set_last_error(fn, run.summary.message.c_str(), "stopped by the progress callback: ");
        return int(TRIAXCAL_STOPPED);
      case CalibrationTermination::no_usable_result:
      case CalibrationTermination::not_run:
        set_last_error(fn, run.summary.message.c_str());
        return int(TRIAXCAL_NO_USABLE_RESULT);
      default: return int(TRIAXCAL_OK);
    }
  });
}

}  // extern "C"
