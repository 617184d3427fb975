// The C ABI (triaxcal_c.h) over the core calls. Every entry point runs its body inside guarded(),
// which turns every C++ exception into a code and a thread-local message: nothing crosses the ABI.

#include "triaxcal_c.h"

#include <memory>
#include <new>
#include <string>
#include <utility>

#include "c_api_internal.hpp"
#include "plugin_json.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/protocol_json.hpp"

struct triaxcal_model {
  const triaxcal::ModelEntry* entry = nullptr;
  triaxcal::ParameterValues values;
  std::unique_ptr<triaxcal::Model> model;
};

namespace triaxcal::plugin {

namespace {
thread_local std::string t_last_error;
}  // namespace

void set_last_error(const char* function, const char* message, const char* prefix) noexcept {
  try {
    t_last_error = std::string(function) + ": " + prefix + message;
  } catch (...) {
    t_last_error.clear();  // no memory for the message: the code alone must do
  }
}

void clear_last_error() noexcept { t_last_error.clear(); }

const char* last_error() noexcept { return t_last_error.c_str(); }

int null_argument(const char* function, const char* argument) noexcept {
  try {
    t_last_error = std::string(function) + ": " + argument + " is NULL";
  } catch (...) {
    t_last_error.clear();
  }
  return TRIAXCAL_NULL_ARGUMENT;
}

int put_text(triaxcal_text** out, std::string text) {
  auto* t = new triaxcal_text{std::move(text)};
  *out = t;
  return TRIAXCAL_OK;
}

triaxcal_model* build_model(const std::string& parameter_set_json) {
  const ParameterFile file = parse_parameter_file(parameter_set_json, "parameter_set_json");
  const ModelEntry* entry = nullptr;
  try {
    entry = &find_model(file.model);
  } catch (const InputError& e) {
    throw InputError(std::string("parameter_set_json: model: ") + e.what());
  }
  auto m = std::make_unique<triaxcal_model>();
  m->entry = entry;
  m->values = resolve_parameter_file(entry->info(), file);
  m->model = entry->create(m->values, "parameter_set_json");
  return m.release();
}

}  // namespace triaxcal::plugin

using namespace triaxcal;
using namespace triaxcal::plugin;

extern "C" {

TRIAXCAL_C_API const char* triaxcal_version(void) { return TRIAXCAL_C_VERSION; }

TRIAXCAL_C_API int triaxcal_abi_version(void) { return TRIAXCAL_C_ABI_VERSION; }

TRIAXCAL_C_API const char* triaxcal_code_name(int code) {
  switch (code) {
    case TRIAXCAL_OK: return "ok";
    case TRIAXCAL_NULL_ARGUMENT: return "null_argument";
    case TRIAXCAL_INVALID_INPUT: return "invalid_input";
    case TRIAXCAL_SIMULATION_FAILED: return "simulation_failed";
    case TRIAXCAL_STOPPED: return "stopped";
    case TRIAXCAL_NO_USABLE_RESULT: return "no_usable_result";
    case TRIAXCAL_OUT_OF_MEMORY: return "out_of_memory";
    case TRIAXCAL_INTERNAL_ERROR: return "internal_error";
    case TRIAXCAL_UNSUPPORTED: return "unsupported";
    default: return "unknown";
  }
}

TRIAXCAL_C_API const char* triaxcal_last_error(void) { return last_error(); }

TRIAXCAL_C_API const char* triaxcal_text_data(const triaxcal_text* text) {
  return text ? text->data.c_str() : nullptr;
}

TRIAXCAL_C_API size_t triaxcal_text_size(const triaxcal_text* text) { return text ? text->data.size() : 0; }

TRIAXCAL_C_API void triaxcal_text_free(triaxcal_text* text) { delete text; }

TRIAXCAL_C_API int triaxcal_list_models(triaxcal_text** out) {
  static constexpr const char* fn = "triaxcal_list_models";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  return guarded(fn, [&] { return put_text(out, dump(models_json())); });
}

TRIAXCAL_C_API int triaxcal_describe_model(const char* name, triaxcal_text** out) {
  static constexpr const char* fn = "triaxcal_describe_model";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  if (!name) return null_argument(fn, "name");
  return guarded(fn, [&] { return put_text(out, dump(model_json(find_model(name).info()))); });
}

TRIAXCAL_C_API int triaxcal_validate_parameters(const char* parameter_set_json, triaxcal_text** out) {
  static constexpr const char* fn = "triaxcal_validate_parameters";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  if (!parameter_set_json) return null_argument(fn, "parameter_set_json");
  return guarded(fn, [&] {
    const std::unique_ptr<triaxcal_model> m(build_model(parameter_set_json));
    return put_text(out, dump(triaxcal::plugin::parameter_set_json(m->entry->info(), m->values, "resolved by triaxcal_validate_parameters")));
  });
}

TRIAXCAL_C_API int triaxcal_model_create(const char* parameter_set_json, triaxcal_model** out) {
  static constexpr const char* fn = "triaxcal_model_create";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  if (!parameter_set_json) return null_argument(fn, "parameter_set_json");
  return guarded(fn, [&] {
    *out = build_model(parameter_set_json);
    return int(TRIAXCAL_OK);
  });
}

TRIAXCAL_C_API void triaxcal_model_free(triaxcal_model* model) { delete model; }

TRIAXCAL_C_API int triaxcal_simulate(const triaxcal_model* model, const char* protocol_json, triaxcal_text** out) {
  static constexpr const char* fn = "triaxcal_simulate";
  if (!out) return null_argument(fn, "out");
  *out = nullptr;
  if (!model) return null_argument(fn, "model");
  if (!protocol_json) return null_argument(fn, "protocol_json");
  return guarded(fn, [&] {
    const TestProtocol protocol = parse_protocol(protocol_json, "protocol_json");
    const SimulationResult result = simulate(DriverOptions{}, *model->model, protocol);
    put_text(out, dump(curves_json(model->entry->info(), protocol.name, result)));
    if (result.ok()) return int(TRIAXCAL_OK);
    set_last_error(fn, result.message.c_str());
    return int(TRIAXCAL_SIMULATION_FAILED);
  });
}

}  // extern "C"
