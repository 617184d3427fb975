// The calibration's Jacobian is finite differences on a frozen substep sequence: the driver records
// the accepted substeps of the run at the parameters and replays exactly those substeps with each
// perturbed parameter (SubstepPlan). Checked here for every model at elastic, hardening, failure
// and cap (volumetric hardening) states (the sand model also at its dense peak and undrained
// through phase transformation): the replayed central differences against central
// differences of a fine fixed-step run (4000 increments a stage, the same step), which is smooth in
// the parameters; and a replay at the same parameters reproduces the recorded run bit for bit.
// These are finite differences on a frozen sequence (common practice, no source). The exact
// derivatives of every model's derivative version (issue 14) are checked in the same cases: against
// the replayed central differences, and against central differences of runs at the same fixed step
// count. Material constants are invented round numbers, not from any real soil.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;

namespace {

using Values = std::map<std::string, double>;

std::unique_ptr<Model> make(const std::string& name, const Values& given) {
  const ModelEntry& e = find_model(name);
  return e.create(resolve_parameters(e.info(), given, "test"), "test");
}

TestProtocol shear(double p0, Drainage drainage, double strain, int records, double ocr, double e0) {
  TestProtocol p;
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = e0;
  p.initial.overconsolidation_ratio = ocr;
  Stage s;
  s.type = StageType::shear;
  s.drainage = drainage;
  s.axial_strain = strain;
  s.steps = records;
  p.stages.push_back(s);
  return p;
}

TestProtocol oedometer(double from, double to, int records, double e0) {
  TestProtocol p;
  p.initial.stress = triaxial_stress(from, 0.5 * from);
  p.initial.void_ratio = e0;
  p.initial.overconsolidation_ratio = 1.0;
  Stage s;
  s.type = StageType::oedometer;
  s.target_axial = to;
  s.steps = records;
  p.stages.push_back(s);
  return p;
}

// The compared columns of every record but the first: q, volumetric strain, excess pore pressure.
std::vector<double> columns(const SimulationResult& r, std::size_t every) {
  std::vector<double> y;
  for (std::size_t j = every; j < r.steps.size(); j += every) {
    y.push_back(r.steps[j].q);
    y.push_back(1e4 * r.steps[j].volumetric_strain);  // 1e-4 strain weighs like 1 kPa
    y.push_back(r.steps[j].excess_pore_pressure);
  }
  return y;
}

// Seeds of the derivative version: parameter `name` on lane 0.
std::vector<double> seed_of(const Model& m, const std::string& name) {
  const auto& ps = m.info().parameters;
  std::vector<double> seeds(ps.size() * kDualLanes, 0.0);
  for (std::size_t i = 0; i < ps.size(); ++i)
    if (ps[i].name == name) seeds[i * kDualLanes] = 1.0;
  return seeds;
}

// Lane 0 of the compared columns of a simulation with derivatives (as `columns`, every record).
std::vector<double> lane0(const DualSimulationResult& r) {
  std::vector<double> y;
  for (std::size_t j = 1; j < r.steps.size(); ++j) {
    y.push_back(r.steps[j].q.v[0]);
    y.push_back(1e4 * r.steps[j].volumetric_strain.v[0]);
    y.push_back(r.steps[j].excess_pore_pressure.v[0]);
  }
  return y;
}

struct Case {
  const char* what;
  const char* model;
  Values values;
  TestProtocol protocol;
  std::vector<std::string> wrt;  // parameters differentiated
};

// Column k of the Jacobian by central differences of relative step 1e-4: replayed on the plan of
// the run at `values`, and with fixed steps (fine_records increments a stage, same records).
void compare(const Case& c) {
  DriverOptions adaptive;
  SubstepPlan plan;
  SimulationResult nominal, replayed;
  const auto model = make(c.model, c.values);
  simulate(adaptive, *model, c.protocol, nominal, false, &plan, nullptr);
  REQUIRE(nominal.ok());
  REQUIRE(!plan.ends.empty());
  // Bit for bit: the replay at the same parameters is the recorded run.
  simulate(adaptive, *model, c.protocol, replayed, false, nullptr, &plan);
  REQUIRE(replayed.ok());
  REQUIRE(columns(replayed, 1) == columns(nominal, 1));

  constexpr int kFine = 200;  // fine increments a record
  TestProtocol fine = c.protocol;
  for (Stage& s : fine.stages) s.steps *= kFine;
  DriverOptions fixed;
  fixed.fixed_steps = true;
  for (const std::string& name : c.wrt) {
    INFO(c.what << ", d/d " << name);
    const double v = c.values.at(name), h = 1e-4 * v;
    Values up = c.values, down = c.values;
    up[name] = v + h;
    down[name] = v - h;
    const auto mu = make(c.model, up), md = make(c.model, down);
    SimulationResult ru, rd, fu, fd;
    simulate(adaptive, *mu, c.protocol, ru, false, nullptr, &plan);
    simulate(adaptive, *md, c.protocol, rd, false, nullptr, &plan);
    simulate(fixed, *mu, fine, fu, false, nullptr, nullptr);
    simulate(fixed, *md, fine, fd, false, nullptr, nullptr);
    REQUIRE(ru.ok());
    REQUIRE(rd.ok());
    REQUIRE(fu.ok());
    REQUIRE(fd.ok());
    const std::vector<double> a = columns(ru, 1), b = columns(rd, 1), fa = columns(fu, kFine), fb = columns(fd, kFine);
    REQUIRE(a.size() == fa.size());
    double scale = 0.0, worst = 0.0;
    for (std::size_t i = 0; i < a.size(); ++i) scale = std::max(scale, std::abs(fa[i] - fb[i]) / (2.0 * h));
    for (std::size_t i = 0; i < a.size(); ++i)
      worst = std::max(worst, std::abs((a[i] - b[i]) - (fa[i] - fb[i])) / (2.0 * h));
    INFO("largest sensitivity " << scale << ", largest difference " << worst);
    CHECK(scale > 0.0);  // the parameter moves the curves
    // The two discretisations differ by the driver's accuracy (0.1 % of a curve's range at the
    // default tolerance; the fine fixed-step run by about as much): their sensitivities agree
    // within 2 % of the column's largest entry.
    CHECK(worst <= 0.02 * scale);

    // Exact derivatives (the model's derivative version, issue 14): on the same plan they are the
    // limit of the replayed central differences (which differ by O(h^2) and rounding), and with
    // fixed steps the limit of central differences of fixed-step runs of the same step count.
    const std::vector<double> seeds = seed_of(*model, name);
    const std::unique_ptr<DualModel> dual = model->with_derivatives(seeds);
    REQUIRE(dual != nullptr);
    DualSimulationResult exact, exact_fixed;
    simulate(adaptive, *dual, c.protocol, exact, false, &plan);
    REQUIRE(exact.ok());
    const std::vector<double> e = lane0(exact);
    REQUIRE(e.size() == a.size());
    double exact_worst = 0.0;
    for (std::size_t i = 0; i < a.size(); ++i) exact_worst = std::max(exact_worst, std::abs(e[i] - (a[i] - b[i]) / (2.0 * h)));
    INFO("exact against replayed central differences: largest difference " << exact_worst);
    CHECK(exact_worst <= 1e-5 * scale);
    simulate(fixed, *dual, c.protocol, exact_fixed, false, nullptr);
    SimulationResult cu, cd;
    simulate(fixed, *mu, c.protocol, cu, false, nullptr, nullptr);
    simulate(fixed, *md, c.protocol, cd, false, nullptr, nullptr);
    REQUIRE(exact_fixed.ok());
    REQUIRE(cu.ok());
    REQUIRE(cd.ok());
    const std::vector<double> ef = lane0(exact_fixed), ca = columns(cu, 1), cb = columns(cd, 1);
    REQUIRE(ef.size() == ca.size());
    double fixed_worst = 0.0;
    for (std::size_t i = 0; i < ca.size(); ++i) fixed_worst = std::max(fixed_worst, std::abs(ef[i] - (ca[i] - cb[i]) / (2.0 * h)));
    INFO("exact against central differences at the same fixed steps: largest difference " << fixed_worst);
    CHECK(fixed_worst <= 1e-5 * scale);
  }
}

}  // namespace

TEST_CASE("replayed substeps give the Jacobian of a fine fixed-step run: Mohr-Coulomb elastic and failure",
          "[driver][replay][jacobian]") {
  const Values mc{{"youngs_modulus", 30000.0}, {"poissons_ratio", 0.3}, {"cohesion", 5.0}, {"friction_angle", 32.0},
                  {"dilation_angle", 6.0}};
  // 0.2 % axial strain in 20 records: elastic throughout (failure near 0.6 % at 100 kPa).
  compare({"elastic", "mohr_coulomb", mc, shear(100.0, Drainage::drained, 0.002, 20, 1.0, 0.65),
           {"youngs_modulus", "poissons_ratio"}});
  // 8 % in 40 records: elastic, the onset of yield inside a record step, then failure.
  compare({"failure", "mohr_coulomb", mc, shear(100.0, Drainage::drained, 0.08, 40, 1.0, 0.65),
           {"youngs_modulus", "poissons_ratio", "cohesion", "friction_angle", "dilation_angle"}});
}

TEST_CASE("replayed substeps give the Jacobian of a fine fixed-step run: Modified Cam-Clay hardening, failure, cap",
          "[driver][replay][jacobian]") {
  const Values mcc{{"lambda", 0.16}, {"kappa", 0.03}, {"critical_state_ratio", 1.0}, {"poissons_ratio", 0.3}};
  const std::vector<std::string> all{"lambda", "kappa", "critical_state_ratio", "poissons_ratio"};
  // Heavily overconsolidated, undrained: elastic, then yield and the critical state (failure).
  compare({"OCR 6 undrained to the critical state", "modified_cam_clay", mcc,
           shear(100.0, Drainage::undrained, 0.15, 30, 6.0, 1.0), all});
  // Normally consolidated, drained: hardening on the cap from the first step.
  compare({"NC drained hardening", "modified_cam_clay", mcc, shear(100.0, Drainage::drained, 0.1, 30, 1.0, 1.0), all});
  // Elastic: lightly sheared from OCR 2.
  compare({"OCR 2 elastic", "modified_cam_clay", mcc, shear(100.0, Drainage::drained, 0.001, 10, 2.0, 1.0),
           {"kappa", "poissons_ratio"}});
}

TEST_CASE("replayed substeps give the Jacobian of a fine fixed-step run: hyperbolic hardening shear and cap",
          "[driver][replay][jacobian]") {
  const Values hh{{"secant_stiffness_ref", 25000.0}, {"oedometer_stiffness_ref", 22000.0},
                  {"unloading_stiffness_ref", 80000.0}, {"stress_exponent", 0.55}, {"friction_angle", 35.0},
                  {"critical_state_friction_angle", 31.0}, {"k0_normally_consolidated", 1.0 - std::sin(35.0 * 3.14159265358979 / 180.0)}};
  // Drained shear from an isotropic state: shear hardening, then failure.
  compare({"CD shear hardening to failure", "hyperbolic_hardening", hh, shear(100.0, Drainage::drained, 0.08, 30, 1.0, 0.6),
           {"secant_stiffness_ref", "stress_exponent", "friction_angle", "critical_state_friction_angle"}});
  // Oedometer loading: the cap (volumetric hardening).
  compare({"oedometer cap", "hyperbolic_hardening", hh, oedometer(50.0, 400.0, 20, 0.6),
           {"oedometer_stiffness_ref", "stress_exponent"}});
}

TEST_CASE("replayed substeps give the Jacobian of a fine fixed-step run: sand model elastic, hardening, dense peak, undrained",
          "[driver][replay][jacobian]") {
  // Toyoura sand, Dafalias & Manzari (2004) Table 1 values as the model test uses them (from memory
  // of the paper's table, tests/models/sand_state_bounding_test.cpp).
  const Values sand{{"critical_state_ratio", 1.25}, {"extension_ratio", 0.712}, {"csl_void_ratio_ref", 0.934},
                    {"csl_lambda", 0.019}, {"csl_exponent", 0.7}, {"shear_modulus_constant", 125.0},
                    {"poissons_ratio", 0.05}, {"yield_cone_size", 0.01}, {"hardening_constant", 7.05},
                    {"hardening_density_factor", 0.968}, {"bounding_exponent", 1.1}, {"dilatancy_constant", 0.704},
                    {"dilatancy_exponent", 3.5}, {"fabric_max", 4.0}, {"fabric_rate", 600.0}};
  // Elastic: 0.002 % axial strain inside the yield cone.
  compare({"sand elastic", "sand_state_bounding", sand, shear(100.0, Drainage::drained, 0.00002, 10, 1.0, 0.83),
           {"shear_modulus_constant", "poissons_ratio"}});
  // Dense drained to 10 %: hardening, the peak and softening with dilation.
  compare({"sand dense drained peak", "sand_state_bounding", sand, shear(100.0, Drainage::drained, 0.1, 30, 1.0, 0.83),
           {"critical_state_ratio", "csl_void_ratio_ref", "shear_modulus_constant", "hardening_constant",
            "bounding_exponent", "dilatancy_constant", "dilatancy_exponent"}});
  // Dense undrained to 5 %: contraction, phase transformation, dilation.
  compare({"sand dense undrained", "sand_state_bounding", sand, shear(100.0, Drainage::undrained, 0.05, 30, 1.0, 0.735),
           {"critical_state_ratio", "csl_void_ratio_ref", "hardening_constant", "dilatancy_constant",
            "dilatancy_exponent"}});
}

TEST_CASE("replayed substeps give the Jacobian of a fine fixed-step run: undrained Tresca elastic and failure",
          "[driver][replay][jacobian]") {
  const Values tresca{{"undrained_shear_strength", 60.0}, {"undrained_youngs_modulus", 20000.0}};
  compare({"Tresca elastic", "undrained_tresca", tresca, shear(100.0, Drainage::undrained, 0.004, 10, 1.0, 0.8),
           {"undrained_youngs_modulus"}});
  compare({"Tresca failure", "undrained_tresca", tresca, shear(100.0, Drainage::undrained, 0.05, 30, 1.0, 0.8),
           {"undrained_shear_strength", "undrained_youngs_modulus"}});
}

TEST_CASE("a substep plan that does not fit the protocol fails the run with a message", "[driver][replay]") {
  const auto m = make("mohr_coulomb", {{"youngs_modulus", 30000.0}, {"poissons_ratio", 0.3}, {"friction_angle", 32.0}});
  SubstepPlan plan;
  plan.ends = {0.5, -1.0};  // ends half way through a stage of 10 records
  SimulationResult r;
  simulate(DriverOptions{}, *m, shear(100.0, Drainage::drained, 0.01, 10, 1.0, 0.65), r, false, nullptr, &plan);
  CHECK_FALSE(r.ok());
  CHECK(r.message.find("the replayed substep plan does not fit this run") != std::string::npos);
}
