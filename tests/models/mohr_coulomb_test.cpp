// Mohr-Coulomb: tangent, closed forms and bad parameters.
#include <catch2/catch.hpp>

#include <cmath>
#include <map>

#include "model_checks.hpp"
#include "path_independence.hpp"
#include "protocols.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;
using triaxcal::test::close;

namespace {

std::unique_ptr<Model> make_mc(std::map<std::string, double> given) {
  const ModelEntry& e = find_model("mohr_coulomb");
  return e.create(resolve_parameters(e.info(), given, "test"), "test");
}

std::unique_ptr<Model> default_mc(double c = 10.0, double phi = 30.0, double psi = 10.0, double t = 0.0) {
  return make_mc({{"youngs_modulus", 10000.0}, {"poissons_ratio", 0.25}, {"cohesion", c}, {"friction_angle", phi},
                  {"dilation_angle", psi}, {"tensile_strength", t}});
}

MaterialState state_of(const Vec6& stress) {
  MaterialState s;
  s.stress = stress;
  return s;
}

using test::vec;

int active(const Model& m, const MaterialState& in, const Vec6& de, MaterialState& out) {
  Mat6 t;
  REQUIRE(m.integrate(in, de, out, t).status == Status::ok);
  return static_cast<int>(out.internal[1]);
}

TestProtocol triaxial(double s3, Drainage drainage, double axial_strain, int steps) {
  return test::isotropic_shear(s3, drainage, axial_strain, steps);
}

}  // namespace

TEST_CASE("Mohr-Coulomb tangent equals central differences on elastic, plane, edge and apex states") {
  const auto mc = default_mc(10.0, 30.0, 10.0, 1e6);
  MaterialState out;
  SECTION("elastic") {
    const auto in = state_of(triaxial_stress(100, 100));
    const Vec6 de = vec(1e-5, 0, 0);
    CHECK(active(*mc, in, de, out) == 0);
    CHECK(test::tangent_error(*mc, in, de) < test::kTangent);
  }
  SECTION("main plane, distinct principal stresses") {
    // Trial (370, 160, 80) kPa: beyond the main plane, returns inside the sextant.
    const auto in = state_of(vec(150, 100, 60));
    const Vec6 de = vec(2e-2, 0, -5e-3);
    CHECK(active(*mc, in, de, out) == 1);
    CHECK(test::tangent_error(*mc, in, de) < test::kTangent);
  }
  SECTION("triaxial compression edge") {
    const auto in = state_of(triaxial_stress(100, 50));
    const Vec6 de = vec(2e-2, -4e-3, -4e-3);
    CHECK(active(*mc, in, de, out) == 2);
    CHECK(out.stress[1] == Approx(out.stress[2]).epsilon(1e-12));
    CHECK(test::tangent_error(*mc, in, de) < test::kTangent);
  }
  SECTION("triaxial extension edge") {
    const auto in = state_of(triaxial_stress(50, 100));
    const Vec6 de = vec(-5e-3, 1e-3, 1e-3);
    CHECK(active(*mc, in, de, out) == 2);
    CHECK(test::tangent_error(*mc, in, de) < test::kTangent);
  }
  SECTION("apex under isotropic tension") {
    const auto in = state_of(triaxial_stress(5, 5));
    const Vec6 de = vec(-1e-2, -1.1e-2, -0.9e-2);
    CHECK(active(*mc, in, de, out) == 3);
    const double apex = -10.0 / std::tan(degrees_to_radians(30.0));  // c' cot(phi'), tension negative
    for (int i = 0; i < 3; ++i) CHECK(out.stress[i] == Approx(apex).epsilon(1e-9));
    CHECK(test::tangent_error(*mc, in, de, 1e-7, 1e4) < test::kTangent);  // the tangent vanishes at the apex
  }
  SECTION("general frame with shear components (eigen-decomposition path)") {
    const auto in = state_of(vec(120, 80, 60, 15, -5, 10));
    const Vec6 de = vec(2e-2, -2e-3, -5e-3, 4e-3, 1e-3, -2e-3);
    CHECK(active(*mc, in, de, out) >= 1);
    CHECK(test::tangent_error(*mc, in, de) < test::kTangent);
  }
  SECTION("tension cut-off plane") {
    const auto cut = default_mc(40.0, 30.0, 0.0, 5.0);
    const auto in = state_of(vec(60, 20, 0));
    const Vec6 de = vec(0, 0, -4e-3);
    CHECK(active(*cut, in, de, out) >= 1);
    CHECK(out.stress[2] == Approx(-5.0).epsilon(1e-9));
    CHECK(test::tangent_error(*cut, in, de) < test::kTangent);
  }
}

TEST_CASE("Mohr-Coulomb returned stress lies on the yield surface and keeps the principal order") {
  const auto mc = default_mc(10.0, 30.0, 10.0, 1e6);
  const double k = (1 + std::sin(degrees_to_radians(30.0))) / (1 - std::sin(degrees_to_radians(30.0)));
  MaterialState out;
  Mat6 t;
  REQUIRE(mc->integrate(state_of(vec(150, 100, 60)), vec(2e-2, 0, -5e-3), out, t).status == Status::ok);
  REQUIRE(out.internal[1] == 1.0);
  // s1 - K s3 = 2 c sqrt(K) (Mohr-Coulomb in principal stresses, any soil mechanics text)
  CHECK(out.stress[0] - k * out.stress[2] == Approx(2 * 10.0 * std::sqrt(k)).epsilon(1e-10));
  CHECK(out.stress[0] >= out.stress[1]);
  CHECK(out.stress[1] >= out.stress[2]);
}

TEST_CASE("drained compression at constant s3': slope E, q_f of Mohr-Coulomb, dilatancy -2 sin psi/(1 - sin psi)") {
  const double e = 25000, c = 5, phi = 32, psi = 8, s3 = 150;
  const auto mc = make_mc({{"youngs_modulus", e}, {"poissons_ratio", 0.3}, {"cohesion", c}, {"friction_angle", phi},
                           {"dilation_angle", psi}});
  const auto r = simulate(DriverOptions{}, *mc, triaxial(s3, Drainage::drained, 0.1, 1000));
  REQUIRE(r.ok());
  const double sp = std::sin(degrees_to_radians(phi)), cp = std::cos(degrees_to_radians(phi));
  const double spsi = std::sin(degrees_to_radians(psi));
  // q_f = (2 s3' sin phi + 2 c cos phi)/(1 - sin phi) (Mohr-Coulomb, any soil mechanics text)
  const double qf = (2 * s3 * sp + 2 * c * cp) / (1 - sp);
  // Elastic: q / eps_a = E (Hooke's law at constant radial stress).
  const auto& first = r.steps[1];
  CHECK(first.q / first.axial_strain == Approx(e).epsilon(test::kExact));
  CHECK(r.steps.back().q == Approx(qf).epsilon(test::kExact));
  for (const auto& s : r.steps) CHECK(s.radial_stress == Approx(s3).epsilon(test::kExact));
  // After failure d(eps_v)/d(eps_a) = -2 sin psi/(1 - sin psi) (Vermeer & de Borst 1984, "Non-associated
  // plasticity for soils, concrete and rock", Heron 29(3)).
  const auto& a = r.steps[800];
  const auto& b = r.steps[1000];
  const double rate = (b.volumetric_strain - a.volumetric_strain) / (b.axial_strain - a.axial_strain);
  CHECK(rate == Approx(-2 * spsi / (1 - spsi)).epsilon(1e-9));
}

TEST_CASE("drained path at constant s3' is straight: slope 3 in p'-q and 1 in s'-t, and both criteria pick one step") {
  // Common practice, no source.
  const auto mc = default_mc(8.0, 33.0, 5.0);
  const auto r = simulate(DriverOptions{}, *mc, triaxial(80, Drainage::drained, 0.08, 400));
  REQUIRE(r.ok());
  const auto& s0 = r.steps[0];
  int max_q = 0, max_ratio = 0;
  for (int i = 1; i < static_cast<int>(r.steps.size()); ++i) {
    const auto& s = r.steps[i];
    if (s.q > 1e-6) {
      CHECK((s.q - s0.q) / (s.p - s0.p) == Approx(3.0).epsilon(1e-9));
      const double sp = 0.5 * (s.axial_stress + s.radial_stress), t = 0.5 * (s.axial_stress - s.radial_stress);
      const double sp0 = 0.5 * (s0.axial_stress + s0.radial_stress);
      CHECK(t / (sp - sp0) == Approx(1.0).epsilon(1e-9));
    }
    if (s.q > r.steps[max_q].q * (1 + 1e-12)) max_q = i;
    if (s.stress_ratio > r.steps[max_ratio].stress_ratio * (1 + 1e-12)) max_ratio = i;
  }
  CHECK(max_q > 0);
  CHECK(max_q == max_ratio);
}

TEST_CASE("undrained compression with psi = 0: p' constant to the envelope, then the state stays put") {
  const auto mc = default_mc(0.0, 30.0, 0.0);
  const double p0 = 200;
  const auto r = simulate(DriverOptions{}, *mc, triaxial(p0, Drainage::undrained, 0.05, 500));
  REQUIRE(r.ok());
  const double m = 6 * 0.5 / (3 - 0.5);  // M = 6 sin phi/(3 - sin phi) for phi = 30 deg
  const double q_fail = m * p0;
  for (const auto& s : r.steps) {
    CHECK(s.p == Approx(p0).epsilon(test::kExact));
    CHECK(s.q <= q_fail * (1 + 1e-9));
    CHECK(s.volumetric_strain == Approx(0.0).margin(1e-15));
    // Total mean stress rises by q/3: excess pore pressure = q/3 - (p' - p'_0).
    CHECK(s.excess_pore_pressure == Approx(s.q / 3 - (s.p - p0)).margin(1e-6));
  }
  CHECK(r.steps.back().q == Approx(q_fail).epsilon(test::kExact));
  CHECK(r.steps[400].q == Approx(r.steps.back().q).epsilon(1e-12));
}

TEST_CASE("undrained compression with psi > 0: pore pressure keeps falling and q keeps rising on the envelope") {
  const auto mc = default_mc(0.0, 30.0, 6.0);
  const auto r = simulate(DriverOptions{}, *mc, triaxial(200, Drainage::undrained, 0.05, 500));
  REQUIRE(r.ok());
  const double m = 6 * 0.5 / (3 - 0.5);
  int on_envelope = 0;
  for (std::size_t i = 2; i < r.steps.size(); ++i) {
    const auto& s = r.steps[i];
    // Plastic since the previous record (the record that reaches the envelope is partly elastic).
    if (s.state[1] > 0 && r.steps[i - 1].state[1] > 0) {
      ++on_envelope;
      CHECK(s.q / s.p == Approx(m).epsilon(1e-9));
      CHECK(s.q > r.steps[i - 1].q);
      CHECK(s.excess_pore_pressure < r.steps[i - 1].excess_pore_pressure);
    }
  }
  CHECK(on_envelope > 100);
}

TEST_CASE("triaxial extension reaches q_f on the extension edge: (2 s_r' sin phi + 2 c cos phi)/(1 + sin phi)") {
  // Mohr-Coulomb with the axial stress minor (any soil mechanics text).
  const double c = 12, phi = 28, sr = 120;
  const auto mc = default_mc(c, phi, 0.0);
  const auto r = simulate(DriverOptions{}, *mc, triaxial(sr, Drainage::drained, -0.05, 500));
  REQUIRE(r.ok());
  const double sp = std::sin(degrees_to_radians(phi)), cp = std::cos(degrees_to_radians(phi));
  const double qf = (2 * sr * sp + 2 * c * cp) / (1 + sp);
  CHECK(r.steps.back().q == Approx(-qf).epsilon(test::kExact));
  CHECK(r.steps.back().radial_stress == Approx(sr).epsilon(test::kExact));
  CHECK(r.steps.back().state[1] == 2.0);  // on the edge: both planes active
}

// Path independence (DESIGN.md "Models"): linear elasticity and a fixed surface, so the response
// depends on the stress alone; the accumulated multiplier and the active-set count are outputs
// that integrate never reads. Fixed increments, the same in A and B, so only the model is compared.
TEST_CASE("Mohr-Coulomb sheared from a stress responds the same whether it started there or was brought there by loading, failure and unloading") {
  const auto mc = default_mc(10.0, 30.0, 10.0);
  DriverOptions fixed;
  fixed.fixed_steps = true;
  Stage undrained;
  undrained.type = StageType::shear;
  undrained.drainage = Drainage::undrained;
  undrained.axial_strain = 0.04;
  undrained.steps = 400;
  Stage drained = undrained;
  drained.drainage = Drainage::drained;
  drained.axial_strain = 0.05;
  drained.steps = 500;
  // B: isotropic at 100 kPa, drained to failure and beyond (plastic flow), then back to an isotropic
  // 150 kPa by an effective stress path inside the surface; A starts at 150 kPa.
  TestProtocol b = triaxial(100.0, Drainage::drained, 0.03, 300);
  Stage back;
  back.type = StageType::anisotropic_consolidation;
  back.target_axial = 150.0;
  back.target_radial = 150.0;
  back.steps = 30;
  for (const Stage& last : {undrained, drained}) {
    INFO((last.drainage == Drainage::undrained ? "undrained" : "drained") << " shear");
    TestProtocol pb = b;
    pb.stages.push_back(back);
    pb.stages.push_back(last);
    TestProtocol pa = triaxial(150.0, Drainage::drained, 0.0, 1);
    pa.stages = {last};
    const auto ra = simulate(fixed, *mc, pa);
    const auto rb = simulate(fixed, *mc, pb);
    REQUIRE(ra.ok());
    REQUIRE(rb.ok());
    CHECK(rb.steps[rb.stages[0].last].state[1] > 0.0);  // B flowed plastically in its first stage
    const test::StageDifference d = test::compare_stages(ra, 0, rb, 2);
    INFO("largest difference " << d.relative << " (without floors " << d.raw << "): " << d.where);
    CHECK(d.records == last.steps);
    CHECK(d.relative < 1e-6);
    CHECK(ra.steps.back().state[1] > 0.0);  // and the compared stage reaches the surface
  }
}

TEST_CASE("Mohr-Coulomb bad parameters give exact messages") {
  const ModelEntry& e = find_model("mohr_coulomb");
  auto message = [&](std::map<std::string, double> given) {
    try {
      e.create(resolve_parameters(e.info(), given, "p.json"), "p.json");
    } catch (const InputError& err) {
      return std::string(err.what());
    }
    return std::string("no error");
  };
  CHECK(message({{"youngs_modulus", 1e4}, {"friction_angle", 30}, {"dilation_angle", 35}}) ==
        "p.json: mohr_coulomb: dilation_angle = 35 deg must not exceed friction_angle = 30 deg");
  CHECK(message({{"youngs_modulus", 1e4}, {"friction_angle", 30}, {"poissons_ratio", 0.5}}) ==
        "p.json: mohr_coulomb: poissons_ratio = 0.5 is outside (-1, 0.5) (-)");
  CHECK(message({{"youngs_modulus", 1e4}, {"friction_angle", 90}}) ==
        "p.json: mohr_coulomb: friction_angle = 90 is outside (0, 90) (deg)");
  CHECK(message({{"youngs_modulus", -5}, {"friction_angle", 30}}) ==
        "p.json: mohr_coulomb: youngs_modulus = -5 is outside (0, inf) (kPa)");
  CHECK(message({{"friction_angle", 30}}) ==
        "p.json: mohr_coulomb: parameter 'youngs_modulus' (kPa) is required and has no default");
  CHECK(message({{"youngs_modulus", 1e4}, {"friction_angle", 30}, {"cohesoin", 3}}) ==
        "p.json: mohr_coulomb has no parameter 'cohesoin' (known: youngs_modulus, poissons_ratio, cohesion, "
        "friction_angle, dilation_angle, tensile_strength)");
}
