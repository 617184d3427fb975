#include <algorithm>
#include <cmath>
#include <iomanip>
#include <iostream>

#include "commands.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::cli {

namespace {

void add_models_command(CLI::App& app, Action& action) {
  auto* cmd = app.add_subcommand("models", "List the constitutive models, or one model's parameters");
  auto name = std::make_shared<std::string>();
  cmd->add_option("name", *name, "Model to describe (e.g. mohr_coulomb)");
  cmd->callback([&action, name] {
    action = [name] {
      if (name->empty()) {
        for (const ModelEntry& e : model_registry())
          std::cout << std::left << std::setw(24) << e.info().name << e.info().title << "\n";
        std::cout << "\n'triaxcal models NAME' lists a model's parameters.\n";
        return int(exit_ok);
      }
      const ModelInfo& info = find_model(*name).info();
      std::cout << info.name << ": " << info.title << "\n\n";
      std::size_t width = 10;
      for (const ParameterInfo& p : info.parameters) width = std::max(width, p.name.size() + 2);
      const int name_width = static_cast<int>(width);
      auto default_of = [](const ParameterInfo& p) {
        return std::isnan(p.default_value) ? std::string("required") : word_of(p, p.default_value);
      };
      std::size_t default_width = 12;  // wider for a word parameter's default word
      for (const ParameterInfo& p : info.parameters) default_width = std::max(default_width, default_of(p).size() + 2);
      const int dw = static_cast<int>(default_width);
      std::cout << std::left << std::setw(name_width) << "parameter" << std::setw(7) << "unit" << std::setw(dw) << "default"
                << std::setw(18) << "bounds" << "description\n";
      for (const ParameterInfo& p : info.parameters)
        std::cout << std::left << std::setw(name_width) << p.name << std::setw(7) << p.unit << std::setw(dw) << default_of(p)
                  << std::setw(18) << format_bounds(p) << p.description << "\n";
      // What calibration seeds from the interpretation and the report compares: by role, not name.
      bool any_role = false;
      for (const ParameterInfo& p : info.parameters) any_role = any_role || p.role != ParameterRole::none;
      if (any_role) {
        std::cout << "\nroles (calibration seeds, and the report compares, by role):\n";
        for (const ParameterInfo& p : info.parameters)
          if (p.role != ParameterRole::none)
            std::cout << "  " << std::left << std::setw(name_width) << p.name << to_string(p.role) << "\n";
      }
      if (!info.state_names.empty()) {
        std::cout << "\nstate variables:";
        for (const auto& s : info.state_names) std::cout << " " << s;
        std::cout << "\n";
      }
      return int(exit_ok);
    };
  });
}

const CommandRegistration registration{"models", 90, &add_models_command};

}  // namespace

}  // namespace triaxcal::cli
