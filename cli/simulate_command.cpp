#include <cmath>
#include <cstdio>
#include <filesystem>
#include <iostream>
#include <memory>
#include <vector>

#include "commands.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/staged_outputs.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/protocol_json.hpp"
#include "triaxcal/results_csv.hpp"

namespace triaxcal::cli {

namespace {

struct SimulateOptions {
  std::string model;
  std::string params;
  std::vector<std::string> protocols;
  std::string out;
  double tolerance = DriverOptions{}.tolerance;
  bool fixed_steps = false;
};

// A value that prints as zero at `decimals` prints as 0, not -0 (q of an isotropic stage is a
// rounding residue of either sign).
double tidy(double v, int decimals) { return std::abs(v) < 0.5 * std::pow(10.0, -decimals) ? 0.0 : v; }

void print_table(const std::string& test, const TestProtocol& protocol, const SimulationResult& r) {
  std::printf("\n%s\n", test.c_str());
  std::printf("  %-5s %-26s %6s %10s %10s %10s %10s %10s %10s\n", "stage", "type", "steps", "eps_a,st[-]", "p'[kPa]",
              "q[kPa]", "du[kPa]", "e[-]", "peak q");
  for (const StageSummary& s : r.stages) {
    const StepRecord& end = r.steps[s.last];
    std::printf("  %-5d %-26s %6d %10.5f %10.2f %10.2f %10.2f %10.4f %10.2f%s\n", s.stage,
                to_string(protocol.stages[s.stage].type).c_str(), s.last - s.first + 1, tidy(end.stage_axial_strain, 5),
                tidy(end.p, 2), tidy(end.q, 2), tidy(end.excess_pore_pressure, 2), tidy(end.void_ratio, 4),
                tidy(s.peak_q, 2), s.stopped_early ? "  (stopped early)" : "");
  }
  if (!r.ok()) std::printf("  FAILED: %s\n", r.message.c_str());
}

int run(const SimulateOptions& o) {
  namespace fs = std::filesystem;
  if (!o.out.empty()) {  // temporaries of a killed earlier write of the same file
    const fs::path out(o.out);
    sweep_temporaries(out.has_parent_path() ? out.parent_path() : fs::path("."), {out.filename().string()});
  }
  const ModelEntry& entry = find_model(o.model);
  const ParameterFile file = read_parameter_file(o.params);
  const ParameterValues values = resolve_parameter_file(entry.info(), file);
  const std::unique_ptr<Model> model = entry.create(values, o.params);
  std::vector<TestProtocol> protocols;
  for (const auto& path : o.protocols) protocols.push_back(read_protocol_file(path));

  DriverOptions options;
  options.tolerance = o.tolerance;
  options.fixed_steps = o.fixed_steps;
  options.validate();
  std::vector<SimulationResult> results;
  results.reserve(protocols.size());
  bool all_ok = true;
  for (std::size_t i = 0; i < protocols.size(); ++i) {
    results.push_back(simulate(options, *model, protocols[i]));
    const std::string name = protocols[i].name.empty() ? o.protocols[i] : protocols[i].name;
    print_table(name, protocols[i], results.back());
    all_ok = all_ok && results.back().ok();
  }
  // A failed simulation writes no curves file (an earlier file of that name is left as it was):
  // the table above shows how far each test got, the message where and why it stopped.
  if (!o.out.empty() && all_ok) {
    std::vector<NamedResult> named;
    for (std::size_t i = 0; i < protocols.size(); ++i)
      named.push_back({protocols[i].name.empty() ? o.protocols[i] : protocols[i].name, &results[i]});
    write_file_atomically(o.out, format_results_csv(named, entry.info().state_names));
    std::printf("\ncurves written to %s\n", o.out.c_str());
  }
  std::printf("\n%s\n", kCaution);
  if (!all_ok) {
    for (std::size_t i = 0; i < results.size(); ++i)
      if (!results[i].ok()) std::fprintf(stderr, "triaxcal: simulation failed: %s: %s\n", o.protocols[i].c_str(),
                                         results[i].message.c_str());
    if (!o.out.empty()) std::fprintf(stderr, "triaxcal: no curves written to %s (a simulation failed)\n", o.out.c_str());
    return exit_simulation_failed;
  }
  return exit_ok;
}

}  // namespace

namespace {

void add_simulate_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<SimulateOptions>();
  auto* cmd = app.add_subcommand("simulate",
                                 "Run test protocols with a model and given parameters; print a table per test and "
                                 "optionally write the curves as CSV");
  cmd->add_option("--model", o->model, "Model name (see 'triaxcal models')")->required();
  cmd->add_option("--params", o->params, "Parameter-set JSON (format triaxcal-parameters)")->required()->check(CLI::ExistingFile);
  cmd->add_option("--protocol", o->protocols, "Protocol JSON (format triaxcal-protocol); repeat for several tests")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", o->out,
                  "CSV file for the simulated curves (written atomically; units in the header). Written only when "
                  "every simulation completes: after a failed one (exit 3) no file is written and an earlier file "
                  "of that name is left as it was");
  cmd->add_option("--tolerance", o->tolerance,
                  "Accuracy of the integration: local relative error of each substep, in [1e-10, 0.1] (default " +
                      format_number(DriverOptions{}.tolerance) +
                      ": curves within about 0.1 % of their range of the converged solution); the protocol's "
                      "steps only set where records are written")
      ->check(number_check(1e-10, 0.1, false));
  cmd->add_flag("--fixed-steps", o->fixed_steps,
                "No error control: each record step (the protocol's steps) is one increment, as accurate as the "
                "step count makes it");
  cmd->callback([&action, o] { action = [o] { return run(*o); }; });
}

const CommandRegistration registration{"simulate", 10, &add_simulate_command};

}  // namespace

}  // namespace triaxcal::cli
