// Hostile input through the command line (issue 13): every case asserts the exit code, the exact
// message and that nothing was written. Limits: docs/test-series-format.md "Limits".
#include <sys/stat.h>
#include <sys/wait.h>

#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <utility>
#include <vector>

#include "../series/series_fixture.hpp"
#include "cli_run.hpp"

using namespace triaxcal::test;
using nlohmann::json;
namespace fs = std::filesystem;

namespace {

/// run_cli under `timeout`: a hang (an endless device read until killed) fails the test with exit
/// code 124 instead of stalling the suite.
CliResult run_limited(const std::string& args, const std::string& tag) {
  const std::string base = "bad_input_" + tag;
  const std::string cmd =
      "timeout 60 " + std::string(TRIAXCAL_CLI) + " " + args + " >" + base + ".out 2>" + base + ".err";
  const int status = std::system(cmd.c_str());
  CliResult r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = slurp(base + ".out");
  r.err = slurp(base + ".err");
  return r;
}

std::string arg(const fs::path& p) { return "'" + p.string() + "'"; }

const std::string kKnown = "simulate, import, check, interpret, fit, report, models";

const char* kParams = R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
  "parameters": {"youngs_modulus": 20000, "friction_angle": 30, "cohesion": 5, "dilation_angle": 2}})";

const char* kProtocol = R"({"format": "triaxcal-protocol", "version": 1, "name": "T1",
  "initial": {"p": 100},
  "stages": [{"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": 50}]})";

/// `depth` nested arrays as the value of "name" in a file of `format`; returns the text and sets
/// `column` to where the first level beyond the limit opens (the root object is level 1).
std::string deep(const std::string& format, int depth, std::size_t& column) {
  const std::string prefix = R"({"format": ")" + format + R"(", "version": 1, "name": )";
  column = prefix.size() + 64;  // the 64th '[' is level 65
  return prefix + std::string(static_cast<std::size_t>(depth), '[') + std::string(static_cast<std::size_t>(depth), ']') + "}";
}

std::string deep_message(const fs::path& file, std::size_t column) {
  return file.string() + ": line 1, column " + std::to_string(column) + ": arrays and objects nested deeper than 64 levels";
}

/// A valid CU series in a fresh folder with the specimen edited by `edit`; returns its path.
template <class Edit>
fs::path series_with(const std::string& tag, Edit edit, const std::string& csv = cu_csv()) {
  const fs::path dir = scratch_dir("bad_input_" + tag);
  json sp = cu_specimen("CU-1", "data.csv");
  json series = series_of(json::array({sp}));
  edit(series);
  return write_series(dir, series, csv);
}

}  // namespace

TEST_CASE("a 100000-deep array in a test series is refused with its line and column and nothing is written") {
  const fs::path dir = scratch_dir("bad_input_deep_series");
  std::size_t column = 0;
  const fs::path series = dir / "series.json";
  write_text(series, deep("triaxcal-test-series", 100000, column));
  const fs::path out = dir / "result.json";
  const auto r = run_limited("interpret " + arg(series) + " --out " + arg(out), "deep_series");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(series, column) + "\n");
  CHECK_FALSE(fs::exists(out));
  const auto c = run_limited("check " + arg(series), "deep_series_check");
  CHECK(c.exit_code == 2);
  CHECK(c.err == "1 error:\ntriaxcal: error: " + deep_message(series, column) + "\n");
}

TEST_CASE("a 100000-deep array in a parameter set or a protocol is refused and simulate writes nothing") {
  const fs::path dir = scratch_dir("bad_input_deep_simulate");
  std::size_t column = 0;
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json", out = dir / "curves.csv";
  write_text(params, deep("triaxcal-parameters", 100000, column));
  write_text(protocol, kProtocol);
  auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                           " --out " + arg(out),
                       "deep_params");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(params, column) + "\n");
  CHECK_FALSE(fs::exists(out));
  write_text(params, kParams);
  write_text(protocol, deep("triaxcal-protocol", 100000, column));
  r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                      " --out " + arg(out),
                  "deep_protocol");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(protocol, column) + "\n");
  CHECK_FALSE(fs::exists(out));
}

TEST_CASE("a 100000-deep array in a calibration file is refused and fit creates no output folder") {
  const fs::path dir = scratch_dir("bad_input_deep_fit");
  std::size_t column = 0;
  const fs::path calibration = dir / "fit.json", out = dir / "out";
  write_text(calibration, deep("triaxcal-calibration", 100000, column));
  const auto r = run_limited("fit " + arg(calibration) + " --out " + arg(out), "deep_fit");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(calibration, column) + "\n");
  CHECK_FALSE(fs::exists(out));
}

TEST_CASE("a 100000-deep array in a report input is refused and no report is written") {
  const fs::path dir = scratch_dir("bad_input_deep_report");
  std::size_t column = 0;
  const fs::path input = dir / "run.report.json";
  write_text(input, deep("triaxcal-report-input", 100000, column));
  const auto r = run_limited("report " + arg(dir), "deep_report");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(input, column) + "\n");
  CHECK_FALSE(fs::exists(dir / "run.report.html"));
}

TEST_CASE("64 levels of nesting are accepted and 65 are not") {
  const fs::path dir = scratch_dir("bad_input_depth_edge");
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json";
  write_text(protocol, kProtocol);
  // The root object is level 1: 63 arrays inside it reach level 64.
  std::size_t column = 0;
  write_text(params, deep("triaxcal-parameters", 63, column));
  auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol),
                       "depth_64");
  CHECK(r.exit_code == 2);  // parsed; then "name" is an unknown key of a parameter set
  CHECK(r.err == "triaxcal: error: " + params.string() +
                     ": name: unknown key 'name' (expected one of: format, version, model, parameters, description, "
                     "provenance, fit, caution)\n");
  write_text(params, deep("triaxcal-parameters", 64, column));
  r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol), "depth_65");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + deep_message(params, column) + "\n");
}

TEST_CASE("a number out of the range of a double is an input error with its file, line and column") {
  const fs::path dir = scratch_dir("bad_input_1e400");
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json", out = dir / "curves.csv";
  const std::string line2 = R"(  "parameters": {"youngs_modulus": 1e400, "friction_angle": 30}})";
  write_text(params, "{\"format\": \"triaxcal-parameters\", \"version\": 1, \"model\": \"mohr_coulomb\",\n" + line2);
  write_text(protocol, kProtocol);
  auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                           " --out " + arg(out),
                       "1e400_params");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + params.string() +
                     ": line 2, column " + std::to_string(line2.find("1e400") + 1) + ": the number 1e400 is out of the range of a double (largest magnitude about "
                     "1.8e308)\n");
  CHECK_FALSE(fs::exists(out));
  // A negative one, and a 400-digit integer, in a test series.
  const fs::path series = dir / "series.json";
  const std::string series_line2 = "\"specimens\": [{\"height\": -" + std::string(400, '9') + "}]}";
  write_text(series, "{\"format\": \"triaxcal-test-series\", \"version\": 1,\n" + series_line2);
  r = run_limited("interpret " + arg(series) + " --out " + arg(dir / "r.json"), "1e400_series");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + series.string() + ": line 2, column " + std::to_string(series_line2.find('-') + 1) + ": the number -" + std::string(39, '9') +
                     "... is out of the range of a double (largest magnitude about 1.8e308)\n");
  CHECK_FALSE(fs::exists(dir / "r.json"));
  // Underflow is not an error: 1e-400 is 0, as in every JSON reader (here: a cohesion of 0).
  write_text(params, R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
  "parameters": {"youngs_modulus": 20000, "friction_angle": 30, "cohesion": 1e-400}})");
  r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                      " --out " + arg(out),
                  "1e-400");
  CHECK(r.exit_code == 0);
  CHECK(fs::exists(out));
}

TEST_CASE("a version of 2^32 + 1 is not taken for version 1") {
  const fs::path dir = scratch_dir("bad_input_version");
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json", out = dir / "curves.csv";
  write_text(params, R"({"format": "triaxcal-parameters", "version": 4294967297, "model": "mohr_coulomb",
  "parameters": {"youngs_modulus": 20000, "friction_angle": 30}})");
  write_text(protocol, kProtocol);
  const auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " +
                                 arg(protocol) + " --out " + arg(out),
                             "version");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + params.string() + ": version: expected 1, found 4294967297\n");
  CHECK_FALSE(fs::exists(out));
  const fs::path series = series_with("version_series", [](json& s) { s["version"] = 4294967297ULL; });
  const auto c = run_limited("check " + arg(series), "version_series");
  CHECK(c.exit_code == 2);
  CHECK(c.err == "1 error:\ntriaxcal: error: " + series.string() + ": version: expected 1, found 4294967297\n");
}

TEST_CASE("integers that do not fit their field are refused with the key path, never wrapped") {
  const std::string range = "expected an integer from -2147483648 to 2147483647, found ";
  SECTION("protocol steps") {
    const fs::path dir = scratch_dir("bad_input_steps");
    const fs::path params = dir / "params.json", protocol = dir / "protocol.json", out = dir / "curves.csv";
    write_text(params, kParams);
    write_text(protocol, R"({"format": "triaxcal-protocol", "version": 1, "name": "T1", "initial": {"p": 100},
      "stages": [{"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": 4294967396}]})");
    const auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " +
                                   arg(protocol) + " --out " + arg(out),
                               "steps");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + protocol.string() + ": stages[0].steps: " + range + "4294967396\n");
    CHECK_FALSE(fs::exists(out));
  }
  SECTION("calibration threads, seed and steps per shear stage") {
    const fs::path dir = scratch_dir("bad_input_fit_ints");
    const fs::path calibration = dir / "fit.json", out = dir / "out";
    const std::string series = source_path("examples/calibrate/demo_series.json");
    const auto file = [&](const std::string& extra, const std::string& options) {
      return R"({"format": "triaxcal-calibration", "version": 1, "series": ")" + series +
             R"(", "model": "mohr_coulomb", )" + extra +
             R"("tests": [{"specimen": "CD-50", "curves": ["deviator_stress"]}],
               "parameters": {"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000},
                              "friction_angle": 30}, "options": {)" +
             options + "}}";
    };
    for (const auto& [extra, options, key, value] :
         {std::tuple<std::string, std::string, std::string, std::string>{"", R"("threads": 4294967297)", "options.threads", "4294967297"},
          {"", R"("seed": 4294967297)", "options.seed", "4294967297"},
          {"", R"("global_evaluations": -4294967297)", "options.global_evaluations", "-4294967297"},
          {R"("steps_per_shear_stage": 4294967396, )", "", "steps_per_shear_stage", "4294967396"}}) {
      write_text(calibration, file(extra, options));
      const auto r = run_limited("fit " + arg(calibration) + " --out " + arg(out), "fit_ints");
      CHECK(r.exit_code == 2);
      CHECK(r.err == "triaxcal: error: " + calibration.string() + ": " + key + ": " + range + value + "\n");
      CHECK_FALSE(fs::exists(out));
    }
  }
  SECTION("series data_stage and skip_rows") {
    const fs::path a = series_with("data_stage", [](json& s) { s["specimens"][0]["stages"][2]["data_stage"] = 4294967297ULL; });
    auto r = run_limited("check " + arg(a), "data_stage");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "1 error:\ntriaxcal: error: " + a.string() + ": specimens[0].stages[2].data_stage: " + range + "4294967297\n");
    const fs::path b = series_with("skip_rows", [](json& s) { s["specimens"][0]["data"]["skip_rows"] = 4294967296ULL; });
    r = run_limited("check " + arg(b), "skip_rows");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "1 error:\ntriaxcal: error: " + b.string() + ": specimens[0].data.skip_rows: " + range + "4294967296\n");
  }
}

TEST_CASE("a directory given as a data file says it is a directory") {
  const fs::path series = series_with("directory", [](json& s) { s["specimens"][0]["data"]["file"] = "sub"; });
  fs::create_directories(series.parent_path() / "sub");
  const auto r = run_limited("check " + arg(series), "directory");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + (series.parent_path() / "sub").string() + ": is a directory, not a file\n");
  const auto t = run_limited("check " + arg(series.parent_path()), "directory_series");
  CHECK(t.exit_code == 2);
  CHECK(t.err == "1 error:\ntriaxcal: error: " + series.parent_path().string() + ": is a directory, not a file\n");
}

TEST_CASE("the endless zero device and a named pipe are refused at once, not read") {
  const fs::path series = series_with("dev_zero", [](json& s) {
    s["allow_data_outside_folder"] = true;
    s["specimens"][0]["data"]["file"] = "/dev/zero";
  });
  auto r = run_limited("check " + arg(series), "dev_zero");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: /dev/zero: not a regular file (a device, pipe or socket is not read)\n");
  r = run_limited("interpret /dev/zero", "dev_zero_series");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: /dev/zero: not a regular file (a device, pipe or socket is not read)\n");
  const fs::path series2 = series_with("fifo", [](json&) {});
  fs::remove(series2.parent_path() / "data.csv");
  REQUIRE(mkfifo((series2.parent_path() / "data.csv").c_str(), 0600) == 0);
  r = run_limited("check " + arg(series2), "fifo");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + (series2.parent_path() / "data.csv").string() +
                     ": not a regular file (a device, pipe or socket is not read)\n");
}

TEST_CASE("a data file above the size limit is refused with the limit named") {
  const fs::path series = series_with("too_large", [](json&) {});
  const fs::path data = series.parent_path() / "data.csv";
  fs::resize_file(data, (std::uintmax_t{256} << 20) + 1);  // sparse: no disk used
  const auto r = run_limited("check " + arg(series), "too_large");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + data.string() +
                     ": larger than the largest input file accepted (268435456 bytes = 256 MiB)\n");
  fs::remove(data);
}

TEST_CASE("a JSON text above 64 MiB is refused before it is parsed") {
  const fs::path dir = scratch_dir("bad_input_large_json");
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json";
  write_text(protocol, kProtocol);
  {
    std::ofstream out(params, std::ios::binary);
    out << "[";
    out << std::string((std::size_t{64} << 20), ' ');
    out << "]";
  }
  const auto r = run_limited("simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol),
                             "large_json");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + params.string() + ": " + std::to_string((std::size_t{64} << 20) + 2) +
                     " bytes of JSON, more than the largest accepted (67108864 bytes = 64 MiB)\n");
  fs::remove(params);
}

TEST_CASE("a CSV cell that overflows on unit conversion names file, line and column") {
  std::string csv = cu_csv();
  csv.replace(csv.find("\n0.010000,20,") + 10, 2, "1e306");  // the q of line 3, declared in MPa below
  const fs::path series = series_with(
      "overflow", [](json& s) { s["specimens"][0]["data"]["columns"]["deviator_stress"]["unit"] = "MPa"; }, csv);
  const auto r = run_limited("check " + arg(series), "overflow");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + (series.parent_path() / "data.csv").string() +
                     ": line 3, column 2 (deviator_stress): '1e306' MPa is out of the range of a double once converted "
                     "to the internal unit\n");
}

TEST_CASE("a data path that leaves the series folder is refused unless the series allows it") {
  const fs::path series = series_with("escape", [](json& s) { s["specimens"][0]["data"]["file"] = "../outside.csv"; });
  const fs::path outside = series.parent_path().parent_path() / "outside.csv";
  write_text(outside, cu_csv());
  const std::string refused = "\" is outside the folder of the series file (data files are read from that folder and "
                              "its subfolders; a series that reads files elsewhere declares \"allow_data_outside_folder\": true)\n";
  auto r = run_limited("check " + arg(series), "escape");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + series.string() + ": specimens[0].data.file: \"../outside.csv" + refused);
  // An absolute path and a symbolic link inside the folder that points out of it likewise.
  const fs::path absolute = series_with("escape_absolute", [&](json& s) { s["specimens"][0]["data"]["file"] = outside.string(); });
  r = run_limited("check " + arg(absolute), "escape_absolute");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + absolute.string() + ": specimens[0].data.file: \"" + outside.string() + refused);
  const fs::path linked = series_with("escape_link", [](json& s) { s["specimens"][0]["data"]["file"] = "link.csv"; });
  fs::create_symlink(outside, linked.parent_path() / "link.csv");
  r = run_limited("check " + arg(linked), "escape_link");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + linked.string() + ": specimens[0].data.file: \"link.csv" + refused);
  // Subfolders are inside; "sub/../data.csv" too.
  const fs::path sub = series_with("subfolder", [](json& s) { s["specimens"][0]["data"]["file"] = "sub/../data.csv"; });
  fs::create_directories(sub.parent_path() / "sub");
  r = run_limited("check " + arg(sub), "subfolder");
  CHECK(r.exit_code == 0);
  // Allowed by the series: read.
  const fs::path allowed = series_with("escape_allowed", [](json& s) {
    s["allow_data_outside_folder"] = true;
    s["specimens"][0]["data"]["file"] = "../outside.csv";
  });
  r = run_limited("check " + arg(allowed), "escape_allowed");
  CHECK(r.exit_code == 0);
  CHECK(r.err.empty());
  const fs::path wrong = series_with("escape_key", [](json& s) { s["allow_data_outside_folder"] = "yes"; });
  r = run_limited("check " + arg(wrong), "escape_key");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + wrong.string() + ": allow_data_outside_folder: expected true or false, found \"yes\"\n");
}

TEST_CASE("no message quotes the content of a file that is not a lab data file") {
  const fs::path dir = scratch_dir("bad_input_no_quote");
  const fs::path secret = dir / "private.txt";
  write_text(secret, "owner:secret-line-1:0\nowner,secret-line-2,0\nowner;secret-line-3;0\n");
  for (int skip = 0; skip < 3; ++skip) {
    const fs::path series = series_with("no_quote_" + std::to_string(skip), [&](json& s) {
      s["allow_data_outside_folder"] = true;
      s["specimens"][0]["data"]["file"] = secret.string();
      s["specimens"][0]["data"]["skip_rows"] = skip;
    });
    const auto r = run_limited("check " + arg(series), "no_quote");
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("secret") == std::string::npos);
    if (skip > 0)
      CHECK(r.err == "1 error:\ntriaxcal: error: " + secret.string() + ": line " + std::to_string(skip + 1) +
                         ": none of the declared columns ('ea', 'cell', 'q', 'u') is in the header row (is this the data "
                         "file? check its skip_rows, delimiter and headers)\n");
  }
  // A JSON reader's message names line and column but not the token it read.
  const fs::path protocol = dir / "protocol.json";
  write_text(protocol, kProtocol);
  const auto r = run_limited("simulate --model mohr_coulomb --params " + arg(secret) + " --protocol " + arg(protocol),
                             "no_quote_json");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + secret.string() +
                     ": line 1, column 1: malformed JSON (syntax error while parsing value - invalid literal)\n");
}

TEST_CASE("every bad command line is one triaxcal error line") {
  auto r = run_limited("", "no_command");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: no command given (known commands: " + kKnown + "; 'triaxcal --help' describes them)\n");
  r = run_limited("calibrate x.json", "unknown_command");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: unknown command 'calibrate' (known commands: " + kKnown + ")\n");
  r = run_limited("check", "missing_argument");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: series is required ('triaxcal check --help' lists the options)\n");
  r = run_limited("check a.json b.json", "extra_argument");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: the following argument was not expected: b.json ('triaxcal check --help' lists the options)\n");
  r = run_limited("--frobnicate", "unknown_option");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: unknown option '--frobnicate' (a command comes first; known commands: " + kKnown + ")\n");
  r = run_limited("check a.json --frobnicate", "unknown_check_option");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: the following argument was not expected: --frobnicate ('triaxcal check --help' lists "
                 "the options)\n");
  CHECK(r.out.empty());
}

TEST_CASE("check counts its errors in words: 1 error, 2 errors") {
  json bad1 = cu_specimen("CU-1", "missing1.csv");
  json bad2 = cu_specimen("CU-2", "missing2.csv");
  const fs::path dir = scratch_dir("bad_input_count");
  const std::string one = write_series(dir, series_of(json::array({cu_specimen("CU-0", "data.csv"), bad1})), cu_csv());
  auto r = run_limited("check " + arg(one), "count_1");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "1 error:\ntriaxcal: error: " + (dir / "missing1.csv").string() + ": cannot open the file\n");
  const std::string two = write_series(dir, series_of(json::array({bad1, bad2})), cu_csv());
  r = run_limited("check " + arg(two), "count_2");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "2 errors:\ntriaxcal: error: " + (dir / "missing1.csv").string() + ": cannot open the file\ntriaxcal: error: " +
                     (dir / "missing2.csv").string() + ": cannot open the file\n");
}

TEST_CASE("every number option is checked while the command line is read: finite, in range, option and value named") {
  const fs::path dir = scratch_dir("bad_input_cli_numbers");
  const fs::path series = series_with("cli_numbers", [](json&) {});
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json", calibration = dir / "fit.json";
  write_text(params, kParams);
  write_text(protocol, kProtocol);
  write_text(calibration, "{}");
  const fs::path out = dir / "out.json";
  const std::string interpret = "interpret " + arg(series) + " --out " + arg(out) + " ";
  const std::string simulate = "simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                               " --out " + arg(out) + " ";
  const std::string fit = "fit " + arg(calibration) + " --out " + arg(dir / "fit_out") + " ";
  const std::string above0 = ": expected a finite number above 0 (kPa) ('triaxcal interpret --help' lists the options)\n";
  const std::string strain =
      ": expected strain:EPS with EPS a decimal axial strain above 0 and below 1, e.g. strain:0.15 ('triaxcal interpret "
      "--help' lists the options)\n";
  const std::string range =
      ": expected LO:HI, finite numbers with 0 <= LO < HI (kPa of s' at failure), e.g. 50:400 ('triaxcal interpret "
      "--help' lists the options)\n";
  const std::string tolerance = ": expected a finite number from 1e-10 to 0.1 ('triaxcal simulate --help' lists the options)\n";
  const std::vector<std::pair<std::string, std::string>> cases = {
      {interpret + "--design-stress inf", "--design-stress: inf" + above0},
      {interpret + "--design-stress nan", "--design-stress: nan" + above0},
      {interpret + "--design-stress -5", "--design-stress: -5" + above0},
      {interpret + "--design-stress 1e400", "--design-stress: 1e400" + above0},
      {interpret + "--design-stress 0", "--design-stress: 0" + above0},
      {interpret + "--design-stress 150x", "--design-stress: 150x" + above0},
      {interpret + "--reference-pressure 1e400", "--reference-pressure: 1e400" + above0},
      {interpret + "--reference-pressure 0", "--reference-pressure: 0" + above0},
      {interpret + "--reference-pressure nan", "--reference-pressure: nan" + above0},
      {interpret + "--reference-pressure -inf", "--reference-pressure: -inf" + above0},
      {interpret + "--criterion strain:1e400", "--criterion: strain:1e400" + strain},
      {interpret + "--criterion strain:nan", "--criterion: strain:nan" + strain},
      {interpret + "--criterion strain:1", "--criterion: strain:1" + strain},
      {interpret + "--criterion strain:0", "--criterion: strain:0" + strain},
      {interpret + "--criterion strain:", "--criterion: strain:" + strain},
      {interpret + "--stress-range 0:inf", "--stress-range: 0:inf" + range},
      {interpret + "--stress-range nan:400", "--stress-range: nan:400" + range},
      {interpret + "--stress-range 0:1e400", "--stress-range: 0:1e400" + range},
      {interpret + "--stress-range -5:400", "--stress-range: -5:400" + range},
      {interpret + "--stress-range 400:50", "--stress-range: 400:50" + range},
      {interpret + "--stress-range 400", "--stress-range: 400" + range},
      {simulate + "--tolerance nan", "--tolerance: nan" + tolerance},
      {simulate + "--tolerance inf", "--tolerance: inf" + tolerance},
      {simulate + "--tolerance 1e400", "--tolerance: 1e400" + tolerance},
      {simulate + "--tolerance 0", "--tolerance: 0" + tolerance},
      {simulate + "--tolerance 0.5", "--tolerance: 0.5" + tolerance},
      {fit + "--threads 4294967297",
       "--threads: Value 4294967297 not in range 0 to 1024 ('triaxcal fit --help' lists the options)\n"},
      {fit + "--threads nan", "--threads: Value nan not in range 0 to 1024 ('triaxcal fit --help' lists the options)\n"},
      {fit + "--threads -1", "--threads: Value -1 not in range 0 to 1024 ('triaxcal fit --help' lists the options)\n"},
      {fit + "--seed 99999999999999999999",
       "--seed: Value 99999999999999999999 not in range 0 to 4294967295 ('triaxcal fit --help' lists the options)\n"},
      {fit + "--seed -1", "--seed: Value -1 not in range 0 to 4294967295 ('triaxcal fit --help' lists the options)\n"},
      {fit + "--seed 4294967296",
       "--seed: Value 4294967296 not in range 0 to 4294967295 ('triaxcal fit --help' lists the options)\n"},
  };
  for (const auto& [args, message] : cases) {
    INFO(args);
    const auto r = run_limited(args, "cli_numbers");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + message);
    CHECK(r.out.empty());
    CHECK_FALSE(fs::exists(out));
    CHECK_FALSE(fs::exists(dir / "fit_out"));
  }
  // The edges are accepted (the run then goes on to read its inputs).
  auto r = run_limited(simulate + "--tolerance 1e-10", "cli_numbers_edge");
  CHECK(r.exit_code == 0);
  fs::remove(out);
  r = run_limited(simulate + "--tolerance 0.1", "cli_numbers_edge");
  CHECK(r.exit_code == 0);
}

TEST_CASE("integers of a report input are checked, never wrapped: evaluations 2^64 - 1, a history stage of 2^32 + 1") {
  const fs::path dir = scratch_dir("bad_input_report_integers");
  const fs::path input = dir / "run.report.json";
  const std::string head = R"({"format": "triaxcal-report-input", "version": 2, "outcome": "converged", )";
  const std::vector<std::pair<std::string, std::string>> cases = {
      {R"("evaluations": 18446744073709551615})",
       "evaluations: expected an integer from 0 to 9223372036854775807, found 18446744073709551615"},
      {R"("evaluations": -1})", "evaluations: expected an integer from 0 to 9223372036854775807, found -1"},
      {R"("evaluations": 12.5})", "evaluations: expected an integer, found 12.5"},
      {R"("history": [[1, 0.5, 0.5, 4294967297]]})",
       "history[0][3]: expected an integer from 0 to 2147483647, found 4294967297"},
      {R"("history": [[18446744073709551615, 0.5, 0.5, 1]]})",
       "history[0][0]: expected an integer from 0 to 9223372036854775807, found 18446744073709551615"},
  };
  for (const auto& [body, message] : cases) {
    INFO(body);
    write_text(input, head + body);
    const auto r = run_limited("report " + arg(dir), "report_integers");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + input.string() + ": " + message + "\n");
    CHECK_FALSE(fs::exists(dir / "run.report.html"));
  }
}

TEST_CASE("a fit's parameter set of the wrong types read for a report is an input error with its key path") {
  const fs::path dir = scratch_dir("bad_input_report_fit_files");
  write_text(dir / "run.curves.csv", "test,quantity,axial_strain[-],measured,simulated,unit\n");
  const fs::path params = dir / "run.parameters.json";
  const std::string head = R"({"format": "triaxcal-parameters", "version": 1, )";
  const std::vector<std::pair<std::string, std::string>> cases = {
      {R"("model": 5})", "model: expected a string, found 5"},
      {R"("model": "mohr_coulomb", "fit": {"tests": [{"id": "A", "curves": [{"points": "x"}]}]}})",
       "fit.tests[0].curves[0].points: expected an integer, found \"x\""},
      {R"("model": "mohr_coulomb", "fit": {"tests": [{"id": "A", "curves": [{"points": 4294967297}]}]}})",
       "fit.tests[0].curves[0].points: expected an integer from 0 to 2147483647, found 4294967297"},
      {R"("model": "mohr_coulomb", "fit": {"tests": [{"id": "A", "simulated": "yes"}]}})",
       "fit.tests[0].simulated: expected true or false, found \"yes\""},
      {R"("model": "mohr_coulomb", "fit": {"evaluations": 18446744073709551615}})",
       "fit.evaluations: expected an integer from 0 to 9223372036854775807, found 18446744073709551615"},
      {R"("model": "mohr_coulomb", "parameters": {"cohesion": {"unit": 3}}})",
       "parameters.cohesion.unit: expected a string, found 3"},
  };
  for (const auto& [body, message] : cases) {
    INFO(body);
    write_text(params, head + body);
    const auto r = run_limited("report " + arg(dir), "report_fit_files");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + params.string() + ": " + message + "\n");
    CHECK_FALSE(fs::exists(dir / "run.report.html"));
  }
}

TEST_CASE("a protocol asking for more records than a simulation may hold is refused up front, naming the key and the limit") {
  const fs::path dir = scratch_dir("bad_input_records");
  const fs::path params = dir / "params.json", protocol = dir / "protocol.json", out = dir / "curves.csv";
  write_text(params, kParams);
  const std::string head = R"({"format": "triaxcal-protocol", "version": 1, "name": "T1", "initial": {"p": 100}, "stages": [)";
  const std::string shear = R"({"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": )";
  const std::string run = "simulate --model mohr_coulomb --params " + arg(params) + " --protocol " + arg(protocol) +
                          " --out " + arg(out);
  // One stage of 10^7 steps (the issue's case: 119 s and 3 GB before the limit).
  write_text(protocol, head + shear + "10000000}]}");
  auto r = run_limited(run, "records_stage");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + protocol.string() + ": stages[0]: steps = 10000000 must be in [1, 1000000]\n");
  CHECK_FALSE(fs::exists(out));
  // Two stages within the limit each, 1200001 records together.
  write_text(protocol, head + shear + "600000}, " + shear + "600000}]}");
  r = run_limited(run, "records_total");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: " + protocol.string() +
                     ": stages: 1200001 records in all (the initial state, every stage's steps or record_at points, twice "
                     "for an unload_reload), more than the 1000000 a simulation may hold\n");
  CHECK_FALSE(fs::exists(out));
  // An unload-reload loop counts twice.
  write_text(protocol, head + shear + "400000}, " +
                           R"({"type": "unload_reload", "drainage": "drained", "deviator_stress": 0, "steps": 300000}]})");
  r = run_limited(run, "records_loop");
  CHECK(r.exit_code == 2);
  CHECK(r.err.find(": stages: 1000001 records in all") != std::string::npos);
  CHECK_FALSE(fs::exists(out));
}
