// The undrained Tresca model's derivative version (with_derivatives): values equal to the double
// model's, and derivatives equal to central differences of the double integrate, elastic and at
// failure on the main plane, the triaxial edges and a general frame (sensitivity_checks.hpp).
#include <catch2/catch.hpp>

#include "protocols.hpp"
#include "sensitivity_checks.hpp"
#include "triaxcal/error.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;
using test::vec;

namespace {

// Invented values of a soft clay: c_u 40 kPa, E_u 30000 kPa, nu_u 0.495.
test::DerivativeCase tresca_case(const Vec6& stress, const Vec6& de) {
  test::DerivativeCase c;
  c.model = "undrained_tresca";
  c.parameters = {40.0, 30000.0, 0.495};
  c.in.stress = stress;
  c.in.internal[0] = 0.002;  // accumulated plastic multiplier, read and added to
  c.de = de;
  c.internal_read = {0};
  c.internal_out = {0, 1};
  return c;
}

void check(const char* what, const test::DerivativeCase& c, int active) { test::check_case(what, c, active); }

}  // namespace

TEST_CASE("undrained Tresca derivative version: elastic increment") {
  check("undrained_tresca elastic", tresca_case(vec(110, 100, 95), vec(1e-4, -5e-5, -4e-5, 2e-5, -1e-5, 3e-5)), 0);
}

TEST_CASE("undrained Tresca derivative version: at failure on the main plane, distinct principal stresses") {
  check("undrained_tresca main plane", tresca_case(vec(150, 110, 80), vec(2e-3, 0, -1.5e-3)), 1);
}

TEST_CASE("undrained Tresca derivative version: at failure on the triaxial compression edge (equal radial pair)") {
  check("undrained_tresca compression edge", tresca_case(triaxial_stress(160, 100), vec(2e-3, -1e-3, -1e-3)), 2);
}

TEST_CASE("undrained Tresca derivative version: at failure on the triaxial extension edge") {
  check("undrained_tresca extension edge", tresca_case(triaxial_stress(60, 100), vec(-2e-3, 1e-3, 1e-3)), 2);
}

TEST_CASE("undrained Tresca derivative version: general six-component stress and increment") {
  check("undrained_tresca general frame",
        tresca_case(vec(140, 100, 90, 20, -10, 15), vec(1.5e-3, -4e-4, -6e-4, 1e-3, 5e-4, -8e-4)), 1);
}

TEST_CASE("undrained Tresca derivative version: initialise takes the stress of the conditions, without derivatives") {
  const auto m = test::create_model("undrained_tresca", {40.0, 30000.0, 0.495});
  const std::vector<double> seeds(3 * kDualLanes, 1.0);
  const auto dual = m->with_derivatives(seeds);
  InitialConditions ic;
  ic.stress = triaxial_stress(120, 80);
  DualState s;
  dual->initialise(ic, s);
  for (int i = 0; i < 6; ++i) {
    CHECK(s.stress[i].a == ic.stress[i]);
    for (int k = 0; k < kDualLanes; ++k) CHECK(s.stress[i].v[k] == 0.0);
  }
}

TEST_CASE("undrained Tresca derivative version: a wrong number of seeds is an error naming both counts") {
  const auto m = test::create_model("undrained_tresca", {40.0, 30000.0, 0.495});
  const std::vector<double> seeds(16, 0.0);
  CHECK_THROWS_MATCHES(m->with_derivatives(seeds), InputError,
                       Catch::Message("undrained_tresca: with_derivatives: expected 12 seeds (3 parameters x 4 lanes), found 16"));
}

TEST_CASE("undrained Tresca derivative version: integrate allocates nothing") {
  const auto m = test::create_model("undrained_tresca", {40.0, 30000.0, 0.495});
  test::check_dual_integrate_allocates_nothing(*m, {tresca_case(vec(150, 110, 80), vec(2e-3, 0, -1.5e-3)),
                                                    tresca_case(triaxial_stress(160, 100), vec(2e-3, -1e-3, -1e-3)),
                                                    tresca_case(vec(140, 100, 90, 20, -10, 15), vec(1.5e-3, -4e-4, -6e-4, 1e-3, 5e-4, -8e-4))},
                                               test::g_allocations, test::kCountingAllocations);
}
