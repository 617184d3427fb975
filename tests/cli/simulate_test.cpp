// `triaxcal simulate`, `models`, `--version`: exit codes, exact messages, atomic output.
#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>

#include "triaxcal/results_csv.hpp"
#include "cli_run.hpp"

using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

std::string write(const std::string& name, const std::string& text) {
  std::ofstream(name) << text;
  return name;
}

const char* kParams = R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
  "parameters": {"youngs_modulus": 20000, "friction_angle": 30, "cohesion": 5, "dilation_angle": 2}})";

const char* kProtocol = R"({"format": "triaxcal-protocol", "version": 1, "name": "T1",
  "initial": {"p": 100},
  "stages": [{"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": 50}]})";

std::string sim(const std::string& params, const std::string& protocol, const std::string& out) {
  return "simulate --model mohr_coulomb --params " + params + " --protocol " + protocol + " --out " + out;
}

}  // namespace

TEST_CASE("simulate on the bundled example prints a table per test and writes the curves") {
  fs::remove("sim_ok.csv");
  const auto r = run_cli("simulate --model mohr_coulomb --params " + source_path("examples/simulate/mohr_coulomb_sand.json") +
                             " --protocol " + source_path("examples/simulate/cd_100.json") + " --protocol " +
                             source_path("examples/simulate/cu_200.json") + " --out sim_ok.csv",
                         "ok");
  INFO(r.err);
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("CD-100") != std::string::npos);
  CHECK(r.out.find("CU-200") != std::string::npos);
  CHECK(r.out.find("reviewed by a qualified") != std::string::npos);
  // q of the isotropic consolidation stages is a rounding residue: it prints as 0.00, never -0.00.
  CHECK(r.out.find(" -0.00") == std::string::npos);
  const std::string csv = slurp("sim_ok.csv");
  CHECK(csv.rfind("test,stage,step,axial_strain[-]", 0) == 0);
  // 1 header + 2 x (1 initial + 20 consolidation + 1000 shear) rows.
  CHECK(std::count(csv.begin(), csv.end(), '\n') == 1 + 2 * 1021);
}

TEST_CASE("simulate writes engineering strains: since the protocol start and since the stage start") {
  // Isotropic consolidation of a linear elastic soil, then drained shear to 5 % stage strain
  // (engineering, dL/L at the stage start). Common practice, no source: labs report shear strains on
  // the consolidated height, so the stage column ends at 0.05 exactly, while the strain since the
  // protocol start combines the two stages as 1 - (1 - e1)(1 - e2).
  fs::remove("sim_strains.csv");
  const auto params = write("strain_params.json", kParams);
  const auto protocol = write("strain_protocol.json", R"({"format": "triaxcal-protocol", "version": 1, "name": "T2",
  "initial": {"p": 50},
  "stages": [{"type": "isotropic_consolidation", "p": 400, "steps": 10},
             {"type": "shear", "drainage": "drained", "axial_strain": 0.05, "steps": 20}]})");
  const auto r = run_cli(sim(params, protocol, "sim_strains.csv"), "strains");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const auto rows = triaxcal::parse_csv(slurp("sim_strains.csv"), "sim_strains.csv");
  REQUIRE(rows.size() == 1 + 1 + 10 + 20);
  const auto& head = rows.front().fields;
  auto column = [&](const std::string& name) {
    return static_cast<std::size_t>(std::find(head.begin(), head.end(), name) - head.begin());
  };
  const std::size_t total = column("axial_strain[-]"), stage = column("stage_axial_strain[-]");
  REQUIRE(stage < head.size());
  const double consolidation = std::stod(rows[11].fields[total]);  // end of the consolidation stage
  CHECK(consolidation > 0.0);
  CHECK(std::stod(rows[11].fields[stage]) == Approx(consolidation).epsilon(1e-9));
  CHECK(std::stod(rows.back().fields[stage]) == Approx(0.05).epsilon(1e-9));
  CHECK(std::stod(rows.back().fields[total]) == Approx(1.0 - (1.0 - consolidation) * 0.95).epsilon(1e-9));
}

TEST_CASE("simulate: a shear stage with a direction but no axial_strain gives exit 2, the key and writes nothing") {
  fs::remove("nodir_out.csv");
  const auto params = write("nodir_params.json", kParams);
  const auto protocol = write("nodir_protocol.json", R"({"format": "triaxcal-protocol", "version": 1, "name": "T",
  "initial": {"p": 100}, "stages": [{"type": "shear", "direction": "compression", "drainage": "drained"}]})");
  const auto r = run_cli(sim(params, protocol, "nodir_out.csv"), "nodir");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: nodir_protocol.json: stages[0].axial_strain: with a direction, give the magnitude "
                 "(a positive decimal), found nothing\n");
  CHECK_FALSE(fs::exists("nodir_out.csv"));
}

TEST_CASE("simulate: malformed JSON gives exit 2, the file, line and column, and writes nothing") {
  fs::remove("bad_out.csv");
  const auto params = write("bad_json_params.json", "{\"format\": \"triaxcal-parameters\",\n  \"version\": 1,,\n}");
  const auto protocol = write("ok_protocol.json", kProtocol);
  const auto r = run_cli(sim(params, protocol, "bad_out.csv"), "json");
  CHECK(r.exit_code == 2);
  CHECK(r.err ==
        "triaxcal: error: bad_json_params.json: line 2, column 16: malformed JSON (syntax error while parsing object "
        "key - unexpected ','; expected string literal)\n");
  CHECK_FALSE(fs::exists("bad_out.csv"));
}

TEST_CASE("simulate: a missing required parameter gives exit 2 and names it") {
  fs::remove("bad_out.csv");
  const auto params = write("missing_params.json",
                            R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
                                "parameters": {"friction_angle": 30}})");
  const auto r = run_cli(sim(params, write("ok_protocol.json", kProtocol), "bad_out.csv"), "missing");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: missing_params.json: mohr_coulomb: parameter 'youngs_modulus' (kPa) is required "
                 "and has no default\n");
  CHECK_FALSE(fs::exists("bad_out.csv"));
}

TEST_CASE("simulate: an out-of-range parameter gives exit 2 and the admissible interval") {
  const auto params = write("range_params.json",
                            R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb",
                                "parameters": {"youngs_modulus": 20000, "friction_angle": 30, "poissons_ratio": 0.7}})");
  const auto r = run_cli(sim(params, write("ok_protocol.json", kProtocol), "bad_out.csv"), "range");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: range_params.json: mohr_coulomb: poissons_ratio = 0.7 is outside (-1, 0.5) (-)\n");
  CHECK_FALSE(fs::exists("bad_out.csv"));
}

TEST_CASE("simulate: an unknown stage type gives exit 2 and the list of known types") {
  const auto protocol = write("bad_stage.json", R"({"format": "triaxcal-protocol", "version": 1, "initial": {"p": 50},
    "stages": [{"type": "isotropic_consolidation", "p": 100}, {"type": "sheer", "axial_strain": 0.1}]})");
  const auto r = run_cli(sim(write("ok_params.json", kParams), protocol, "bad_out.csv"), "stage");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: bad_stage.json: stages[1].type: unknown stage type \"sheer\" (expected "
                 "isotropic_consolidation, anisotropic_consolidation, k0_consolidation, oedometer, shear, "
                 "constant_p_shear or unload_reload)\n");
  CHECK_FALSE(fs::exists("bad_out.csv"));
}

TEST_CASE("simulate: an unknown key is rejected with its path") {
  const auto protocol = write("bad_key.json", R"({"format": "triaxcal-protocol", "version": 1, "initial": {"p": 50},
    "stages": [{"type": "shear", "axial_strain": 0.1, "drainge": "undrained"}]})");
  const auto r = run_cli(sim(write("ok_params.json", kParams), protocol, "bad_out.csv"), "key");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: bad_key.json: stages[0].drainge: unknown key 'drainge' (expected one of: type, "
                 "label, steps, axial_strain, direction, drainage, stop)\n");
}

TEST_CASE("simulate: an unknown model gives exit 2 and the known models") {
  const auto r = run_cli("simulate --model cam_clay --params " + write("ok_params.json", kParams) + " --protocol " +
                             write("ok_protocol.json", kProtocol),
                         "model");
  CHECK(r.exit_code == 2);
  CHECK(r.err.rfind("triaxcal: error: unknown model 'cam_clay' (known: mohr_coulomb", 0) == 0);
}

TEST_CASE("models lists every model and models NAME lists its parameters with units and bounds") {
  const auto all = run_cli("models", "models");
  CHECK(all.exit_code == 0);
  CHECK(all.out.find("mohr_coulomb") != std::string::npos);
  const auto one = run_cli("models mohr_coulomb", "models1");
  CHECK(one.exit_code == 0);
  CHECK(one.out.find("friction_angle    deg    required    (0, 90)") != std::string::npos);
}

TEST_CASE("the version and help options answer with exit 0") {
  const auto v = run_cli("--version", "version");
  CHECK(v.exit_code == 0);
  CHECK(v.out.rfind("triaxcal ", 0) == 0);
  const auto h = run_cli("simulate --help", "help");
  CHECK(h.exit_code == 0);
  CHECK(h.out.find("--protocol") != std::string::npos);
}

TEST_CASE("simulate: a simulation that cannot be completed gives exit 3 and names stage, step and strain") {
  // Modified Cam-Clay loaded isotropically far enough that the void ratio would reach zero: the model
  // refuses the increments, the driver gives up after its cuts.
  const auto params = write("mcc_exit3_params.json", R"({"format": "triaxcal-parameters", "version": 1,
    "model": "modified_cam_clay", "parameters": {"lambda": 0.2, "kappa": 0.02, "critical_state_ratio": 1.2}})");
  const auto protocol = write("mcc_exit3_protocol.json", R"({"format": "triaxcal-protocol", "version": 1,
    "name": "crush", "initial": {"p": 10, "void_ratio": 0.5},
    "stages": [{"type": "isotropic_consolidation", "p": 1e9, "steps": 100}]})");
  fs::remove("exit3.csv");
  const auto r = run_cli("simulate --model modified_cam_clay --params " + params + " --protocol " + protocol +
                             " --out exit3.csv",
                         "exit3");
  CHECK(r.exit_code == 3);
  CHECK(r.err.find("triaxcal: simulation failed: mcc_exit3_protocol.json: stage 0 (isotropic_consolidation), step ") !=
        std::string::npos);
  CHECK(r.err.find("could not be completed after 12 cuts") != std::string::npos);
  // No curves file: the table shows how far the test got, and stderr says nothing was written.
  CHECK(r.err.find("triaxcal: no curves written to exit3.csv (a simulation failed)\n") != std::string::npos);
  CHECK_FALSE(fs::exists("exit3.csv"));
  // An earlier file of that name is left as it was; a temporary of a killed earlier write is swept.
  std::ofstream("exit3.csv") << "an earlier run's curves\n";
  std::ofstream(".exit3.csv.tmp12345") << "half a file";
  const auto again = run_cli("simulate --model modified_cam_clay --params " + params + " --protocol " + protocol +
                                 " --out exit3.csv",
                             "exit3_again");
  CHECK(again.exit_code == 3);
  CHECK(slurp("exit3.csv") == "an earlier run's curves\n");
  CHECK_FALSE(fs::exists(".exit3.csv.tmp12345"));
}

TEST_CASE("simulate --tolerance sets the accuracy, --fixed-steps the old stepping, and a bad tolerance gives exit 2 and the rule") {
  const auto params = write("tol_params.json", kParams);
  const auto protocol = write("tol_protocol.json", kProtocol);
  fs::remove("tol_a.csv");
  fs::remove("tol_b.csv");
  const auto a = run_cli(sim(params, protocol, "tol_a.csv") + " --tolerance 1e-6", "tol");
  INFO(a.err);
  CHECK(a.exit_code == 0);
  const auto b = run_cli(sim(params, protocol, "tol_b.csv") + " --fixed-steps", "fixed");
  CHECK(b.exit_code == 0);
  // Same records (the protocol's 50 steps) either way: 1 header + 1 initial + 50 rows.
  const std::string csv_a = slurp("tol_a.csv"), csv_b = slurp("tol_b.csv");
  CHECK(std::count(csv_a.begin(), csv_a.end(), '\n') == 52);
  CHECK(std::count(csv_b.begin(), csv_b.end(), '\n') == 52);
  // Mohr-Coulomb is exact at any increment size, so both files hold the same curves.
  CHECK(csv_a == csv_b);
  fs::remove("bad_out.csv");
  const auto bad = run_cli(sim(params, protocol, "bad_out.csv") + " --tolerance 0.5", "badtol");
  CHECK(bad.exit_code == 2);
  CHECK(bad.err == "triaxcal: error: --tolerance: 0.5: expected a finite number from 1e-10 to 0.1 ('triaxcal simulate "
                   "--help' lists the options)\n");
  CHECK_FALSE(fs::exists("bad_out.csv"));
  const auto help = run_cli("simulate --help", "help");
  CHECK(help.out.find("--tolerance") != std::string::npos);
  CHECK(help.out.find("--fixed-steps") != std::string::npos);
  CHECK(help.out.find("after a failed one (exit 3) no file is written") != std::string::npos);
}
