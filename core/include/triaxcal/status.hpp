#pragma once
// Tier-3 errors: numerical outcomes in hot code are statuses, never exceptions.

#include <string_view>

namespace triaxcal {

enum class Status {
  ok,               ///< converged
  numerical_issue,  ///< a decomposition failed or a value became non-finite
  no_convergence,   ///< an iteration hit its bound
  invalid_input,    ///< the state or increment given cannot be integrated (e.g. p' <= 0 where required)
};

constexpr std::string_view to_string(Status s) {
  switch (s) {
    case Status::ok: return "ok";
    case Status::numerical_issue: return "numerical_issue";
    case Status::no_convergence: return "no_convergence";
    case Status::invalid_input: return "invalid_input";
  }
  return "unknown";
}

}  // namespace triaxcal
