#pragma once
// Run the triaxcal executable from a test and capture exit code, stdout and stderr.

#include <sys/wait.h>

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

/// `args` is appended to the executable path as given (quote paths with spaces yourself).
inline CliResult run_cli(const std::string& args, const std::string& tag = "cli") {
  const std::string base = std::string("cli_run_") + tag;
  const std::string cmd = std::string(TRIAXCAL_CLI) + " " + args + " >" + base + ".out 2>" + base + ".err";
  const int status = std::system(cmd.c_str());
  CliResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = slurp(base + ".out");
  r.err = slurp(base + ".err");
  return r;
}

inline std::string source_path(const std::string& rel) { return std::string(TRIAXCAL_SOURCE_DIR) + "/" + rel; }

}  // namespace triaxcal::test
