// Undrained Tresca (phi_u = 0, total stress): tangent, closed forms, path independence and bad
// parameters. Hand calculations beside each check (elasticity: common practice, no source;
// Tresca 1864 for the criterion s1 - s3 <= 2 c_u).
#include <catch2/catch.hpp>

#include <Eigen/Eigenvalues>

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
#include "undrained_tresca/undrained_tresca.hpp"

using namespace triaxcal;
using triaxcal::test::vec;

namespace {

// Invented values of a soft clay: c_u 40 kPa, E_u 30000 kPa (E_u/c_u = 750), nu_u 0.495.
constexpr double kCu = 40.0;
constexpr double kEu = 30000.0;
constexpr double kNu = 0.495;

std::unique_ptr<Model> make_tresca(std::map<std::string, double> given) {
  const ModelEntry& e = find_model("undrained_tresca");
  return e.create(resolve_parameters(e.info(), given, "test"), "test");
}

std::unique_ptr<Model> default_tresca() {
  return make_tresca({{"undrained_shear_strength", kCu}, {"undrained_youngs_modulus", kEu},
                      {"undrained_poissons_ratio", kNu}});
}

MaterialState state_of(const Vec6& stress) {
  MaterialState s;
  s.stress = stress;
  return s;
}

int active(const Model& m, const MaterialState& in, const Vec6& de, MaterialState& out) {
  Mat6 t;
  REQUIRE(m.integrate(in, de, out, t).status == Status::ok);
  return static_cast<int>(out.internal[UndrainedTresca::active_surfaces]);
}

/// Largest principal stress difference of a Voigt stress.
double tresca_diameter(const Vec6& s) {
  Mat3 t;
  t << s[0], s[3], s[5], s[3], s[1], s[4], s[5], s[4], s[2];
  const Eigen::SelfAdjointEigenSolver<Mat3> es(t);
  return es.eigenvalues()[2] - es.eigenvalues()[0];
}

}  // namespace

TEST_CASE("undrained Tresca tangent equals central differences on elastic, plane, edge and general states",
          "[undrained_tresca]") {
  const auto model = default_tresca();
  MaterialState out;
  SECTION("elastic") {
    const auto in = state_of(triaxial_stress(100, 100));
    const Vec6 de = vec(1e-4, -5e-5, -5e-5);
    CHECK(active(*model, in, de, out) == 0);
    CHECK(test::tangent_error(*model, in, de) < test::kTangent);
  }
  SECTION("main plane, distinct principal stresses") {
    const auto in = state_of(vec(150, 110, 80));
    const Vec6 de = vec(2e-3, 0, -1.5e-3);
    CHECK(active(*model, in, de, out) == 1);
    CHECK(out.stress[0] - out.stress[2] == Approx(2 * kCu).epsilon(1e-12));
    CHECK(test::tangent_error(*model, in, de) < test::kTangent);
  }
  SECTION("triaxial compression edge") {
    const auto in = state_of(triaxial_stress(160, 100));
    const Vec6 de = vec(2e-3, -1e-3, -1e-3);
    CHECK(active(*model, in, de, out) == 2);
    CHECK(out.stress[1] == Approx(out.stress[2]).epsilon(1e-12));
    CHECK(out.stress[0] - out.stress[2] == Approx(2 * kCu).epsilon(1e-12));
    CHECK(test::tangent_error(*model, in, de) < test::kTangent);
  }
  SECTION("triaxial extension edge") {
    const auto in = state_of(triaxial_stress(60, 100));
    const Vec6 de = vec(-2e-3, 1e-3, 1e-3);
    CHECK(active(*model, in, de, out) == 2);
    CHECK(out.stress[0] - out.stress[2] == Approx(-2 * kCu).epsilon(1e-12));
    CHECK(test::tangent_error(*model, in, de) < test::kTangent);
  }
  SECTION("general six-component stress and increment") {
    const auto in = state_of(vec(140, 100, 90, 20, -10, 15));
    const Vec6 de = vec(1.5e-3, -4e-4, -6e-4, 1e-3, 5e-4, -8e-4);
    CHECK(active(*model, in, de, out) >= 1);
    CHECK(tresca_diameter(out.stress) == Approx(2 * kCu).epsilon(1e-10));
    CHECK(test::tangent_error(*model, in, de) < test::kTangent);
  }
}

TEST_CASE("UU compression: q = 3 G eps_a up to q_max = 2 c_u, the mean stress unchanged", "[undrained_tresca]") {
  // Hand calculation: G = E_u / (2 (1 + nu_u)) = 30000 / 2.99 = 10033.44 kPa; an undrained stage is
  // isochoric (eps_r = -eps_a/2), so q = 2 G (eps_a - eps_r) = 3 G eps_a = 30100.33 eps_a (natural
  // strain; 3 G = E_u exactly only at nu_u = 0.5) up to q = 2 c_u = 80 kPa at eps_a = 80 / 30100.33
  // = 0.002658; then q stays at 80 kPa and p at its start (deviatoric flow, no volume change).
  const auto model = default_tresca();
  const double g = kEu / (2.0 * (1.0 + kNu));
  CHECK(3.0 * g == Approx(30100.33).epsilon(1e-6));
  const double p0 = 150.0;
  const auto r = simulate(DriverOptions{}, *model, test::isotropic_shear(p0, Drainage::undrained, 0.05, 100));
  REQUIRE(r.ok());
  int elastic = 0, plastic = 0;
  for (const StepRecord& s : r.steps) {
    CHECK(s.p == Approx(p0).epsilon(1e-12));
    CHECK(s.q <= 2.0 * kCu * (1.0 + 1e-12));
    if (s.axial_strain < 2.0 * kCu / (3.0 * g) * (1.0 - 1e-9)) {
      CHECK(s.q == Approx(3.0 * g * s.axial_strain).epsilon(1e-9));
      ++elastic;
    } else {
      CHECK(s.q == Approx(2.0 * kCu).epsilon(1e-12));
      ++plastic;
    }
  }
  CHECK(elastic >= 2);
  CHECK(plastic > 50);
  CHECK(r.steps.back().q == Approx(2.0 * kCu).epsilon(1e-12));  // c_u = q_max / 2
}

TEST_CASE("UU extension reaches q = -2 c_u whatever the confining stress", "[undrained_tresca]") {
  const auto model = default_tresca();
  for (const double p0 : {50.0, 400.0}) {
    const auto r = simulate(DriverOptions{}, *model, test::isotropic_shear(p0, Drainage::undrained, -0.03, 50));
    REQUIRE(r.ok());
    CHECK(r.steps.back().q == Approx(-2.0 * kCu).epsilon(1e-12));
  }
}

TEST_CASE("undrained Tresca sheared from a stress responds the same whether it started there or was brought there "
          "by yielding and unloading",
          "[undrained_tresca]") {
  const auto model = default_tresca();
  DriverOptions fixed;
  fixed.fixed_steps = true;
  Stage shear;
  shear.type = StageType::shear;
  shear.drainage = Drainage::undrained;
  shear.axial_strain = 0.02;
  shear.steps = 200;
  // B: isotropic at 100 kPa, sheared undrained beyond yield (plastic flow), then back to an
  // isotropic 150 kPa by a path inside the surface; A starts at 150 kPa.
  TestProtocol b = test::isotropic_shear(100.0, Drainage::undrained, 0.01, 100);
  Stage back;
  back.type = StageType::anisotropic_consolidation;
  back.target_axial = 150.0;
  back.target_radial = 150.0;
  back.steps = 30;
  b.stages.push_back(back);
  b.stages.push_back(shear);
  TestProtocol a = test::isotropic_shear(150.0, Drainage::undrained, 0.0, 1);
  a.stages = {shear};
  const auto ra = simulate(fixed, *model, a);
  const auto rb = simulate(fixed, *model, b);
  REQUIRE(ra.ok());
  REQUIRE(rb.ok());
  CHECK(rb.steps[static_cast<std::size_t>(rb.stages[0].last)].state[UndrainedTresca::accumulated_plastic_multiplier] > 0.0);
  const test::StageDifference d = test::compare_stages(ra, 0, rb, 2);
  INFO("largest difference " << d.relative << " (without floors " << d.raw << "): " << d.where);
  CHECK(d.records == shear.steps);
  CHECK(d.relative < 1e-6);
  CHECK(ra.steps.back().state[UndrainedTresca::active_surfaces] > 0.0);
}

TEST_CASE("undrained Tresca bad parameters give exact messages", "[undrained_tresca]") {
  const ModelEntry& e = find_model("undrained_tresca");
  auto message = [&](std::map<std::string, double> given) {
    try {
      e.create(resolve_parameters(e.info(), given, "p.json"), "p.json");
    } catch (const InputError& err) {
      return std::string(err.what());
    }
    return std::string("no error");
  };
  CHECK(message({{"undrained_youngs_modulus", 1e4}}) ==
        "p.json: undrained_tresca: parameter 'undrained_shear_strength' (kPa) is required and has no default");
  CHECK(message({{"undrained_shear_strength", 0.0}, {"undrained_youngs_modulus", 1e4}}) ==
        "p.json: undrained_tresca: undrained_shear_strength = 0 is outside (0, inf) (kPa)");
  CHECK(message({{"undrained_shear_strength", 30.0}, {"undrained_youngs_modulus", -1.0}}) ==
        "p.json: undrained_tresca: undrained_youngs_modulus = -1 is outside (0, inf) (kPa)");
  CHECK(message({{"undrained_shear_strength", 30.0}, {"undrained_youngs_modulus", 1e4}, {"undrained_poissons_ratio", 0.5}}) ==
        "p.json: undrained_tresca: undrained_poissons_ratio = 0.5 is outside [0.45, 0.4999] (-)");
  CHECK(message({{"undrained_shear_strength", 30.0}, {"undrained_youngs_modulus", 1e4}, {"undrained_poissons_ratio", 0.3}}) ==
        "p.json: undrained_tresca: undrained_poissons_ratio = 0.3 is outside [0.45, 0.4999] (-)");
  CHECK(message({{"undrained_shear_strength", 30.0}, {"undrained_youngs_modulus", 1e4}}) == "no error");
}
