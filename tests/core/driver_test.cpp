// The material-point driver: mixed control, drainage, stages, stop criteria, failure reports.
#include <catch2/catch.hpp>

#include <atomic>
#include <cmath>
#include <cstdlib>
#include <new>

#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;

namespace {

std::unique_ptr<Model> elastic_mc(double e, double nu) {
  // Strength so large that nothing yields: linear isotropic elasticity.
  const ModelEntry& m = find_model("mohr_coulomb");
  return m.create(resolve_parameters(m.info(), {{"youngs_modulus", e}, {"poissons_ratio", nu}, {"cohesion", 1e9},
                                                {"friction_angle", 30.0}, {"tensile_strength", 1e9}},
                                     "test"),
                  "test");
}

Stage stage(StageType type, int steps = 50) {
  Stage s;
  s.type = type;
  s.steps = steps;
  return s;
}

TestProtocol start_at(double axial, double radial) {
  TestProtocol p;
  p.initial.stress = triaxial_stress(axial, radial);
  p.initial.void_ratio = 0.8;
  return p;
}

// A model that is elastic but reports no convergence once the axial strain passes a limit.
class BreaksAt final : public Model {
 public:
  explicit BreaksAt(double limit) : limit_(limit), inner_(elastic_mc(1e4, 0.3)) {}
  const ModelInfo& info() const override { return inner_->info(); }
  void initialise(const InitialConditions& c, MaterialState& s) const override { inner_->initialise(c, s); }
  IntegrationResult integrate(const MaterialState& in, const Vec6& d, MaterialState& out, Mat6& t) const override {
    const IntegrationResult r = inner_->integrate(in, d, out, t);
    out.internal[7] = in.internal[7] + d[0];
    if (out.internal[7] > limit_) return {Status::no_convergence, 0};
    return r;
  }

 private:
  double limit_;
  std::unique_ptr<Model> inner_;
};

}  // namespace

TEST_CASE("isotropic consolidation of an elastic specimen: natural eps_v = dp'/K, void ratio (1 + e0) exp(-eps_v) - 1") {
  const double e = 12000, nu = 0.2, k = e / (3 * (1 - 2 * nu));
  auto p = start_at(20, 20);
  Stage s = stage(StageType::isotropic_consolidation);
  s.target_p = 220;
  p.stages = {s};
  const auto r = simulate(DriverOptions{}, *elastic_mc(e, nu), p);
  REQUIRE(r.ok());
  const auto& end = r.steps.back();
  CHECK(end.p == Approx(220).epsilon(test::kExact));
  CHECK(end.q == Approx(0).margin(1e-8));
  CHECK(end.volumetric_strain == Approx(200 / k).epsilon(test::kExact));
  CHECK(end.axial_strain == Approx(end.radial_strain).epsilon(test::kExact));
  // V/V0 = exp(-eps_v) for natural strain, and V = (1 + e) V_s (conventions.hpp).
  CHECK(end.void_ratio == Approx(1.8 * std::exp(-end.volumetric_strain) - 1).epsilon(1e-12));
  CHECK(end.stage_volumetric_strain == Approx(engineering_strain(end.volumetric_strain)).epsilon(1e-12));
}

TEST_CASE("K0 consolidation of an elastic specimen: s_r'/s_a' increments at nu/(1 - nu), no radial strain") {
  // Elastic oedometric loading, from Hooke's law with zero lateral strain.
  const double nu = 0.3;
  auto p = start_at(10, 10);
  Stage s = stage(StageType::k0_consolidation);
  s.target_axial = 210;
  p.stages = {s};
  const auto r = simulate(DriverOptions{}, *elastic_mc(1e4, nu), p);
  REQUIRE(r.ok());
  const auto& end = r.steps.back();
  CHECK((end.radial_stress - 10) / (end.axial_stress - 10) == Approx(nu / (1 - nu)).epsilon(test::kExact));
  CHECK(end.radial_strain == Approx(0).margin(test::kStrainFloor));
  // Oedometric modulus E (1 - nu)/((1 + nu)(1 - 2 nu)).
  const double eoed = 1e4 * (1 - nu) / ((1 + nu) * (1 - 2 * nu));
  CHECK(end.axial_strain == Approx(200 / eoed).epsilon(test::kExact));
}

TEST_CASE("an elastic unload-reload loop closes: back to the start q and strain, bottom at the target q") {
  auto p = start_at(100, 100);
  Stage shear = stage(StageType::shear, 100);
  shear.axial_strain = 0.01;
  Stage loop = stage(StageType::unload_reload, 40);
  loop.target_deviator = 20;
  p.stages = {shear, loop};
  const auto r = simulate(DriverOptions{}, *elastic_mc(1e4, 0.3), p);
  REQUIRE(r.ok());
  const auto& before = r.steps[r.stages[1].first - 1];
  const auto& bottom = r.steps[r.stages[1].first + 39];
  const auto& after = r.steps.back();
  CHECK(bottom.q == Approx(20).epsilon(test::kExact));
  CHECK(after.q == Approx(before.q).epsilon(test::kExact));
  CHECK(after.axial_strain == Approx(before.axial_strain).epsilon(1e-9));
  CHECK(r.stages[1].last - r.stages[1].first + 1 == 80);
}

TEST_CASE("constant-p' shear keeps p' and equal radial stresses") {
  auto p = start_at(150, 150);
  Stage s = stage(StageType::constant_p_shear, 100);
  s.axial_strain = 0.02;
  p.stages = {s};
  const auto r = simulate(DriverOptions{}, *elastic_mc(1e4, 0.3), p);
  REQUIRE(r.ok());
  for (const auto& st : r.steps) CHECK(st.p == Approx(150).epsilon(test::kExact));
  // Elastic: q = 3 G eps_q with eps_q = 2 (eps_a - eps_r)/3 at constant p' (no volume change).
  const double g = 1e4 / (2 * 1.3);
  const auto& end = r.steps.back();
  CHECK(end.q == Approx(3 * g * 2 * (end.axial_strain - end.radial_strain) / 3).epsilon(test::kExact));
}

TEST_CASE("undrained shear with a compressible pore fluid: du = B dq/3 with B = K_f/(K' + K_f) for an elastic skeleton") {
  // Skempton (1954), "The pore-pressure coefficients A and B", with A = 1/3 for an elastic skeleton.
  const double e = 1e4, nu = 0.3, k = e / (3 * (1 - 2 * nu));
  const double kf = 2 * k;
  auto p = start_at(100, 100);
  p.pore_fluid_stiffness = kf;
  Stage s = stage(StageType::shear, 100);
  s.drainage = Drainage::undrained;
  s.axial_strain = 0.005;
  p.stages = {s};
  const auto r = simulate(DriverOptions{}, *elastic_mc(e, nu), p);
  REQUIRE(r.ok());
  const auto& end = r.steps.back();
  CHECK(end.excess_pore_pressure == Approx(kf / (k + kf) * end.q / 3).epsilon(test::kExact));
  CHECK(end.excess_pore_pressure + end.radial_stress == Approx(100).epsilon(test::kExact));  // total radial constant
  CHECK(end.volumetric_strain == Approx(end.excess_pore_pressure / kf).epsilon(test::kExact));
}

TEST_CASE("undrained unload-reload keeps the volume and the total radial stress") {
  auto p = start_at(100, 100);
  Stage shear = stage(StageType::shear, 50);
  shear.drainage = Drainage::undrained;
  shear.axial_strain = 0.004;
  Stage loop = stage(StageType::unload_reload, 20);
  loop.drainage = Drainage::undrained;
  loop.target_deviator = 5;
  p.stages = {shear, loop};
  const auto r = simulate(DriverOptions{}, *elastic_mc(1e4, 0.3), p);
  REQUIRE(r.ok());
  for (const auto& st : r.steps) {
    CHECK(st.volumetric_strain == Approx(0).margin(1e-12));
    CHECK(st.radial_stress + st.excess_pore_pressure == Approx(100).epsilon(test::kExact));
  }
  CHECK(r.steps[r.stages[1].first + 19].q == Approx(5).epsilon(test::kExact));
}

TEST_CASE("multi-stage: a shear stage stops at peak deviator stress, the next stage continues from there") {
  const ModelEntry& m = find_model("mohr_coulomb");
  const auto mc = m.create(resolve_parameters(m.info(), {{"youngs_modulus", 2e4}, {"friction_angle", 30.0}}, "t"), "t");
  auto p = start_at(50, 50);
  Stage s1 = stage(StageType::shear, 400);
  s1.axial_strain = 0.2;
  s1.stop = StopCriterion::peak_deviator;
  Stage c2 = stage(StageType::isotropic_consolidation, 20);
  c2.target_p = 100;
  Stage s2 = s1;
  p.stages = {s1, c2, s2};
  const auto r = simulate(DriverOptions{}, *mc, p);
  INFO(r.message);
  REQUIRE(r.ok());
  REQUIRE(r.stages.size() == 3);
  CHECK(r.stages[0].stopped_early);
  CHECK(r.stages[2].stopped_early);
  // Peak of a perfectly plastic drained test: q_f = 6 s3' sin phi/(3 ... ) = 2 s3' sin phi/(1 - sin phi)
  CHECK(r.stages[0].peak_q == Approx(2 * 50 * 0.5 / 0.5).epsilon(test::kExact));
  CHECK(r.stages[2].peak_q == Approx(2 * 100 * 0.5 / 0.5).epsilon(test::kExact));
  // It stops on the first step after failure, long before 20 % strain.
  CHECK(r.steps[r.stages[0].last].axial_strain < 0.01);
  CHECK(r.steps[r.stages[1].last].p == Approx(100).epsilon(test::kExact));
}

TEST_CASE("a failing model ends the run with the stage, step and strain where it gave up, with or without error control") {
  const BreaksAt model(0.0105);
  auto p = start_at(100, 100);
  Stage s = stage(StageType::shear, 100);
  s.axial_strain = engineering_strain(0.02);  // natural steps of 2e-4: the limit is inside step 53
  p.stages = {s};
  for (bool fixed : {true, false}) {
    DriverOptions o;
    o.fixed_steps = fixed;
    const auto r = simulate(o, model, p);
    INFO(r.message);
    CHECK_FALSE(r.ok());
    CHECK(r.failed_stage == 0);
    CHECK(r.failed_step == 53);
    CHECK(r.message.rfind("stage 0 (shear), step 53 of 100, axial strain 0.0105", 0) == 0);
    CHECK(r.message.find("could not be completed after 12 cuts") != std::string::npos);
    CHECK(r.steps.size() == 53);  // initial state + 52 converged steps
  }
}

TEST_CASE("the step loop allocates nothing: 100 and 2000 steps cost the same number of allocations") {
  if (!test::kCountingAllocations) {
    WARN("allocation counting is off under AddressSanitizer; the Release run checks it");
    return;
  }
  const auto mc = elastic_mc(1e4, 0.3);
  auto count = [&](int steps, Drainage d) {
    auto p = start_at(100, 100);
    Stage s = stage(StageType::shear, steps);
    s.axial_strain = 0.05;
    s.drainage = d;
    p.stages = {s};
    const long before = test::g_allocations.load();
    const auto r = simulate(DriverOptions{}, *mc, p);
    REQUIRE(r.ok());
    return test::g_allocations.load() - before;
  };
  CHECK(count(100, Drainage::drained) == count(2000, Drainage::drained));
  CHECK(count(100, Drainage::undrained) == count(2000, Drainage::undrained));
}

TEST_CASE("simulating into a reused result: the same records as a fresh run, no allocation, nothing left over") {
  const ModelEntry& m = find_model("mohr_coulomb");
  const auto mc = m.create(resolve_parameters(m.info(), {{"youngs_modulus", 2e4}, {"friction_angle", 30.0},
                                                         {"dilation_angle", 5.0}, {"cohesion", 3.0}},
                                              "t"),
                           "t");
  auto p = start_at(80, 80);
  Stage s = stage(StageType::shear, 150);
  s.axial_strain = 0.08;
  p.stages = {s};
  const SimulationResult fresh = simulate(DriverOptions{}, *mc, p);
  REQUIRE(fresh.ok());

  // A failed run first, so that the reused result holds a message, a failed step and records.
  const BreaksAt breaks(0.0105);
  SimulationResult reused;
  simulate(DriverOptions{}, breaks, p, reused);
  REQUIRE_FALSE(reused.ok());
  REQUIRE(reused.failed_step > 0);

  simulate(DriverOptions{}, *mc, p, reused, true);
  REQUIRE(reused.ok());
  CHECK(reused.message == fresh.message);
  CHECK(reused.failed_stage == -1);
  CHECK(reused.failed_step == -1);
  CHECK(reused.model_calls == fresh.model_calls);
  CHECK(reused.newton_iterations == fresh.newton_iterations);
  CHECK(reused.total_cuts == fresh.total_cuts);
  REQUIRE(reused.steps.size() == fresh.steps.size());
  REQUIRE(reused.stages.size() == fresh.stages.size());
  for (std::size_t i = 0; i < fresh.steps.size(); ++i) {
    CHECK(reused.steps[i].axial_stress == fresh.steps[i].axial_stress);
    CHECK(reused.steps[i].radial_stress == fresh.steps[i].radial_stress);
    CHECK(reused.steps[i].volumetric_strain == fresh.steps[i].volumetric_strain);
    CHECK(reused.steps[i].state == fresh.steps[i].state);
  }
  CHECK(reused.stages[0].peak_q == fresh.stages[0].peak_q);
  // The failed run's 53 records took less room than the 151 of this one, so the vectors grew once;
  // a second run into the same result allocates nothing.
  const long again = test::g_allocations.load();
  simulate(DriverOptions{}, *mc, p, reused, true);
  if (test::kCountingAllocations) CHECK(test::g_allocations.load() - again == 0);
  CHECK(reused.steps.back().q == fresh.steps.back().q);
}

TEST_CASE("protocol validation names the stage and key") {
  auto p = start_at(100, 100);
  Stage s = stage(StageType::isotropic_consolidation);
  p.stages = {s};
  CHECK_THROWS_WITH(validate_protocol(p), "stages[0]: p (target mean effective stress, kPa) must be given and positive");
  Stage u = stage(StageType::shear);
  u.axial_strain = 0.1;
  Stage c = stage(StageType::k0_consolidation);
  c.target_axial = 100;
  c.drainage = Drainage::undrained;
  p.stages = {u, c};
  CHECK_THROWS_WITH(validate_protocol(p), "stages[1]: drainage must be drained for a k0_consolidation stage");
  DriverOptions o;
  o.max_cuts = 99;
  CHECK_THROWS_WITH(o.validate(), "driver options: max_cuts = 99 must be in [0, 40]");
}

TEST_CASE("bad tolerance, max_substeps and record_at give exact messages") {
  DriverOptions o;
  o.tolerance = 0.5;
  CHECK_THROWS_WITH(o.validate(), "driver options: tolerance = 0.5 must be in [1e-10, 0.1]");
  o.tolerance = std::nan("");
  CHECK_THROWS_WITH(o.validate(), "driver options: tolerance = nan must be in [1e-10, 0.1]");
  o.tolerance = 1e-12;
  CHECK_THROWS_WITH(o.validate(), "driver options: tolerance = 1e-12 must be in [1e-10, 0.1]");
  o = DriverOptions{};
  o.max_substeps = 0;
  CHECK_THROWS_WITH(o.validate(), "driver options: max_substeps = 0 must be at least 1");

  auto p = start_at(100, 100);
  Stage s = stage(StageType::shear);
  s.axial_strain = 0.1;
  s.record_at = {0.5, 0.4, 1.0};
  p.stages = {s};
  CHECK_THROWS_WITH(validate_protocol(p),
                    "stages[0]: record_at[1] = 0.4 must be larger than record_at[0] = 0.5 (strictly increasing)");
  p.stages[0].record_at = {0.0, 1.0};
  CHECK_THROWS_WITH(validate_protocol(p), "stages[0]: record_at[0] = 0 must be in (0, 1] (a fraction of the stage's path)");
  p.stages[0].record_at = {0.5, 1.5};
  CHECK_THROWS_WITH(validate_protocol(p), "stages[0]: record_at[1] = 1.5 must be in (0, 1] (a fraction of the stage's path)");
  p.stages[0].record_at = {0.5, 0.9};
  CHECK_THROWS_WITH(validate_protocol(p), "stages[0]: record_at must end at 1 (the end of the stage), found 0.9");
  p.stages[0].record_at = {0.5, 0.5, 1.0};
  CHECK_THROWS_WITH(validate_protocol(p),
                    "stages[0]: record_at[1] = 0.5 must be larger than record_at[0] = 0.5 (strictly increasing)");
}

TEST_CASE("record_at puts the records exactly at the requested engineering stage strains, in shear and oedometer stages") {
  const ModelEntry& m = find_model("mohr_coulomb");
  const auto mc = m.create(resolve_parameters(m.info(), {{"youngs_modulus", 2e4}, {"friction_angle", 30.0}}, "t"), "t");
  const std::vector<double> wanted = {0.0013, 0.002, 0.0071, 0.03, 0.1};
  for (StageType type : {StageType::shear, StageType::oedometer}) {
    for (bool fixed : {false, true}) {
      auto p = start_at(100, 100);
      Stage consolidation = stage(StageType::isotropic_consolidation, 3);
      consolidation.target_p = 150;  // the stage strain starts after a first stage
      Stage s = stage(type);
      s.axial_strain = 0.1;
      for (double e : wanted) s.record_at.push_back(stage_fraction_at(s, e));
      s.record_at.back() = 1.0;
      p.stages = {consolidation, s};
      DriverOptions o;
      o.fixed_steps = fixed;
      const auto r = simulate(o, *mc, p);
      INFO(r.message);
      REQUIRE(r.ok());
      REQUIRE(r.stages[1].last - r.stages[1].first + 1 == 5);
      for (std::size_t k = 0; k < wanted.size(); ++k)
        CHECK(r.steps[static_cast<std::size_t>(r.stages[1].first) + k].stage_axial_strain ==
              Approx(wanted[k]).epsilon(1e-12));
    }
  }
  Stage by_stress = stage(StageType::oedometer);
  by_stress.target_axial = 200;
  CHECK(std::isnan(stage_fraction_at(by_stress, 0.01)));
}

TEST_CASE("record_at on an unload-reload loop applies to each half: the bottom at the target q, the end back at the start") {
  auto p = start_at(100, 100);
  Stage shear = stage(StageType::shear, 20);
  shear.axial_strain = 0.002;
  Stage loop = stage(StageType::unload_reload);
  loop.target_deviator = 10;
  loop.record_at = {0.25, 0.5, 1.0};
  p.stages = {shear, loop};
  const auto r = simulate(DriverOptions{}, *elastic_mc(1e4, 0.3), p);
  REQUIRE(r.ok());
  REQUIRE(r.stages[1].last - r.stages[1].first + 1 == 6);
  const double q0 = r.steps[static_cast<std::size_t>(r.stages[1].first) - 1].q;
  const std::size_t f = static_cast<std::size_t>(r.stages[1].first);
  CHECK(r.steps[f].q == Approx(q0 + 0.25 * (10 - q0)).epsilon(test::kExact));
  CHECK(r.steps[f + 2].q == Approx(10).epsilon(test::kExact));
  CHECK(r.steps[f + 3].q == Approx(10 + 0.25 * (q0 - 10)).epsilon(test::kExact));
  CHECK(r.steps[f + 5].q == Approx(q0).epsilon(test::kExact));
}

TEST_CASE("the stop criterion axial_strain reads the engineering stage strain") {
  const auto mc = elastic_mc(1e4, 0.3);
  auto p = start_at(100, 100);
  Stage s = stage(StageType::shear, 100);
  s.axial_strain = 0.2;
  s.stop = StopCriterion::axial_strain;
  s.stop_value = 0.05;
  p.stages = {s};
  const auto r = simulate(DriverOptions{}, *mc, p);
  REQUIRE(r.ok());
  // Records every 0.2 / 100 in natural strain: the first with 1 - exp(-eps) >= 0.05 is eps >= 0.0513.
  const double natural_step = natural_strain(0.2) / 100;
  const int expected = static_cast<int>(std::ceil(natural_strain(0.05) / natural_step - 1e-9));
  CHECK(r.stages[0].last == expected);
  CHECK(r.steps.back().stage_axial_strain >= 0.05);
  CHECK(r.steps[r.steps.size() - 2].stage_axial_strain < 0.05);
}

TEST_CASE("the error control ends the run with an exact message when it runs out of substeps") {
  const ModelEntry& m = find_model("modified_cam_clay");
  const auto mcc = m.create(resolve_parameters(m.info(), {{"lambda", 0.16}, {"kappa", 0.03}, {"critical_state_ratio", 1.0}}, "t"), "t");
  auto p = start_at(200, 200);
  p.initial.void_ratio = 0.9;
  Stage s = stage(StageType::shear, 10);
  s.axial_strain = 0.2;
  p.stages = {s};
  DriverOptions o;
  o.max_substeps = 20;
  const auto r = simulate(o, *mcc, p);
  REQUIRE_FALSE(r.ok());
  INFO(r.message);
  CHECK(r.substeps + r.rejected_substeps == 20);
  CHECK(r.message ==
        "stage 0 (shear), step 1 of 10, axial strain 0.0010931: the error control used all 20 substeps of "
        "max_substeps at tolerance 0.0001");
}
