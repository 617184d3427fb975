#include <algorithm>
#include <cctype>
#include <iostream>

#include "commands.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/version.hpp"

namespace triaxcal::cli {

std::vector<RegisteredCommand>& registered_commands() {
  static std::vector<RegisteredCommand> commands;
  return commands;
}

CommandRegistration::CommandRegistration(const char* name, int order, AddCommand add) {
  registered_commands().push_back({name, order, add});
}

namespace {

/// One line for a bad command line (CLI11 prints two, without our prefix): CLI11's own words for
/// what is wrong, and where to look; an unknown or missing command lists the known ones.
std::string parse_error_message(const CLI::App& app, const std::vector<RegisteredCommand>& commands,
                                const CLI::ParseError& e, int argc, char** argv) {
  std::string known;
  for (const RegisteredCommand& c : commands) known += (known.empty() ? "" : ", ") + std::string(c.name);
  const std::vector<CLI::App*> parsed = app.get_subcommands();
  if (parsed.empty()) {
    std::string first, option;  // the first word that is not an option, the first option
    for (int i = 1; i < argc; ++i) {
      if (argv[i][0] != '-' && first.empty()) first = argv[i];
      if (argv[i][0] == '-' && option.empty()) option = argv[i];
    }
    if (!first.empty())
      return "unknown command '" + first + "' (known commands: " + known + ")";
    if (!option.empty())  // --help and --version end the parse before an error
      return "unknown option '" + option + "' (a command comes first; known commands: " + known + ")";
    if (dynamic_cast<const CLI::RequiredError*>(&e))
      return "no command given (known commands: " + known + "; 'triaxcal --help' describes them)";
  }
  std::string what = e.what();
  std::replace(what.begin(), what.end(), '\n', ' ');
  if (!what.empty()) what[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(what[0])));
  const std::string help = parsed.empty() ? "triaxcal --help" : "triaxcal " + parsed.back()->get_name() + " --help";
  return what + " ('" + help + "' lists the options)";
}

}  // namespace

}  // namespace triaxcal::cli

int main(int argc, char** argv) {
  using namespace triaxcal::cli;
  CLI::App app{
      "triaxcal: simulate triaxial and oedometer tests with constitutive models and fit their parameters.\n"
      "Units: stresses in kPa, strains as decimals, angles in degrees; compression positive.",
      "triaxcal"};
  app.set_version_flag("--version", std::string("triaxcal ") + triaxcal::kVersion);
  app.require_subcommand(1);
  Action action;
  auto commands = registered_commands();
  std::sort(commands.begin(), commands.end(), [](const auto& a, const auto& b) { return a.order < b.order; });
  for (const RegisteredCommand& c : commands) c.add(app, action);
  try {
    app.parse(argc, argv);
  } catch (const CLI::Success& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::cerr << "triaxcal: error: " << parse_error_message(app, commands, e, argc, argv) << "\n";
    return exit_bad_input;
  }
  try {
    return action ? action() : exit_internal;
  } catch (const triaxcal::InputError& e) {
    std::cerr << "triaxcal: error: " << e.what() << "\n";
    return exit_bad_input;
  } catch (const std::exception& e) {
    std::cerr << "triaxcal: internal error: " << e.what() << "\n";
    return exit_internal;
  }
}
