/* triaxcal C ABI: a stable C interface to the triaxcal engine, for host programs (pre-processors,
 * scripting languages, solvers) that cannot use the C++ headers.
 *
 * - Everything goes in and out as JSON text (UTF-8, NUL-terminated), in the formats of docs/:
 *   parameter sets "triaxcal-parameters", protocols "triaxcal-protocol"; results are
 *   "triaxcal-curves" and the metadata objects described beside each function.
 * - Handles are opaque. Every object the library returns is freed by its own *_free function;
 *   every *_free accepts NULL.
 * - Every function returns a triaxcal_code. On anything but TRIAXCAL_OK, triaxcal_last_error()
 *   gives a message that names the argument or the JSON key, the value found and what was
 *   expected. The message is thread-local: it belongs to the thread that made the call, and the
 *   next call on that thread replaces it (a successful call clears it to "").
 * - No exception crosses this interface; no function aborts on bad input.
 * - Units: kPa for stresses, decimals for strains, compression positive (core conventions.hpp).
 * - Thread safety: distinct calls may run on distinct threads; one triaxcal_model may be used by
 *   several threads at once for triaxcal_simulate (it is never modified after creation).
 */
#ifndef TRIAXCAL_C_H
#define TRIAXCAL_C_H

#include <stddef.h>

#if defined(_WIN32)
#  if defined(TRIAXCAL_C_BUILDING)
#    define TRIAXCAL_C_API __declspec(dllexport)
#  else
#    define TRIAXCAL_C_API __declspec(dllimport)
#  endif
#else
#  define TRIAXCAL_C_API __attribute__((visibility("default")))
#endif

#ifdef __cplusplus
extern "C" {
#endif

/** Raised only when the ABI changes incompatibly (a function removed or its meaning changed). */
#define TRIAXCAL_C_ABI_VERSION 1

/** Return codes. Values are fixed; new codes are only ever appended. */
typedef enum triaxcal_code {
  TRIAXCAL_OK = 0,
  TRIAXCAL_NULL_ARGUMENT = 1,     /**< a required pointer argument was NULL */
  TRIAXCAL_INVALID_INPUT = 2,     /**< malformed JSON, unknown key or model, value out of bounds */
  TRIAXCAL_SIMULATION_FAILED = 3, /**< the driver stopped early; *out still holds the curves so far */
  TRIAXCAL_STOPPED = 4,           /**< the progress callback asked to stop; *out holds the best so far */
  TRIAXCAL_NO_USABLE_RESULT = 5,  /**< a calibration found no parameter set that could be simulated */
  TRIAXCAL_OUT_OF_MEMORY = 6,
  TRIAXCAL_INTERNAL_ERROR = 7,    /**< a bug: please report it with the message */
  TRIAXCAL_UNSUPPORTED = 8        /**< this build lacks the feature (the message says which) */
} triaxcal_code;

/** JSON text owned by the library. Read it with triaxcal_text_data, free it with triaxcal_text_free. */
typedef struct triaxcal_text triaxcal_text;

/** A validated parameter set and the model built from it. */
typedef struct triaxcal_model triaxcal_model;

/** Library version, e.g. "0.1.0" (static storage, never NULL). */
TRIAXCAL_C_API const char* triaxcal_version(void);

/** TRIAXCAL_C_ABI_VERSION of the library actually loaded; compare with the header's. */
TRIAXCAL_C_API int triaxcal_abi_version(void);

/** "ok", "null_argument", "invalid_input", ...; "unknown" for any other value (static, never NULL). */
TRIAXCAL_C_API const char* triaxcal_code_name(int code);

/** Message of the last failed call on this thread; "" after a successful call (never NULL). The
 *  pointer stays valid until the next triaxcal call on the same thread. */
TRIAXCAL_C_API const char* triaxcal_last_error(void);

/** The bytes of a text (NUL-terminated); NULL for a NULL text. */
TRIAXCAL_C_API const char* triaxcal_text_data(const triaxcal_text* text);
/** Length in bytes without the terminating NUL; 0 for a NULL text. */
TRIAXCAL_C_API size_t triaxcal_text_size(const triaxcal_text* text);
TRIAXCAL_C_API void triaxcal_text_free(triaxcal_text* text);

/** Every model with its parameter metadata:
 *  {"format": "triaxcal-models", "version": 1, "models": [MODEL, ...]}, where MODEL is
 *  {"name", "title", "parameters": [{"name", "unit", "default" (null = required), "lower", "upper",
 *   "lower_open", "upper_open", "bounds" (as messages print them), "description"}], "state_variables": [...]}. */
TRIAXCAL_C_API int triaxcal_list_models(triaxcal_text** out);

/** One MODEL object as in triaxcal_list_models. Unknown name: TRIAXCAL_INVALID_INPUT. */
TRIAXCAL_C_API int triaxcal_describe_model(const char* name, triaxcal_text** out);

/** Checks a parameter-set JSON ("triaxcal-parameters") against its model: known names, units, bounds
 *  and the model's own rules. On success *out is the resolved set as a parameter-set JSON with every
 *  parameter (defaults filled in) in the model's order, each as {"value", "unit"}. */
TRIAXCAL_C_API int triaxcal_validate_parameters(const char* parameter_set_json, triaxcal_text** out);

/** Builds a model from a parameter-set JSON (validated as above). Free it with triaxcal_model_free. */
TRIAXCAL_C_API int triaxcal_model_create(const char* parameter_set_json, triaxcal_model** out);
TRIAXCAL_C_API void triaxcal_model_free(triaxcal_model* model);

/** Runs a protocol JSON ("triaxcal-protocol") on the model. *out is
 *  {"format": "triaxcal-curves", "version": 1, "model", "test", "termination" ("completed"/"failed"),
 *   "message", "units": {column: unit}, "columns": {"stage": [...], "step": [...], "axial_strain": [...],
 *   "radial_strain", "volumetric_strain", "axial_stress", "radial_stress", "p", "q",
 *   "excess_pore_pressure", "void_ratio" (null where unknown), "stress_ratio", "cuts"},
 *   "state_variables": {name: [...]}, "stages": [{"stage", "first", "last", "stopped_early", "peak_q", "end_q"}]}
 *  with one array entry a step (entry 0 = the initial state). When the driver fails, the code is
 *  TRIAXCAL_SIMULATION_FAILED, *out still holds the steps it completed and the message says where and why. */
TRIAXCAL_C_API int triaxcal_simulate(const triaxcal_model* model, const char* protocol_json, triaxcal_text** out);

/** Progress of a long call: a JSON object (valid only during the callback). Return 0 to go on,
 *  anything else to stop cleanly. */
typedef int (*triaxcal_progress_fn)(const char* progress_json, void* user_data);

/** The outcome of a calibration, one vocabulary with the CLI, the report and the files
 *  (docs/calibration-format.md, "Outcome"). Values are fixed; new ones are only ever appended. */
typedef enum triaxcal_outcome {
  TRIAXCAL_OUTCOME_CONVERGED = 0, /**< the optimiser converged and the model follows every used curve */
  TRIAXCAL_OUTCOME_STOPPED = 1,   /**< a budget, the time limit or a stop request ended it before it converged */
  TRIAXCAL_OUTCOME_POOR_FIT = 2,  /**< a used curve has R^2 below options.min_r_squared (named in "outcome_reason") */
  TRIAXCAL_OUTCOME_FAILED = 3     /**< no usable parameter set */
} triaxcal_outcome;

/** "converged", "stopped", "poor_fit", "failed" (the words of the result's "outcome" key);
 *  "unknown" for any other value (static, never NULL). */
TRIAXCAL_C_API const char* triaxcal_outcome_name(int outcome);

/** One line in plain words on what the outcome means, for a user interface (static, never NULL;
 *  "" for an unknown value). */
TRIAXCAL_C_API const char* triaxcal_outcome_explanation(int outcome);

/** The outcome of a result of triaxcal_calibrate (its JSON text, e.g. triaxcal_text_data(out)) as a
 *  triaxcal_outcome in *outcome. TRIAXCAL_INVALID_INPUT when the text is not such a result. */
TRIAXCAL_C_API int triaxcal_calibration_outcome(const char* calibration_result_json, int* outcome);

/** Fits a model to a test series as `triaxcal fit` does, from a calibration-file JSON
 *  ("triaxcal-calibration", docs/calibration-format.md). `source` is the path the JSON came from:
 *  it names the JSON in messages, and a relative "series" path resolves against its folder
 *  (NULL: "calibration_json", relative to the current directory). Writes no file.
 *  `progress` (may be NULL) is called on the calling thread (never another one) after every objective
 *  evaluation made on that thread (global runs, design points and the Jacobian also run on worker
 *  threads; "evaluations" counts them all) with
 *  {"stage": "start"/"design"/"global"/"local", "evaluations", "objective", "best", "elapsed" (s)};
 *  a nonzero return stops the run, which then ends cleanly with the best point so far
 *  (TRIAXCAL_STOPPED, *out filled).
 *  *out is {"format": "triaxcal-calibration-result", "version": 1, "model", "outcome" (see
 *  triaxcal_outcome_name), "outcome_reason" (which budget or limit ended it and the option that
 *  raises it, the poorly fitted curves with their R^2, or what failed), "outcome_explanation",
 *  "termination", "message", "usable", "objective", "start_objective", "evaluations",
 *  "failed_simulations", "wall_time", "warnings", "notes", "parameter_set" (a "triaxcal-parameters"
 *  object with intervals, fit quality, provenance and caution; null when nothing usable was found),
 *  "tests": [{"id", "simulated", "message", "objective", "curves": [{"x", "y", "unit", "points",
 *  "rmse", "r_squared", "used", "poor_fit", "x_values", "measured", "simulated"}]}], "caution"}.
 *  Codes: TRIAXCAL_OK for the outcomes converged, stopped by a budget or the time limit, and poor_fit
 *  ("outcome" says which: check it, or use triaxcal_calibration_outcome), TRIAXCAL_STOPPED (the
 *  callback stopped it; *out holds the best so far), TRIAXCAL_NO_USABLE_RESULT (outcome failed;
 *  *out filled), TRIAXCAL_INVALID_INPUT (bad file, series, model or problem; *out NULL). */
TRIAXCAL_C_API int triaxcal_calibrate(const char* calibration_json, const char* source, triaxcal_progress_fn progress,
                                      void* user_data, triaxcal_text** out);

#ifdef __cplusplus
}
#endif

#endif /* TRIAXCAL_C_H */
