// Oedometer interpretation: lambda and kappa in e - ln s_a', C_c and C_s in e - log10 s_a', and the
// constrained modulus at p_ref, on synthetic lines with known slopes and on a Modified Cam-Clay path.

#include <catch2/catch.hpp>

#include <cmath>

#include "cli_run.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

/// An oedometer specimen with the given (s_a', e) points; e_a = (e0 - e) / (1 + e0).
Specimen oedometer(const std::vector<double>& stress, const std::vector<double>& e, double e0) {
  Specimen sp;
  sp.id = "OED";
  sp.void_ratio = e0;
  SpecimenStage st;
  st.type = SpecimenStageType::oedometer;
  st.data_stage = 1;
  st.stress_steps.assign(stress.begin() + 1, stress.end());
  sp.stages.push_back(st);
  sp.data_zero_stage = 0;
  ReducedCurves& c = sp.curves;
  const double nan = std::nan("");
  for (std::size_t i = 0; i < stress.size(); ++i) {
    c.stage.push_back(0);
    c.line.push_back(static_cast<int>(i) + 2);
    c.axial_strain.push_back((e0 - e[i]) / (1.0 + e0));
    c.volumetric_strain.push_back(c.axial_strain.back());
    c.axial_stress.push_back(stress[i]);
    c.void_ratio.push_back(e[i]);
    for (auto* v : {&c.deviator_stress, &c.excess_pore_pressure, &c.radial_stress, &c.mean_stress, &c.cell_pressure}) v->push_back(nan);
  }
  return sp;
}

const Interpretation::Compressibility* oedometer_result(const Interpretation& r) {
  for (const auto& c : r.compressibility)
    if (c.basis.rfind("oedometer", 0) == 0) return &c;
  return nullptr;
}

}  // namespace

TEST_CASE("oedometer lines e = e0 - lambda ln(s/s0) and e = e_top + kappa ln(s_top/s) give lambda, kappa, C_c = lambda ln 10 and "
          "E_oed = s (1 + e0) / lambda at p_ref",
          "[interpret][oedometer]") {
  // Synthetic straight lines in e - ln s_a' (the definition of lambda and kappa; C_c = lambda ln 10 is
  // the change of logarithm base, common practice, no source).
  const double e0 = 1.2, lambda = 0.15, kappa = 0.025, s0 = 10.0;
  std::vector<double> s, e;
  for (double v : {10.0, 25.0, 50.0, 100.0, 200.0, 400.0}) {
    s.push_back(v);
    e.push_back(e0 - lambda * std::log(v / s0));
  }
  const double e_top = e.back();
  for (double v : {200.0, 100.0, 50.0}) {
    s.push_back(v);
    e.push_back(e_top + kappa * std::log(400.0 / v));
  }
  for (double v : {100.0, 200.0}) {  // reloading: not used for lambda (below the largest stress so far)
    s.push_back(v);
    e.push_back(e_top + kappa * std::log(400.0 / v) - 0.001);
  }
  TestSeries series;
  series.source = "synthetic";
  series.specimens.push_back(oedometer(s, e, e0));
  InterpretOptions o;
  o.reference_pressure = 100.0;
  const Interpretation r = interpret(series, o);
  const auto* c = oedometer_result(r);
  REQUIRE(c != nullptr);
  CHECK(c->lambda == Approx(lambda).epsilon(kExact));
  CHECK(c->kappa == Approx(kappa).epsilon(kExact));
  CHECK(c->compression_index == Approx(lambda * std::log(10.0)).epsilon(kExact));
  CHECK(c->swelling_index == Approx(kappa * std::log(10.0)).epsilon(kExact));
  // e_a = lambda ln(s/s0) / (1 + e0) on first loading, so d s/d e_a = s (1 + e0) / lambda.
  CHECK(c->constrained_modulus == Approx(100.0 * (1.0 + e0) / lambda).epsilon(kExact));
  CHECK(c->constrained_modulus_stress == 100.0);
  bool noted = false;
  for (const std::string& n : r.notes) noted = noted || n.find("proxy of p'") != std::string::npos;
  CHECK(noted);
  CHECK(interpretation_text(r).find("oedometer OED: lambda 0.1500, kappa 0.0250") != std::string::npos);
  CHECK(interpretation_json(r).find("\"constrained_modulus\"") != std::string::npos);
}

TEST_CASE("a Modified Cam-Clay oedometer loading gives lambda from e - ln s_a' within 1 % (K0 constant on the normal compression line)",
          "[interpret][oedometer]") {
  // On the normal compression line of Modified Cam-Clay (Roscoe & Burland 1968) the K0 stress ratio is
  // constant, so e - ln s_a' has the slope lambda of e - ln p'.
  const ModelEntry& entry = find_model("modified_cam_clay");
  const double lambda = 0.12, e0 = 1.1;
  const auto model = entry.create(
      resolve_parameters(entry.info(), {{"lambda", lambda}, {"kappa", 0.02}, {"critical_state_ratio", 1.2}, {"poissons_ratio", 0.25}}, "test"),
      "test");
  TestProtocol p;
  p.initial.stress = triaxial_stress(10.0, 10.0);
  p.initial.void_ratio = e0;
  p.initial.overconsolidation_ratio = 1.0;
  for (double v : {25.0, 50.0, 100.0, 200.0, 400.0, 800.0, 200.0}) {
    Stage st;
    st.type = StageType::oedometer;
    st.target_axial = v;
    st.steps = 60;
    p.stages.push_back(st);
  }
  const SimulationResult sim = simulate(DriverOptions{}, *model, p);
  REQUIRE(sim.ok());
  std::vector<double> s{10.0}, e{e0};
  for (const auto& stage : sim.stages) {
    const StepRecord& end = sim.steps[static_cast<std::size_t>(stage.last)];
    s.push_back(end.axial_stress);
    e.push_back(end.void_ratio);
  }
  TestSeries series;
  series.source = "simulated";
  series.specimens.push_back(oedometer(s, e, e0));
  const Interpretation r = interpret(series, InterpretOptions{});
  const auto* c = oedometer_result(r);
  REQUIRE(c != nullptr);
  CHECK(c->lambda == Approx(lambda).epsilon(0.01));
  CHECK(c->kappa > 0.0);
  CHECK(c->kappa < 0.02);  // from s_a' (a proxy of p'): K0 rises on unloading, so the slope in ln s_a' is below kappa
}

TEST_CASE("interpret of the invented Kestrel Bay clay prints the oedometer lambda, kappa and E_oed", "[interpret][oedometer][cli][example]") {
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") + " --material \"clay C\"",
                              "oed_interpret");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("oedometer C-OED-1: lambda ") != std::string::npos);
  CHECK(r.out.find("proxy of p'") != std::string::npos);
}

TEST_CASE("an oedometer stage without unloading, or with a first loading that does not reach p_ref, says what is not determined",
          "[interpret][oedometer][not_determined]") {
  // Loading only, from 150 to 800 kPa (invented): lambda is determined; kappa and E_oed at 100 kPa are not.
  const double e0 = 1.0, lambda = 0.2;
  std::vector<double> s, e;
  for (double v : {150.0, 200.0, 400.0, 800.0}) {
    s.push_back(v);
    e.push_back(e0 - lambda * std::log(v / 150.0));
  }
  TestSeries series;
  series.specimens.push_back(oedometer(s, e, e0));
  const Interpretation r = interpret(series, InterpretOptions{});
  const auto* c = oedometer_result(r);
  REQUIRE(c);
  CHECK(c->lambda == Approx(lambda).epsilon(1e-9));
  CHECK(std::isnan(c->kappa));
  CHECK(c->kappa_reason == "no unloading in the stage");
  CHECK(std::isnan(c->constrained_modulus));
  CHECK(c->constrained_modulus_reason == "the first loading does not pass s_a' = 100 kPa with a rise in axial strain");
  const std::string text = interpretation_text(r);
  CHECK(text.find("kappa not determined: no unloading in the stage") != std::string::npos);
  CHECK(text.find("E_oed not determined: the first loading does not pass s_a' = 100 kPa") != std::string::npos);
  CHECK(interpretation_json(r).find("\"not_determined\": \"no unloading in the stage\"") != std::string::npos);
}
