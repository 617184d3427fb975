// Checks of the command line's number options (issue 13: finite, in range, exit 2 naming the
// option and the value).

#include <cctype>
#include <cmath>
#include <cstdlib>
#include <limits>

#include "commands.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::cli {

bool read_finite_number(const std::string& text, double& value) {
  if (text.empty() || std::isspace(static_cast<unsigned char>(text.front()))) return false;
  char* end = nullptr;
  const double v = std::strtod(text.c_str(), &end);
  if (end != text.c_str() + text.size() || !std::isfinite(v)) return false;
  // An underflow (1e-400) reads as 0 or a subnormal, as in the JSON files; an overflow is infinite.
  value = v;
  return true;
}

CLI::Validator number_check(double low, double high, bool low_open, const std::string& unit) {
  std::string expected = "a finite number";
  const bool unbounded = high == std::numeric_limits<double>::max();
  if (low_open)
    expected += " above " + format_number(low) + (unbounded ? "" : " and at most " + format_number(high));
  else
    expected += unbounded ? " of " + format_number(low) + " or more"
                          : " from " + format_number(low) + " to " + format_number(high);
  if (!unit.empty()) expected += " (" + unit + ")";
  auto check = [=](std::string& text) -> std::string {
    double v = 0.0;
    const bool ok = read_finite_number(text, v) && (low_open ? v > low : v >= low) && v <= high;
    return ok ? std::string() : text + ": expected " + expected;
  };
  return CLI::Validator(check, "", "");
}

}  // namespace triaxcal::cli
