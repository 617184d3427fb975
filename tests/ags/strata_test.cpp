// Materials by GEOL strata (issue 16): the material map's rules matched against the GEOL stratum that holds each
// specimen (same LOCA_ID, GEOL_TOP <= depth < GEOL_BASE), listed so that the user can check them; bad maps and strata
// exit 2 with their exact messages. Data: the invented Hollowmere Reach site (tests/ags/data, a fictional site; its
// GEOL rows say "invented").
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <string>

#include "cli_run.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
namespace fs = std::filesystem;

namespace {

fs::path scratch(const std::string& tag) {
  const fs::path dir = fs::temp_directory_path() / ("triaxcal_ags_strata_" + tag);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

std::string read(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  return std::string((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
}

void write(const fs::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

std::string data(const std::string& name) { return test::source_path("tests/ags/data/" + name); }

test::CliResult import(const std::string& ags, const std::string& map, const fs::path& out, const std::string& tag) {
  return test::run_cli("import " + ags + " --out " + out.string() + " --materials " + map, "ags_strata_" + tag);
}

/// The invented file with `from` replaced by `to` (once) in `dir`.
std::string edited(const fs::path& dir, const std::string& from, const std::string& to) {
  std::string text = read(data("hollowmere_reach.ags"));
  const std::size_t at = text.find(from);
  REQUIRE(at != std::string::npos);
  text.replace(at, from.size(), to);
  write(dir / "site.ags", text);
  return (dir / "site.ags").string();
}

}  // namespace

TEST_CASE("GEOL strata group the specimens into materials as the depth ranges do, each listed with its stratum", "[ags][geol]") {
  const fs::path dir = scratch("same");
  const test::CliResult r = import(data("hollowmere_reach.ags"), data("hollowmere_reach_strata.json"), dir / "geol.json", "same");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.err.empty());
  CHECK(r.out.find("  strata (GEOL, for the material map): 6 at 3 location(s)\n") != std::string::npos);
  CHECK(r.out.find("  BH01/2.00/1/1      BH01       2.10  UU          1  clay A  (GEOL line 93: 1.00 to 10.00 m, GEOL_GEOL 'HMC', "
                   "GEOL_LEG 'CL')\n") != std::string::npos);
  CHECK(r.out.find("  BH02/12.00/3/1     BH02      12.10  CD          1  sand B  (GEOL line 95: 10.00 to 20.00 m, GEOL_GEOL 'HRT', "
                   "GEOL_LEG 'SA')\n") != std::string::npos);
  // BH03's clay is not HMC: the third rule (location BH03, legend CL) takes it.
  CHECK(r.out.find("  BH03/3.00/1/1      BH03       3.20  oedometer   8  clay C  (GEOL line 97: 3.00 to 9.00 m, GEOL_GEOL 'HBC', "
                   "GEOL_LEG 'CL')\n") != std::string::npos);
  // The same materials as the invented depth-range map of the same site.
  const test::CliResult d = import(data("hollowmere_reach.ags"), data("hollowmere_reach_materials.json"), dir / "depth.json", "same_depth");
  REQUIRE(d.exit_code == 0);
  const TestSeries a = read_test_series((dir / "geol.json").string()), b = read_test_series((dir / "depth.json").string());
  REQUIRE(a.specimens.size() == b.specimens.size());
  for (std::size_t i = 0; i < a.specimens.size(); ++i) {
    INFO(a.specimens[i].id);
    CHECK(!a.specimens[i].material.empty());
    CHECK(a.specimens[i].material == b.specimens[i].material);
  }
}

TEST_CASE("a material named by a GEOL heading, and specimens in no stratum listed and counted", "[ags][geol]") {
  const fs::path dir = scratch("from");
  write(dir / "map.json", R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material_from_geol": "GEOL_DESC"}]})");
  // BH02's sand ends at 12.20 m: the specimens at 12.30 and 12.50 m lie in no stratum.
  const std::string ags = edited(dir, R"("BH02","10.00","20.00")", R"("BH02","10.00","12.20")");
  const test::CliResult r = import(ags, (dir / "map.json").string(), dir / "series.json", "from");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("  BH01/5.00/3/1      BH01       5.10  CU          1  Soft grey silty CLAY (invented)  (GEOL line 93: 1.00 to "
                   "10.00 m, GEOL_DESC 'Soft grey silty CLAY (invented)')\n") != std::string::npos);
  CHECK(r.out.find("  BH02/12.00/3/3     BH02      12.50  CD          1  (none)  (in no GEOL stratum of BH02)\n") != std::string::npos);
  CHECK(r.err == "triaxcal: warning: 2 specimen(s) match no rule of the material map (material empty)\n");
  const TestSeries s = read_test_series((dir / "series.json").string());
  CHECK(s.specimens[7].material == "Dense brown gravelly SAND (invented)");  // BH02/12.00/3/1 at 12.10 m
  CHECK(s.specimens[8].material.empty());
}

TEST_CASE("bad GEOL rules and strata are exit 2 with their exact message and nothing is written", "[ags][geol]") {
  const fs::path dir = scratch("bad");
  const std::string map = (dir / "map.json").string();
  const std::string good = R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material": "clay A", "geol": {"GEOL_GEOL": "HMC"}}]})";
  std::string no_geol = read(data("hollowmere_reach.ags"));
  no_geol = no_geol.substr(0, no_geol.find("\r\n\"GROUP\",\"GEOL\""));
  struct Case {
    const char* what;
    std::string map, ags_from, ags_to;
    std::string message;  // after "triaxcal: error: "; <ags> is the AGS4 file's path
  };
  const std::vector<Case> cases = {
      {"no GEOL group", good, "", "", map + ": materials[0]: the rule uses GEOL strata, but <ags> has no GEOL group"},
      {"heading not in GEOL", R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material": "x", "geol": {"GEOL_STAT": "A"}}]})",
       "-", "", map + ": materials[0]: heading GEOL_STAT is not in the GEOL group of <ags> (line 88)"},
      {"both material and material_from_geol",
       R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material": "x", "material_from_geol": "GEOL_GEOL"}]})", "-", "",
       map + ": materials[0]: expected one of material (a name) or material_from_geol (a GEOL heading that names it)"},
      {"a value that is not text", R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material": "x", "geol": {"GEOL_GEOL": 3}}]})",
       "-", "", map + ": materials[0].geol.GEOL_GEOL: expected the value as text, found 3"},
      {"from without to", R"({"format": "triaxcal-material-map", "version": 1, "materials": [{"material": "x", "from": 3}]})", "-", "",
       map + ": materials[0]: from and to go together (a depth range [from, to) m), or neither (any depth)"},
      {"overlapping strata", good, R"("BH02","0.00","10.00")", R"("BH02","0.00","12.20")",
       "<ags>: line 95, group GEOL, heading GEOL_TOP: specimen BH02/12.00/3/1 at 12.1 m lies in two strata (also line 94)"},
      {"base above top", good, R"("BH03","3.00","9.00")", R"("BH03","3.00","2.00")",
       "<ags>: line 97, group GEOL, heading GEOL_BASE: 2 m is not below GEOL_TOP 3 m"},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    const fs::path out = dir / "out";
    fs::remove_all(out);
    fs::create_directories(out);
    write(map, c.map);
    std::string ags = data("hollowmere_reach.ags");
    if (c.ags_from.empty()) {
      write(dir / "site.ags", no_geol);
      ags = (dir / "site.ags").string();
    } else if (c.ags_from != "-") {
      ags = edited(dir, c.ags_from, c.ags_to);
    }
    std::string message = c.message;
    for (auto at = message.find("<ags>"); at != std::string::npos; at = message.find("<ags>")) message.replace(at, 5, ags);
    const test::CliResult r = import(ags, map, out / "series.json", "bad");
    CHECK(r.exit_code == 2);
    CHECK(r.err == "triaxcal: error: " + message + "\n");
    CHECK(r.out.empty());
    CHECK(fs::is_empty(out));
  }
}
