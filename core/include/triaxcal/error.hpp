#pragma once
// Tier-2 errors: bad input at a boundary (file, JSON, command line, plugin call). The message names
// where (file, line, key), what was found and what was expected; tests assert it word for word.

#include <stdexcept>
#include <string>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

class TRIAXCAL_CORE_EXPORT InputError : public std::runtime_error {
 public:
  explicit InputError(const std::string& message) : std::runtime_error(message) {}
};

}  // namespace triaxcal
