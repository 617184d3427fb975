#pragma once
// Internal to the C ABI: the thread-local last error and the exception barrier every entry point uses.

#include <new>
#include <string>

#include "triaxcal/error.hpp"
#include "triaxcal_c.h"

struct triaxcal_text {
  std::string data;
};

namespace triaxcal::plugin {

/// Stores `text` in a new triaxcal_text at *out; returns TRIAXCAL_OK.
int put_text(triaxcal_text** out, std::string text);

/// "<function>: <prefix><message>" becomes this thread's last error; never throws.
void set_last_error(const char* function, const char* message, const char* prefix = "") noexcept;
void clear_last_error() noexcept;
const char* last_error() noexcept;

/// Sets "<function>: <argument> is NULL" and returns TRIAXCAL_NULL_ARGUMENT.
int null_argument(const char* function, const char* argument) noexcept;

/// Runs `body` (which returns a triaxcal_code) with the last error cleared first, and maps every
/// exception to a code: InputError -> invalid_input (its message as is), bad_alloc -> out_of_memory,
/// anything else -> internal_error. Nothing escapes.
template <class Body>
int guarded(const char* function, Body&& body) noexcept {
  clear_last_error();
  try {
    return body();
  } catch (const InputError& e) {
    set_last_error(function, e.what());
    return TRIAXCAL_INVALID_INPUT;
  } catch (const std::bad_alloc&) {
    set_last_error(function, "out of memory");
    return TRIAXCAL_OUT_OF_MEMORY;
  } catch (const std::exception& e) {
    set_last_error(function, e.what(), "internal error: ");
    return TRIAXCAL_INTERNAL_ERROR;
  } catch (...) {
    set_last_error(function, "internal error: unknown exception");
    return TRIAXCAL_INTERNAL_ERROR;
  }
}

}  // namespace triaxcal::plugin
