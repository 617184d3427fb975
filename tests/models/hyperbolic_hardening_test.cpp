// Checks of the hyperbolic double-hardening model (models/hyperbolic_hardening) against closed forms,
// each with its source beside it.

#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <string>
#include <vector>

#include "allocation_counter.hpp"
#include "cli_run.hpp"
#include "hyperbolic_hardening/hyperbolic_hardening.hpp"
#include "path_independence.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;
using triaxcal::test::close;

namespace {

using Overrides = std::map<std::string, double>;

ParameterValues values(const Overrides& over = {}) {
  return resolve_parameters(HyperbolicHardening::model_info(), over, "test");
}

std::unique_ptr<Model> make(const Overrides& over = {}) { return HyperbolicHardening::create(values(over), "test"); }

std::string create_message(const Overrides& over) {
  ParameterValues v = values();
  for (const auto& [name, value] : over) v[parameter_index(HyperbolicHardening::model_info(), name)] = value;
  try {
    HyperbolicHardening::create(v, "params.json");
  } catch (const InputError& e) {
    return e.what();
  }
  return "no error";
}

double param(const Overrides& over, const std::string& name) {
  return values(over)[parameter_index(HyperbolicHardening::model_info(), name)];
}

// Power law of Schanz, Vermeer & Bonnier (1999), eq. 5 / 7: E = E_ref ((s + c cot phi)/(p_ref + c cot phi))^m.
double power_law(const Overrides& over, const std::string& ref, double stress) {
  const double c_cot = param(over, "cohesion") / std::tan(degrees_to_radians(param(over, "friction_angle")));
  return param(over, ref) *
         std::pow((stress + c_cot) / (param(over, "reference_pressure") + c_cot), param(over, "stress_exponent"));
}

// Mohr-Coulomb failure deviator in triaxial compression at minor stress s3 (common practice, no source).
double failure_deviator(const Overrides& over, double s3) {
  const double phi = degrees_to_radians(param(over, "friction_angle"));
  return 2.0 * std::sin(phi) / (1.0 - std::sin(phi)) * (s3 + param(over, "cohesion") / std::tan(phi));
}

TestProtocol drained_compression(double s3, double pc, double strain, int steps) {
  TestProtocol p;
  p.initial.stress = triaxial_stress(s3, s3);
  p.initial.preconsolidation_pressure = pc;
  Stage st;
  st.type = StageType::shear;
  st.drainage = Drainage::drained;
  st.axial_strain = strain;
  st.steps = steps;
  p.stages.push_back(st);
  return p;
}

MaterialState state_of(const StepRecord& r) {
  MaterialState s;
  s.stress = triaxial_stress(r.axial_stress, r.radial_stress);
  s.internal = r.state;
  return s;
}

// Largest relative difference between the returned tangent and central differences of the stress.
double tangent_error(const Model& model, const MaterialState& in, const Vec6& de, int& active) {
  MaterialState out;
  Mat6 tangent;
  REQUIRE(model.integrate(in, de, out, tangent).status == Status::ok);
  active = static_cast<int>(out.internal[HyperbolicHardening::active_surfaces]);
  const double h = 1e-8;
  Mat6 numeric;
  for (int j = 0; j < 6; ++j) {
    MaterialState plus, minus;
    Mat6 ignored;
    Vec6 dp = de, dm = de;
    dp[j] += h;
    dm[j] -= h;
    REQUIRE(model.integrate(in, dp, plus, ignored).status == Status::ok);
    REQUIRE(model.integrate(in, dm, minus, ignored).status == Status::ok);
    REQUIRE(plus.internal[HyperbolicHardening::active_surfaces] == active);
    REQUIRE(minus.internal[HyperbolicHardening::active_surfaces] == active);
    numeric.col(j) = (plus.stress - minus.stress) / (2.0 * h);
  }
  return (numeric - tangent).cwiseAbs().maxCoeff() / tangent.cwiseAbs().maxCoeff();
}

}  // namespace

TEST_CASE("hyperbolic_hardening: bad parameters give exact messages", "[hyperbolic_hardening]") {
  CHECK(create_message({{"failure_ratio", 0.0}}) ==
        "params.json: hyperbolic_hardening: failure_ratio = 0 is outside (0, 1] (-)");
  CHECK(create_message({{"failure_ratio", 1.2}}) ==
        "params.json: hyperbolic_hardening: failure_ratio = 1.2 is outside (0, 1] (-)");
  CHECK(create_message({{"secant_stiffness_ref", 0.0}}) ==
        "params.json: hyperbolic_hardening: secant_stiffness_ref = 0 is outside (0, inf) (kPa)");
  CHECK(create_message({{"oedometer_stiffness_ref", -5.0}}) ==
        "params.json: hyperbolic_hardening: oedometer_stiffness_ref = -5 is outside (0, inf) (kPa)");
  CHECK(create_message({{"unloading_stiffness_ref", 0.0}}) ==
        "params.json: hyperbolic_hardening: unloading_stiffness_ref = 0 is outside (0, inf) (kPa)");
  CHECK(create_message({{"k0_normally_consolidated", 0.0}}) ==
        "params.json: hyperbolic_hardening: k0_normally_consolidated = 0 is outside (0, 1) (-)");
  CHECK(create_message({{"k0_normally_consolidated", 1.0}}) ==
        "params.json: hyperbolic_hardening: k0_normally_consolidated = 1 is outside (0, 1) (-)");
  CHECK(create_message({{"unloading_stiffness_ref", 30000.0}}) ==
        "params.json: hyperbolic_hardening: unloading_stiffness_ref = 30000 kPa must exceed the initial stiffness "
        "2 secant_stiffness_ref / (2 - failure_ratio) = 36363.6 kPa");
  CHECK(create_message({{"critical_state_friction_angle", 35.0}}) ==
        "params.json: hyperbolic_hardening: critical_state_friction_angle = 35 deg must not exceed friction_angle = 33 deg");
  CHECK(create_message({{"dilatancy_rule", 1.5}}) ==
        "params.json: hyperbolic_hardening: dilatancy_rule = 1.5 must be the index of \"rowe\", \"rowe_no_contraction\" "
        "or \"no_dilatancy\" (0, 1 or 2)");
  CHECK(create_message({{"k0_normally_consolidated", 0.25}}) ==
        "params.json: hyperbolic_hardening: k0_normally_consolidated = 0.25 puts the normally consolidated state at or "
        "beyond failure (deviator 75 kPa >= q_f = 59.803 kPa at s1' = reference_pressure); it must exceed 0.294801 for c' = 0");
  CHECK(create_message({{"oedometer_stiffness_ref", 200000.0}}).rfind(
            "params.json: hyperbolic_hardening: oedometer_stiffness_ref = 200000 kPa is too stiff for "
            "k0_normally_consolidated = 0.5: elastic and shear-hardening strains alone give a tangent of ",
            0) == 0);
  CHECK(create_message({}) == "no error");
}

TEST_CASE("hyperbolic_hardening: initial state from the consolidation history", "[hyperbolic_hardening]") {
  const auto model = make();
  InitialConditions ic;
  ic.stress = triaxial_stress(100.0, 100.0);
  MaterialState s;
  model->initialise(ic, s);
  CHECK(s.internal[HyperbolicHardening::cap_pressure] == Approx(100.0).epsilon(1e-12));  // NC: cap at p'_0
  CHECK(s.internal[HyperbolicHardening::shear_hardening] == 0.0);
  ic.overconsolidation_ratio = 3.0;
  model->initialise(ic, s);
  CHECK(s.internal[HyperbolicHardening::cap_pressure] == Approx(300.0).epsilon(1e-12));
  ic.preconsolidation_pressure = 250.0;  // wins over the OCR
  model->initialise(ic, s);
  CHECK(s.internal[HyperbolicHardening::cap_pressure] == Approx(250.0).epsilon(1e-12));
  ic.preconsolidation_pressure = 50.0;
  try {
    model->initialise(ic, s);
    FAIL("no error");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()) ==
          "hyperbolic_hardening: preconsolidation_pressure = 50 kPa is below the initial mean effective stress p' = 100 kPa");
  }
  // An anisotropic initial stress lies on the shear locus: a further deviatoric load is plastic at once.
  InitialConditions k0;
  k0.stress = triaxial_stress(100.0, 50.0);
  model->initialise(k0, s);
  CHECK(s.internal[HyperbolicHardening::shear_hardening] > 0.0);
  MaterialState out;
  Mat6 t;
  Vec6 de = Vec6::Zero();
  de[0] = 1e-5;
  de[1] = de[2] = -0.5e-5;
  REQUIRE(make()->integrate(s, de, out, t).status == Status::ok);
  CHECK((static_cast<int>(out.internal[HyperbolicHardening::active_surfaces]) & 1) == 1);
}

// Kondner (1963), "Hyperbolic stress-strain response: cohesive soils", J. Soil Mech. Found. Div. 89;
// Duncan & Chang (1970), "Nonlinear analysis of stress and strain in soils", J. Soil Mech. Found.
// Div. 96; the relation as used by Schanz, Vermeer & Bonnier (1999), eqs. 1-3:
// eps_a = q / (E_i (1 - q/q_a)), q_a = q_f / R_f, E_i = 2 E50 / (2 - R_f).
TEST_CASE("drained compression with dilatancy off follows the hyperbola within 1 % up to 0.95 q_f, secant at q_f/2 = E50",
          "[hyperbolic_hardening]") {
  for (const Overrides& over : {Overrides{{"dilatancy_rule", 2.0}},
                                Overrides{{"dilatancy_rule", 2.0}, {"cohesion", 10.0}, {"stress_exponent", 0.7},
                                          {"failure_ratio", 0.8}, {"friction_angle", 30.0},
                                          {"critical_state_friction_angle", 28.0}}}) {
    for (double s3 : {100.0, 250.0}) {
      const auto model = make(over);
      const SimulationResult r = simulate(DriverOptions{}, *model, drained_compression(s3, 40.0 * s3, 0.15, 1000));
      REQUIRE(r.ok());
      const double e50 = power_law(over, "secant_stiffness_ref", s3);
      const double rf = param(over, "failure_ratio");
      const double ei = 2.0 * e50 / (2.0 - rf);
      const double qf = failure_deviator(over, s3);
      const double qa = qf / rf;
      double worst = 0.0;
      int checked = 0;
      double secant_at_half = 0.0;
      for (std::size_t i = 1; i < r.steps.size(); ++i) {
        const StepRecord& s = r.steps[i];
        CHECK((static_cast<int>(s.state[HyperbolicHardening::active_surfaces]) & 2) == 0);  // cap never reached
        CHECK(std::abs(s.volumetric_strain - (s.axial_strain + 2.0 * s.radial_strain)) < 1e-15);
        if (s.q > 0.95 * qf) break;
        const double expected = s.axial_strain * ei / (1.0 + s.axial_strain * ei / qa);
        worst = std::max(worst, std::abs(s.q - expected) / expected);
        ++checked;
        const StepRecord& prev = r.steps[i - 1];
        if (prev.q < 0.5 * qf && s.q >= 0.5 * qf) {
          const double f = (0.5 * qf - prev.q) / (s.q - prev.q);
          secant_at_half = 0.5 * qf / (prev.axial_strain + f * (s.axial_strain - prev.axial_strain));
        }
      }
      INFO("s3 = " << s3 << " worst relative error " << worst << " over " << checked << " steps");
      CHECK(checked > 100);
      CHECK(worst < 0.01);
      CHECK(secant_at_half == Approx(e50).epsilon(0.01));
      CHECK(r.steps.back().q == Approx(qf).epsilon(1e-6));  // ends on the Mohr-Coulomb line
    }
  }
}

// Oedometer check of the cap calibration (Schanz, Vermeer & Bonnier 1999, section 4: alpha and
// the cap modulus are chosen so that the model reproduces E_oed^ref and K0_nc).
TEST_CASE("normally consolidated oedometer: tangent at s1' = reference pressure within 2 %, s3'/s1' = k0_normally_consolidated within 1 %",
          "[hyperbolic_hardening]") {
  for (const Overrides& over :
       {Overrides{}, Overrides{{"stress_exponent", 0.8}, {"k0_normally_consolidated", 0.6}, {"oedometer_stiffness_ref", 12000.0},
                               {"reference_pressure", 50.0}, {"friction_angle", 30.0}},
        Overrides{{"stress_exponent", 0.3}, {"k0_normally_consolidated", 0.42}, {"oedometer_stiffness_ref", 30000.0},
                  {"secant_stiffness_ref", 35000.0}, {"unloading_stiffness_ref", 120000.0}, {"friction_angle", 38.0},
                  {"critical_state_friction_angle", 32.0}}}) {
    const auto model = make(over);
    const double pref = param(over, "reference_pressure");
    const double k0 = param(over, "k0_normally_consolidated");
    const double eoed = param(over, "oedometer_stiffness_ref");
    TestProtocol p;
    p.initial.stress = triaxial_stress(0.5 * pref, 0.5 * pref * k0);
    Stage st;
    st.type = StageType::oedometer;
    st.target_axial = 3.0 * pref;
    st.steps = 1000;
    p.stages.push_back(st);
    const SimulationResult r = simulate(DriverOptions{}, *model, p);
    REQUIRE(r.ok());
    for (double level : {1.0, 2.0}) {
      std::size_t i = 1;
      while (i + 1 < r.steps.size() && r.steps[i].axial_stress < level * pref) ++i;
      const StepRecord& a = r.steps[i - 1];
      const StepRecord& b = r.steps[i + 1];
      const double tangent = (b.axial_stress - a.axial_stress) / (b.axial_strain - a.axial_strain);
      // The oedometric stiffness follows the power law in s1' (Schanz et al. 1999, eq. 11; c' = 0 here).
      const double expected = eoed * std::pow(r.steps[i].axial_stress / pref, param(over, "stress_exponent"));
      INFO("s1' = " << r.steps[i].axial_stress << " tangent " << tangent << " expected " << expected);
      CHECK(tangent == Approx(expected).epsilon(0.02));
      CHECK(r.steps[i].radial_stress / r.steps[i].axial_stress == Approx(k0).epsilon(0.01));
      CHECK(std::abs(r.steps[i].radial_strain) < 1e-12);
      CHECK(static_cast<int>(r.steps[i].state[HyperbolicHardening::active_surfaces]) == 3);  // shear and cap
    }
  }
}

// Unloading-reloading is elastic with E_ur from the power law (Schanz, Vermeer & Bonnier 1999, eq. 7);
// at constant s3' the secant of the loop is E_ur(s3') (common practice, no source).
TEST_CASE("drained unload-reload loop: secant stiffness equals E_ur at that s3' within 3 %", "[hyperbolic_hardening]") {
  for (double s3 : {100.0, 300.0}) {
    const Overrides over{{"stress_exponent", 0.6}};
    const auto model = make(over);
    TestProtocol p = drained_compression(s3, kNotGiven, 0.015, 300);  // normally consolidated
    Stage loop;
    loop.type = StageType::unload_reload;
    loop.drainage = Drainage::drained;
    loop.target_deviator = 0.1 * failure_deviator(over, s3);
    loop.steps = 100;
    p.stages.push_back(loop);
    const SimulationResult r = simulate(DriverOptions{}, *model, p);
    REQUIRE(r.ok());
    const StageSummary& st = r.stages[1];
    const StepRecord& top = r.steps[st.first - 1];
    const StepRecord& bottom = r.steps[st.first + 99];
    const StepRecord& back = r.steps[st.last];
    const double eur = power_law(over, "unloading_stiffness_ref", s3);
    const double unload = (top.q - bottom.q) / (top.axial_strain - bottom.axial_strain);
    const double reload = (back.q - bottom.q) / (back.axial_strain - bottom.axial_strain);
    INFO("s3 = " << s3 << ": unloading secant " << unload << ", reloading " << reload << ", E_ur " << eur);
    CHECK(top.q > 0.5 * failure_deviator(over, s3));
    CHECK(unload == Approx(eur).epsilon(0.03));
    CHECK(reload == Approx(eur).epsilon(0.03));
  }
}

// Rowe (1962), "The stress-dilatancy relation for static equilibrium of an assembly of particles in
// contact", Proc. R. Soc. A 269: sin psi_m = (sin phi_m - sin phi_cv)/(1 - sin phi_m sin phi_cv), with
// sin phi_m = (s1' - s3')/(s1' + s3' + 2 c' cot phi') as in Schanz et al. (1999), eqs. 14-16; the plastic
// strains of each step give sin psi_m = -d eps_v^p / d gamma_p.
TEST_CASE("Rowe's stress-dilatancy holds along a drained compression path after the cut-off rules",
          "[hyperbolic_hardening]") {
  for (int rule : {0, 1, 2}) {
    for (double c : {0.0, 15.0}) {
      const Overrides over{{"dilatancy_rule", rule}, {"friction_angle", 38.0}, {"critical_state_friction_angle", 31.0},
                           {"cohesion", c}};
      const auto model = make(over);
      const double s3 = 150.0;
      // One increment a record: the check reads the discrete flow rule of each increment.
      DriverOptions fixed;
      fixed.fixed_steps = true;
      const SimulationResult r = simulate(fixed, *model, drained_compression(s3, 30.0 * s3, 0.1, 800));
      REQUIRE(r.ok());
      const double e = power_law(over, "unloading_stiffness_ref", s3);
      const double nu = param(over, "poissons_ratio_ur");
      const double sphi = std::sin(degrees_to_radians(38.0));
      const double scv = std::sin(degrees_to_radians(31.0));
      const double c_cot = c / std::tan(degrees_to_radians(38.0));
      double worst = 0.0;
      int checked = 0, contracting = 0, dilating = 0;
      for (std::size_t i = 1; i < r.steps.size(); ++i) {
        const StepRecord& a = r.steps[i - 1];
        const StepRecord& b = r.steps[i];
        const double d1 = b.axial_stress - a.axial_stress, d3 = b.radial_stress - a.radial_stress;
        const double pe1 = (b.axial_strain - a.axial_strain) - (d1 - 2.0 * nu * d3) / e;
        const double pe3 = (b.radial_strain - a.radial_strain) - (d3 - nu * (d1 + d3)) / e;
        const double dgamma = pe1 - 2.0 * pe3;
        if (dgamma < 1e-6) continue;
        const double measured = -(pe1 + 2.0 * pe3) / dgamma;
        const double sphm = std::min(sphi, (b.axial_stress - b.radial_stress) / (b.axial_stress + b.radial_stress + 2.0 * c_cot));
        double expected = (sphm - scv) / (1.0 - sphm * scv);
        if (rule == 1) expected = std::max(0.0, expected);
        if (rule == 2) expected = 0.0;
        worst = std::max(worst, std::abs(measured - expected));
        ++checked;
        contracting += expected < -0.01;
        dilating += expected > 0.01;
      }
      INFO("rule " << rule << ", c' = " << c << ": worst |sin psi error| " << worst << " over " << checked << " steps");
      CHECK(checked > 300);
      CHECK(worst < 1e-6);
      if (rule == 0) CHECK(contracting > 5);
      if (rule != 2) CHECK(dilating > 100);
    }
  }
}

TEST_CASE("hyperbolic_hardening tangent matches central differences on elastic, shear, cap and failure states",
          "[hyperbolic_hardening]") {
  const auto model = make({{"cohesion", 5.0}});
  // Drained compression of a lightly overconsolidated sample: shear hardening, then the cap, then failure.
  const SimulationResult nc = simulate(DriverOptions{}, *model, drained_compression(100.0, 110.0, 0.2, 400));
  REQUIRE(nc.ok());
  const SimulationResult heavy = simulate(DriverOptions{}, *model, drained_compression(100.0, 3000.0, 0.2, 400));
  REQUIRE(heavy.ok());
  CHECK(heavy.steps.back().q == Approx(failure_deviator({{"cohesion", 5.0}}, heavy.steps.back().radial_stress)).epsilon(1e-9));
  CHECK(nc.steps.back().q == Approx(failure_deviator({{"cohesion", 5.0}}, nc.steps.back().radial_stress)).epsilon(1e-9));
  Vec6 triaxial = Vec6::Zero();
  triaxial << 2e-4, -0.6e-4, -0.6e-4, 0.0, 0.0, 0.0;
  Vec6 general;
  general << 1.5e-4, -0.4e-4, -0.7e-4, 0.8e-4, -0.3e-4, 0.5e-4;
  struct Case {
    const char* what;
    MaterialState state;
    Vec6 de;
    int active;
  };
  MaterialState oc;
  InitialConditions ic;
  ic.stress = triaxial_stress(160.0, 100.0);
  ic.overconsolidation_ratio = 4.0;
  model->initialise(ic, oc);
  // Normally consolidated at an anisotropic stress, loaded isotropically: the stress ratio falls, so
  // only the cap yields. (At an isotropic state with gamma_p = 0 the shear locus is the q = 0 axis:
  // any deviatoric perturbation yields in shear, and there is no derivative to check.)
  MaterialState iso;
  InitialConditions ici;
  ici.stress = triaxial_stress(100.0, 60.0);
  model->initialise(ici, iso);
  Vec6 isotropic = Vec6::Zero();
  isotropic.head<3>().setConstant(1e-4);
  // First state where both surfaces are active; a state at failure near the end.
  std::size_t both = 0;
  while (both < nc.steps.size() && static_cast<int>(nc.steps[both].state[HyperbolicHardening::active_surfaces]) != 3) ++both;
  REQUIRE(both < nc.steps.size());
  const Case cases[] = {
      {"elastic unloading", oc, -triaxial, 0},
      {"shear hardening", oc, triaxial, 1},
      {"shear hardening, general increment", oc, general, 1},
      {"cap, isotropic increment", iso, isotropic, 2},
      {"shear and cap", state_of(nc.steps[both + 5]), triaxial, 3},
      {"shear and cap, general increment", state_of(nc.steps[both + 5]), general, 3},
      {"Mohr-Coulomb failure", state_of(heavy.steps.back()), triaxial, 1},
      {"Mohr-Coulomb failure, general increment", state_of(heavy.steps.back()), general, 1},
      {"Mohr-Coulomb failure and cap", state_of(nc.steps.back()), triaxial, 3},
      {"Mohr-Coulomb failure and cap, general increment", state_of(nc.steps.back()), general, 3},
  };
  for (const Case& c : cases) {
    int active = -1;
    const double err = tangent_error(*model, c.state, c.de, active);
    INFO(c.what << ": relative tangent error " << err);
    CHECK(active == c.active);
    CHECK(err < triaxcal::test::kTangent);
  }
}

TEST_CASE("undrained compression of a normally consolidated sample ends on the Mohr-Coulomb line",
          "[hyperbolic_hardening]") {
  const Overrides over;
  const auto model = make(over);
  TestProtocol p = drained_compression(200.0, kNotGiven, 0.2, 1000);
  p.stages[0].drainage = Drainage::undrained;
  const SimulationResult r = simulate(DriverOptions{}, *model, p);
  REQUIRE(r.ok());
  const StepRecord& end = r.steps.back();
  CHECK(std::abs(end.volumetric_strain) < 1e-12);
  // Mohr-Coulomb (common practice, no source): q = 2 sin phi/(1 - sin phi) s3' at failure, c' = 0.
  CHECK(end.q == Approx(failure_deviator(over, end.radial_stress)).epsilon(1e-6));
  CHECK(end.excess_pore_pressure == Approx(200.0 - end.radial_stress).epsilon(1e-9));
  // Contractive at first (the cap), dilative beyond phi_cv: the pore pressure peaks and falls.
  double peak_u = 0.0;
  for (const StepRecord& s : r.steps) peak_u = std::max(peak_u, s.excess_pore_pressure);
  CHECK(peak_u > 0.0);
  CHECK(end.excess_pore_pressure < peak_u);
}

// Path independence (DESIGN.md "Models"): the response depends on the stress, gamma_p and p_p
// alone (cap_volumetric_strain and the mobilised angles are outputs that integrate never reads; the
// last active set and the multiplier rates only order and warm-start the local solve). A starts at
// the state; B reaches it by consolidation from p' = 20 kPa. Fixed increments, the same in A and B.
TEST_CASE("hyperbolic_hardening sheared from a state responds the same whether it started there or was consolidated to it",
          "[hyperbolic_hardening]") {
  const auto model = make();
  DriverOptions fixed;
  fixed.fixed_steps = true;
  auto shear = [](Drainage d) {
    Stage s;
    s.type = StageType::shear;
    s.drainage = d;
    s.axial_strain = 0.05;
    s.steps = 500;
    return s;
  };
  auto to_stress = [](double axial, double radial, int steps) {
    Stage s;
    s.type = StageType::anisotropic_consolidation;
    s.target_axial = axial;
    s.target_radial = radial;
    s.steps = steps;
    return s;
  };
  struct Case {
    const char* what;
    double axial, radial, pc;        // A's start (pc NaN: normally consolidated, cap through the stress)
    std::vector<Stage> consolidation;  // B's history from an isotropic 20 kPa
    Drainage drainage;
  };
  const Case cases[] = {
      {"normally consolidated at 200 kPa, drained", 200.0, 200.0, kNotGiven, {to_stress(200.0, 200.0, 40)},
       Drainage::drained},
      {"normally consolidated at 200 kPa, undrained", 200.0, 200.0, kNotGiven, {to_stress(200.0, 200.0, 40)},
       Drainage::undrained},
      {"OCR 2: loaded to 200 kPa, unloaded to 100 kPa, drained", 100.0, 100.0, 200.0,
       {to_stress(200.0, 200.0, 40), to_stress(100.0, 100.0, 20)}, Drainage::drained},
      {"anisotropically consolidated to (200, 120) kPa on both surfaces, drained", 200.0, 120.0, kNotGiven,
       {to_stress(200.0, 120.0, 60)}, Drainage::drained},
  };
  for (const Case& c : cases) {
    INFO(c.what);
    TestProtocol a;
    a.initial.stress = triaxial_stress(c.axial, c.radial);
    a.initial.preconsolidation_pressure = c.pc;
    a.stages = {shear(c.drainage)};
    TestProtocol b;
    b.initial.stress = triaxial_stress(20.0, 20.0);
    b.stages = c.consolidation;
    b.stages.push_back(shear(c.drainage));
    const auto ra = simulate(fixed, *model, a);
    const auto rb = simulate(fixed, *model, b);
    REQUIRE(ra.ok());
    REQUIRE(rb.ok());
    const int last = static_cast<int>(c.consolidation.size());
    // The hardening state B reached is the one A is initialised with.
    const StepRecord& reached = rb.steps[rb.stages[last - 1].last];
    CHECK(close(reached.state[HyperbolicHardening::cap_pressure], ra.steps[0].state[HyperbolicHardening::cap_pressure],
                1e-9, 0.0));
    CHECK(close(reached.state[HyperbolicHardening::shear_hardening],
                ra.steps[0].state[HyperbolicHardening::shear_hardening], 1e-9, 1e-15));
    const test::StageDifference d = test::compare_stages(ra, 0, rb, last);
    INFO("largest difference " << d.relative << " (without floors " << d.raw << "): " << d.where);
    CHECK(d.records == 500);
    CHECK(d.relative < 1e-6);
  }
}

TEST_CASE("hyperbolic_hardening is registered and `triaxcal models hyperbolic_hardening` lists its parameters",
          "[hyperbolic_hardening]") {
  CHECK(&find_model("hyperbolic_hardening").info() == &HyperbolicHardening::model_info());
  const auto r = triaxcal::test::run_cli("models hyperbolic_hardening", "hh_models");
  CHECK(r.exit_code == 0);
  for (const ParameterInfo& p : HyperbolicHardening::model_info().parameters) CHECK(r.out.find(p.name) != std::string::npos);
  const auto all = triaxcal::test::run_cli("models", "hh_models_all");
  CHECK(all.out.find("hyperbolic_hardening") != std::string::npos);
}

namespace {

// Parameter sets that reach every branch of the local equations between them: power law with the
// square root (m = 0.5), a general exponent, m = 1 (exponential cap hardening) and m = 0; each
// dilatancy rule; cohesion with a tension cut-off; R_f = 1.
const Overrides kBranchSets[] = {
    Overrides{},
    Overrides{{"cohesion", 10.0}, {"tensile_strength", 5.0}, {"stress_exponent", 0.7}, {"dilatancy_rule", 0.0},
              {"friction_angle", 35.0}, {"critical_state_friction_angle", 30.0}},
    Overrides{{"stress_exponent", 1.0}, {"dilatancy_rule", 1.0}, {"cohesion", 2.0}},
    Overrides{{"stress_exponent", 0.0}, {"dilatancy_rule", 2.0}, {"friction_angle", 38.0},
              {"critical_state_friction_angle", 32.0}},
    Overrides{{"stress_exponent", 0.3}, {"failure_ratio", 1.0}, {"dilatancy_rule", 0.0}, {"cohesion", 20.0},
              {"tensile_strength", 30.0}},
};

using Jacobian = HyperbolicHardening::LocalJacobian;

}  // namespace

// The hand-written Jacobian of the local return-mapping equations against forward automatic
// differentiation of the same residual (dual.hpp), at random points that are not solutions:
// general, triaxial compression and extension, isotropic and nearly isotropic stresses, stresses
// near and beyond the apex (stiffness floor, q_f <= 0), beyond failure (sin phi_m capped), below
// phi_cv (the cut-off of rule 1), gamma_p = 0 (q_y = q_h), a large gamma_p (q_y = q_f), every
// active set of one or two surfaces. Both are exact derivatives of the same residual, so they agree
// to round-off (common practice, no source).
TEST_CASE("hand-written local Jacobian equals the forward-AD Jacobian to 1e-9 on random points and every active set",
          "[hyperbolic_hardening]") {
  std::mt19937 rng(1999);
  std::uniform_real_distribution<double> u01(0.0, 1.0);
  auto uniform = [&](double a, double b) { return a + (b - a) * u01(rng); };
  int compared = 0;
  for (const Overrides& over : kBranchSets) {
    const HyperbolicHardening model(values(over), "test");
    const double c_cot = param(over, "cohesion") / std::tan(degrees_to_radians(param(over, "friction_angle")));
    double worst_jacobian = 0.0, worst_residual = 0.0;
    std::string worst_where;
    for (int sample = 0; sample < 240; ++sample) {
      const double p = uniform(20.0, 400.0);
      double sig[3];
      switch (sample % 6) {
        case 0:  // general
          for (double& v : sig) v = p * uniform(0.3, 1.7);
          break;
        case 1: {  // triaxial compression
          const double r = uniform(0.2, 1.0);
          sig[0] = p;
          sig[1] = sig[2] = r * p;
          break;
        }
        case 2: {  // triaxial extension
          const double r = uniform(0.2, 1.0);
          sig[0] = sig[1] = p;
          sig[2] = r * p;
          break;
        }
        case 3:  // isotropic
          sig[0] = sig[1] = sig[2] = p;
          break;
        case 4:  // minor stress near the apex: below the stiffness floor, or q_f <= 0
          sig[0] = p;
          sig[1] = p * uniform(0.2, 0.8);
          sig[2] = -c_cot + uniform(-5.0, 0.1);
          break;
        default:  // nearly isotropic: J2 below the isotropic threshold (deviator 1e-13 p), or a small
                  // deviator (1e-3 p; closer to isotropy the round-off of s = sigma - p, amplified by
                  // p/q, grows alike in both derivatives and beyond the tolerance)
          sig[0] = p * (1.0 + (sample % 12 < 6 ? 1e-13 : 1e-3));
          sig[1] = sig[2] = p;
          break;
      }
      std::shuffle(sig, sig + 3, rng);  // the equations are symmetric in the principal values
      const double dl[3] = {uniform(0.0, 2e-3), uniform(0.0, 2e-3), uniform(0.0, 2e-3)};
      const double gamma_n = sample % 3 == 0 ? 0.0 : (sample % 3 == 1 ? uniform(0.0, 0.01) : 1.0);
      const double pp_n = std::max(10.0, p) * uniform(0.7, 2.0);
      const double eur = param(over, "unloading_stiffness_ref") * uniform(0.5, 2.0);
      const double trial[3] = {sig[0] + uniform(0.0, 50.0), sig[1] + uniform(0.0, 50.0), sig[2] + uniform(0.0, 50.0)};
      const double scale = std::max({1.0, std::abs(sig[0]), std::abs(sig[1]), std::abs(sig[2])});
      for (int mask : {1, 2, 4, 3, 5, 6}) {
        const auto hand = model.local_system(Jacobian::hand_written, sig, dl, mask, gamma_n, pp_n, eur, trial);
        const auto ad = model.local_system(Jacobian::automatic, sig, dl, mask, gamma_n, pp_n, eur, trial);
        REQUIRE(hand.size == ad.size);
        // Norm-wise per block (stress / yield rows times stress / multiplier columns): near an
        // isotropic stress the stress block holds entries ~ E dl / q that cancel, and the round-off
        // of s = sigma - p is amplified by p / q in both; the block's largest entry is the scale.
        // Floors: 1 for the dimensionless stress columns, E_ur for the multiplier columns (kPa).
        double block_max[2][2] = {{1.0, eur}, {1.0, eur}};
        for (int i = 0; i < ad.size; ++i)
          for (int j = 0; j < ad.size; ++j) {
            INFO("sample " << sample << ", mask " << mask << ", entry (" << i << ", " << j << ")");
            REQUIRE(std::isfinite(ad.jacobian[i][j]));
            double& m = block_max[i < 3 ? 0 : 1][j < 3 ? 0 : 1];
            m = std::max(m, std::abs(ad.jacobian[i][j]));
          }
        for (int i = 0; i < ad.size; ++i) {
          REQUIRE(std::isfinite(ad.residual[i]));
          worst_residual = std::max(worst_residual, std::abs(hand.residual[i] - ad.residual[i]) / scale);
          for (int j = 0; j < ad.size; ++j) {
            const double err =
                std::abs(hand.jacobian[i][j] - ad.jacobian[i][j]) / block_max[i < 3 ? 0 : 1][j < 3 ? 0 : 1];
            if (err > worst_jacobian) {
              worst_jacobian = err;
              worst_where = "sample " + std::to_string(sample) + ", mask " + std::to_string(mask) + ", entry (" +
                            std::to_string(i) + ", " + std::to_string(j) + "): hand " +
                            std::to_string(hand.jacobian[i][j]) + ", AD " + std::to_string(ad.jacobian[i][j]);
            }
          }
        }
        ++compared;
      }
    }
    INFO("worst relative Jacobian difference " << worst_jacobian << " at " << worst_where << "; residual "
                                                << worst_residual);
    CHECK(worst_jacobian < test::kRoundOff);
    CHECK(worst_residual < test::kRoundOff);
  }
  CHECK(compared == 5 * 240 * 6);
}

// The whole increment with the hand-written Jacobian against the forward-AD reference: stress,
// internal state and consistent tangent, along random strain paths (loading, unloading, general
// increments with shear components) from normally and overconsolidated, isotropic and K0 states.
// The same equations solved to the same tolerance: round-off agreement (common practice, no source).
TEST_CASE("integrate with the hand-written Jacobian matches the forward-AD reference in stress, state and tangent",
          "[hyperbolic_hardening]") {
  std::mt19937 rng(2008);
  std::uniform_real_distribution<double> u01(0.0, 1.0);
  auto uniform = [&](double a, double b) { return a + (b - a) * u01(rng); };
  std::map<int, int> seen;  // active set -> increments
  double worst_stress = 0.0, worst_state = 0.0, worst_tangent = 0.0;
  for (const Overrides& over : kBranchSets) {
    const HyperbolicHardening model(values(over), "test");
    struct Start {
      double axial, radial, ocr;
      Vec6 bias;  // mean direction of the strain increments
    };
    Vec6 compression, isotropic, extension;
    compression << 1.0, -0.3, -0.3, 0.0, 0.0, 0.0;
    isotropic << 1.0, 1.0, 1.0, 0.0, 0.0, 0.0;
    extension << -1.0, 0.4, 0.4, 0.0, 0.0, 0.0;
    const Start starts[] = {{100.0, 100.0, 1.0, compression}, {100.0, 50.0, 1.0, compression},
                            {160.0, 100.0, 4.0, compression}, {120.0, 80.0, 1.0, isotropic},
                            {200.0, 200.0, 1.5, extension}};
    for (const Start& st : starts) {
      InitialConditions ic;
      ic.stress = triaxial_stress(st.axial, st.radial);
      ic.overconsolidation_ratio = st.ocr;
      MaterialState state;
      model.initialise(ic, state);
      for (int step = 0; step < 40; ++step) {
        Vec6 de = st.bias;
        for (int i = 0; i < 6; ++i) de[i] += uniform(-0.5, 0.5) * (i < 3 || step % 2 ? 1.0 : 0.0);
        if (step % 7 == 6) de = -de;  // an unloading increment now and then
        de *= std::pow(10.0, uniform(-5.0, -3.3));
        MaterialState hand_out, ad_out;
        Mat6 hand_tangent, ad_tangent;
        const IntegrationResult hand = model.integrate_with(Jacobian::hand_written, state, de, hand_out, hand_tangent);
        const IntegrationResult ad = model.integrate_with(Jacobian::automatic, state, de, ad_out, ad_tangent);
        REQUIRE(hand.status == ad.status);
        if (hand.status != Status::ok) break;  // the path has left the admissible region (both say so)
        const int active = static_cast<int>(ad_out.internal[HyperbolicHardening::active_surfaces]);
        INFO("step " << step << ", active set " << active);
        REQUIRE(static_cast<int>(hand_out.internal[HyperbolicHardening::active_surfaces]) == active);
        ++seen[active];
        for (int i = 0; i < 6; ++i)
          worst_stress = std::max(worst_stress, std::abs(hand_out.stress[i] - ad_out.stress[i]) /
                                                    (ad_out.stress.cwiseAbs().maxCoeff() + test::kStressFloor));
        for (int v = 0; v < 8; ++v) {
          // Strain-like variables (gamma_p, eps_v^pc, multiplier rates) and p_p, angles in degrees.
          const double floor = (v == HyperbolicHardening::cap_pressure) ? test::kStressFloor : test::kStrainFloor;
          worst_state = std::max(worst_state, std::abs(hand_out.internal[v] - ad_out.internal[v]) /
                                                  (std::abs(ad_out.internal[v]) + floor));
        }
        worst_tangent = std::max(worst_tangent,
                                 (hand_tangent - ad_tangent).cwiseAbs().maxCoeff() / ad_tangent.cwiseAbs().maxCoeff());
        state = ad_out;
      }
    }
  }
  std::string sets;
  for (const auto& [mask, count] : seen) sets += " " + std::to_string(mask) + ":" + std::to_string(count);
  INFO("increments per active set:" << sets << "; worst relative stress " << worst_stress << ", state " << worst_state
                                    << ", tangent " << worst_tangent);
  CHECK(worst_stress < test::kRoundOff);
  CHECK(worst_state < test::kRoundOff);
  CHECK(worst_tangent < test::kRoundOff);
  // The paths reach elastic, shear, cap, and shear-and-cap steps.
  CHECK(seen[0] > 10);
  CHECK(seen[1] > 10);
  CHECK(seen[2] > 10);
  CHECK(seen[3] > 10);
}

TEST_CASE("hyperbolic_hardening integrate allocates nothing on elastic, shear, cap and general increments",
          "[hyperbolic_hardening]") {
  if (!test::kCountingAllocations) {
    WARN("allocation counting is off under AddressSanitizer; the Release run checks it");
    return;
  }
  const auto model = make({{"cohesion", 5.0}});
  MaterialState oc, nc;
  InitialConditions ic;
  ic.stress = triaxial_stress(160.0, 100.0);
  ic.overconsolidation_ratio = 4.0;
  model->initialise(ic, oc);
  ic.overconsolidation_ratio = 1.0;
  model->initialise(ic, nc);
  Vec6 triaxial, general, isotropic;
  triaxial << 2e-4, -0.6e-4, -0.6e-4, 0.0, 0.0, 0.0;
  general << 1.5e-4, -0.4e-4, -0.7e-4, 0.8e-4, -0.3e-4, 0.5e-4;
  isotropic << 1e-4, 1e-4, 1e-4, 0.0, 0.0, 0.0;
  MaterialState out;
  Mat6 t;
  int ok = 0;
  const long before = test::g_allocations.load();
  for (const MaterialState* in : {&oc, &nc})
    for (const Vec6& de : {Vec6(-triaxial), triaxial, general, isotropic}) ok += model->integrate(*in, de, out, t).status == Status::ok;
  const long after = test::g_allocations.load();
  CHECK(ok == 8);
  CHECK(after == before);
}

TEST_CASE("hyperbolic_hardening: parameters listed strength, then stiffness, then the cap; dilatancy_rule takes words; "
          "k0_nc names its new name",
          "[hyperbolic_hardening][names]") {
  const ModelInfo& info = HyperbolicHardening::model_info();
  std::vector<std::string> names;
  for (const ParameterInfo& p : info.parameters) names.push_back(p.name);
  CHECK(names == std::vector<std::string>{"friction_angle", "cohesion", "tensile_strength", "critical_state_friction_angle",
                                          "dilatancy_rule", "secant_stiffness_ref", "unloading_stiffness_ref",
                                          "poissons_ratio_ur", "stress_exponent", "reference_pressure", "failure_ratio",
                                          "oedometer_stiffness_ref", "k0_normally_consolidated"});
  // The enum that the model reads its values with follows the same order.
  CHECK(parameter_index(info, "k0_normally_consolidated") == HyperbolicHardening::k0_normally_consolidated);
  CHECK(parameter_index(info, "dilatancy_rule") == HyperbolicHardening::dilatancy_rule);
  CHECK(parameter_index(info, "secant_stiffness_ref") == HyperbolicHardening::secant_stiffness_ref);

  auto message = [&](const std::string& text) {
    try {
      resolve_parameter_file(info, parse_parameter_file(text, "P.json"));
    } catch (const InputError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const std::string head = R"({"format": "triaxcal-parameters", "version": 1, "model": "hyperbolic_hardening", "parameters": )";
  CHECK(message(head + R"({"k0_nc": 0.5}})") ==
        "P.json: hyperbolic_hardening: parameter 'k0_nc' is now called 'k0_normally_consolidated'");
  CHECK(message(head + R"({"dilatancy_rule": 2}})") ==
        "P.json: parameters.dilatancy_rule: expected one of \"rowe\", \"rowe_no_contraction\" or \"no_dilatancy\", found 2");
  CHECK(message(head + R"({"dilatancy_rule": "none"}})") ==
        "P.json: parameters.dilatancy_rule: expected one of \"rowe\", \"rowe_no_contraction\" or \"no_dilatancy\", "
        "found \"none\"");
  CHECK(message(head + R"({"friction_angle": "steep"}})") ==
        "P.json: parameters.friction_angle: expected a number (deg), found \"steep\"");
  CHECK(message(head + R"({"dilatancy_rule": "no_dilatancy"}})") == "no error");
  for (const auto& [word, index] : std::vector<std::pair<std::string, double>>{
           {"rowe", 0.0}, {"rowe_no_contraction", 1.0}, {"no_dilatancy", 2.0}}) {
    const ParameterValues v =
        resolve_parameter_file(info, parse_parameter_file(head + R"({"dilatancy_rule": {"value": ")" + word + R"("}}})", "P.json"));
    CHECK(v[HyperbolicHardening::dilatancy_rule] == index);
    CHECK(word_of(info.parameters[HyperbolicHardening::dilatancy_rule], index) == word);
  }
}
