// The state-dependent bounding-surface sand model (Dafalias & Manzari 2004): tangent, elastic start,
// critical state, the paper's Toyoura sand behaviours, bad parameters, path independence.
//
// Parameter set: Toyoura sand as Dafalias & Manzari (2004), J. Eng. Mech. 130(6), give it in their
// table of constants, values FROM MEMORY (not checked against the paper here): G0 125, nu 0.05,
// M 1.25, c 0.712, lambda_c 0.019, e_0 0.934, xi 0.7, m 0.01, h0 7.05, c_h 0.968, n_b 1.1, A0 0.704,
// n_d 3.5, z_max 4, c_z 600. The behaviours checked with it are the qualitative ones the paper
// describes (dense: peak, softening, dilation; loose: contraction, monotonic q; undrained: peak and
// loss of strength, liquefaction, phase transformation); the numbers asserted follow from the
// model's own equations (critical state, bounding and dilatancy stress ratios), not from the paper's figures.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <map>
#include <string>

#include "model_checks.hpp"
#include "path_independence.hpp"
#include "protocols.hpp"
#include "sand_state_bounding/sand_state_bounding.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;
using test::close;
using test::vec;

namespace {

using Sand = SandStateBounding;

std::map<std::string, double> toyoura() {
  return {{"critical_state_ratio", 1.25}, {"extension_ratio", 0.712}, {"csl_void_ratio_ref", 0.934},
          {"csl_lambda", 0.019},          {"csl_exponent", 0.7},      {"shear_modulus_constant", 125.0},
          {"poissons_ratio", 0.05},       {"yield_cone_size", 0.01},  {"hardening_constant", 7.05},
          {"hardening_density_factor", 0.968}, {"bounding_exponent", 1.1}, {"dilatancy_constant", 0.704},
          {"dilatancy_exponent", 3.5},    {"fabric_max", 4.0},        {"fabric_rate", 600.0}};
}

std::unique_ptr<Model> make_sand(const std::map<std::string, double>& given) {
  return Sand::create(resolve_parameters(Sand::model_info(), given, "test"), "test");
}

const Sand& as_sand(const Model& m) { return dynamic_cast<const Sand&>(m); }

TestProtocol triaxial(double p0, double e0, Drainage drainage, double axial_strain, int steps) {
  TestProtocol p = test::isotropic_shear(p0, drainage, axial_strain, steps);
  p.initial.void_ratio = e0;
  return p;
}

DriverOptions controlled(double tolerance = 1e-4) {
  DriverOptions o;
  o.tolerance = tolerance;
  return o;
}

// The model state of a record (axisymmetric stress).
MaterialState state_of(const StepRecord& r) {
  MaterialState s;
  s.stress = triaxial_stress(r.axial_stress, r.radial_stress);
  s.internal = r.state;
  return s;
}

// Index of the record of largest q.
std::size_t peak_index(const SimulationResult& r) {
  std::size_t k = 0;
  for (std::size_t i = 0; i < r.steps.size(); ++i)
    if (r.steps[i].q > r.steps[k].q) k = i;
  return k;
}

constexpr double kM = 1.25;
constexpr double kC = 0.712;
constexpr double kNb = 1.1;
constexpr double kNd = 3.5;

}  // namespace


TEST_CASE("sand tangent equals central differences on elastic, crossing, loading, dense-peak, critical and reversed states") {
  const auto sand = make_sand(toyoura());
  InitialConditions c;
  c.stress = triaxial_stress(100.0, 100.0);
  c.void_ratio = 0.83;
  MaterialState centred;
  sand->initialise(c, centred);
  const Vec6 general = vec(2e-4, -1e-4, -1.2e-4, 3e-5, -2e-5, 1e-5);
  auto plastic = [&](const MaterialState& in, const Vec6& de) {
    MaterialState out;
    Mat6 t;
    REQUIRE(sand->integrate(in, de, out, t).status == Status::ok);
    return out.internal[Sand::back_stress_ratio] != in.internal[Sand::back_stress_ratio] &&
           out.internal[Sand::fabric] == out.internal[Sand::fabric] && sand->integrate(in, de, out, t).iterations == 1;
  };
  SECTION("elastic, inside the cone (isotropic start, strains of 1e-7)") {
    const Vec6 de = vec(2e-7, -1e-7, -0.5e-7, 1e-7, 0.0, -1e-7);
    CHECK_FALSE(plastic(centred, de));
    CHECK(test::tangent_error(*sand, centred, de, 1e-9) < test::kTangent);
  }
  SECTION("crossing the cone from its centre (general increment)") {
    CHECK(plastic(centred, general));
    CHECK(test::tangent_error(*sand, centred, general) < test::kTangent);
  }
  SECTION("loading on the cone (loose, undrained, 0.5 % axial strain)") {
    const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.93, Drainage::undrained, 0.005, 5));
    REQUIRE(r.ok());
    const MaterialState in = state_of(r.steps.back());
    CHECK(plastic(in, general));
    CHECK(test::tangent_error(*sand, in, general) < test::kTangent);
  }
  SECTION("dense peak (drained, at the largest q)") {
    const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.83, Drainage::drained, 0.1, 200));
    REQUIRE(r.ok());
    const MaterialState in = state_of(r.steps[peak_index(r)]);
    const Vec6 de = vec(2e-4, -0.5e-4, -0.6e-4, 2e-5, 1e-5, -1e-5);
    CHECK(plastic(in, de));
    CHECK(test::tangent_error(*sand, in, de) < test::kTangent);
  }
  SECTION("critical state (drained, natural axial strain 2)") {
    const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.83, Drainage::drained, engineering_strain(2.0), 20));
    REQUIRE(r.ok());
    const MaterialState in = state_of(r.steps.back());
    const Vec6 de = vec(2e-4, -1e-4, -1e-4, 1e-5, 0.0, 1e-5);
    CHECK(plastic(in, de));
    const double shear = as_sand(*sand).shear_modulus(r.steps.back().void_ratio, r.steps.back().p);
    CHECK(test::tangent_error(*sand, in, de, 1e-7, shear) < test::kTangent);
  }
  SECTION("reversal: a step back across the cone (loading on its other side)") {
    const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.93, Drainage::undrained, 0.005, 5));
    REQUIRE(r.ok());
    const MaterialState in = state_of(r.steps.back());
    const Vec6 back = vec(-2e-4, 1e-4, 1e-4, 1e-5, 0.0, 0.0);
    MaterialState out;
    Mat6 t;
    REQUIRE(sand->integrate(in, back, out, t).status == Status::ok);
    CHECK(out.internal[Sand::reversal_back_stress_ratio] != in.internal[Sand::reversal_back_stress_ratio]);
    CHECK(test::tangent_error(*sand, in, back) < test::kTangent);
  }
}

TEST_CASE("sand integrate allocates nothing") {
  const auto sand = make_sand(toyoura());
  const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.83, Drainage::drained, 0.05, 10));
  REQUIRE(r.ok());
  const MaterialState loaded = state_of(r.steps.back());
  const MaterialState centred = state_of(r.steps.front());
  MaterialState out;
  Mat6 t;
  const long before = test::g_allocations.load();
  int ok = 0;
  for (int i = 0; i < 100; ++i) {
    ok += sand->integrate(loaded, vec(1e-4, -3e-5, -3e-5), out, t).status == Status::ok;        // plastic
    ok += sand->integrate(loaded, vec(-1e-6, 5e-7, 5e-7), out, t).status == Status::ok;         // unloading
    ok += sand->integrate(centred, vec(1e-4, -5e-5, -5e-5, 1e-5), out, t).status == Status::ok; // crossing
  }
  CHECK(ok == 300);
  if (test::kCountingAllocations) CHECK(test::g_allocations.load() == before);
}

// Isotropic elasticity (common practice, no source): undrained q = 3 G eps_q with eps_q = eps_a at
// constant volume; G of Dafalias & Manzari (2004) eq. 2 (from memory) at the initial e and p'.
TEST_CASE("sand elastic start: undrained dq/deps_a = 3G at the initial void ratio and p'") {
  const auto sand = make_sand(toyoura());
  for (const double e0 : {0.735, 0.83, 0.95}) {
    INFO("e0 " << e0);
    TestProtocol p = triaxial(100.0, e0, Drainage::undrained, 0.01, 2);
    p.stages[0].record_at = {stage_fraction_at(p.stages[0], 1e-6), 1.0};
    const auto r = simulate(controlled(), *sand, p);
    REQUIRE(r.ok());
    const StepRecord& first = r.steps[1];
    const double g = as_sand(*sand).shear_modulus(e0, 100.0);
    CHECK(close(first.q / first.axial_strain, 3.0 * g, 1e-6, 0.0));
  }
}

// Critical state: q/p' = M g(theta) and e = e_c(p') at large strain, whatever the initial density
// (the model's own critical state, Dafalias & Manzari 2004 eqs. 3 and 18-19, from memory).
TEST_CASE("sand critical state: undrained to 30 % and drained to natural strain 2 (extension 0.64) end at q/p' = M (c M in extension) and e = e_c(p') within 0.5 %") {
  const auto sand = make_sand(toyoura());
  const Sand& s = as_sand(*sand);
  auto check_end = [&](const SimulationResult& r, double ratio) {
    REQUIRE(r.ok());
    const StepRecord& end = r.steps.back();
    CHECK(close(std::abs(end.q) / end.p, ratio, 5e-3, 0.0));
    CHECK(close(end.void_ratio, s.critical_void_ratio(end.p), 5e-3, 0.0));
  };
  for (const double e0 : {0.735, 0.93}) {
    INFO("undrained compression, e0 " << e0);
    check_end(simulate(controlled(), *sand, triaxial(100.0, e0, Drainage::undrained, 0.3, 30)), kM);
  }
  for (const double e0 : {0.735, 0.9}) {
    INFO("undrained extension, e0 " << e0);
    check_end(simulate(controlled(), *sand, triaxial(100.0, e0, Drainage::undrained, -0.3, 30)), kC * kM);
  }
  for (const double e0 : {0.83, 1.0}) {
    INFO("drained compression, e0 " << e0);
    check_end(simulate(controlled(), *sand, triaxial(100.0, e0, Drainage::drained, engineering_strain(2.0), 20)), kM);
  }
  for (const double e0 : {0.83, 1.0}) {
    INFO("drained extension, e0 " << e0);
    check_end(simulate(controlled(), *sand, triaxial(100.0, e0, Drainage::drained, -0.9, 20)), kC * kM);
  }
}

// Dafalias & Manzari (2004) describe (their figures of drained Toyoura tests, from memory): dense sand
// peaks, softens and dilates; loose sand contracts with q rising monotonically.
TEST_CASE("sand drained Toyoura: dense (e 0.83) peaks, softens and dilates; loose (e 1.0) contracts with q rising monotonically") {
  const auto sand = make_sand(toyoura());
  const auto dense = simulate(controlled(), *sand, triaxial(100.0, 0.83, Drainage::drained, 0.3, 60));
  REQUIRE(dense.ok());
  const std::size_t k = peak_index(dense);
  CHECK(k > 1);
  CHECK(k + 10 < dense.steps.size());
  CHECK(dense.steps.back().q < 0.95 * dense.steps[k].q);           // softening after the peak
  CHECK(dense.steps.back().stage_volumetric_strain < -0.02);        // dilation (compression positive)
  const auto loose = simulate(controlled(), *sand, triaxial(100.0, 1.0, Drainage::drained, 0.3, 60));
  REQUIRE(loose.ok());
  for (std::size_t i = 1; i < loose.steps.size(); ++i) {
    CHECK(loose.steps[i].q > loose.steps[i - 1].q);
    CHECK(loose.steps[i].stage_volumetric_strain > loose.steps[i - 1].stage_volumetric_strain);
  }
}

// Peak of a drained dense test: K_p = 0 where alpha = alpha_b, so q/p' = M exp(-n_b psi) at the peak's
// psi (Dafalias & Manzari 2004 eqs. 18 and 20, from memory).
TEST_CASE("sand drained dense peak stress ratio equals M exp(-n_b psi) at the peak within 1 %") {
  const auto sand = make_sand(toyoura());
  const Sand& s = as_sand(*sand);
  for (const double e0 : {0.78, 0.83}) {
    INFO("e0 " << e0);
    const auto r = simulate(controlled(), *sand, triaxial(100.0, e0, Drainage::drained, 0.1, 1000));
    REQUIRE(r.ok());
    const StepRecord& peak = r.steps[peak_index(r)];
    const double psi = peak.void_ratio - s.critical_void_ratio(peak.p);
    CHECK(psi < 0.0);
    CHECK(close(peak.q / peak.p, kM * std::exp(-kNb * psi), 1e-2, 0.0));
  }
}

TEST_CASE("sand undrained Toyoura e 0.93: peak below 1 % axial strain, then most of the strength lost") {
  const auto sand = make_sand(toyoura());
  TestProtocol p = triaxial(100.0, 0.93, Drainage::undrained, 0.3, 300);
  const auto r = simulate(controlled(), *sand, p);
  REQUIRE(r.ok());
  const std::size_t k = peak_index(r);
  CHECK(r.steps[k].stage_axial_strain < 0.01);
  CHECK(k > 0);
  CHECK(r.steps.back().q < 0.5 * r.steps[k].q);
}

TEST_CASE("sand undrained Toyoura e 0.95 liquefies: p' falls towards zero and the driver ends the run with its message") {
  const auto sand = make_sand(toyoura());
  for (const bool fixed : {false, true}) {
    INFO((fixed ? "fixed steps" : "error control"));
    DriverOptions o = controlled();
    o.fixed_steps = fixed;
    const auto r = simulate(o, *sand, triaxial(100.0, 0.95, Drainage::undrained, 0.3, 300));
    CHECK_FALSE(r.ok());
    CHECK(r.termination == Termination::failed);
    CHECK(r.message.find("could not be completed") != std::string::npos);
    REQUIRE(r.steps.size() > 1);
    CHECK(r.steps.back().p < 2.0);  // from 100 kPa
    for (const StepRecord& s : r.steps) {
      CHECK(s.p >= Sand::kLiquefiedPressure);
      CHECK(std::abs(s.q) / s.p < 1.5 * kM);
    }
  }
}

// Phase transformation in an undrained test on dense sand: p' stops falling where the dilatancy D
// changes sign, at q/p' = M exp(n_d psi) (Dafalias & Manzari 2004 eq. 19, from memory).
TEST_CASE("sand undrained Toyoura e 0.735 passes phase transformation at q/p' = M exp(n_d psi)") {
  const auto sand = make_sand(toyoura());
  const Sand& s = as_sand(*sand);
  const auto r = simulate(controlled(), *sand, triaxial(100.0, 0.735, Drainage::undrained, 0.03, 3000));
  REQUIRE(r.ok());
  std::size_t k = 0;
  for (std::size_t i = 0; i < r.steps.size(); ++i)
    if (r.steps[i].p < r.steps[k].p) k = i;
  REQUIRE(k > 0);
  REQUIRE(k + 1 < r.steps.size());
  const StepRecord& pt = r.steps[k];
  const double psi = pt.void_ratio - s.critical_void_ratio(pt.p);
  CHECK(psi < 0.0);
  CHECK(close(pt.q / pt.p, kM * std::exp(kNd * psi), 1e-2, 0.0));
  CHECK(r.steps.back().p > 2.0 * pt.p);  // dilative afterwards
}

TEST_CASE("sand path independence: the same state reached two ways gives the same response") {
  const auto sand = make_sand(toyoura());
  // A: isotropic consolidation 50 -> 150 kPa (elastic inside the cone: the cone stays centred), then
  // undrained shear. B: the state A reached (stress, void ratio) as the initial state, the same shear.
  TestProtocol a = triaxial(50.0, 0.85, Drainage::undrained, 0.05, 50);
  Stage consolidation;
  consolidation.type = StageType::isotropic_consolidation;
  consolidation.target_p = 150.0;
  consolidation.steps = 10;
  a.stages.insert(a.stages.begin(), consolidation);
  const auto ra = simulate(controlled(), *sand, a);
  REQUIRE(ra.ok());
  const StepRecord& reached = ra.steps[ra.stages[0].last];
  TestProtocol b = triaxial(150.0, reached.void_ratio, Drainage::undrained, 0.05, 50);
  b.initial = test::conditions_at(reached);
  const auto rb = simulate(controlled(), *sand, b);
  REQUIRE(rb.ok());
  const auto d = test::compare_stages(ra, 1, rb, 0);
  INFO(d.where);
  CHECK(d.relative < 1e-6);
  CHECK(d.records >= 50);
}

TEST_CASE("sand K0 consolidation runs and keeps the radial strain zero; a drained shear follows") {
  const auto sand = make_sand(toyoura());
  TestProtocol p = triaxial(50.0, 0.8, Drainage::drained, 0.1, 40);
  Stage k0;
  k0.type = StageType::k0_consolidation;
  k0.target_axial = 200.0;
  k0.steps = 20;
  p.stages.insert(p.stages.begin(), k0);
  const auto r = simulate(controlled(), *sand, p);
  INFO(r.message);
  REQUIRE(r.ok());
  const StepRecord& end = r.steps[r.stages[0].last];
  CHECK(std::abs(end.radial_strain) < 1e-9);
  CHECK(close(end.axial_stress, 200.0, 1e-6, 0.0));
  const double k0_ratio = end.radial_stress / end.axial_stress;
  INFO("K0 " << k0_ratio);
  CHECK(k0_ratio > 0.2);
  CHECK(k0_ratio < 1.0);
}

TEST_CASE("sand bad parameters and initial conditions give exact messages") {
  auto with = [](std::map<std::string, double> changes) {
    auto given = toyoura();
    for (const auto& [k, v] : changes) given[k] = v;
    return given;
  };
  CHECK_THROWS_WITH(make_sand(with({{"shear_modulus_constant", -125.0}})),
                    "test: sand_state_bounding: shear_modulus_constant = -125 is outside (0, inf) (-)");
  CHECK_THROWS_WITH(make_sand(with({{"csl_void_ratio_ref", 0.0}})),
                    "test: sand_state_bounding: csl_void_ratio_ref = 0 is outside (0, inf) (-)");
  CHECK_THROWS_WITH(make_sand(with({{"extension_ratio", 0.0}})),
                    "test: sand_state_bounding: extension_ratio = 0 is outside (0, 1] (-)");
  CHECK_THROWS_WITH(make_sand(with({{"extension_ratio", 1.2}})),
                    "test: sand_state_bounding: extension_ratio = 1.2 is outside (0, 1] (-)");
  CHECK_THROWS_WITH(make_sand(with({{"poissons_ratio", 0.5}})),
                    "test: sand_state_bounding: poissons_ratio = 0.5 is outside (-1, 0.5) (-)");
  CHECK_THROWS_WITH(make_sand(with({{"hardening_constant", 0.0}})),
                    "test: sand_state_bounding: hardening_constant = 0 is outside (0, inf) (-)");
  CHECK_THROWS_WITH(make_sand(with({{"fabric_rate", -1.0}})),
                    "test: sand_state_bounding: fabric_rate = -1 is outside [0, inf) (-)");
  CHECK_THROWS_WITH(make_sand(with({{"yield_cone_size", 0.9}})),
                    "test: sand_state_bounding: yield_cone_size = 0.9 must be smaller than extension_ratio x "
                    "critical_state_ratio = 0.89 (the critical state must lie outside the yield cone in extension too)");
  auto missing = toyoura();
  missing.erase("csl_lambda");
  CHECK_THROWS_WITH(make_sand(missing), "test: sand_state_bounding: parameter 'csl_lambda' (-) is required and has no default");

  const auto sand = make_sand(toyoura());
  MaterialState s;
  InitialConditions c;
  c.stress = triaxial_stress(100.0, 100.0);
  CHECK_THROWS_WITH(sand->initialise(c, s),
                    "sand_state_bounding: initial.void_ratio is required (the void ratio e0 at the start of the protocol)");
  c.void_ratio = 1.05;
  CHECK_THROWS_WITH(sand->initialise(c, s),
                    "sand_state_bounding: initial.void_ratio = 1.05 is too loose for hardening_density_factor = 0.968 "
                    "(the plastic modulus needs c_h e < 1, e < 1.03306)");
  c.void_ratio = 0.9;
  c.stress = triaxial_stress(0.05, 0.05);
  CHECK_THROWS_WITH(sand->initialise(c, s),
                    "sand_state_bounding: the initial mean effective stress p' = 0.05 kPa must be at least 0.101325 kPa "
                    "(below it the model treats the sand as liquefied)");
}
