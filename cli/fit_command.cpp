// `triaxcal fit CALIBRATION.json`: fit a model's parameters to a test series and write the
// parameter set, the curves and an HDF5 archive.

#include <optional>
#include <unistd.h>

#include <atomic>
#include <chrono>
#include <csignal>
#include <cstdio>
#include <filesystem>
#include <functional>
#include <iostream>
#include <memory>

#include "commands.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/staged_outputs.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/report_input.hpp"
#include "triaxcal/series.hpp"
#include "triaxcal/version.hpp"

namespace triaxcal::cli {

namespace {

struct FitOptions {
  std::string calibration;
  std::string out;
  int threads = -1;
  long long seed = -1;
  bool report = false;
  bool verbose = false;
  bool require_converged = false;
};

std::atomic<bool> g_interrupted{false};

extern "C" void on_interrupt(int) { g_interrupted.store(true); }

/// Draws "\r<stage> <evaluations> evals  objective ..  best ..  12.3 s" on a terminal, at most 10 a second.
class ProgressLine {
 public:
  ProgressLine() : terminal_(isatty(STDERR_FILENO) == 1) {}
  bool operator()(const CalibrationProgress& p) {
    if (terminal_) {
      const auto now = std::chrono::steady_clock::now();
      if (now - last_ > std::chrono::milliseconds(100)) {
        last_ = now;
        std::fprintf(stderr, "\r  %-7s %7ld evaluations  objective %-11.4g best %-11.4g %7.1f s ", p.stage.c_str(),
                     p.evaluations, p.objective, p.best, p.elapsed);
        std::fflush(stderr);
        drawn_ = true;
      }
    }
    return !g_interrupted.load();
  }
  void clear() {
    if (drawn_) std::fprintf(stderr, "\r%80s\r", "");
  }

 private:
  bool terminal_;
  bool drawn_ = false;
  std::chrono::steady_clock::time_point last_{};
};

/// Ctrl-C asks the optimiser to stop; the best point so far is written. Installed before anything
/// is read (a Ctrl-C while the series loads ends the fit at its first evaluation instead of killing
/// the process) and kept until the files are written, so a second Ctrl-C cannot cut a write short.
class InterruptGuard {
 public:
  InterruptGuard() {
    g_interrupted.store(false);
    previous_ = std::signal(SIGINT, on_interrupt);
  }
  ~InterruptGuard() { std::signal(SIGINT, previous_); }
  InterruptGuard(const InterruptGuard&) = delete;
  InterruptGuard& operator=(const InterruptGuard&) = delete;

 private:
  void (*previous_)(int) = SIG_DFL;
};

/// The output folder: created when missing, and removed again (when still empty) unless the run
/// keeps it, so that a run that fails writes nothing, not even an empty folder.
class OutputFolder {
 public:
  explicit OutputFolder(const std::filesystem::path& dir) : dir_(dir) {
    std::error_code ec;
    created_ = !std::filesystem::exists(dir, ec);
    std::filesystem::create_directories(dir, ec);
    if (ec || !std::filesystem::is_directory(dir)) throw InputError("--out " + dir.string() + ": cannot create the directory");
  }
  ~OutputFolder() {
    std::error_code ignored;
    if (created_ && !kept_) std::filesystem::remove(dir_, ignored);  // only an empty folder is removed
  }
  OutputFolder(const OutputFolder&) = delete;
  OutputFolder& operator=(const OutputFolder&) = delete;
  void keep() const { kept_ = true; }

 private:
  std::filesystem::path dir_;
  bool created_ = false;
  mutable bool kept_ = false;
};

int run(const FitOptions& o) {
  const InterruptGuard interrupt_guard;
  CalibrationFile file = read_calibration_file(o.calibration);
  if (o.threads >= 0) file.options.threads = o.threads;
  if (o.seed >= 0) file.options.seed = static_cast<unsigned long>(o.seed);
  try {
    file.options.validate();
  } catch (const InputError& e) {
    throw InputError(std::string("--threads/--seed: ") + e.what());
  }
  const TestSeries series = read_test_series(file.series);
  const ModelEntry* entry = nullptr;
  try {
    entry = &find_model(file.model);
  } catch (const InputError& e) {
    throw InputError(o.calibration + ": model: " + e.what());
  }
  // Bounds and starts the file leaves out come from the classical interpretation of the series;
  // the problem is checked with them filled in.
  const std::vector<std::string> seed_notes = seed_from_interpretation(file, series, entry->info());
  if (o.verbose)
    for (const std::string& note : seed_notes) std::printf("%s\n", note.c_str());
  auto create = entry->create;
  const std::string where = o.calibration;
  CalibrationProblem problem =
      build_calibration_problem(file, series, entry->info(), [create, where](const ParameterValues& v) { return create(v, where); });

  namespace fs = std::filesystem;
  const std::string stem = fs::path(o.calibration).stem().string();
  const fs::path dir = o.out.empty() ? fs::path(stem + "_fit") : fs::path(o.out);
  const OutputFolder folder(dir);
  // The run's files are written into a hidden staging folder and moved into `dir` together at the
  // end (a failed or killed run leaves an earlier run's set as it was; DEVELOPERS.md, Conventions).
  const std::string f_report_input = stem + ".report.json", f_report_html = stem + ".report.html",
                    f_params = stem + ".parameters.json", f_curves = stem + ".curves.csv", f_archive = stem + ".h5",
                    f_report_text = stem + ".report.txt";
  StagedOutputs staged(dir, stem, {f_report_input, f_report_html, f_params, f_curves, f_archive, f_report_text});
  // A failed write (a full disk) names the file's place in `dir`; nothing of the run is moved there.
  const auto stage = [&staged](const std::function<void()>& write) {
    try {
      write();
    } catch (const InputError& e) {
      throw InputError(staged.in_place(e.what()) + "; no file of this run was written");
    }
  };

  CalibrationProvenance prov;
  prov.software_version = kVersion;
  prov.created = utc_now();
  prov.caution = kCaution;
  prov.description = file.description;
  prov.inputs.emplace_back(o.calibration, sha256_file(o.calibration));
  prov.inputs.emplace_back(file.series, sha256_file(file.series));
  // Every data file the series reader read (the fitted specimens' and the others', which the
  // classical interpretation beside the fit uses), each once, in series order.
  for (const CalibrationTest& t : problem.tests) prov.tests.push_back(t.id);
  for (const Specimen& s : series.specimens) {
    bool listed = false;
    for (const auto& input : prov.inputs) listed = listed || input.first == s.data.path;
    if (!listed && !s.data.path.empty()) prov.inputs.emplace_back(s.data.path, sha256_file(s.data.path));
  }

  ProgressLine progress;
  CalibrationOptions options = file.options;
  options.progress = [&progress](const CalibrationProgress& p) { return progress(p); };
  const CalibrationSummary summary = calibrate(options, problem);
  progress.clear();

  if (!o.verbose && !seed_notes.empty())
    std::printf("%zu bounds/starts/fixed values taken from the classical interpretation of the series (--verbose lists them)\n",
                seed_notes.size());
  std::printf("%s", summary.brief().c_str());
  if (o.verbose) std::printf("\n%s", summary.full().c_str());

  // The report input (and, with --report, the HTML page) is written for a failed calibration too,
  // so that a reviewer sees what failed. The classical interpretation of the fitted specimens'
  // material sits beside the model in it.
  const fs::path report_input = dir / f_report_input;
  const fs::path report_html = dir / f_report_html;
  {
    // The interpretation the user chose in the file (criterion, stress range, design stress), on
    // the fitted specimens' material: the same one that seeded the bounds and starts.
    const InterpretOptions iopt = interpretation_options(file, series, entry->info());
    std::optional<Interpretation> interpretation;
    try {
      interpretation = interpret(series, iopt);
    } catch (const InputError& e) {
      std::printf("note: no classical interpretation in the report: %s\n", e.what());
    }
    const report::ReportData rd = report::report_from_calibration(summary, problem, prov, &series,
                                                                  interpretation ? &*interpretation : nullptr);
    stage([&] {
      write_file_atomically(staged.path(f_report_input), report::report_input_json(rd));
      if (o.report) write_file_atomically(staged.path(f_report_html), report::render_report(rd));
    });
  }
  if (!summary.usable()) {
    staged.commit();
    folder.keep();
    std::fprintf(stderr, "triaxcal: fit: %s (report input: %s)\n", summary.outcome_line().c_str(),
                 report_input.string().c_str());
    return exit_nothing_usable;
  }
  const std::string json = format_parameter_set(summary, entry->info(), prov);
  const fs::path params = dir / f_params;
  const fs::path curves = dir / f_curves;
  const fs::path archive = dir / f_archive;
  stage([&] {
    write_file_atomically(staged.path(f_params), json);
    write_file_atomically(staged.path(f_curves), format_fit_csv(summary));
    write_calibration_archive(staged.path(f_archive), summary, entry->info(), prov, json);
    if (o.report) write_file_atomically(staged.path(f_report_text), summary.full() + "\n" + kCaution + "\n");
  });
  staged.commit();
  folder.keep();

  const bool converged = summary.outcome == CalibrationOutcome::converged;
  std::printf("\noutcome:       %s\n", summary.outcome_line().c_str());
  std::printf("parameter set: %s\ncurves:        %s\narchive:       %s\n", params.string().c_str(),
              curves.string().c_str(), archive.string().c_str());
  std::printf("report input:  %s\n", report_input.string().c_str());
  if (o.report)
    std::printf("report:        %s\n               %s\n", report_html.string().c_str(),
                (dir / f_report_text).string().c_str());
  std::printf("use it with:   triaxcal simulate --model %s --params %s --protocol ...\n", file.model.c_str(),
              params.string().c_str());
  std::printf("\n%s\n", kCaution);
  if (!converged) {
    // Stopped and poor fit still write every file; the warning says which and why.
    std::fflush(stdout);
    std::fprintf(stderr, "triaxcal: warning: fit: %s\n", summary.outcome_line().c_str());
    if (o.require_converged) return exit_not_converged;
  }
  return exit_ok;
}

void add_fit_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<FitOptions>();
  auto* cmd = app.add_subcommand("fit",
                                 "Fit a model's parameters to a test series described by a calibration file; write the "
                                 "parameter set (JSON), the fitted curves (CSV) and an HDF5 archive");
  cmd->add_option("calibration", o->calibration, "Calibration JSON (format triaxcal-calibration)")
      ->required()
      ->check(CLI::ExistingFile);
  cmd->add_option("--out", o->out, "Directory for the results (default: <calibration name>_fit)");
  cmd->add_option("--threads", o->threads, "Tests simulated in parallel (default: the file's option, else all cores)")
      ->check(CLI::Range(0, 1024));
  cmd->add_option("--seed", o->seed, "Seed of the design and the global stage (default: the file's option, else 1)")
      ->check(CLI::Range(0LL, 4294967295LL));
  cmd->add_flag("--report", o->report,
                "Write the HTML report (<name>.report.html) and the full text summary (<name>.report.txt) beside the results");
  cmd->add_flag("--verbose", o->verbose,
                "Print the full account: the bounds and starts taken from the interpretation, the options asked and used, "
                "every curve's fit, the correlations and every warning (default: outcome, parameters, worst curve, files)");
  cmd->add_flag("--require-converged", o->require_converged,
                "Exit 5 (files still written) when the outcome is stopped or poor_fit instead of 0");
  cmd->footer(
      "Outcome (printed as \"outcome: ...\", in the files as fit.outcome): converged; stopped (a budget, the time "
      "limit or Ctrl-C ended it: the line names the option to raise); poor_fit (a used curve has R^2 below "
      "options.min_r_squared, default 0.9: the line names it); failed (no usable parameter set).\n"
      "Exit codes: 0 converged, and also stopped or poor_fit (files written, a warning line on stderr; "
      "--require-converged makes these 5); 2 bad input; 4 failed "
      "(only the report input is written); 1 internal error.");
  cmd->callback([&action, o] { action = [o] { return run(*o); }; });
}

const CommandRegistration registration{"fit", 30, &add_fit_command};

}  // namespace

}  // namespace triaxcal::cli
