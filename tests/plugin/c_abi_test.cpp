// The C ABI (plugin/include/triaxcal_c.h), linked directly: every entry point with good, NULL and
// malformed arguments, exact messages, thread-local errors and agreement with the C++ core.
// (tests/plugin/c_abi_dlopen.c checks the same library loaded with dlopen from C.)

#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <cmath>
#include <memory>
#include <string>
#include <thread>

#include "cli_run.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/protocol_json.hpp"
#include "triaxcal_c.h"

using nlohmann::json;
using triaxcal::test::slurp;
using triaxcal::test::source_path;

namespace {

struct Text {
  triaxcal_text* t = nullptr;
  ~Text() { triaxcal_text_free(t); }
  json parse() const { return json::parse(triaxcal_text_data(t)); }
};

struct ModelHandle {
  triaxcal_model* m = nullptr;
  ~ModelHandle() { triaxcal_model_free(m); }
};

std::string sand() { return slurp(source_path("examples/simulate/mohr_coulomb_sand.json")); }
std::string cd100() { return slurp(source_path("examples/simulate/cd_100.json")); }

std::string mc_params(const std::string& body) {
  return R"({"format": "triaxcal-parameters", "version": 1, "model": "mohr_coulomb", "parameters": {)" + body + "}}";
}

std::string last_error() { return triaxcal_last_error(); }

}  // namespace

TEST_CASE("the loaded library reports the header's ABI version and a version string", "[plugin][c_abi]") {
  CHECK(triaxcal_abi_version() == TRIAXCAL_C_ABI_VERSION);
  const std::string v = triaxcal_version();
  CHECK(v.find('.') != std::string::npos);
  CHECK(triaxcal_last_error() != nullptr);
}

TEST_CASE("every code has a fixed name and an unknown code is named unknown", "[plugin][c_abi]") {
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_OK)) == "ok");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_NULL_ARGUMENT)) == "null_argument");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_INVALID_INPUT)) == "invalid_input");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_SIMULATION_FAILED)) == "simulation_failed");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_STOPPED)) == "stopped");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_NO_USABLE_RESULT)) == "no_usable_result");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_OUT_OF_MEMORY)) == "out_of_memory");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_INTERNAL_ERROR)) == "internal_error");
  CHECK(std::string(triaxcal_code_name(TRIAXCAL_UNSUPPORTED)) == "unsupported");
  CHECK(std::string(triaxcal_code_name(-1)) == "unknown");
  CHECK(std::string(triaxcal_code_name(99)) == "unknown");
}

TEST_CASE("list_models gives every registered model with the metadata of its ModelInfo", "[plugin][c_abi]") {
  Text text;
  REQUIRE(triaxcal_list_models(&text.t) == TRIAXCAL_OK);
  CHECK(last_error().empty());
  CHECK(triaxcal_text_size(text.t) == std::string(triaxcal_text_data(text.t)).size());
  const json doc = text.parse();
  CHECK(doc.at("format") == "triaxcal-models");
  CHECK(doc.at("version") == 1);
  const auto& registry = triaxcal::model_registry();
  REQUIRE(doc.at("models").size() == registry.size());
  for (std::size_t i = 0; i < registry.size(); ++i) {
    const triaxcal::ModelInfo& info = registry[i].info();
    const json& m = doc.at("models")[i];
    CHECK(m.at("name") == info.name);
    CHECK(m.at("title") == info.title);
    REQUIRE(m.at("parameters").size() == info.parameters.size());
    for (std::size_t k = 0; k < info.parameters.size(); ++k) {
      const auto& p = info.parameters[k];
      const json& j = m.at("parameters")[k];
      CHECK(j.at("name") == p.name);
      CHECK(j.at("unit") == p.unit);
      if (std::isnan(p.default_value))
        CHECK(j.at("default").is_null());
      else
        CHECK(j.at("default").get<double>() == p.default_value);
      CHECK(j.at("lower_open") == p.lower_open);
      CHECK(j.at("upper_open") == p.upper_open);
    }
    CHECK(m.at("state_variables").get<std::vector<std::string>>() == info.state_names);
  }
}

TEST_CASE("describe_model gives one model, and an unknown name gives invalid_input naming the known models",
          "[plugin][c_abi]") {
  Text text;
  REQUIRE(triaxcal_describe_model("mohr_coulomb", &text.t) == TRIAXCAL_OK);
  const json m = text.parse();
  CHECK(m.at("name") == "mohr_coulomb");
  CHECK(m.at("parameters")[0].at("name") == "youngs_modulus");
  CHECK(m.at("parameters")[0].at("bounds") == "(0, inf)");
  CHECK(m.at("parameters")[0].at("default").is_null());

  Text bad;
  CHECK(triaxcal_describe_model("cam_clay_typo", &bad.t) == TRIAXCAL_INVALID_INPUT);
  CHECK(bad.t == nullptr);
  std::string known;
  for (const auto& e : triaxcal::model_registry()) known += (known.empty() ? "" : ", ") + e.info().name;
  CHECK(last_error() == "triaxcal_describe_model: unknown model 'cam_clay_typo' (known: " + known + ")");
}

TEST_CASE("validate_parameters returns every parameter in model order with defaults filled in", "[plugin][c_abi]") {
  Text text;
  REQUIRE(triaxcal_validate_parameters(mc_params(R"("youngs_modulus": 20000, "friction_angle": 30)").c_str(),
                                       &text.t) == TRIAXCAL_OK);
  const json doc = text.parse();
  CHECK(doc.at("format") == "triaxcal-parameters");
  CHECK(doc.at("model") == "mohr_coulomb");
  const json& p = doc.at("parameters");
  CHECK(p.size() == 6);
  CHECK(p.at("youngs_modulus").at("value") == 20000.0);
  CHECK(p.at("youngs_modulus").at("unit") == "kPa");
  CHECK(p.at("poissons_ratio").at("value") == 0.3);  // the model's default
  CHECK(p.at("dilation_angle").at("value") == 0.0);
  // What it returns reads back as a parameter set with the same values.
  const auto file = triaxcal::parse_parameter_file(triaxcal_text_data(text.t), "round trip");
  CHECK(file.values.at("friction_angle") == 30.0);
}

TEST_CASE("validate_parameters names the argument, key, value and rule of a bad parameter set", "[plugin][c_abi]") {
  Text text;
  SECTION("a value outside its bounds") {
    CHECK(triaxcal_validate_parameters(mc_params(R"("youngs_modulus": 20000, "friction_angle": 95)").c_str(),
                                       &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() ==
          "triaxcal_validate_parameters: parameter_set_json: mohr_coulomb: friction_angle = 95 is outside (0, 90) (deg)");
  }
  SECTION("a required parameter left out") {
    CHECK(triaxcal_validate_parameters(mc_params(R"("friction_angle": 30)").c_str(), &text.t) ==
          TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() ==
          "triaxcal_validate_parameters: parameter_set_json: mohr_coulomb: parameter 'youngs_modulus' (kPa) is "
          "required and has no default");
  }
  SECTION("a rule between parameters of the model") {
    CHECK(triaxcal_validate_parameters(
              mc_params(R"("youngs_modulus": 20000, "friction_angle": 30, "dilation_angle": 35)").c_str(), &text.t) ==
          TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() ==
          "triaxcal_validate_parameters: parameter_set_json: mohr_coulomb: dilation_angle = 35 deg must not exceed "
          "friction_angle = 30 deg");
  }
  SECTION("a unit that differs from the model's") {
    CHECK(triaxcal_validate_parameters(
              mc_params(R"("youngs_modulus": {"value": 20, "unit": "MPa"}, "friction_angle": 30)").c_str(), &text.t) ==
          TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() ==
          "triaxcal_validate_parameters: parameter_set_json: parameters.youngs_modulus.unit: expected \"kPa\", found "
          "\"MPa\"");
  }
  SECTION("an unknown model") {
    CHECK(triaxcal_validate_parameters(
              R"({"format": "triaxcal-parameters", "version": 1, "model": "granite", "parameters": {}})", &text.t) ==
          TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_validate_parameters: parameter_set_json: model: unknown model 'granite' (known: ",
                             0) == 0);
  }
  SECTION("malformed JSON") {
    CHECK(triaxcal_validate_parameters("{\"format\": ", &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_validate_parameters: parameter_set_json: line 1, column ", 0) == 0);
    CHECK(last_error().find("malformed JSON") != std::string::npos);
  }
  SECTION("JSON of the wrong shape") {
    for (const char* text_in : {"", "null", "[]", "42", "\"x\"", "{}", "{\"format\": 7}"}) {
      CAPTURE(text_in);
      CHECK(triaxcal_validate_parameters(text_in, &text.t) == TRIAXCAL_INVALID_INPUT);
      CHECK(last_error().rfind("triaxcal_validate_parameters: parameter_set_json", 0) == 0);
    }
  }
  SECTION("bytes that are not UTF-8") {
    CHECK(triaxcal_validate_parameters("{\"format\": \"\xff\xfe\"}", &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_validate_parameters: parameter_set_json", 0) == 0);
  }
  CHECK(text.t == nullptr);
}

TEST_CASE("model_create builds a model, and bad sets fail like validate_parameters and leave *out NULL", "[plugin][c_abi]") {
  ModelHandle model;
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  CHECK(model.m != nullptr);
  ModelHandle bad;
  bad.m = reinterpret_cast<triaxcal_model*>(0x1);  // overwritten with NULL on entry
  CHECK(triaxcal_model_create(mc_params(R"("youngs_modulus": -1, "friction_angle": 30)").c_str(), &bad.m) ==
        TRIAXCAL_INVALID_INPUT);
  CHECK(bad.m == nullptr);
  CHECK(last_error() ==
        "triaxcal_model_create: parameter_set_json: mohr_coulomb: youngs_modulus = -1 is outside (0, inf) (kPa)");
}

TEST_CASE("simulate: drained Mohr-Coulomb compression from p' = 100 kPa ends at q_f = s_r' (K_p - 1), K_p = "
          "(1 + sin phi')/(1 - sin phi')",
          "[plugin][c_abi]") {
  // Closed form: Mohr-Coulomb with c' = 0 at failure, s_a'/s_r' = (1 + sin phi')/(1 - sin phi');
  // common practice, no source. Radial stress stays 100 kPa in a drained compression test.
  ModelHandle model;
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  Text text;
  REQUIRE(triaxcal_simulate(model.m, cd100().c_str(), &text.t) == TRIAXCAL_OK);
  CHECK(last_error().empty());
  const json doc = text.parse();
  CHECK(doc.at("format") == "triaxcal-curves");
  CHECK(doc.at("model") == "mohr_coulomb");
  CHECK(doc.at("test") == "CD-100");
  CHECK(doc.at("termination") == "completed");
  CHECK(doc.at("units").at("q") == "kPa");
  const json& c = doc.at("columns");
  const std::size_t n = c.at("q").size();
  CHECK(n == 1 + 20 + 1000);
  CHECK(c.at("axial_strain").size() == n);
  CHECK(c.at("stage").size() == n);
  CHECK(doc.at("state_variables").at("accumulated_plastic_multiplier").size() == n);
  const double phi = triaxcal::degrees_to_radians(34.0);
  const double kp = (1 + std::sin(phi)) / (1 - std::sin(phi));
  const double qf = 100.0 * (kp - 1.0);
  CHECK(triaxcal::test::close(c.at("q")[n - 1].get<double>(), qf, triaxcal::test::kExact, triaxcal::test::kStressFloor));
  CHECK(doc.at("stages").size() == 2);

  // The same numbers as the C++ core's simulate on the same inputs.
  const auto& entry = triaxcal::find_model("mohr_coulomb");
  const auto values = triaxcal::resolve_parameter_file(entry.info(), triaxcal::parse_parameter_file(sand(), "sand"));
  const auto direct = triaxcal::simulate({}, *entry.create(values, "sand"), triaxcal::parse_protocol(cd100(), "cd"));
  REQUIRE(direct.steps.size() == n);
  for (std::size_t i = 0; i < n; i += 97) {
    CHECK(c.at("q")[i].get<double>() == direct.steps[i].q);
    // The C ABI writes engineering strains (dV/V0); the records carry natural ones.
    CHECK(c.at("volumetric_strain")[i].get<double>() == triaxcal::engineering_strain(direct.steps[i].volumetric_strain));
    CHECK(c.at("stage_volumetric_strain")[i].get<double>() == direct.steps[i].stage_volumetric_strain);
  }
}

TEST_CASE("simulate: a driver failure returns simulation_failed with the curves up to the failure", "[plugin][c_abi]") {
  // A stress path beyond the Mohr-Coulomb strength (s_a'/s_r' = 10 > K_p = 3.5 at phi' = 34 deg)
  // cannot be followed under stress control: the driver cuts and gives up.
  ModelHandle model;
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  const std::string protocol = R"({"format": "triaxcal-protocol", "version": 1, "name": "beyond-strength",
    "initial": {"p": 100}, "stages": [
      {"type": "anisotropic_consolidation", "axial_stress": 1000, "radial_stress": 100, "steps": 10}]})";
  Text text;
  CHECK(triaxcal_simulate(model.m, protocol.c_str(), &text.t) == TRIAXCAL_SIMULATION_FAILED);
  REQUIRE(text.t != nullptr);
  const json doc = text.parse();
  CHECK(doc.at("termination") == "failed");
  CHECK(!doc.at("message").get<std::string>().empty());
  CHECK(last_error() == "triaxcal_simulate: " + doc.at("message").get<std::string>());
  CHECK(doc.at("columns").at("q").size() >= 1);
}

TEST_CASE("simulate names the key of a bad protocol and leaves *out NULL", "[plugin][c_abi]") {
  ModelHandle model;
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  Text text;
  SECTION("malformed JSON") {
    CHECK(triaxcal_simulate(model.m, "[1, 2", &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error().rfind("triaxcal_simulate: protocol_json: line 1, column ", 0) == 0);
  }
  SECTION("an unknown key") {
    CHECK(triaxcal_simulate(model.m,
                            R"({"format": "triaxcal-protocol", "version": 1, "initial": {"p": 100}, "stages": [],
                                "colour": "red"})",
                            &text.t) == TRIAXCAL_INVALID_INPUT);
    CHECK(last_error() ==
          "triaxcal_simulate: protocol_json: colour: unknown key 'colour' (expected one of: format, version, name, "
          "description, initial, back_pressure, pore_fluid_stiffness, stages)");
  }
  CHECK(text.t == nullptr);
}

TEST_CASE("every entry point answers a NULL argument with null_argument naming the function and argument",
          "[plugin][c_abi]") {
  Text text;
  ModelHandle model;
  ModelHandle scratch;  // receives the cleared *out of the NULL-argument calls (the ABI does not free it)
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  const std::string p = sand();
  const std::string c = cd100();
  struct Case {
    int code;
    const char* message;
  };
  const Case cases[] = {
      {triaxcal_list_models(nullptr), "triaxcal_list_models: out is NULL"},
      {triaxcal_describe_model(nullptr, &text.t), "triaxcal_describe_model: name is NULL"},
      {triaxcal_describe_model("mohr_coulomb", nullptr), "triaxcal_describe_model: out is NULL"},
      {triaxcal_validate_parameters(nullptr, &text.t), "triaxcal_validate_parameters: parameter_set_json is NULL"},
      {triaxcal_validate_parameters(p.c_str(), nullptr), "triaxcal_validate_parameters: out is NULL"},
      {triaxcal_model_create(nullptr, &scratch.m), "triaxcal_model_create: parameter_set_json is NULL"},
      {triaxcal_model_create(p.c_str(), nullptr), "triaxcal_model_create: out is NULL"},
      {triaxcal_simulate(nullptr, c.c_str(), &text.t), "triaxcal_simulate: model is NULL"},
      {triaxcal_simulate(model.m, nullptr, &text.t), "triaxcal_simulate: protocol_json is NULL"},
      {triaxcal_simulate(model.m, c.c_str(), nullptr), "triaxcal_simulate: out is NULL"},
  };
  // The message checked is the one each call left; re-run each call to read it in turn.
  CHECK(triaxcal_list_models(nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[0].message);
  CHECK(triaxcal_describe_model(nullptr, &text.t) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[1].message);
  CHECK(triaxcal_describe_model("mohr_coulomb", nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[2].message);
  CHECK(triaxcal_validate_parameters(nullptr, &text.t) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[3].message);
  CHECK(triaxcal_validate_parameters(p.c_str(), nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[4].message);
  triaxcal_model* const kept = model.m;  // *out is overwritten, not freed: keep the handle to free it
  CHECK(triaxcal_model_create(nullptr, &model.m) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[5].message);
  CHECK(model.m == nullptr);  // *out is cleared even when another argument is NULL
  model.m = kept;
  CHECK(triaxcal_model_create(p.c_str(), nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[6].message);
  CHECK(triaxcal_simulate(nullptr, c.c_str(), &text.t) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[7].message);
  CHECK(triaxcal_simulate(model.m, nullptr, &text.t) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[8].message);
  CHECK(triaxcal_simulate(model.m, c.c_str(), nullptr) == TRIAXCAL_NULL_ARGUMENT);
  CHECK(last_error() == cases[9].message);
  for (const Case& k : cases) CHECK(k.code == TRIAXCAL_NULL_ARGUMENT);
  CHECK(text.t == nullptr);
  // The free functions and accessors accept NULL.
  triaxcal_text_free(nullptr);
  triaxcal_model_free(nullptr);
  CHECK(triaxcal_text_data(nullptr) == nullptr);
  CHECK(triaxcal_text_size(nullptr) == 0);
}

TEST_CASE("the last error belongs to the calling thread and a successful call clears it", "[plugin][c_abi]") {
  Text text;
  CHECK(triaxcal_describe_model("nothing", &text.t) == TRIAXCAL_INVALID_INPUT);
  const std::string mine = last_error();
  CHECK(!mine.empty());
  std::string other_before, other_after;
  std::thread worker([&] {
    other_before = triaxcal_last_error();
    triaxcal_text* t = nullptr;
    triaxcal_list_models(nullptr);
    other_after = triaxcal_last_error();
    triaxcal_text_free(t);
  });
  worker.join();
  CHECK(other_before.empty());
  CHECK(other_after == "triaxcal_list_models: out is NULL");
  CHECK(last_error() == mine);  // untouched by the other thread
  Text ok;
  CHECK(triaxcal_list_models(&ok.t) == TRIAXCAL_OK);
  CHECK(last_error().empty());
}

TEST_CASE("one model handle simulates on several threads at once with identical results", "[plugin][c_abi]") {
  ModelHandle model;
  REQUIRE(triaxcal_model_create(sand().c_str(), &model.m) == TRIAXCAL_OK);
  const std::string protocol = cd100();
  std::string results[3];
  int codes[3] = {-1, -1, -1};
  std::thread threads[3];
  for (int i = 0; i < 3; ++i)
    threads[i] = std::thread([&, i] {
      triaxcal_text* t = nullptr;
      codes[i] = triaxcal_simulate(model.m, protocol.c_str(), &t);
      if (t) results[i] = triaxcal_text_data(t);
      triaxcal_text_free(t);
    });
  for (auto& t : threads) t.join();
  for (int i = 0; i < 3; ++i) CHECK(codes[i] == TRIAXCAL_OK);
  CHECK(!results[0].empty());
  CHECK(results[0] == results[1]);
  CHECK(results[1] == results[2]);
}
