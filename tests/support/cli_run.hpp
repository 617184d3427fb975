#pragma once
// Run the triaxcal executable from a test and capture exit code, stdout and stderr.

#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>

namespace triaxcal::test {

struct CliResult {
  int exit_code = -1;
  std::string out;
  std::string err;
};

inline std::string slurp(const std::string& path) {
  std::ifstream in(path);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

/// `args` is appended to the executable path as given (quote paths with spaces yourself). The
/// captured output goes to files named by the tag and this process's id, so that test cases run at
/// the same time (ctest -j) never read each other's output; they are removed afterwards.
inline CliResult run_cli(const std::string& args, const std::string& tag = "cli") {
  const std::string base = std::string("cli_run_") + tag + "_" + std::to_string(::getpid());
  const std::string cmd = std::string(TRIAXCAL_CLI) + " " + args + " >" + base + ".out 2>" + base + ".err";
  const int status = std::system(cmd.c_str());
  CliResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = slurp(base + ".out");
  r.err = slurp(base + ".err");
  std::remove((base + ".out").c_str());
  std::remove((base + ".err").c_str());
  return r;
}

inline std::string source_path(const std::string& rel) { return std::string(TRIAXCAL_SOURCE_DIR) + "/" + rel; }

}  // namespace triaxcal::test
