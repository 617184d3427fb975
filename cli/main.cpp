#include <algorithm>
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
    app.exit(e);
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
