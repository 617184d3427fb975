// The strict AGS4 reader (core/include/triaxcal/ags4.hpp). Format rules: AGS4 data format 4.1, as
// summarised in issue 16. The files here are invented (a fictional site, tests/ags/data/).
#include <catch2/catch.hpp>

#include <cmath>
#include <string>

#include "cli_run.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/error.hpp"

using namespace triaxcal;

namespace {

/// A small file in the standard's layout, LF or CR LF line ends.
std::string lines(std::initializer_list<const char*> rows, const char* eol = "\r\n") {
  std::string s;
  for (const char* r : rows) s += std::string(r) + eol;
  return s;
}

const char* const kHeading = "\"HEADING\",\"LOCA_ID\",\"TRIT_CELL\",\"TRIT_STRN\"";
const char* const kUnit = "\"UNIT\",\"\",\"kPa\",\"%\"";
const char* const kType = "\"TYPE\",\"ID\",\"0DP\",\"1DP\"";

std::string message_of(const std::string& text) {
  try {
    parse_ags4(text, "x.ags");
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("the invented AGS4 file is read: groups, rows and units converted once") {
  const Ags4File f = read_ags4(test::source_path("tests/ags/data/hollowmere_reach.ags"));
  CHECK_FALSE(f.latin1);
  REQUIRE(f.groups.size() == 10);  // PROJ, LOCA, SAMP, TRIG, TRIT, TREG, TRET, CONG, CONS, GEOL
  const Ags4Group* trit = f.group("TRIT");
  REQUIRE(trit != nullptr);
  REQUIRE(trit->rows.size() == 4);
  CHECK(trit->rows[0].line == 40);
  // kPa stays kPa; % becomes a decimal; mm becomes m (ags4.hpp: internal units).
  CHECK(ags4_number(f, *trit, trit->rows[1], "TRIT_DEVF", Ags4Dimension::stress, true) == 84.0);
  CHECK(ags4_number(f, *trit, trit->rows[1], "TRIT_STRN", Ags4Dimension::fraction, true) == Approx(0.06).epsilon(1e-15));
  CHECK(ags4_number(f, *trit, trit->rows[1], "TRIT_SDIA", Ags4Dimension::length, true) == Approx(0.038).epsilon(1e-15));
  const Ags4Group* tret = f.group("TRET");
  REQUIRE(tret != nullptr);
  CHECK(std::isnan(ags4_number(f, *tret, tret->rows[0], "TRET_STV", Ags4Dimension::fraction, false)));
  CHECK_THROWS_WITH(ags4_number(f, *tret, tret->rows[0], "TRET_CELL", Ags4Dimension::fraction, true),
                    test::source_path("tests/ags/data/hollowmere_reach.ags") +
                        ": line 60, group TRET, heading TRET_CELL: unit 'kPa' is not a unit of percentage (%)");
  const Ags4Group* proj = f.group("PROJ");
  REQUIRE(proj != nullptr);
  CHECK(proj->rows[0].text[1] == "Hollowmere Reach (invented site)");
}

TEST_CASE("quoted fields keep commas and doubled quotes; LF line ends are accepted") {
  const std::string text = lines({"\"GROUP\",\"PROJ\"", "\"HEADING\",\"PROJ_ID\",\"PROJ_NAME\"", "\"UNIT\",\"\",\"\"",
                                  "\"TYPE\",\"ID\",\"X\"", "\"DATA\",\"P1\",\"Site \"\"North\"\", phase 2\""},
                                 "\n");
  const Ags4File f = parse_ags4(text, "x.ags");
  REQUIRE(f.group("PROJ") != nullptr);
  CHECK(f.group("PROJ")->rows[0].text[1] == "Site \"North\", phase 2");
}

TEST_CASE("Latin-1 text is converted to UTF-8") {
  // 0xE9 is e-acute in Latin-1; alone it is not valid UTF-8.
  const std::string text = lines({"\"GROUP\",\"PROJ\"", "\"HEADING\",\"PROJ_ID\",\"PROJ_NAME\"", "\"UNIT\",\"\",\"\"",
                                  "\"TYPE\",\"ID\",\"X\"", "\"DATA\",\"P1\",\"Caf\xE9 Quay (invented)\""});
  const Ags4File f = parse_ags4(text, "x.ags");
  CHECK(f.latin1);
  CHECK(f.group("PROJ")->rows[0].text[1] == "Caf\xC3\xA9 Quay (invented)");
  // Valid UTF-8 stays as it is.
  const std::string utf8 = lines({"\"GROUP\",\"PROJ\"", "\"HEADING\",\"PROJ_ID\",\"PROJ_NAME\"", "\"UNIT\",\"\",\"\"",
                                  "\"TYPE\",\"ID\",\"X\"", "\"DATA\",\"P1\",\"Caf\xC3\xA9 Quay (invented)\""});
  const Ags4File g = parse_ags4(utf8, "x.ags");
  CHECK_FALSE(g.latin1);
  CHECK(g.group("PROJ")->rows[0].text[1] == "Caf\xC3\xA9 Quay (invented)");
}

TEST_CASE("values are checked against their TYPE") {
  auto with = [](const char* data) { return message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, data})); };
  CHECK(with("\"DATA\",\"BH1\",\"40\",\"4.5\"") == "no error");
  CHECK(with("\"DATA\",\"BH1\",\"\",\"\"") == "no error");  // empty fields are allowed
  CHECK(with("\"DATA\",\"BH1\",\"40.0\",\"4.5\"") ==
        "x.ags: line 5, group TRIT, heading TRIT_CELL: '40.0' is not a 0DP value (expected a whole number (0DP))");
  CHECK(with("\"DATA\",\"BH1\",\"40\",\"4.50\"") ==
        "x.ags: line 5, group TRIT, heading TRIT_STRN: '4.50' is not a 1DP value (expected a number with 1 decimal place)");
  CHECK(with("\"DATA\",\"BH1\",\"4O\",\"4.5\"") ==
        "x.ags: line 5, group TRIT, heading TRIT_CELL: '4O' is not a 0DP value (expected a whole number (0DP))");
  const auto sf = [](const char* v) {
    return message_of(lines({"\"GROUP\",\"CONS\"", "\"HEADING\",\"CONS_CVRT\"", "\"UNIT\",\"m2/yr\"", "\"TYPE\",\"2SF\"",
                             (std::string("\"DATA\",\"") + v + "\"").c_str()}));
  };
  CHECK(sf("4.2") == "no error");
  CHECK(sf("0.085") == "no error");
  CHECK(sf("420") == "no error");
  CHECK(sf("4.25") == "x.ags: line 5, group CONS, heading CONS_CVRT: '4.25' is not a 2SF value (expected a number with 2 significant figures)");
  const auto yn = message_of(lines({"\"GROUP\",\"X\"", "\"HEADING\",\"X_FLAG\",\"X_DATE\"", "\"UNIT\",\"\",\"yyyy-mm-dd\"",
                                    "\"TYPE\",\"YN\",\"DT\"", "\"DATA\",\"Y\",\"2026-02-30\"", "\"DATA\",\"yes\",\"2026-03-01\""}));
  CHECK(yn == "x.ags: line 6, group X, heading X_FLAG: 'yes' is not a YN value (expected Y or N)");
  const auto dt = message_of(lines({"\"GROUP\",\"X\"", "\"HEADING\",\"X_DATE\"", "\"UNIT\",\"yyyy-mm-dd\"", "\"TYPE\",\"DT\"",
                                    "\"DATA\",\"3/1/2026\""}));
  CHECK(dt == "x.ags: line 5, group X, heading X_DATE: '3/1/2026' is not a DT value (expected a date or time in the form yyyy-mm-dd)");
}

TEST_CASE("malformed AGS4 files give exact messages with line, group and heading") {
  // Wrong number of fields in a DATA row.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "\"DATA\",\"BH1\",\"40\""})) ==
        "x.ags: line 5, group TRIT: the DATA row has 2 fields, the HEADING row has 3");
  // Missing UNIT row.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kType, "\"DATA\",\"BH1\",\"40\",\"4.5\""})) ==
        "x.ags: line 3, group TRIT: expected the UNIT row after HEADING, found \"TYPE\"");
  // Missing TYPE row.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, "\"DATA\",\"BH1\",\"40\",\"4.5\""})) ==
        "x.ags: line 4, group TRIT: expected the TYPE row after UNIT, found \"DATA\"");
  // Unknown unit.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, "\"UNIT\",\"\",\"psf\",\"%\"", kType})) ==
        "x.ags: line 3, group TRIT, heading TRIT_CELL: unit 'psf' is not known (expected one of: kPa, MPa, Pa, %, m, cm, mm, "
        "m2/MN, m2/kN, m2/yr, Mg/m3, kg/m3, deg, a date pattern such as yyyy-mm-dd for DT, or none (\"\" or -))");
  // Unknown type.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, "\"TYPE\",\"ID\",\"NUM\",\"1DP\""})) ==
        "x.ags: line 4, group TRIT, heading TRIT_CELL: type 'NUM' is not known (expected ID, X, XN, PA, PT, PU, RL, T, U, MC, DT, YN, "
        "nDP, nSF or nSCI)");
  // Unquoted field, missing closing quote, text after a closing quote.
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "\"DATA\",BH1,\"40\",\"4.5\""})) ==
        "x.ags: line 5, group TRIT: field 2: expected a double-quoted field (every AGS4 field is in double quotes), found 'BH1,\"40\",\"'");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "\"DATA\",\"BH1\",\"40\",\"4.5"})) ==
        "x.ags: line 5, group TRIT: field 4: the closing double quote is missing");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "\"DATA\",\"BH1\" ,\"40\",\"4.5\""})) ==
        "x.ags: line 5, group TRIT: field 2: expected a comma or the end of the line after the closing quote, found ' ,\"40\",\"4.'");
  // A file that is not AGS4 at all, and a group that ends early.
  CHECK(message_of("a,b,c\n1,2,3\n") ==
        "x.ags: line 1: field 1: expected a double-quoted field (every AGS4 field is in double quotes), found 'a,b,c'");
  CHECK(message_of("") == "x.ags: no GROUP row: not an AGS4 file");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading})) ==
        "x.ags: line 2, group TRIT: the file ends before the UNIT row (each group has GROUP, HEADING, UNIT and TYPE rows, then DATA rows)");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, "", kUnit})) ==
        "x.ags: line 3, group TRIT: a blank line before the UNIT row (each group has GROUP, HEADING, UNIT and TYPE rows, then DATA rows)");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "", "\"GROUP\",\"TRIT\"", kHeading, kUnit, kType})) ==
        "x.ags: line 6, group TRIT: the group appears a second time");
  CHECK(message_of(lines({"\"GROUP\",\"TRIT\"", kHeading, kUnit, kType, "\"GROUP\",\"TRET\""})) ==
        "x.ags: line 5, group TRIT: a new GROUP row without the blank line that ends the group before");
}
