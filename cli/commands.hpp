#pragma once
// The `triaxcal` command: one file a subcommand, each registering itself on the app.

#include <CLI/CLI.hpp>

#include <functional>
#include <string>
#include <vector>

#include "triaxcal/report.hpp"

namespace triaxcal::cli {

/// Exit codes of every subcommand.
enum ExitCode : int {
  exit_ok = 0,
  exit_internal = 1,        ///< a bug: please report
  exit_bad_input = 2,       ///< a file, key or option is wrong; the message names it
  exit_simulation_failed = 3,  ///< a simulation could not be completed
  exit_nothing_usable = 4,  ///< an optimiser found nothing usable (outcome failed)
  exit_not_converged = 5,   ///< fit --require-converged: the outcome was stopped or poor_fit (files written)
};

/// The caution every summary carries.
inline constexpr const char* kCaution = triaxcal::kCautionText;  // one text, in triaxcal/report.hpp

/// A subcommand sets this to the function that runs it; main() calls it after parsing.
using Action = std::function<int()>;

/// Each subcommand file registers itself with a static CommandRegistration, so adding a command
/// touches no shared file: `static const CommandRegistration reg{"fit", 30, &add_fit_command};`.
/// main() adds them to the app sorted by `order` (the order --help lists them in).
using AddCommand = void (*)(CLI::App& app, Action& action);

struct CommandRegistration {
  CommandRegistration(const char* name, int order, AddCommand add);
};

struct RegisteredCommand {
  const char* name;
  int order;
  AddCommand add;
};

std::vector<RegisteredCommand>& registered_commands();

/// The check of every number option, run by CLI11 before the value is converted (CLI11 reads
/// "nan" and "inf", takes 1e400 as infinity, and its Range lets NaN through): the text must read
/// as a finite number within [low, high] ((low, high] with `low_open`). Message, after CLI11's
/// "--option: ": "inf: expected a finite number above 0 (kPa)".
CLI::Validator number_check(double low, double high, bool low_open, const std::string& unit = "");

/// Reads `text` as a whole finite number; false for anything else (trailing text, nan, inf, 1e400).
bool read_finite_number(const std::string& text, double& value);

}  // namespace triaxcal::cli
