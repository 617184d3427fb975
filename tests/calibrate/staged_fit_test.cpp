// A staged fit (CalibrationProblem::fit_stages, the calibration file's "fit_stages";
// docs/calibration-format.md, "Staged fit"): each stage fits its own parameters with the others
// held fixed; the whole ends with the intervals of all free parameters from one joint Jacobian at
// the end point, and its outcome is the worst honest outcome of the stages. Data: synthetic Modified
// Cam-Clay tests (tests/calibrate/synthetic.hpp, invented parameters) and the invented demo series
// of examples/calibrate.

#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include "../series/series_fixture.hpp"
#include "cli_run.hpp"
#include "synthetic.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using nlohmann::json;

namespace {

// Invented "true" parameters of a fictional soft clay (as in modified_cam_clay_fit_test.cpp).
constexpr double kLambda = 0.20, kKappa = 0.04, kM = 1.2, kNu = 0.25;

CalibrationProblem mcc_problem(Noise* noise) {
  CalibrationProblem problem = problem_for("modified_cam_clay");
  // lambda, kappa, M, phi_cs, nu, G, lode_dependence
  const auto truth = problem.create({kLambda, kKappa, kM, 0.0, kNu, 0.0, 0.0});
  for (double ocr : {1.0, 2.0, 6.0}) {
    const std::string id = "CU-OCR" + std::to_string(static_cast<int>(ocr));
    TestProtocol p = consolidated_shear(id, 100.0, Drainage::undrained, 0.15, 150, 1.1);
    p.initial.overconsolidation_ratio = ocr;
    problem.tests.push_back(synthetic_test(id, p, *truth, {Quantity::deviator_stress, Quantity::excess_pore_pressure}, 0, noise));
  }
  TestProtocol cd = consolidated_shear("CD-OCR1", 100.0, Drainage::drained, 0.15, 150, 1.1);
  cd.initial.overconsolidation_ratio = 1.0;
  problem.tests.push_back(synthetic_test("CD-OCR1", cd, *truth, {Quantity::deviator_stress, Quantity::volumetric_strain}, 0, noise));
  problem.parameters = {
      free_parameter("lambda", 0.05, 0.5, 0.15, ParameterScale::log),
      free_parameter("kappa", 0.005, 0.1, 0.025, ParameterScale::log),
      free_parameter("critical_state_ratio", 0.6, 1.8, 1.0),
      free_parameter("poissons_ratio", 0.05, 0.45, 0.35),
  };
  return problem;
}

const std::string kDemoSeries = source_path("examples/calibrate/demo_series.json");

json demo_with_stages(const json& stages) {
  json c = json::parse(slurp(source_path("examples/calibrate/mohr_coulomb_cd.json")));
  c["series"] = kDemoSeries;
  c["fit_stages"] = stages;
  return c;
}

std::string message_of(const json& calibration) {
  try {
    CalibrationFile f = parse_calibration_file(calibration.dump(), "cal.json");
    const TestSeries series = read_test_series(f.series);
    const ModelEntry& entry = find_model(f.model);
    seed_from_interpretation(f, series, entry.info());
    (void)build_calibration_problem(f, series, entry.info(), [&entry](const ParameterValues& v) { return entry.create(v, "cal.json"); });
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("a staged MCC fit (M first, then lambda, kappa and Poisson's ratio) reaches the joint fit's optimum within 1 %",
          "[calibrate][staged]") {
  Noise noise(21);
  CalibrationProblem problem = mcc_problem(&noise);
  CalibrationOptions o;
  o.threads = 2;
  o.starts = 1;  // one local run a stage: the staging, not the multi-start, is under test
  const CalibrationSummary joint = calibrate(o, problem);
  REQUIRE(joint.outcome == CalibrationOutcome::converged);
  problem.fit_stages = {{{"critical_state_ratio"}, "critical state"},
                        {{"lambda", "kappa", "poissons_ratio"}, "compression and elasticity"}};
  const CalibrationSummary staged = calibrate(o, problem);
  INFO(staged.full());
  INFO(joint.brief());
  REQUIRE(staged.fit_stages.size() == 2);
  CHECK(staged.fit_stages[0].run);
  CHECK(staged.fit_stages[1].run);
  CHECK(staged.fit_stages[0].termination == CalibrationTermination::converged);
  // The first stage's own poor fit (lambda, kappa, nu still at their starts) does not decide the whole.
  CHECK(staged.fit_stages[0].outcome == CalibrationOutcome::poor_fit);
  CHECK(staged.fit_stages[1].termination == CalibrationTermination::converged);
  CHECK(staged.outcome == CalibrationOutcome::converged);
  CHECK(staged.outcome_reason.rfind("each of the 2 stages met its tolerance", 0) == 0);
  // The second stage starts where the first ended: its start objective is the first's result.
  CHECK(staged.fit_stages[1].start_objective == Approx(staged.fit_stages[0].objective).epsilon(1e-12));
  // Same optimum within tolerance: M is nearly uncorrelated with the others at the optimum (|r| < 0.05
  // here), so one pass of the two blocks lands near the joint optimum. Measured: parameters within
  // 0.5 % of the joint fit's (M 0.44 %, lambda 0.15 %, kappa 0.4 %, nu 0.26 %); objective 4.3e-4
  // against 3.2e-4, both at the level of the added noise (worst R^2 0.994 either way).
  CHECK(staged.objective >= joint.objective * (1.0 - 1e-9));
  CHECK(staged.objective < 1.5 * joint.objective);
  for (const char* name : {"lambda", "kappa", "critical_state_ratio", "poissons_ratio"}) {
    INFO(name);
    CHECK(value_named(staged, name) == Approx(value_named(joint, name)).epsilon(0.01));
  }
  // Intervals of every free parameter from one joint Jacobian at the end point, and said so.
  CHECK(staged.free_names.size() == 4);
  CHECK(staged.covariance.rows() == 4);
  CHECK(staged.uncertainty_basis.find("one joint Jacobian of all 4 free parameters at the end point") == 0);
  for (const char* name : {"lambda", "kappa", "critical_state_ratio", "poissons_ratio"}) {
    const FittedParameter& p = parameter_named(staged, name);
    CHECK(std::isfinite(p.standard_error));
    CHECK(p.status == ParameterStatus::free);
  }
  CHECK(parameter_named(staged, "poissons_ratio").start == 0.35);  // the original start, not the end point
  CHECK(staged.brief().find("  stage 2 of 2 (free: lambda, kappa, poissons_ratio): converged, objective ") != std::string::npos);
  CHECK(staged.brief().find("  intervals: one joint Jacobian") != std::string::npos);
}

TEST_CASE("a staged fit's outcome is the worst honest outcome of its stages", "[calibrate][staged]") {
  CalibrationProblem problem = mcc_problem(nullptr);
  problem.fit_stages = {{{"critical_state_ratio"}, ""}, {{"lambda", "kappa", "poissons_ratio"}, ""}};
  CalibrationOptions o;
  o.threads = 2;
  o.starts = 1;
  o.local_evaluations = 3;  // too few: each stage stops at its budget
  const CalibrationSummary s = calibrate(o, problem);
  INFO(s.full());
  CHECK(s.fit_stages[0].termination == CalibrationTermination::evaluation_limit);
  CHECK(s.outcome != CalibrationOutcome::converged);
  CHECK(s.outcome_reason.find("stage 1 of 2 (free: critical_state_ratio): ") != std::string::npos);
  CHECK(s.outcome_reason.find("raise options.local_evaluations") != std::string::npos);
  CHECK(s.termination == CalibrationTermination::evaluation_limit);
}

TEST_CASE("fit_stages: exact messages for an unknown parameter, one in two stages, an empty stage, one not free, a free "
          "one in no stage",
          "[calibrate][staged][errors]") {
  const json all = json::array({json{{"free", {"youngs_modulus", "poissons_ratio"}}},
                                json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}}});
  CHECK(message_of(demo_with_stages(all)) == "(no error)");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {"youngs_modulus", "poissons_ratio", "stiffness"}}},
                                                 json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}}}))) ==
        "cal.json: fit_stages[0].free[2]: mohr_coulomb has no parameter 'stiffness'");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {"youngs_modulus", "poissons_ratio"}}},
                                                 json{{"free", {"cohesion", "friction_angle", "dilation_angle", "youngs_modulus"}}}}))) ==
        "cal.json: fit_stages[1].free[3]: youngs_modulus is already in fit_stages[0]");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", json::array()}},
                                                 json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}}}))) ==
        "cal.json: fit_stages[0].free: an empty stage (list the free parameters fitted in it)");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {"youngs_modulus", "poissons_ratio", "tensile_strength"}}},
                                                 json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}}}))) ==
        "cal.json: fit_stages[0].free[2]: tensile_strength is fixed, not free (a stage fits free parameters only)");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {"youngs_modulus"}}},
                                                 json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}}}))) ==
        "cal.json: fit_stages: the free parameter poissons_ratio is in no stage (each free parameter is fitted in exactly one)");
  CHECK(message_of(demo_with_stages(json::array())) ==
        "cal.json: fit_stages: expected a list of one or more stages such as {\"free\": [\"csl_lambda\"]}, found an empty list");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {"youngs_modulus"}}, {"fixed", {"cohesion"}}}}))) ==
        "cal.json: fit_stages[0].fixed: unknown key 'fixed' (expected one of: free, note)");
  CHECK(message_of(demo_with_stages(json::array({json{{"free", {1}}}}))) == "cal.json: fit_stages[0].free[0]: expected a parameter name, found 1");
}

TEST_CASE("fit with fit_stages prints each stage, writes them in the parameter set and the report input, and says where "
          "the intervals come from",
          "[cli][fit][staged]") {
  const auto dir = scratch_dir("staged_fit");
  json c = demo_with_stages(json::array({json{{"free", {"cohesion", "friction_angle", "dilation_angle"}}, {"note", "strength first"}},
                                         json{{"free", {"youngs_modulus", "poissons_ratio"}}}}));
  c["options"]["starts"] = 1;
  const std::string file = (dir / "staged.json").string();
  write_text(file, c.dump(2));
  const std::string out = (dir / "out").string();
  const CliResult r = run_cli("fit " + file + " --out " + out + " --report", "staged_fit");
  INFO(r.out << r.err);
  REQUIRE((r.exit_code == 0));
  CHECK(r.out.find("  stage 1 of 2 (free: cohesion, friction_angle, dilation_angle): ") != std::string::npos);
  CHECK(r.out.find("; strength first\n") != std::string::npos);
  CHECK(r.out.find("  intervals: one joint Jacobian of all 5 free parameters at the end point") != std::string::npos);
  const json params = json::parse(slurp(out + "/staged.parameters.json"));
  REQUIRE(params["fit"]["stages"].size() == 2);
  CHECK(params["fit"]["stages"][1]["free"] == json({"youngs_modulus", "poissons_ratio"}));
  CHECK(params["fit"]["stages"][0]["note"] == "strength first");
  CHECK(params["fit"]["intervals_from"].get<std::string>().rfind("one joint Jacobian of all 5 free parameters", 0) == 0);
  CHECK(params["fit"]["options"]["fit_stages"] == "[cohesion, friction_angle, dilation_angle] [youngs_modulus, poissons_ratio]");
  const json input = json::parse(slurp(out + "/staged.report.json"));
  REQUIRE(input["fit_stages"].size() == 2);
  const std::string html = slurp(out + "/staged.report.html");
  CHECK(html.find("<ol id=\"fit-stages\">") != std::string::npos);
  CHECK(html.find("<p id=\"intervals-from\">Intervals: one joint Jacobian") != std::string::npos);
}
