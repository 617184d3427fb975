// triaxcal_calibrate through the C ABI: a fit on the invented demo series (examples/calibrate),
// the progress callback that stops, failures that yield no usable result, bad input and NULLs, and
// the outcome of each (converged, stopped, poor_fit, failed) as the result's "outcome" and as
// triaxcal_calibration_outcome.

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <string>

#include "../../cli/commands.hpp"
#include "cli_run.hpp"
#include "triaxcal_c.h"

using nlohmann::json;
using triaxcal::test::source_path;

namespace {

struct Text {
  triaxcal_text* t = nullptr;
  ~Text() { triaxcal_text_free(t); }
  json parse() const { return json::parse(triaxcal_text_data(t)); }
};

std::string last_error() { return triaxcal_last_error(); }

/// triaxcal_calibration_outcome of a result text (-1 when the call fails).
int outcome_of(const Text& text) {
  int o = -1;
  if (triaxcal_calibration_outcome(triaxcal_text_data(text.t), &o) != TRIAXCAL_OK) return -1;
  return o;
}

/// A small, quick problem on the invented demo series: E', c' and phi' free, the rest fixed.
std::string calibration(const std::string& parameters, const std::string& options = R"({"local": "bobyqa",
    "local_evaluations": 150, "threads": 1})") {
  return R"({"format": "triaxcal-calibration", "version": 1,
    "description": "Invented demo (test): E' and phi' of the fictional demo sand",
    "series": ")" + source_path("examples/calibrate/demo_series.json") + R"(",
    "model": "mohr_coulomb", "steps_per_shear_stage": 60,
    "tests": [{"specimen": "CD-50", "curves": ["deviator_stress"]},
              {"specimen": "CD-200", "curves": ["deviator_stress"]}],
    "parameters": )" + parameters + R"(, "options": )" + options + "}";
}

const std::string kTwoFree = R"({
    "youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 28},
    "cohesion": {"status": "free", "lower": 0, "upper": 30, "start": 2},
    "poissons_ratio": 0.3, "dilation_angle": 0})";

struct Counter {
  int calls = 0;
  int stop_after = 1 << 30;
  std::string last;
};

int count_progress(const char* progress_json, void* user) {
  auto* c = static_cast<Counter*>(user);
  ++c->calls;
  c->last = progress_json;
  return c->calls >= c->stop_after ? 1 : 0;
}

}  // namespace

TEST_CASE("calibrate fits E', c' and phi' to two invented CD tests: the fitted q curves follow the measured ones "
          "(R^2 > 0.9) and the parameter set loads back",
          "[plugin][c_abi][calibrate]") {
  Counter counter;
  Text text;
  REQUIRE(triaxcal_calibrate(calibration(kTwoFree).c_str(), nullptr, &count_progress, &counter, &text.t) ==
          TRIAXCAL_OK);
  CHECK(last_error().empty());
  const json r = text.parse();
  CHECK(r.at("format") == "triaxcal-calibration-result");
  CHECK(r.at("model") == "mohr_coulomb");
  CHECK(r.at("usable") == true);
  CHECK(r.at("outcome") == "converged");
  CHECK(r.at("outcome_reason").get<std::string>().rfind("the local (bobyqa) stage met its tolerance; every used curve has R^2 >= 0.9", 0) == 0);
  CHECK(r.at("outcome_explanation") == triaxcal_outcome_explanation(TRIAXCAL_OUTCOME_CONVERGED));
  CHECK(outcome_of(text) == TRIAXCAL_OUTCOME_CONVERGED);
  CHECK(r.at("objective").get<double>() < r.at("start_objective").get<double>());
  CHECK(counter.calls == r.at("evaluations").get<long>());
  CHECK(json::parse(counter.last).contains("best"));
  REQUIRE(r.at("tests").size() == 2);
  for (const json& t : r.at("tests")) {
    CHECK(t.at("simulated") == true);
    REQUIRE(t.at("curves").size() == 1);
    const json& c = t.at("curves")[0];
    CHECK(c.at("y") == "deviator_stress");
    CHECK(c.at("unit") == "kPa");
    CHECK(c.at("x_values").size() == c.at("measured").size());
    CHECK(c.at("simulated").size() == c.at("measured").size());
    CAPTURE(t.at("id"));
    CHECK(c.at("r_squared").get<double>() > 0.9);
  }
  // The parameter set carries the caution and is accepted by model_create.
  const json& set = r.at("parameter_set");
  CHECK(set.at("format") == "triaxcal-parameters");
  CHECK(set.at("caution") == triaxcal::cli::kCaution);
  CHECK(r.at("caution") == triaxcal::cli::kCaution);
  const double phi = set.at("parameters").at("friction_angle").at("value").get<double>();
  CHECK(phi > 20.0);
  CHECK(phi < 45.0);
  triaxcal_model* model = nullptr;
  CHECK(triaxcal_model_create(set.dump().c_str(), &model) == TRIAXCAL_OK);
  triaxcal_model_free(model);
}

TEST_CASE("a progress callback that returns nonzero stops the calibration after that evaluation with the best so far",
          "[plugin][c_abi][calibrate]") {
  Counter counter;
  counter.stop_after = 4;
  Text text;
  CHECK(triaxcal_calibrate(calibration(kTwoFree).c_str(), nullptr, &count_progress, &counter, &text.t) ==
        TRIAXCAL_STOPPED);
  CHECK(last_error().rfind("triaxcal_calibrate: stopped by the progress callback: ", 0) == 0);
  REQUIRE(text.t != nullptr);
  const json r = text.parse();
  CHECK(r.at("termination") == "stopped");
  // Four evaluations from the start do not follow the curves yet: a poor fit that was also stopped.
  const std::string reason = r.at("outcome_reason").get<std::string>();
  CHECK(reason.find("; also not converged: stopped on request (the progress callback; Ctrl-C in triaxcal fit) after ") !=
        std::string::npos);
  CHECK(last_error() == "triaxcal_calibrate: stopped by the progress callback: " + r.at("outcome").get<std::string>() +
                            ": " + reason);
  CHECK(counter.calls == 4);
  CHECK(r.at("evaluations").get<long>() >= 4);  // the Jacobian at the best point may add evaluations
  CHECK(r.at("parameter_set").is_object());
}

TEST_CASE("a calibration in which no parameter set can be built ends with no_usable_result and no parameter set",
          "[plugin][c_abi][calibrate]") {
  // dilation_angle tied above friction_angle: Mohr-Coulomb rejects every candidate.
  const std::string params = R"({
    "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 28},
    "dilation_angle": {"status": "tied", "expression": "friction_angle + 5"},
    "youngs_modulus": 20000})";
  Text text;
  CHECK(triaxcal_calibrate(calibration(params, R"({"local": "bobyqa", "local_evaluations": 20, "threads": 1})").c_str(),
                           nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_NO_USABLE_RESULT);
  const std::string error = last_error();  // before the next call replaces it
  REQUIRE(text.t != nullptr);
  const json r = text.parse();
  CHECK(r.at("usable") == false);
  CHECK(r.at("outcome") == "failed");
  CHECK(outcome_of(text) == TRIAXCAL_OUTCOME_FAILED);
  CHECK(r.at("termination") == "no_usable_result");
  CHECK(r.at("parameter_set").is_null());
  CHECK(error == "triaxcal_calibrate: failed: " + r.at("outcome_reason").get<std::string>());
}

TEST_CASE("a calibration that runs out of its evaluation budget returns ok with the outcome stopped",
          "[plugin][c_abi][calibrate][outcome]") {
  // Started next to the values the invented demo data were made with, so the curves fit; six
  // evaluations are too few for the local stage to meet its tolerance.
  const std::string params = R"({
    "youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 24000, "scale": "log"},
    "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 34},
    "cohesion": 4, "poissons_ratio": 0.3, "dilation_angle": 5})";
  Text text;
  REQUIRE(triaxcal_calibrate(calibration(params, R"({"local": "bobyqa", "local_evaluations": 6, "threads": 1})").c_str(),
                             nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_OK);
  const json r = text.parse();
  CHECK(r.at("outcome") == "stopped");
  CHECK(outcome_of(text) == TRIAXCAL_OUTCOME_STOPPED);
  CHECK(r.at("outcome_reason") ==
        "the local (bobyqa) stage used its budget of 6 evaluations before it met its tolerance: raise options.local_evaluations");
  CHECK(r.at("parameter_set").is_object());
  CHECK(r.at("parameter_set").at("fit").at("outcome") == "stopped");
}

TEST_CASE("a model that cannot follow the curves returns ok with the outcome poor_fit naming the curves",
          "[plugin][c_abi][calibrate][outcome]") {
  // phi' fixed at 22 deg, far below the 34 deg the invented demo data were made with.
  const std::string params = R"({
    "youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 15000, "scale": "log"},
    "friction_angle": 22, "cohesion": 0, "poissons_ratio": 0.3, "dilation_angle": 0})";
  Text text;
  REQUIRE(triaxcal_calibrate(calibration(params).c_str(), nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_OK);
  const json r = text.parse();
  CHECK(r.at("outcome") == "poor_fit");
  CHECK(outcome_of(text) == TRIAXCAL_OUTCOME_POOR_FIT);
  const std::string reason = r.at("outcome_reason").get<std::string>();
  CHECK(reason.rfind("the model does not follow 2 used curves (R^2 below min_r_squared = 0.9): CD-50 deviator_stress (R^2 = -", 0) == 0);
  CHECK(reason.find(", CD-200 deviator_stress (R^2 = ") != std::string::npos);
  for (const json& t : r.at("tests")) CHECK(t.at("curves")[0].at("poor_fit") == true);
}

TEST_CASE("outcome names and explanations for every value, and triaxcal_calibration_outcome rejects other text",
          "[plugin][c_abi][outcome]") {
  CHECK(std::string(triaxcal_outcome_name(TRIAXCAL_OUTCOME_CONVERGED)) == "converged");
  CHECK(std::string(triaxcal_outcome_name(TRIAXCAL_OUTCOME_STOPPED)) == "stopped");
  CHECK(std::string(triaxcal_outcome_name(TRIAXCAL_OUTCOME_POOR_FIT)) == "poor_fit");
  CHECK(std::string(triaxcal_outcome_name(TRIAXCAL_OUTCOME_FAILED)) == "failed");
  CHECK(std::string(triaxcal_outcome_name(4)) == "unknown");
  CHECK(std::string(triaxcal_outcome_name(-1)) == "unknown");
  CHECK(std::string(triaxcal_outcome_explanation(TRIAXCAL_OUTCOME_STOPPED)) ==
        "the optimiser stopped before it converged (a budget, the time limit or a stop request); the parameters are the "
        "best found so far");
  CHECK(std::string(triaxcal_outcome_explanation(7)).empty());
  int o = -1;
  CHECK(triaxcal_calibration_outcome(R"({"format": "triaxcal-curves"})", &o) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json: format: expected "
                        "\"triaxcal-calibration-result\" (a result of triaxcal_calibrate)");
  CHECK(triaxcal_calibration_outcome(R"({"format": "triaxcal-calibration-result", "outcome": "success"})", &o) ==
        TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json: outcome: expected converged, stopped, "
                        "poor_fit or failed, found \"success\"");
  CHECK(o == -1);
  CHECK(triaxcal_calibration_outcome(R"({"format": "triaxcal-calibration-result", "outcome": "poor_fit"})", &o) ==
        TRIAXCAL_OK);
  CHECK(o == TRIAXCAL_OUTCOME_POOR_FIT);
  CHECK(last_error().empty());
  CHECK(triaxcal_calibration_outcome(nullptr, &o) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json is NULL");
  CHECK(triaxcal_calibration_outcome("{}", nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == "triaxcal_calibration_outcome: outcome is NULL");
}

TEST_CASE("calibrate names the file and key of bad input and leaves *out NULL", "[plugin][c_abi][calibrate]") {
  Text text;
  SECTION("malformed JSON, named by the source given") {
    CHECK(triaxcal_calibrate("{\"format\"", "site/fit.json", nullptr, nullptr, &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_calibrate: site/fit.json: line 1, column ", 0) == 0);
  }
  SECTION("a series file that does not exist, resolved against the source's folder") {
    const std::string c = R"({"format": "triaxcal-calibration", "version": 1, "series": "nowhere.json",
      "model": "mohr_coulomb", "tests": [{"specimen": "A", "curves": ["deviator_stress"]}],
      "parameters": {"youngs_modulus": 1000, "friction_angle": 30}})";
    CHECK(triaxcal_calibrate(c.c_str(), "/tmp/triaxcal-no-dir/fit.json", nullptr, nullptr, &text.t) ==
          TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() == "triaxcal_calibrate: /tmp/triaxcal-no-dir/nowhere.json: cannot open the file");
  }
  SECTION("a specimen that is not in the series") {
    std::string c = calibration(kTwoFree);
    c.replace(c.find("CD-50"), 5, "CD-77");
    CHECK(triaxcal_calibrate(c.c_str(), nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_calibrate: calibration_json: tests[0].specimen: \"CD-77\" is not in the test "
                             "series",
                             0) == 0);
  }
  SECTION("an unknown model") {
    std::string c = calibration(kTwoFree);
    c.replace(c.find("\"mohr_coulomb\""), 14, "\"basalt\"");
    CHECK(triaxcal_calibrate(c.c_str(), nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_calibrate: calibration_json: model: unknown model 'basalt'", 0) == 0);
  }
  CHECK(text.t == nullptr);
}

TEST_CASE("calibrate answers NULL arguments with null_argument naming them", "[plugin][c_abi][calibrate]") {
  Text text;
  CHECK(triaxcal_calibrate(nullptr, nullptr, nullptr, nullptr, &text.t) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == "triaxcal_calibrate: calibration_json is NULL");
  CHECK(triaxcal_calibrate("{}", nullptr, nullptr, nullptr, nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == "triaxcal_calibrate: out is NULL");
  CHECK(text.t == nullptr);
}

TEST_CASE("every JSON text the C ABI reads is under the limits of our files: 100000 levels deep, 1e400 and 64 MiB "
          "give invalid_input and a message, not a crash",
          "[plugin][c_abi][limits]") {
  // {"format": "x", "a": [[[...]]]}: the 64th '[' opens level 65 (the root object is level 1).
  const std::string prefix = R"({"format": "triaxcal-calibration-result", "a": )";
  const std::string deep = prefix + std::string(100000, '[') + std::string(100000, ']') + "}";
  const std::string deep_at = ": line 1, column " + std::to_string(prefix.size() + 64) +
                              ": arrays and objects nested deeper than 64 levels";
  const std::string huge = prefix + "\"" + std::string(std::size_t{64} << 20, 'x') + "\"}";
  const std::string huge_message = ": " + std::to_string(huge.size()) +
                                   " bytes of JSON, more than the largest accepted (67108864 bytes = 64 MiB)";
  const std::string overflow = R"({"format": "triaxcal-calibration-result", "outcome": 1e400})";
  const std::string overflow_at = ": line 1, column 54: the number 1e400 is out of the range of a double (largest "
                                  "magnitude about 1.8e308)";
  int o = -1;
  CHECK(triaxcal_calibration_outcome(deep.c_str(), &o) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json" + deep_at);
  CHECK(triaxcal_calibration_outcome(overflow.c_str(), &o) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json" + overflow_at);
  CHECK(triaxcal_calibration_outcome(huge.c_str(), &o) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibration_outcome: calibration_result_json" + huge_message);
  CHECK(o == -1);

  Text text;
  CHECK(triaxcal_calibrate(deep.c_str(), "fit.json", nullptr, nullptr, &text.t) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibrate: fit.json" + deep_at);
  CHECK(triaxcal_calibrate(huge.c_str(), "fit.json", nullptr, nullptr, &text.t) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_calibrate: fit.json" + huge_message);
  CHECK(text.t == nullptr);
  CHECK(triaxcal_validate_parameters(deep.c_str(), &text.t) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_validate_parameters: parameter_set_json" + deep_at);
  CHECK(triaxcal_validate_parameters(overflow.c_str(), &text.t) == TRIAXCAL_INVALID_INPUT);
  CHECK(last_error() == "triaxcal_validate_parameters: parameter_set_json" + overflow_at);
  CHECK(text.t == nullptr);
}
