// Mohr-Coulomb's derivative version (with_derivatives): values equal to the double model's, and
// derivatives equal to central differences of the double integrate on elastic, plane, edge, apex and
// tension cut-off states (sensitivity_checks.hpp).
#include <catch2/catch.hpp>

#include "protocols.hpp"
#include "sensitivity_checks.hpp"
#include "triaxcal/error.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;
using test::vec;

namespace {

// E, nu, c, phi, psi, tensile strength (above the apex c cot phi = 17.3 kPa: capped there).
test::DerivativeCase mc_case(const Vec6& stress, const Vec6& de, ParameterValues p = {10000.0, 0.25, 10.0, 30.0, 10.0, 1e6}) {
  test::DerivativeCase c;
  c.model = "mohr_coulomb";
  c.parameters = std::move(p);
  c.in.stress = stress;
  c.in.internal[0] = 0.01;  // accumulated plastic multiplier, read and added to
  c.de = de;
  c.internal_read = {0};
  c.internal_out = {0, 1};
  return c;
}

void check(const char* what, const test::DerivativeCase& c, int active) { test::check_case(what, c, active); }

}  // namespace

TEST_CASE("Mohr-Coulomb derivative version: elastic increment") {
  check("mohr_coulomb elastic", mc_case(vec(120, 100, 90), vec(1e-4, -2e-5, 1e-5, 3e-5, -1e-5, 2e-5)), 0);
}

TEST_CASE("Mohr-Coulomb derivative version: main plane with distinct principal stresses") {
  // Trial (370, 160, 80) kPa: beyond the main plane, returns inside the sextant.
  check("mohr_coulomb main plane", mc_case(vec(150, 100, 60), vec(2e-2, 0, -5e-3)), 1);
}

TEST_CASE("Mohr-Coulomb derivative version: triaxial compression edge (equal radial pair)") {
  // s_B = s_C exactly: the radial pair's eigenvectors are not unique; shear inputs perturb it.
  check("mohr_coulomb compression edge", mc_case(triaxial_stress(100, 50), vec(2e-2, -4e-3, -4e-3)), 2);
}

TEST_CASE("Mohr-Coulomb derivative version: triaxial extension edge") {
  check("mohr_coulomb extension edge", mc_case(triaxial_stress(50, 100), vec(-5e-3, 1e-3, 1e-3)), 2);
}

TEST_CASE("Mohr-Coulomb derivative version: apex under isotropic tension") {
  test::DerivativeCase c = mc_case(triaxial_stress(5, 5), vec(-1e-2, -1.1e-2, -0.9e-2));
  c.tangent_scale = 1e4;  // the tangent vanishes at the apex: compare with E
  check("mohr_coulomb apex", c, 3);
}

TEST_CASE("Mohr-Coulomb derivative version: general frame with shear components") {
  check("mohr_coulomb general frame", mc_case(vec(120, 80, 60, 15, -5, 10), vec(2e-2, -2e-3, -5e-3, 4e-3, 1e-3, -2e-3)),
        1);
}

TEST_CASE("Mohr-Coulomb derivative version: tension cut-off plane") {
  check("mohr_coulomb tension cut-off", mc_case(vec(60, 20, 0), vec(0, 0, -4e-3), {10000.0, 0.25, 40.0, 30.0, 5.0, 5.0}),
        1);
}

TEST_CASE("Mohr-Coulomb derivative version: initialise takes the stress of the conditions, without derivatives") {
  const auto m = test::create_model("mohr_coulomb", {10000.0, 0.25, 10.0, 30.0, 10.0, 0.0});
  std::vector<double> seeds(6 * kDualLanes, 1.0);
  const auto dual = m->with_derivatives(seeds);
  InitialConditions ic;
  ic.stress = triaxial_stress(120, 80);
  DualState s;
  dual->initialise(ic, s);
  MaterialState v;
  m->initialise(ic, v);
  for (int i = 0; i < 6; ++i) {
    CHECK(s.stress[i].a == v.stress[i]);
    for (int k = 0; k < kDualLanes; ++k) CHECK(s.stress[i].v[k] == 0.0);
  }
}

TEST_CASE("Mohr-Coulomb derivative version: a wrong number of seeds is an error naming both counts") {
  const auto m = test::create_model("mohr_coulomb", {10000.0, 0.25, 10.0, 30.0, 10.0, 0.0});
  const std::vector<double> seeds(23, 0.0);
  CHECK_THROWS_MATCHES(m->with_derivatives(seeds), InputError,
                       Catch::Message("mohr_coulomb: with_derivatives: expected 24 seeds (6 parameters x 4 lanes), found 23"));
}

TEST_CASE("Mohr-Coulomb derivative version: integrate allocates nothing") {
  const auto m = test::create_model("mohr_coulomb", {10000.0, 0.25, 10.0, 30.0, 10.0, 1e6});
  test::check_dual_integrate_allocates_nothing(*m, {mc_case(vec(120, 100, 90), vec(1e-4, 0, 0)), mc_case(vec(150, 100, 60), vec(2e-2, 0, -5e-3)),
                                                    mc_case(triaxial_stress(100, 50), vec(2e-2, -4e-3, -4e-3)),
                                                    mc_case(vec(120, 80, 60, 15, -5, 10), vec(2e-2, -2e-3, -5e-3, 4e-3, 1e-3, -2e-3))},
                                               test::g_allocations, test::kCountingAllocations);
}
