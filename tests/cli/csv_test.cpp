// Every CSV triaxcal writes quotes fields per RFC 4180 (Shafranovich 2005, "Common Format and MIME
// Type for CSV Files", section 2): a test name with commas and quotes stays one field, and every row
// has as many fields as the header, read back by a strict parser written here and by Python's csv module.
#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "cli_run.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/results_csv.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

/// A strict RFC 4180 reader of its own (it shares no code with parse_csv): a record is a list of
/// fields, a quoted field may hold commas, LF and doubled quotes; anything else is an error
/// (returns false).
bool strict_records(const std::string& text, std::vector<std::vector<std::string>>& out) {
  out.clear();
  std::size_t i = 0;
  while (i < text.size()) {
    std::vector<std::string> rec;
    for (;;) {
      std::string f;
      if (i < text.size() && text[i] == '"') {
        for (++i;; ++i) {
          if (i >= text.size()) return false;
          if (text[i] == '"') {
            if (i + 1 < text.size() && text[i + 1] == '"') {
              f += '"';
              ++i;
            } else {
              ++i;
              break;
            }
          } else {
            f += text[i];
          }
        }
      } else {
        while (i < text.size() && text[i] != ',' && text[i] != '\n') {
          if (text[i] == '"' || text[i] == '\r') return false;
          f += text[i++];
        }
      }
      rec.push_back(f);
      if (i >= text.size()) return false;  // every record ends in a line break
      if (text[i] == ',') {
        ++i;
        continue;
      }
      if (text[i] != '\n') return false;
      ++i;
      break;
    }
    out.push_back(rec);
  }
  return true;
}

const std::string kAwkwardName = "CD-100, \"dense\", e0 = 0,61";

}  // namespace

TEST_CASE("csv_field quotes a field with a comma, a double quote, CR or LF and doubles inner quotes", "[csv]") {
  CHECK(csv_field("CD-100") == "CD-100");
  CHECK(csv_field("") == "");
  CHECK(csv_field("a,b") == "\"a,b\"");
  CHECK(csv_field("say \"hi\"") == "\"say \"\"hi\"\"\"");
  CHECK(csv_field("two\nlines") == "\"two\nlines\"");
  CHECK(csv_field("cr\rhere") == "\"cr\rhere\"");
}

TEST_CASE("parse_csv reads quoted fields with commas, quotes and line breaks and names the line of bad quoting", "[csv]") {
  const auto r = parse_csv("a,b\n\"x, \"\"y\"\"\",\"two\nlines\"\r\n\n,\n", "t.csv");
  REQUIRE(r.size() == 3);
  CHECK(r[0].fields == std::vector<std::string>{"a", "b"});
  CHECK(r[1].line == 2);
  CHECK(r[1].fields == std::vector<std::string>{"x, \"y\"", "two\nlines"});
  CHECK(r[2].line == 5);
  CHECK(r[2].fields == std::vector<std::string>{"", ""});
  REQUIRE_THROWS_WITH(parse_csv("a\n\"open,\nstill", "t.csv"), "t.csv: line 2: a quoted field is not closed");
  REQUIRE_THROWS_WITH(parse_csv("\"a\"b,c\n", "t.csv"), "t.csv: line 1: text after the closing quote of a field");
  REQUIRE_THROWS_WITH(parse_csv("x\nab\"c\n", "t.csv"), "t.csv: line 2: a double quote inside an unquoted field");
}

TEST_CASE("simulated curves keep a test name with commas and quotes in one field on every row", "[csv]") {
  SimulationResult result;
  for (int k = 0; k < 3; ++k) {
    StepRecord r{};
    r.stage = 0;
    r.step = k;
    r.axial_strain = 0.001 * k;
    r.q = 10.0 * k;
    result.steps.push_back(r);
  }
  const std::string csv = format_results_csv({{kAwkwardName, &result}, {"plain", &result}}, {"state, with comma"});
  std::vector<std::vector<std::string>> rows;
  REQUIRE(strict_records(csv, rows));
  REQUIRE(rows.size() == 7);
  for (const auto& row : rows) CHECK(row.size() == rows.front().size());
  CHECK(rows.front().back() == "state, with comma");
  CHECK(rows[1][0] == kAwkwardName);
  CHECK(rows[4][0] == "plain");
  // Our own reader agrees.
  const auto ours = parse_csv(csv, "curves.csv");
  REQUIRE(ours.size() == rows.size());
  for (std::size_t i = 0; i < rows.size(); ++i) CHECK(ours[i].fields == rows[i]);
}

TEST_CASE("the fitted-curves CSV keeps a test id with commas and quotes in one field", "[csv]") {
  CalibrationSummary s;
  TestFit t;
  t.id = kAwkwardName;
  CurveFit c;
  c.y = Quantity::deviator_stress;
  c.xs = {0.01, 0.02};
  c.measured = {50.0, 80.0};
  c.simulated = {51.0};  // the second point has no simulated value: an empty field
  t.curves.push_back(c);
  s.tests.push_back(t);
  const std::string csv = format_fit_csv(s);
  std::vector<std::vector<std::string>> rows;
  REQUIRE(strict_records(csv, rows));
  REQUIRE(rows.size() == 3);
  for (const auto& row : rows) CHECK(row.size() == 7);  // test,stage,quantity,stage_axial_strain[-],measured,simulated,unit
  CHECK(rows[1][0] == kAwkwardName);
  CHECK(rows[1][1] == "1");  // the specimen's only shear stage is stage 1 for people
  CHECK(rows[2][5].empty());
}

TEST_CASE("simulate --out quotes a protocol name with commas and quotes: Python's csv module reads as many fields on every row as in the header",
          "[csv][cli]") {
  const std::string params = "csv_params.json", protocol = "csv_protocol.json", out = "csv_curves.csv";
  std::ofstream(params) << R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
  "parameters": {"youngs_modulus": 20000, "friction_angle": 30, "cohesion": 5, "dilation_angle": 2}})";
  std::ofstream(protocol) << R"({"format": "triaxcal-protocol", "version": 1, "name": "CD-100, \"dense\", e0 = 0,61",
  "initial": {"p": 100},
  "stages": [{"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": 20}]})";
  fs::remove(out);
  const CliResult r = run_cli("simulate --model mohr_coulomb --params " + params + " --protocol " + protocol + " --out " + out, "csv");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const std::string csv = slurp(out);
  std::vector<std::vector<std::string>> rows;
  REQUIRE(strict_records(csv, rows));
  REQUIRE(rows.size() > 2);
  for (const auto& row : rows) CHECK(row.size() == rows.front().size());
  CHECK(rows[1][0] == kAwkwardName);
  // Python's csv module in strict mode (a reader that shares nothing with ours). The script prints
  // the header's field count, the distinct row lengths and the first test name.
  const std::string script = "csv_check.py";
  std::ofstream(script) << "import csv, sys\n"
                           "rows = list(csv.reader(open(sys.argv[1], newline=''), strict=True))\n"
                           "print(len(rows[0]), sorted({len(r) for r in rows}), rows[1][0])\n";
  const int status = std::system(("python3 " + script + " " + out + " > csv_check.out 2>&1").c_str());
  if (status != 0) {
    WARN("python3 did not run (" << slurp("csv_check.out") << "): the check by Python's csv module was skipped");
    return;
  }
  const std::string n = std::to_string(rows.front().size());
  CHECK(slurp("csv_check.out") == n + " [" + n + "] " + kAwkwardName + "\n");
}
