// The Gmsh ONELAB client (plugin/gmsh) with the real gmsh in batch mode ("-": initialize, check,
// compute). Each test works in its own folder with its own GMSH_HOME (the ONELAB socket lives
// there, so parallel tests do not collide) and runs gmsh under `timeout 60`. The model is the
// invented two-layer example (examples/gmsh) with the invented demo series (examples/calibrate).
// What the client wrote into Gmsh's ONELAB database is read back from the database Gmsh saves
// (<model>.db, Solver.AutoSaveDatabase = 1).

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <sys/wait.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "cli_run.hpp"

namespace fs = std::filesystem;
using nlohmann::json;
using triaxcal::test::slurp;
using triaxcal::test::source_path;

#if defined(TRIAXCAL_GMSH) && defined(TRIAXCAL_GMSH_CLIENT) && defined(TRIAXCAL_GMSH_OPTIONS)
#define TRIAXCAL_HAVE_GMSH 1
#endif

#ifndef TRIAXCAL_HAVE_GMSH

TEST_CASE("the Gmsh client tests need gmsh and libgmsh-private-headers-dev", "[plugin][gmsh]") {
  FAIL("gmsh or onelab.h was not found when CMake ran: apt-get install gmsh libgmsh-private-headers-dev, then re-run "
       "the configure step");
}

#else

namespace {

/// One ONELAB parameter as Gmsh's database stores it (onelab::parameter::toChar, onelab.h 1.3).
struct DbEntry {
  std::string type;  ///< "number" or "string"
  bool read_only = false;
  std::map<std::string, std::string> attributes;
  std::vector<std::string> values;
};

std::map<std::string, DbEntry> read_db(const fs::path& path) {
  std::map<std::string, DbEntry> db;
  const std::string text = slurp(path.string());
  std::size_t pos = text.find('\n');  // first line: a comment
  while (pos != std::string::npos && pos + 1 < text.size()) {
    ++pos;
    const std::size_t space = text.find(' ', pos);
    if (space == std::string::npos) break;
    const std::size_t n = std::stoul(text.substr(pos, space - pos));
    const std::string record = text.substr(space + 1, n);
    pos = space + 1 + n;  // at the '\n'
    std::vector<std::string> f;
    std::size_t a = 0;
    for (std::size_t b; (b = record.find('\0', a)) != std::string::npos; a = b + 1) f.push_back(record.substr(a, b - a));
    if (f.size() < 10) continue;
    DbEntry e;
    e.type = f[1];
    e.read_only = f[7] == "1";
    std::size_t k = 8;
    const int attributes = std::stoi(f[k++]);
    for (int i = 0; i < attributes && k + 1 < f.size(); ++i, k += 2) e.attributes[f[k]] = f[k + 1];
    const int clients = std::stoi(f[k++]);
    k += 2 * static_cast<std::size_t>(clients);
    const int values = std::stoi(f[k++]);
    for (int i = 0; i < values && k < f.size(); ++i) e.values.push_back(f[k++]);
    db[f[2]] = e;
  }
  return db;
}

struct GmshRun {
  int exit_code = -1;
  std::string log;
};

/// A fresh copy of the examples: <dir>/gmsh (model, project, files) and <dir>/calibrate (series).
fs::path fresh_case(const std::string& tag) {
  const fs::path dir = fs::absolute(fs::path("plugin_gmsh") / tag);
  fs::remove_all(dir);
  fs::create_directories(dir / "home");
  fs::copy(source_path("examples/gmsh"), dir / "gmsh", fs::copy_options::recursive);
  fs::copy(source_path("examples/calibrate"), dir / "calibrate", fs::copy_options::recursive);
  std::ofstream(dir / "gmsh" / "test.opt") << "Solver.AutoSaveDatabase = 1;\nSolver.AutoMesh = 0;\n";
  return dir;
}

void write(const fs::path& path, const std::string& text) { std::ofstream(path, std::ios::binary) << text; }

/// gmsh with the build's options snippet, in <dir>/gmsh, with its own GMSH_HOME and HOME.
GmshRun run_gmsh(const fs::path& dir, const std::string& args) {
  const std::string cmd = "cd '" + (dir / "gmsh").string() + "' && GMSH_HOME='" + (dir / "home").string() +
                          "' HOME='" + (dir / "home").string() + "' timeout 60 " + TRIAXCAL_GMSH + " -option '" +
                          TRIAXCAL_GMSH_OPTIONS + "' -option test.opt " + args + " > gmsh.log 2>&1";
  const int status = std::system(cmd.c_str());
  GmshRun r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.log = slurp((dir / "gmsh" / "gmsh.log").string());
  return r;
}

std::string value(const std::map<std::string, DbEntry>& db, const std::string& name) {
  const auto it = db.find(name);
  if (it == db.end() || it->second.values.empty()) return "<absent>";
  return it->second.values[0];
}

std::size_t count(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (std::size_t p = text.find(what); p != std::string::npos; p = text.find(what, p + 1)) ++n;
  return n;
}

json read_json(const fs::path& path) { return json::parse(slurp(path.string())); }

}  // namespace

TEST_CASE("batch gmsh runs the client through initialize, check and compute, and each soil unit's outputs are read-only "
          "and highlighted in Gmsh's database",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("round_trip");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  CHECK(count(r.log, "Running 'triaxcal'") == 3);  // initialize, check, compute
  CHECK(r.log.find("Error") == std::string::npos);
  CHECK(r.log.find("triaxcal: 2 of 2 soil unit(s) computed") != std::string::npos);
  CHECK(r.log.find("Caution: these parameters are for numerical analysis.") != std::string::npos);
  const auto db = read_db(dir / "gmsh" / "two_layers.db");
  CHECK(value(db, "triaxcal/Action") == "compute");
  // One soil unit a physical surface; the boundary curves get none.
  CHECK(value(db, "triaxcal/1Soil units/upper_sand/0Source") == "calibration");
  CHECK(value(db, "triaxcal/1Soil units/lower_clay/0Source") == "parameter set");
  CHECK(value(db, "triaxcal/1Soil units/base/0Source") == "<absent>");
  CHECK(value(db, "triaxcal/1Soil units/ground_surface/0Source") == "<absent>");
  CHECK(value(db, "triaxcal/2Results/upper_sand/0Status") == "ok: converged");
  CHECK(value(db, "triaxcal/2Results/upper_sand/1Model") == "mohr_coulomb");
  CHECK(value(db, "triaxcal/2Results/lower_clay/0Status") == "ok");
  CHECK(value(db, "triaxcal/2Results/lower_clay/1Model") == "modified_cam_clay");
  // The parameter set's values, in model order, with units in the names.
  CHECK(std::stod(value(db, "triaxcal/2Results/lower_clay/200lambda")) == 0.18);
  CHECK(std::stod(value(db, "triaxcal/2Results/lower_clay/203critical_state_friction_angle [deg]")) == 26.0);
  const std::string phi_name = "triaxcal/2Results/upper_sand/203friction_angle [deg]";
  REQUIRE(db.count(phi_name) == 1);
  const double phi = std::stod(value(db, phi_name));
  CHECK(phi > 20.0);  // inside the calibration's box
  CHECK(phi < 45.0);
  CHECK(db.at(phi_name).read_only);
  CHECK(db.at(phi_name).attributes.at("Highlight") == "LightYellow");
  // The interval beside its value, both rounded to the interval's precision.
  const std::string phi_text = value(db, phi_name);
  INFO(phi_text);
  CHECK(phi_text.find("   (95 % interval ") != std::string::npos);
  CHECK(phi_text.size() < 48);  // rounded, not 17 digits
  CHECK(value(db, "triaxcal/2Results/upper_sand/4Fit outcome") == "converged");
  // R^2 rows in the calibration file's test order (numbered for the tree), four decimals.
  CHECK(value(db, "triaxcal/2Results/upper_sand/600Fit R2 CD-50 deviator_stress").size() == 6);
  CHECK(std::stod(value(db, "triaxcal/2Results/upper_sand/602Fit R2 CD-100 deviator_stress")) > 0.9);
  CHECK(value(db, "triaxcal/2Results/upper_sand/604Fit R2 CD-200 deviator_stress") != "<absent>");
  CHECK(std::stod(value(db, "triaxcal/2Results/lower_clay/7Check test peak q [kPa]")) > 0.0);
  // Only the parameters the model uses: the clay set gives phi_cs, so M (0, the unused alternative)
  // and the constant shear modulus (0: from Poisson's ratio) are not shown.
  CHECK(value(db, "triaxcal/2Results/lower_clay/202critical_state_ratio") == "<absent>");
  CHECK(value(db, "triaxcal/2Results/lower_clay/205shear_modulus [kPa]") == "<absent>");
  CHECK(value(db, "triaxcal/2Results/lower_clay/204poissons_ratio") != "<absent>");
  // Inputs stay editable.
  CHECK_FALSE(db.at("triaxcal/1Soil units/lower_clay/3Check test p' [kPa]").read_only);
  // The graph views file was written and merged.
  CHECK(r.log.find("two_layers.triaxcal-views.pos") != std::string::npos);
  const std::string pos = slurp((dir / "gmsh" / "two_layers.triaxcal-views.pos").string());
  CHECK(pos.find("View \"CD-50: q [kPa]\"") != std::string::npos);
  CHECK(pos.find("View \"CD-50: q [kPa] model\"") != std::string::npos);
  CHECK(pos.find("View \"check test: q [kPa]\"") != std::string::npos);
}

TEST_CASE("the project file keeps each soil unit's settings and parameter set keyed by physical group name, and the "
          "export holds every unit's parameter set",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("project_file");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const json project = read_json(dir / "gmsh" / "two_layers.txproj");
  CHECK(project.at("format") == "triaxcal-gmsh-project");
  const json& units = project.at("units");
  CHECK(units.size() == 2);
  const json& clay = units.at("lower_clay");
  CHECK(clay.at("tag") == 21);
  CHECK(clay.at("dimension") == 2);
  CHECK(clay.at("source") == "parameter_set");
  CHECK(clay.at("check_test").at("p") == 80.0);  // the user's settings, kept
  CHECK(clay.at("check_test").at("drainage") == "undrained");
  CHECK(clay.at("result").at("status") == "ok");
  CHECK(clay.at("result").at("parameter_set").at("model") == "modified_cam_clay");
  CHECK(clay.at("result").at("parameter_set").at("parameters").at("lambda").at("value") == 0.18);
  const json& sand = units.at("upper_sand");
  CHECK(sand.at("tag") == 22);
  CHECK(sand.at("result").at("status") == "ok");
  CHECK(sand.at("result").at("parameter_set").at("format") == "triaxcal-parameters");
  CHECK(sand.at("result").at("fit").at("curves").size() == 6);

  const json exported = read_json(dir / "gmsh" / "two_layers.soil-units.json");
  CHECK(exported.at("format") == "triaxcal-soil-units");
  CHECK(exported.at("caution").get<std::string>().rfind("Caution:", 0) == 0);
  CHECK(exported.at("units").size() == 2);
  CHECK(exported.at("units").at("upper_sand").at("parameter_set") == sand.at("result").at("parameter_set"));
  CHECK(exported.at("units").at("upper_sand").at("outcome") == "converged");
  CHECK(exported.at("units").at("upper_sand").at("status") == "ok");
  CHECK(exported.at("units").at("lower_clay").at("status") == "ok");
  CHECK_FALSE(exported.at("units").at("lower_clay").contains("outcome"));  // a parameter set, not a calibration
  // Defaults filled in: a solver input writer needs no triaxcal defaults.
  CHECK(exported.at("units").at("lower_clay").at("parameter_set").at("parameters").at("lode_dependence").at("value") ==
        0.0);
}

TEST_CASE("a renumbered model (.geo_unrolled) still finds its soil units by physical group name", "[plugin][gmsh]") {
  const fs::path dir = fresh_case("renumbered");
  // Gmsh writes the unrolled geometry; it drops the explicit physical tags 21 and 22.
  const GmshRun unroll = run_gmsh(dir, "two_layers.geo -0");
  INFO(unroll.log);
  REQUIRE(unroll.exit_code == 0);
  REQUIRE(fs::exists(dir / "gmsh" / "two_layers.geo_unrolled"));
  fs::rename(dir / "gmsh" / "two_layers.geo_unrolled", dir / "gmsh" / "renumbered.geo");
  const GmshRun r = run_gmsh(dir, "renumbered.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const auto db = read_db(dir / "gmsh" / "renumbered.db");
  std::map<std::string, int> tags;
  for (int i = 1; i <= 4; ++i)
    tags[value(db, "Gmsh/Physical group " + std::to_string(i) + "/Name")] =
        std::stoi(value(db, "Gmsh/Physical group " + std::to_string(i) + "/Number"));
  REQUIRE(tags.count("lower_clay") == 1);
  REQUIRE(tags.count("upper_sand") == 1);
  CHECK(tags.at("lower_clay") != 21);  // renumbered indeed
  CHECK(tags.at("upper_sand") != 22);
  CHECK(value(db, "triaxcal/2Results/lower_clay/0Status") == "ok");
  CHECK(value(db, "triaxcal/2Results/upper_sand/0Status") == "ok: converged");
  CHECK(value(db, "triaxcal/1Soil units/lower_clay/4Check test drainage") == "undrained");
  const json project = read_json(dir / "gmsh" / "two_layers.txproj");
  CHECK(project.at("units").size() == 2);
  CHECK(project.at("units").at("lower_clay").at("tag") == tags.at("lower_clay"));
  CHECK(project.at("units").at("lower_clay").at("check_test").at("p") == 80.0);
}

TEST_CASE("an edit made in Gmsh's tree wins over the project file and is saved to it, other settings are kept",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("user_edit");
  // The edit reaches Gmsh's ONELAB database before the client runs, as a GUI edit would (Gmsh
  // 4.8's parser has SetNumber but no SetString; DefineConstant sets a string that is absent).
  write(dir / "gmsh" / "edited.geo",
        "Include \"two_layers.geo\";\n"
        "SetNumber(\"triaxcal/1Soil units/lower_clay/3Check test p' [kPa]\", 150);\n"
        "DefineConstant[ d = {\"drained\", Name \"triaxcal/1Soil units/lower_clay/4Check test drainage\"} ];\n");
  const GmshRun r = run_gmsh(dir, "edited.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const json clay = read_json(dir / "gmsh" / "two_layers.txproj").at("units").at("lower_clay");
  CHECK(clay.at("check_test").at("p") == 150.0);
  CHECK(clay.at("check_test").at("drainage") == "drained");
  CHECK(clay.at("check_test").at("void_ratio") == 1.2);  // from the project file, untouched
  CHECK(clay.at("check_test").at("ocr") == 1.5);
  CHECK(clay.at("parameter_set") == "lower_clay.parameters.json");
  const std::string pos = slurp((dir / "gmsh" / "two_layers.triaxcal-views.pos").string());
  CHECK(pos.find("check test (drained, p' = 150 kPa)") != std::string::npos);
}

TEST_CASE("bad input in one soil unit shows an error in Gmsh's console and leaves the other unit's results intact",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("bad_input");
  {
    const GmshRun first = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
    INFO(first.log);
    REQUIRE(first.exit_code == 0);
  }
  const fs::path gdir = dir / "gmsh";
  json project = read_json(gdir / "two_layers.txproj");
  const json clay_before = project.at("units").at("lower_clay").at("result").at("parameter_set");
  std::string expected;
  SECTION("a parameter-set file that does not exist") {
    project["units"]["upper_sand"]["source"] = "parameter_set";
    project["units"]["upper_sand"]["parameter_set"] = "no_such_sand.json";
    // The reason first, then where; flagged when the tree is checked too, before the Run.
    expected = "Error   : triaxcal - triaxcal: soil unit 'upper_sand': cannot open the file (" +
               (gdir / "no_such_sand.json").string() + ")";
  }
  SECTION("a malformed test series") {
    write(dir / "calibrate" / "demo_series.json", "{\"format\": \"triaxcal-test-series\", \"version\": 1,,}");
    expected = "(" + (dir / "calibrate" / "demo_series.json").lexically_normal().string() + ": line 1, column ";
  }
  SECTION("a calibration that finds no usable parameter set") {
    json c = read_json(gdir / "upper_sand.calibration.json");
    c["parameters"]["dilation_angle"] = {{"status", "tied"}, {"expression", "friction_angle + 5"}};
    c["constraints"] = json::array();
    c["options"]["local_evaluations"] = 20;
    write(gdir / "upper_sand.calibration.json", c.dump());
    expected = "Error   : triaxcal - triaxcal: soil unit 'upper_sand': calibration failed: no point free of a failure penalty in ";
  }
  write(gdir / "two_layers.txproj", project.dump(2));
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  CHECK(r.log.find(expected) != std::string::npos);
  CHECK(r.log.find("1 of 2 soil unit(s) computed, 1 failed") != std::string::npos);
  const auto db = read_db(gdir / "two_layers.db");
  CHECK(value(db, "triaxcal/2Results/upper_sand/0Status").rfind("error: ", 0) == 0);
  CHECK(value(db, "triaxcal/2Results/upper_sand/203friction_angle [deg]") == "<absent>");  // no stale numbers
  CHECK(value(db, "triaxcal/2Results/lower_clay/0Status") == "ok");
  CHECK(std::stod(value(db, "triaxcal/2Results/lower_clay/200lambda")) == 0.18);
  const json after = read_json(gdir / "two_layers.txproj");
  CHECK(after.at("units").at("upper_sand").at("result").at("status") == "error");
  CHECK(after.at("units").at("lower_clay").at("result").at("status") == "ok");
  CHECK(after.at("units").at("lower_clay").at("result").at("parameter_set") == clay_before);
  // The export names the failed unit with its status and reason, and no parameter set for it.
  const json exported = read_json(gdir / "two_layers.soil-units.json");
  CHECK(exported.at("units").size() == 2);
  CHECK(exported.at("units").at("lower_clay").at("status") == "ok");
  CHECK(exported.at("units").at("upper_sand").at("status") == "error");
  CHECK_FALSE(exported.at("units").at("upper_sand").at("message").get<std::string>().empty());
  CHECK_FALSE(exported.at("units").at("upper_sand").contains("parameter_set"));
}

TEST_CASE("a soil unit whose calibration fits poorly shows a warning in plain words, not ok", "[plugin][gmsh]") {
  const fs::path dir = fresh_case("poor_fit");
  const fs::path gdir = dir / "gmsh";
  // phi' fixed at 22 deg and no dilation: far from the 34 deg and 5 deg the invented demo data were made with.
  json c = read_json(gdir / "upper_sand.calibration.json");
  c["parameters"]["friction_angle"] = 22;
  c["parameters"]["dilation_angle"] = 0;
  c["parameters"]["cohesion"] = 0;
  c["constraints"] = json::array();
  write(gdir / "upper_sand.calibration.json", c.dump());
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const auto db = read_db(gdir / "two_layers.db");
  const std::string status = value(db, "triaxcal/2Results/upper_sand/0Status");
  CHECK(status.rfind("warning: the model does not follow at least one used curve (R^2 below the threshold); review the "
                     "curves named before using the parameters: the model does not follow ",
                     0) == 0);
  CHECK(status.find("CD-50 deviator_stress (R^2 = -") != std::string::npos);
  CHECK(value(db, "triaxcal/2Results/upper_sand/4Fit outcome") == "poor_fit");
  CHECK(r.log.find("Warning : triaxcal - triaxcal: soil unit 'upper_sand': calibration upper_sand.calibration.json "
                   "(mohr_coulomb): poor_fit: the model does not follow ") != std::string::npos);
  CHECK(r.log.find("2 of 2 soil unit(s) computed") != std::string::npos);  // a warning, not an error
  CHECK(read_json(gdir / "two_layers.soil-units.json").at("units").at("upper_sand").at("outcome") == "poor_fit");
}

TEST_CASE("a malformed project file is reported in Gmsh's console and left as it is", "[plugin][gmsh]") {
  const fs::path dir = fresh_case("bad_project");
  const std::string broken = "{\"format\": \"triaxcal-gmsh-project\", \"version\": 1, \"units\": {\"x\": 3}}";
  write(dir / "gmsh" / "two_layers.txproj", broken);
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  CHECK(r.log.find("Error   : triaxcal - triaxcal: " + (dir / "gmsh" / "two_layers.txproj").string() +
                   ": units.x: expected an object, found number (the project file is left as it is)") != std::string::npos);
  CHECK(slurp((dir / "gmsh" / "two_layers.txproj").string()) == broken);
}

TEST_CASE("a project file 100000 levels deep, with 1e400 or above 64 MiB is reported in Gmsh's console, not a crash",
          "[plugin][gmsh][limits]") {
  const fs::path dir = fresh_case("project_limits");
  const fs::path project = dir / "gmsh" / "two_layers.txproj";
  const std::string prefix = R"({"format": "triaxcal-gmsh-project", "version": 1, "units": )";
  std::string text, expected;
  SECTION("nested 100000 levels deep") {
    text = prefix + std::string(100000, '[') + std::string(100000, ']') + "}";
    expected = ": line 1, column " + std::to_string(prefix.size() + 64) + ": arrays and objects nested deeper than 64 levels";
  }
  SECTION("a number out of the range of a double") {
    text = prefix + "{\"x\": {\"tag\": 1e400}}}";
    expected = ": line 1, column " + std::to_string(prefix.size() + 15) +
               ": the number 1e400 is out of the range of a double (largest magnitude about 1.8e308)";
  }
  SECTION("a file above the 64 MiB of a JSON text") {
    text = prefix + "{}, \"description\": \"" + std::string(std::size_t{64} << 20, 'x') + "\"}";
    expected = ": larger than the largest input file accepted (67108864 bytes = 64 MiB)";
  }
  write(project, text);
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log.substr(0, 4000));
  CHECK(r.log.find("Error   : triaxcal - triaxcal: " + project.string() + expected +
                   " (the project file is left as it is)") != std::string::npos);
  CHECK(fs::file_size(project) == text.size());
}

TEST_CASE("merging the views file again replaces the triaxcal views instead of adding to them", "[plugin][gmsh]") {
  const fs::path dir = fresh_case("views");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const std::string pos = slurp((dir / "gmsh" / "two_layers.triaxcal-views.pos").string());
  // Graphs: the sand's 3 tests x (q, volumetric strain) x (measured, model) and the clay's check
  // test (q, excess pore pressure; model only); legend: 2 units, the graph styles, the x axis and
  // the quantities on two lines.
  CHECK(count(pos, "View[v].Attributes = \"triaxcal graph AlwaysVisible\";") == 14);
  CHECK(count(pos, "View[v].Attributes = \"triaxcal legend AlwaysVisible\";") == 6);
  write(dir / "gmsh" / "count.geo",
        "View \"someone else's view\" { SP(0,0,0){1}; };\n"
        "Merge \"two_layers.triaxcal-views.pos\";\n"
        "Printf(\"views once %g\", PostProcessing.NbViews);\n"
        "Merge \"two_layers.triaxcal-views.pos\";\n"
        "Merge \"two_layers.triaxcal-views.pos\";\n"
        "Printf(\"views thrice %g\", PostProcessing.NbViews);\n"
        "kept = 0;\n"
        "For i In {0:PostProcessing.NbViews-1}\n"
        "  If(!StrCmp(View[i].Name, \"someone else's view\"))\n"
        "    kept = 1;\n"
        "  EndIf\n"
        "EndFor\n"
        "Printf(\"kept %g\", kept);\n");
  const GmshRun c = run_gmsh(dir, "count.geo -0");
  INFO(c.log);
  const std::size_t once = c.log.find("views once "), thrice = c.log.find("views thrice ");
  REQUIRE(once != std::string::npos);
  REQUIRE(thrice != std::string::npos);
  const int n_once = std::stoi(c.log.substr(once + 11)), n_thrice = std::stoi(c.log.substr(thrice + 13));
  CHECK(n_once >= 1 + 14 + 6);  // and "graphs not shown" where they do not all fit
  CHECK(n_thrice == n_once);
  CHECK(c.log.find("kept 1") != std::string::npos);
}

namespace {

/// One graph view as Gmsh reads it back from the views file.
struct GraphBack {
  std::string name;
  bool axes = false, visible = false;
  double x = 0, y = 0, w = 0, h = 0;    ///< box in window pixels (x negative: from the right border)
  double min_x = 0, max_x = 0;          ///< the view's x range (what its axis spans)
  double y_min = 0, y_max = 0;          ///< its custom y range
};

/// Merges the views file into a `-0` Gmsh with the given window size and reads back every graph
/// view and the layout's margins (what the .pos computed from Gmsh's font sizes).
struct ReadBack {
  std::vector<GraphBack> graphs;
  std::map<std::string, double> layout;
  std::string log;
};

ReadBack read_back(const fs::path& dir, int width, int height, const std::string& tag) {
  const std::string geo = "read_back_" + tag + ".geo";
  write(dir / "gmsh" / geo,
        "General.GraphicsWidth = " + std::to_string(width) + ";\nGeneral.GraphicsHeight = " + std::to_string(height) +
            ";\nGeneral.MenuWidth = 300;\n"
            "Merge \"two_layers.geo\";\n"
            "Merge \"two_layers.triaxcal-views.pos\";\n"
            "Printf(\"layout W %g H %g A0 %g Bw %g xlw %g hd %g T %g B %g two %g shown %g nr %g sx %g tx %g L0 %g L1 %g L %g h0 "
            "%g h1 %g hall %g\", W, H, A0, Bw, xlw, hd, T, B, two, shown, nr, General.ScaleX, General.TranslationX, L0, L1, L, "
            "h0, h1, hall);\n"
            "For i In {0:PostProcessing.NbViews-1}\n"
            "  If(!StrCmp(View[i].Attributes, \"triaxcal graph AlwaysVisible\"))\n"
            "    Printf(\"graph %g %g %g %g %g %g %g %g %g %g\", View[i].Axes, View[i].Visible, View[i].PositionX, "
            "View[i].PositionY, View[i].Width, View[i].Height, View[i].MinX, View[i].MaxX, View[i].CustomMin, "
            "View[i].CustomMax);\n"
            "    Printf(View[i].Name);\n"
            "  EndIf\n"
            "EndFor\n");
  const GmshRun b = run_gmsh(dir, geo + " -0");
  ReadBack r;
  r.log = b.log;
  std::istringstream in(b.log);
  std::string line;
  while (std::getline(in, line)) {
    if (line.rfind("layout ", 0) == 0) {
      std::istringstream f(line.substr(7));
      std::string key;
      double v;
      while (f >> key >> v) r.layout[key] = v;
    } else if (line.rfind("graph ", 0) == 0) {
      std::istringstream f(line.substr(6));
      GraphBack g;
      double axes, visible;
      f >> axes >> visible >> g.x >> g.y >> g.w >> g.h >> g.min_x >> g.max_x >> g.y_min >> g.y_max;
      g.axes = axes > 0;
      g.visible = visible > 0;
      std::getline(in, g.name);
      r.graphs.push_back(g);
    }
  }
  return r;
}

}  // namespace

TEST_CASE("the views colour each soil unit with a legend and put one graph a test and quantity beside the geometry, and "
          "Gmsh reads them back: strain axes from 0, no two graphs overlap at two window sizes",
          "[plugin][gmsh][views]") {
  const fs::path dir = fresh_case("views_read_back");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  const std::string pos = slurp((dir / "gmsh" / "two_layers.triaxcal-views.pos").string());
  // Each physical surface filled in its unit's colour; the legend names unit, source, model and status.
  CHECK(pos.find("Mesh.SurfaceFaces = 1;") != std::string::npos);
  CHECK(pos.find(" { Surface{ Physical Surface{21} }; }") != std::string::npos);
  CHECK(pos.find(" { Surface{ Physical Surface{22} }; }") != std::string::npos);
  CHECK(pos.find("{\"upper_sand: calibration (mohr_coulomb): converged\"}") != std::string::npos);
  CHECK(pos.find("{\"lower_clay: parameter set (modified_cam_clay): ok\"}") != std::string::npos);
  CHECK(pos.find("{\"graphs: measured = black points, model = red line\"}") != std::string::npos);
  // One graph a test and quantity: measured points (black) and the model's line (red) on one axis;
  // short titles, the unit's name (and the whole test name) above the row.
  CHECK(pos.find("View \"CD-200: e_v [%]\"") != std::string::npos);
  CHECK(pos.find("View \"CD-200: e_v [%] model\"") != std::string::npos);
  CHECK(pos.find("View \"check test: du [kPa]\"") != std::string::npos);
  CHECK(pos.find("{\"lower_clay: check test (undrained, p' = 80 kPa)\"}") != std::string::npos);
  CHECK(count(pos, "{\"upper_sand\"}") == 6);
  CHECK(count(pos, "View[v].ColorTable = {Black};") == 6);
  CHECK(count(pos, "View[v].ColorTable = {Red};") == 8);

  for (const auto& [width, height] : {std::pair{1400, 900}, std::pair{1000, 700}}) {
    const std::string tag = std::to_string(width) + "x" + std::to_string(height);
    INFO("window " << tag);
    const ReadBack b = read_back(dir, width, height, tag);
    INFO(b.log);
    REQUIRE(b.graphs.size() == 14);
    REQUIRE(b.layout.count("Bw") == 1);
    const double W = b.layout.at("W"), H = b.layout.at("H");
    CHECK(W == width - 300);
    // Graphs in window pixels from the right border, the model's view moved left of them (first merge).
    CHECK(b.layout.at("tx") < 0.0);
    int visible_axes = 0;
    for (const GraphBack& g : b.graphs) {
      INFO(g.name);
      // Every strain axis starts at 0 and the measured points and the model's line of a graph share it.
      CHECK(g.min_x == 0.0);
      CHECK(g.max_x > 0.0);
      CHECK(g.y_min <= 0.0);
      CHECK(g.y_max > g.y_min);
      for (const GraphBack& o : b.graphs)
        if (o.name == g.name + " model") {
          CHECK(o.min_x == g.min_x);
          CHECK(o.max_x == g.max_x);
          CHECK(o.x == g.x);
          CHECK(o.y == g.y);
        }
      CHECK(g.x < 0.0);
      CHECK(W + g.x >= 0.0);  // inside the window
      if (g.visible) CHECK(g.y + g.h <= H);
      visible_axes += g.axes && g.visible;
    }
    CHECK(visible_axes >= 2);
    // No two visible graphs overlap, each with everything Gmsh and the .pos write around its box:
    // the unit's line and the title above, the tick labels below, the y tick labels left of the
    // axis, the x label right of the box; and no two titles (centred over the left axis, half their
    // width each side) in one row meet.
    const bool two = b.layout.at("two") > 0;
    double x_first = 0.0;
    for (const GraphBack& g : b.graphs) x_first = std::min(x_first, g.x);
    auto column = [&](const GraphBack& g) { return g.x == x_first ? 0 : 1; };
    auto ticks_left = [&](const GraphBack& g) { return !two ? b.layout.at("L") : b.layout.at(column(g) ? "L1" : "L0"); };
    auto half_title = [&](const GraphBack& g) { return !two ? b.layout.at("hall") : b.layout.at(column(g) ? "h1" : "h0"); };
    const double right = b.layout.at("xlw"), above = b.layout.at("hd") + b.layout.at("T"), below = b.layout.at("B");
    for (std::size_t i = 0; i < b.graphs.size(); ++i)
      for (std::size_t j = i + 1; j < b.graphs.size(); ++j) {
        const GraphBack &p = b.graphs[i], &q = b.graphs[j];
        if (!p.axes || !q.axes || !p.visible || !q.visible) continue;
        INFO(p.name << " and " << q.name);
        const bool apart_x = p.x + p.w + right <= q.x - ticks_left(q) || q.x + q.w + right <= p.x - ticks_left(p);
        const bool apart_y = p.y + p.h + below <= q.y - above || q.y + q.h + below <= p.y - above;
        CHECK((apart_x || apart_y));
        if (p.y == q.y) CHECK(std::abs(p.x - q.x) >= half_title(p) + half_title(q));
      }
    // The leftmost title stays in the window.
    for (const GraphBack& g : b.graphs)
      if (g.axes && g.visible) CHECK(W + g.x - half_title(g) >= 0.0);
  }
}

TEST_CASE("a second compute keeps the user's zoom, pan and rotation, the first one moves the model beside the graphs",
          "[plugin][gmsh][views]") {
  const fs::path dir = fresh_case("views_keep_zoom");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  write(dir / "gmsh" / "zoom.geo",
        "General.GraphicsWidth = 1400;\nGeneral.GraphicsHeight = 900;\nGeneral.MenuWidth = 300;\n"
        "Merge \"two_layers.geo\";\n"
        "Merge \"two_layers.triaxcal-views.pos\";\n"
        "Printf(\"first %g %g %g\", General.ScaleX, General.TranslationX, General.TranslationY);\n"
        // The user zooms, pans and turns the model, then computes again (the client merges the file).
        "General.ScaleX = 2.5; General.ScaleY = 2.5; General.ScaleZ = 2.5;\n"
        "General.TranslationX = 3; General.TranslationY = -1.5; General.RotationZ = 30;\n"
        "Merge \"two_layers.triaxcal-views.pos\";\n"
        "Printf(\"second %g %g %g %g %g %g\", General.ScaleX, General.ScaleY, General.ScaleZ, General.TranslationX, "
        "General.TranslationY, General.RotationZ);\n"
        // A check merges the legend alone: it keeps the view too.
        "Merge \"two_layers.triaxcal-legend.pos\";\n"
        "Printf(\"check %g %g\", General.ScaleX, General.TranslationX);\n");
  const GmshRun z = run_gmsh(dir, "zoom.geo -0");
  INFO(z.log);
  CHECK(z.log.find("first 1 0 0") == std::string::npos);  // the first merge placed the model
  CHECK(z.log.find("second 2.5 2.5 2.5 3 -1.5 30") != std::string::npos);
  CHECK(z.log.find("check 2.5 3") != std::string::npos);
}

TEST_CASE("an empty project file starts a new project: every physical surface gets a soil unit without a source",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("empty_project");
  // Gmsh 4.8 does not open a zero-byte file at all (it reads a first line to tell the format), so a
  // new project is a file with nothing but white space: here one newline.
  write(dir / "gmsh" / "two_layers.txproj", "\n");
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  REQUIRE(r.exit_code == 0);
  CHECK(r.log.find("Error") == std::string::npos);
  CHECK(r.log.find("triaxcal: 0 of 0 soil unit(s) computed") != std::string::npos);
  const json project = read_json(dir / "gmsh" / "two_layers.txproj");
  CHECK(project.at("format") == "triaxcal-gmsh-project");
  REQUIRE(project.at("units").size() == 2);
  CHECK(project.at("units").at("upper_sand").at("source") == "none");
  CHECK(project.at("units").at("lower_clay").at("tag") == 21);
  const auto db = read_db(dir / "gmsh" / "two_layers.db");
  CHECK(value(db, "triaxcal/1Soil units/upper_sand/0Source") == "none");
  const std::string pos = slurp((dir / "gmsh" / "two_layers.triaxcal-views.pos").string());
  CHECK(pos.find("{\"upper_sand: no source chosen\"}") != std::string::npos);
  CHECK(read_json(dir / "gmsh" / "two_layers.soil-units.json").at("units").empty());
}

TEST_CASE("Solver > triaxcal with no project file open starts a new project beside the model (Gmsh 4.8 opens no missing "
          "file)",
          "[plugin][gmsh]") {
  const fs::path dir = fresh_case("solver_menu_start");
  fs::remove(dir / "gmsh" / "two_layers.txproj");
  // What Gmsh's Solver menu does (checked under xvfb: a click on Solver > triaxcal calls the client
  // with no model name): OnelabRun starts the client the same way, here from the parser in batch.
  write(dir / "gmsh" / "start.geo", std::string("OnelabRun(\"triaxcal\", \"") + TRIAXCAL_GMSH_CLIENT + "\");\n");
  const GmshRun r = run_gmsh(dir, "two_layers.geo start.geo -0");
  INFO(r.log);
  CHECK(r.log.find("Error") == std::string::npos);
  CHECK(r.log.find("does not exist: a new project is started there") != std::string::npos);
  REQUIRE(fs::exists(dir / "gmsh" / "two_layers.txproj"));
  const json project = read_json(dir / "gmsh" / "two_layers.txproj");
  CHECK(project.at("format") == "triaxcal-gmsh-project");
  REQUIRE(project.at("units").size() == 2);
  CHECK(project.at("units").at("upper_sand").at("source") == "none");
  CHECK(project.at("units").at("lower_clay").at("tag") == 21);
}

TEST_CASE("a missing file is flagged when the tree is filled and checked, before the Run", "[plugin][gmsh]") {
  const fs::path dir = fresh_case("missing_file");
  const fs::path gdir = dir / "gmsh";
  json project = read_json(gdir / "two_layers.txproj");
  project["units"]["lower_clay"]["parameter_set"] = "no_such_clay.json";
  write(gdir / "two_layers.txproj", project.dump(2));
  const GmshRun r = run_gmsh(dir, "two_layers.geo two_layers.txproj -");
  INFO(r.log);
  const std::string flag = "Error   : triaxcal - triaxcal: soil unit 'lower_clay': parameter set file not found: " +
                           (gdir / "no_such_clay.json").string();
  // Batch mode runs initialize, check, compute: flagged by the first two, before the third starts.
  std::size_t compute_start = 0;
  for (int k = 0; k < 3; ++k) compute_start = r.log.find("Running 'triaxcal'", compute_start + (k ? 1 : 0));
  REQUIRE(compute_start != std::string::npos);
  const std::size_t first_flag = r.log.find(flag);
  CHECK(first_flag < compute_start);
  CHECK(count(r.log.substr(0, compute_start), flag) == 2);
  const auto db = read_db(gdir / "two_layers.db");
  CHECK(value(db, "triaxcal/2Results/lower_clay/0Status") == "error: cannot open the file (" + (gdir / "no_such_clay.json").string() + ")");
  CHECK(value(db, "triaxcal/2Results/upper_sand/0Status") == "ok: converged");
}

#endif
