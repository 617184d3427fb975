// The sand model's derivative version (with_derivatives): values equal to the double model's, and
// derivatives equal to central differences of the double integrate (sensitivity_checks.hpp) on
// elastic, crossing, loose (contracting), dense near-peak (dilating), phase-transformation and
// reversal states, for all fifteen parameters, the stress and all sixteen internal variables.
//
// Parameter set: Toyoura sand as Dafalias & Manzari (2004), J. Eng. Mech. 130(6), give it in their
// table of constants, values FROM MEMORY (as tests/models/sand_state_bounding_test.cpp).
#include <catch2/catch.hpp>

#include <cmath>

#include "protocols.hpp"
#include "sand_state_bounding/sand_state_bounding.hpp"
#include "sensitivity_checks.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;
using test::vec;

namespace {

using Sand = SandStateBounding;

// M, c, e_0, lambda_c, xi, G0, nu, m, h0, c_h, n_b, A0, n_d, z_max, c_z (ModelInfo order).
const ParameterValues kToyoura = {1.25, 0.712, 0.934, 0.019, 0.7, 125.0, 0.05, 0.01,
                                  7.05, 0.968, 1.1,   0.704, 3.5, 4.0,   600.0};

std::unique_ptr<Model> sand() { return test::create_model("sand_state_bounding", kToyoura); }

SimulationResult run(double e0, Drainage drainage, double axial_strain, int records) {
  TestProtocol p = test::isotropic_shear(100.0, drainage, axial_strain, records);
  p.initial.void_ratio = e0;
  const auto m = sand();
  const SimulationResult r = simulate(DriverOptions{}, *m, p);
  REQUIRE(r.ok());
  return r;
}

MaterialState state_of(const StepRecord& r) {
  MaterialState s;
  s.stress = triaxial_stress(r.axial_stress, r.radial_stress);
  s.internal = r.state;
  return s;
}

// A state from the driver lies on the cone (f = 0 to round-off), where the discrete map has a kink:
// a stress perturbed inwards is integrated elastic up to the crossing and then plastic, one perturbed
// outwards plastic from the start, so central differences straddle two branches. The derivative
// version differentiates the branch its values take; to compare it with central differences the
// state is moved off the kink first: the back-stress ratio moved radially so that the stress lies
// just outside the cone, f/p' = ||r - alpha|| - sqrt(2/3) m = 1e-5 (the perturbations change f/p' by
// 1e-6 at most), as the driver's extrapolation leaves states off the cone by the order of its tolerance.
MaterialState outside_cone(MaterialState s) {
  const double p = (s.stress[0] + s.stress[1] + s.stress[2]) / 3.0;
  const double a11 = s.internal[1], a22 = s.internal[2];
  const double alpha[6] = {a11, a22, -a11 - a22, s.internal[3], s.internal[4], s.internal[5]};
  double r[6], d[6], norm2 = 0.0;
  for (int i = 0; i < 6; ++i) {
    r[i] = (s.stress[i] - (i < 3 ? p : 0.0)) / p;
    d[i] = r[i] - alpha[i];
    norm2 += (i < 3 ? 1.0 : 2.0) * d[i] * d[i];
  }
  const double radius = std::sqrt(2.0 / 3.0) * kToyoura[Sand::yield_cone_size];
  const double norm = std::sqrt(norm2);
  const double target = radius + 1e-5;
  double moved[6];
  for (int i = 0; i < 6; ++i) moved[i] = r[i] - target * d[i] / norm;
  s.internal[1] = moved[0];
  s.internal[2] = moved[1];
  s.internal[3] = moved[3];
  s.internal[4] = moved[4];
  s.internal[5] = moved[5];
  return s;
}

// A sand that never dilated has no fabric, z = 0, where <z:n> has its kink: a small fabric of a
// past dilation, z:n > 0 in compression, moves the state off it.
MaterialState with_fabric(MaterialState s) {
  s.internal[Sand::fabric] = 0.02;
  s.internal[Sand::fabric + 1] = -0.01;
  s.internal[Sand::fabric + 2] = 0.002;
  return s;
}

test::DerivativeCase sand_case(const MaterialState& in, const Vec6& de) {
  test::DerivativeCase c;
  c.model = "sand_state_bounding";
  c.parameters = kToyoura;
  c.in = in;
  c.de = de;
  for (int j = 0; j < 16; ++j) {
    c.internal_read.push_back(j);
    c.internal_out.push_back(j);
  }
  return c;
}

// Whether the increment is plastic (integrate reports one local step).
bool plastic(const test::DerivativeCase& c) {
  const auto m = sand();
  MaterialState out;
  Mat6 t;
  const IntegrationResult r = m->integrate(c.in, c.de, out, t);
  REQUIRE(r.status == Status::ok);
  return r.iterations == 1;
}

void check(const char* what, const test::DerivativeCase& c) {
  const double values = test::value_difference(c);
  CHECK(values < 1e-12);
  const test::DerivativeErrors e = test::derivative_errors(c);
  CHECK(e.worst() < 1e-6);
  test::print_errors(what, e, values);
}

MaterialState centred(double e0) {
  InitialConditions ic;
  ic.stress = triaxial_stress(100.0, 100.0);
  ic.void_ratio = e0;
  MaterialState s;
  sand()->initialise(ic, s);
  return s;
}

}  // namespace

TEST_CASE("sand derivative version: elastic, inside the cone") {
  const auto c = sand_case(centred(0.83), vec(2e-7, -1e-7, -0.5e-7, 1e-7, 0.0, -1e-7));
  CHECK_FALSE(plastic(c));
  check("sand elastic", c);
}

TEST_CASE("sand derivative version: crossing the cone from its centre") {
  // The last load reversal away from the centre ((alpha - alpha_in):n = 0 at the centre is the floor
  // of h = b0 / (alpha - alpha_in):n, a kink).
  MaterialState in = with_fabric(centred(0.83));
  in.internal[Sand::reversal_back_stress_ratio] -= 0.02;
  in.internal[Sand::reversal_back_stress_ratio + 1] += 0.01;
  const auto c = sand_case(in, vec(2e-4, -1e-4, -1.2e-4, 3e-5, -2e-5, 1e-5));
  CHECK(plastic(c));
  check("sand crossing", c);
}

TEST_CASE("sand derivative version: loose, contracting (drained e 1.0 at 2 % axial strain)") {
  const auto r = run(1.0, Drainage::drained, 0.02, 10);
  const auto c = sand_case(with_fabric(outside_cone(state_of(r.steps.back()))), vec(2e-4, -0.5e-4, -0.6e-4, 2e-5, 1e-5, -1e-5));
  CHECK(plastic(c));
  check("sand loose contracting", c);
}

TEST_CASE("sand derivative version: dense, dilating near the peak (drained e 0.83)") {
  const auto r = run(0.83, Drainage::drained, 0.1, 100);
  std::size_t peak = 0;
  for (std::size_t i = 0; i < r.steps.size(); ++i)
    if (r.steps[i].q > r.steps[peak].q) peak = i;
  REQUIRE(peak > 2);
  const auto c = sand_case(outside_cone(state_of(r.steps[peak - 2])), vec(2e-4, -0.5e-4, -0.6e-4, 2e-5, 1e-5, -1e-5));
  CHECK(plastic(c));
  check("sand dense near peak", c);
}

TEST_CASE("sand derivative version: through phase transformation (undrained e 0.735, at the smallest p')") {
  const auto r = run(0.735, Drainage::undrained, 0.03, 300);
  std::size_t k = 0;
  for (std::size_t i = 0; i < r.steps.size(); ++i)
    if (r.steps[i].p < r.steps[k].p) k = i;
  REQUIRE(k > 0);
  const auto c = sand_case(outside_cone(state_of(r.steps[k])), vec(2e-4, -1e-4, -1e-4, 1e-5, 0.0, 1e-5));
  CHECK(plastic(c));
  check("sand phase transformation", c);
}

TEST_CASE("sand derivative version: load reversal, a step back across the cone") {
  const auto r = run(0.93, Drainage::undrained, 0.005, 5);
  const auto c = sand_case(outside_cone(state_of(r.steps.back())), vec(-2e-4, 1e-4, 1e-4, 1e-5, 0.0, 0.0));
  check("sand reversal", c);
}

TEST_CASE("sand derivative version: initialise carries no parameter derivatives and the double model's values") {
  const auto m = sand();
  std::vector<double> seeds(Sand::kParameters * kDualLanes, 1.0);
  const auto dual = m->with_derivatives(seeds);
  InitialConditions ic;
  ic.stress = triaxial_stress(130.0, 90.0);
  ic.void_ratio = 0.8;
  DualState s;
  dual->initialise(ic, s);
  MaterialState v;
  m->initialise(ic, v);
  const MaterialState sv = value_of(s);
  CHECK(sv.stress == v.stress);
  CHECK(sv.internal == v.internal);
  for (int i = 0; i < 6; ++i)
    for (int k = 0; k < kDualLanes; ++k) CHECK(s.stress[i].v[k] == 0.0);
  for (const Dual& x : s.internal)
    for (int k = 0; k < kDualLanes; ++k) CHECK(x.v[k] == 0.0);
}

TEST_CASE("sand derivative version: a wrong number of seeds is an error naming both counts") {
  const auto m = sand();
  const std::vector<double> seeds(4, 0.0);
  CHECK_THROWS_MATCHES(m->with_derivatives(seeds), InputError,
                       Catch::Message("sand_state_bounding: with_derivatives: expected 60 seeds (15 parameters x 4 lanes), found 4"));
}

TEST_CASE("sand derivative version: integrate allocates nothing") {
  const auto m = sand();
  test::check_dual_integrate_allocates_nothing(*m, {sand_case(centred(0.83), vec(2e-4, -1e-4, -1.2e-4, 3e-5, -2e-5, 1e-5)),
                                                    sand_case(state_of(run(0.93, Drainage::undrained, 0.005, 5).steps.back()), vec(2e-4, -1e-4, -1e-4))},
                                               test::g_allocations, test::kCountingAllocations);
}
