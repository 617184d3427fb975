// `triaxcal report RESULT_DIR`: one self-contained HTML report (SVG plots, print stylesheet) from
// what a calibration left in RESULT_DIR (docs/report.md says which files it reads).

#include <cstdio>
#include <filesystem>
#include <memory>

#include "commands.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/report_input.hpp"

namespace triaxcal::cli {

namespace {

struct ReportOptions {
  std::string dir;
  std::string out;
  std::string title;
};

int run(const ReportOptions& o) {
  namespace fs = std::filesystem;
  std::string stem;
  report::ReportData data = report::read_result_directory(o.dir, stem);
  if (!o.title.empty()) data.title = o.title;
  const fs::path out = o.out.empty() ? fs::path(o.dir) / (stem + ".report.html") : fs::path(o.out);
  write_file_atomically(out, report::render_report(data));
  std::printf("outcome: %s%s%s\n", to_string(data.outcome).c_str(), data.outcome_reason.empty() ? "" : ": ",
              data.outcome_reason.c_str());
  std::printf("report:  %s\n", out.string().c_str());
  std::printf("\n%s\n", kCaution);
  return exit_ok;
}

void add_report_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<ReportOptions>();
  auto* cmd = app.add_subcommand("report",
                                 "Write a self-contained HTML report (plots and tables, printable on A4) from a "
                                 "calibration result directory");
  cmd->add_option("result_dir", o->dir, "Directory with <name>.report.json, or <name>.parameters.json and "
                                        "<name>.curves.csv as written by 'triaxcal fit'")
      ->required()
      ->check(CLI::ExistingDirectory);
  cmd->add_option("--out", o->out, "HTML file to write (default: RESULT_DIR/<name>.report.html; written atomically)");
  cmd->add_option("--title", o->title, "Title at the top of the report");
  cmd->callback([&action, o] { action = [o] { return run(*o); }; });
}

const CommandRegistration registration{"report", 40, &add_report_command};

}  // namespace

}  // namespace triaxcal::cli
