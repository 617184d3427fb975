// The driver on dual numbers (exact sensitivities, issue 14): a simulation with a DualModel takes
// the same substeps and decisions as the double run and carries the derivatives of every record.
// Checked with a small model written for the purpose (tests/support/soft_model.hpp: hypoelastic, pressure-dependent and
// strain-softening shear modulus: nonlinear in its state and parameters, so that derivatives travel
// through states, pore pressure and the driver's Newton on stress-controlled rows), against
//  - a closed form: linear elastic drained shear from isotropic stress, q = E eps_a (natural strain,
//    radial stress constant; Hooke's law, common practice, no source), dq/dG = 2 (1 + nu) eps_a;
//  - central differences of double runs replaying the same substep plan (the plan's smooth map from
//    parameters to records), on drained, compressible undrained, consolidation and unload-reload
//    stages, fixed steps and error control.
// The model and its constants are invented for the test, not a soil.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/sensitivity.hpp"
#include "soft_model.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

// One lane a parameter (four parameters, four lanes).
std::vector<double> identity_seeds() {
  std::vector<double> s(kParameters * kDualLanes, 0.0);
  for (int i = 0; i < kParameters; ++i) s[static_cast<std::size_t>(i * kDualLanes + i)] = 1.0;
  return s;
}

const std::vector<double> kValues = {8000.0, 0.25, 0.5, 3.0};

// The compared columns of a record.
template <class R>
std::vector<double> columns(const R& r) {
  return {value_of(r.q), value_of(r.p), value_of(r.volumetric_strain), value_of(r.excess_pore_pressure),
          value_of(r.axial_strain), value_of(r.void_ratio)};
}
std::vector<double> lane(const DualStepRecord& r, int k) {
  return {r.q.v[k], r.p.v[k], r.volumetric_strain.v[k], r.excess_pore_pressure.v[k], r.axial_strain.v[k],
          r.void_ratio.v[k]};
}

// Dual run against its double twin (same values) and against central differences of double runs
// replaying the double run's plan. Returns the largest relative difference of a derivative.
double check(const TestProtocol& protocol, const DriverOptions& options) {
  const Soft model(kValues);
  SimulationResult base;
  SubstepPlan plan;
  simulate(options, model, protocol, base, false, &plan, nullptr);
  REQUIRE(base.ok());
  const SubstepPlan* replay = options.fixed_steps ? nullptr : &plan;
  const std::vector<double> seeds = identity_seeds();
  const std::unique_ptr<DualModel> dual = model.with_derivatives(seeds);
  REQUIRE(dual != nullptr);
  DualSimulationResult d;
  simulate(options, *dual, protocol, d, false, replay);
  REQUIRE(d.ok());
  REQUIRE(d.steps.size() == base.steps.size());
  // Values: the double run's (the derivative correction of the driver's Newton leaves them alone).
  for (std::size_t r = 0; r < base.steps.size(); ++r) {
    const std::vector<double> a = columns(base.steps[r]), b = columns(d.steps[r]);
    for (std::size_t c = 0; c < a.size(); ++c) {
      if (std::isnan(a[c])) continue;
      REQUIRE(b[c] == Approx(a[c]).epsilon(1e-12).margin(1e-12));
    }
  }
  double worst = 0.0;
  for (int k = 0; k < kParameters; ++k) {
    std::vector<double> up = kValues, down = kValues;
    const double h = 1e-5 * std::abs(kValues[static_cast<std::size_t>(k)]);
    up[static_cast<std::size_t>(k)] += h;
    down[static_cast<std::size_t>(k)] -= h;
    SimulationResult ru, rd;
    simulate(options, Soft(up), protocol, ru, false, nullptr, replay);
    simulate(options, Soft(down), protocol, rd, false, nullptr, replay);
    REQUIRE(ru.ok());
    REQUIRE(rd.ok());
    REQUIRE(ru.steps.size() == base.steps.size());
    // Scale of each column's derivative: its largest central difference over the records, at least
    // 1e-4 of the column's largest value over the parameter's: where a column barely depends on a
    // parameter, the central differences are rounding noise (about 1e-16 |value| / h = 1e-11
    // |value| / |parameter|).
    std::vector<double> scale(6, 1e-300);
    for (const StepRecord& s : base.steps) {
      const std::vector<double> a = columns(s);
      for (std::size_t c = 0; c < a.size(); ++c)
        if (!std::isnan(a[c])) scale[c] = std::max(scale[c], 1e-4 * std::abs(a[c]) / kValues[static_cast<std::size_t>(k)]);
    }
    std::vector<std::vector<double>> fd(base.steps.size());
    for (std::size_t r = 0; r < base.steps.size(); ++r) {
      const std::vector<double> a = columns(ru.steps[r]), b = columns(rd.steps[r]);
      for (std::size_t c = 0; c < a.size(); ++c) {
        fd[r].push_back(std::isnan(a[c]) ? 0.0 : (a[c] - b[c]) / (2.0 * h));
        scale[c] = std::max(scale[c], std::abs(fd[r][c]));
      }
    }
    for (std::size_t r = 0; r < base.steps.size(); ++r) {
      const std::vector<double> exact = lane(d.steps[r], k);
      for (std::size_t c = 0; c < exact.size(); ++c) {
        if (std::isnan(exact[c])) continue;
        const double rel = std::abs(exact[c] - fd[r][c]) / scale[c];
        INFO("parameter " << k << " record " << r << " column " << c << ": exact " << exact[c] << ", central "
                          << fd[r][c]);
        CHECK(rel < 1e-6);
        worst = std::max(worst, rel);
      }
    }
  }
  return worst;
}

TestProtocol drained_shear(int steps) {
  TestProtocol p;
  p.initial.stress = triaxial_stress(200.0, 200.0);
  p.initial.void_ratio = 0.8;
  Stage s;
  s.type = StageType::shear;
  s.drainage = Drainage::drained;
  s.axial_strain = 0.05;
  s.steps = steps;
  p.stages.push_back(s);
  return p;
}

}  // namespace

TEST_CASE("dual driver: linear elastic drained shear has dq/dG = 2 (1 + nu) eps_a (closed form)") {
  // Linear: pressure exponent and softening zero, so q = E eps_a with E = 2 G (1 + nu).
  const std::vector<double> v = {8000.0, 0.3, 0.0, 0.0};
  const Soft model(v);
  const std::unique_ptr<DualModel> dual = model.with_derivatives(identity_seeds());
  DualSimulationResult d;
  DriverOptions o;
  simulate(o, *dual, drained_shear(20), d, false, nullptr);
  REQUIRE(d.ok());
  for (const DualStepRecord& r : d.steps) {
    const double eps = r.axial_strain.a;
    CHECK(r.q.a == Approx(2.0 * v[kG0] * (1.0 + v[kNu]) * eps).epsilon(1e-10).margin(1e-9));
    CHECK(r.q.v[kG0] == Approx(2.0 * (1.0 + v[kNu]) * eps).epsilon(1e-10).margin(1e-12));
    CHECK(r.q.v[kNu] == Approx(2.0 * v[kG0] * eps).epsilon(1e-10).margin(1e-9));
    // eps_v = (1 - 2 nu) eps_a: d eps_v / d nu = -2 eps_a, nothing from G.
    CHECK(r.volumetric_strain.v[kNu] == Approx(-2.0 * eps).epsilon(1e-9).margin(1e-14));
    CHECK(std::abs(r.volumetric_strain.v[kG0]) < 1e-16);
  }
}

TEST_CASE("dual driver: drained shear (Newton on the radial rows), error control on a replayed plan") {
  DriverOptions o;
  const double worst = check(drained_shear(40), o);
  CHECK(worst < 1e-6);
}

TEST_CASE("dual driver: drained shear with fixed steps") {
  DriverOptions o;
  o.fixed_steps = true;
  CHECK(check(drained_shear(25), o) < 1e-6);
}

TEST_CASE("dual driver: consolidation, compressible undrained shear and an unload-reload loop") {
  TestProtocol p;
  p.initial.stress = triaxial_stress(50.0, 50.0);
  p.initial.void_ratio = 0.7;
  p.back_pressure = 100.0;
  p.pore_fluid_stiffness = 2e5;  // compressible: the pore pressure row is solved with the strains
  Stage iso;
  iso.type = StageType::isotropic_consolidation;
  iso.target_p = 150.0;
  iso.steps = 10;
  Stage k0;
  k0.type = StageType::k0_consolidation;  // radial stress an outcome: the next stage's start carries derivatives
  k0.target_axial = 250.0;
  k0.steps = 10;
  Stage loop;
  loop.type = StageType::unload_reload;
  loop.drainage = Drainage::drained;
  loop.target_deviator = 20.0;
  loop.steps = 8;
  Stage cu;
  cu.type = StageType::shear;
  cu.drainage = Drainage::undrained;
  cu.axial_strain = 0.03;
  cu.steps = 30;
  p.stages = {iso, k0, loop, cu};
  DriverOptions o;
  CHECK(check(p, o) < 1e-6);
  o.fixed_steps = true;
  CHECK(check(p, o) < 1e-6);
}

TEST_CASE("dual driver: a plan that does not fit fails the run as the double replay does") {
  const Soft model(kValues);
  SubstepPlan wrong;
  wrong.ends = {0.5, -1.0};
  const std::unique_ptr<DualModel> dual = model.with_derivatives(identity_seeds());
  DualSimulationResult d;
  simulate(DriverOptions{}, *dual, drained_shear(4), d, false, &wrong);
  CHECK_FALSE(d.ok());
  CHECK(d.message.find("replayed substep plan") != std::string::npos);
}
