// The derivative version of the hyperbolic double-hardening model (issue 14, "exact
// sensitivities"): HyperbolicHardening::with_derivatives. Its values and tangent equal the double
// integrate's; its derivatives with respect to every parameter, every stress component and
// hardening variable of the input state, and every strain-increment component equal central
// differences of the double integrate (common practice, no source), at states away from kinks:
// elastic unloading, shear hardening, cap hardening (an isotropic increment: cap alone; an
// oedometric one: cap and shear), both surfaces, failure (Mohr-Coulomb limit, alone and with the cap).

#include <catch2/catch.hpp>

#include <algorithm>
#include <array>
#include <cmath>
#include <functional>
#include <map>
#include <string>
#include <vector>

#include "allocation_counter.hpp"
#include "hyperbolic_hardening/hyperbolic_hardening.hpp"
#include "tolerances.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;
using H = HyperbolicHardening;

namespace {

constexpr int kParameters = H::parameter_count;
// Central differences: relative step 1e-6 of the input's scale gives truncation ~1e-12 and
// round-off ~1e-10 of the output's scale; the converged local solve (tolerance 1e-11 of the
// stress scale) adds at most about 1e-11 / 1e-6. Agreement is asked to 1e-6 of each output's
// scale per unit relative change of the input.
constexpr double kRelativeStep = 1e-6;
constexpr double kAgreement = 1e-6;
// Values of the derivative version against the double integrate (relative).
constexpr double kSameValues = 1e-12;

// An invented clay-like sand with some cohesion and a tension cut-off below c' cot phi' (7.7 kPa),
// so that every parameter acts and can be perturbed both ways inside its bounds.
ParameterValues base_values(const std::map<std::string, double>& over = {}) {
  std::map<std::string, double> all{{"cohesion", 5.0}, {"tensile_strength", 2.0}};
  for (const auto& [k, v] : over) all[k] = v;
  return resolve_parameters(H::model_info(), all, "test");
}

// The outputs checked: the six stresses, then these internal variables (active_surfaces is a
// flag: no derivative).
constexpr int kInternals[] = {H::shear_hardening,    H::cap_pressure,       H::cap_volumetric_strain,
                              H::mobilised_friction, H::mobilised_dilation, H::shear_rate,
                              H::cap_rate};
constexpr int kOutputs = 6 + static_cast<int>(std::size(kInternals));

const char* output_name(int o) {
  static const char* stresses[] = {"s_xx", "s_yy", "s_zz", "s_xy", "s_yz", "s_zx"};
  if (o < 6) return stresses[o];
  return H::model_info().state_names[static_cast<std::size_t>(kInternals[o - 6])].c_str();
}

double output_value(const MaterialState& s, int o) {
  return o < 6 ? s.stress[o] : s.internal[static_cast<std::size_t>(kInternals[o - 6])];
}

double output_lane(const DualState& s, int o, int lane) {
  return o < 6 ? s.stress[o].v[lane] : s.internal[static_cast<std::size_t>(kInternals[o - 6])].v[lane];
}

// Scale of an output: the stress vector's largest component for stresses; the value with a floor
// of its kind for internal variables.
double output_scale(const MaterialState& s, int o) {
  if (o < 6) return std::max(1.0, s.stress.cwiseAbs().maxCoeff());
  const int v = kInternals[o - 6];
  const double floor = v == H::cap_pressure                                      ? 1.0
                       : v == H::mobilised_friction || v == H::mobilised_dilation ? 1.0
                       : v == H::shear_rate || v == H::cap_rate                   ? 1e-3
                                                                                  : 1e-4;
  return std::max(std::abs(output_value(s, o)), floor);
}

DualState dual_of(const MaterialState& s) {
  DualState d;
  for (int i = 0; i < 6; ++i) d.stress[i] = Dual(s.stress[i]);
  for (std::size_t i = 0; i < s.internal.size(); ++i) d.internal[i] = Dual(s.internal[i]);
  return d;
}

DualVec6 dual_of(const Vec6& v) {
  DualVec6 d;
  for (int i = 0; i < 6; ++i) d[i] = Dual(v[i]);
  return d;
}

int active_of(const MaterialState& s) { return static_cast<int>(s.internal[H::active_surfaces]); }

MaterialState state_of(const StepRecord& r) {
  MaterialState s;
  s.stress = triaxial_stress(r.axial_stress, r.radial_stress);
  s.internal = r.state;
  return s;
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

struct Case {
  std::string what;
  MaterialState state;
  Vec6 de;
  int active;  // expected active set
};

// The states of the issue: elastic, shear hardening, cap (isotropic increment; an oedometric one
// on the normally consolidated line yields in shear too), both surfaces, failure alone and with
// the cap; triaxial and general (rotating) increments.
std::vector<Case> cases(const Model& model) {
  const SimulationResult nc = simulate(DriverOptions{}, model, drained_compression(100.0, 110.0, 0.2, 400));
  REQUIRE(nc.ok());
  const SimulationResult heavy = simulate(DriverOptions{}, model, drained_compression(100.0, 3000.0, 0.2, 400));
  REQUIRE(heavy.ok());
  std::size_t both = 0;
  while (both < nc.steps.size() && static_cast<int>(nc.steps[both].state[H::active_surfaces]) != 3) ++both;
  REQUIRE(both + 5 < nc.steps.size());
  MaterialState oc, iso, k0;
  InitialConditions ic;
  ic.stress = triaxial_stress(160.0, 100.0);
  ic.overconsolidation_ratio = 4.0;
  model.initialise(ic, oc);
  ic.stress = triaxial_stress(100.0, 60.0);
  ic.overconsolidation_ratio = 1.0;
  model.initialise(ic, iso);
  ic.stress = triaxial_stress(100.0, 75.0);
  model.initialise(ic, k0);
  Vec6 triaxial, general, isotropic, oedometric;
  triaxial << 2e-4, -0.6e-4, -0.6e-4, 0.0, 0.0, 0.0;
  general << 1.5e-4, -0.4e-4, -0.7e-4, 0.8e-4, -0.3e-4, 0.5e-4;
  isotropic << 1e-4, 1e-4, 1e-4, 0.0, 0.0, 0.0;
  oedometric << 1e-4, 0.0, 0.0, 0.0, 0.0, 0.0;
  return {
      {"elastic unloading", oc, -triaxial, 0},
      {"elastic, general increment", oc, -general, 0},
      {"shear hardening", oc, triaxial, 1},
      {"shear hardening, general increment", oc, general, 1},
      {"cap, isotropic increment", iso, isotropic, 2},
      {"oedometric increment, normally consolidated (cap and shear)", k0, oedometric, 3},
      {"shear and cap", state_of(nc.steps[both + 5]), triaxial, 3},
      {"shear and cap, general increment", state_of(nc.steps[both + 5]), general, 3},
      {"Mohr-Coulomb failure", state_of(heavy.steps.back()), triaxial, 1},
      {"Mohr-Coulomb failure, general increment", state_of(heavy.steps.back()), general, 1},
      {"Mohr-Coulomb failure and cap", state_of(nc.steps.back()), triaxial, 3},
      {"Mohr-Coulomb failure and cap, general increment", state_of(nc.steps.back()), general, 3},
  };
}

MaterialState integrate_ok(const Model& model, const MaterialState& in, const Vec6& de) {
  MaterialState out;
  Mat6 tangent;
  REQUIRE(model.integrate(in, de, out, tangent).status == Status::ok);
  return out;
}

// Largest difference, over the outputs, between derivative lane `lane` of `dual` and central
// differences of `run` (the double integrate with the input moved by +-step), scaled by the
// input's scale over the output's scale. Both perturbed runs must keep the active set.
double lane_error(const DualState& dual, const MaterialState& centre, int lane,
                  const std::function<MaterialState(double)>& run, double step, double input_scale, int active,
                  std::string& worst_output) {
  const MaterialState plus = run(step), minus = run(-step);
  REQUIRE(active_of(plus) == active);
  REQUIRE(active_of(minus) == active);
  double worst = 0.0;
  for (int o = 0; o < kOutputs; ++o) {
    const double fd = (output_value(plus, o) - output_value(minus, o)) / (2.0 * step);
    const double err = std::abs(output_lane(dual, o, lane) - fd) * input_scale / output_scale(centre, o);
    if (err > worst) {
      worst = err;
      worst_output = output_name(o);
    }
  }
  return worst;
}

// The parameters that carry derivatives (dilatancy_rule is a word).
std::vector<int> continuous_parameters() {
  std::vector<int> p;
  for (int i = 0; i < kParameters; ++i)
    if (i != H::dilatancy_rule) p.push_back(i);
  return p;
}

// Seeds with parameter group[k] in lane k.
std::vector<double> seeds_for(const std::vector<int>& group) {
  std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes), 0.0);
  for (std::size_t k = 0; k < group.size(); ++k)
    seeds[static_cast<std::size_t>(group[k] * kDualLanes) + k] = 1.0;
  return seeds;
}

std::string parameter_name(int i) { return H::model_info().parameters[static_cast<std::size_t>(i)].name; }

}  // namespace

TEST_CASE("hyperbolic_hardening derivative version: values and tangent equal the double integrate's",
          "[hyperbolic_hardening][derivatives]") {
  const ParameterValues v = base_values();
  const H model(v, "test");
  const std::vector<double> seeds = seeds_for({H::friction_angle, H::secant_stiffness_ref, H::stress_exponent,
                                               H::k0_normally_consolidated});
  const auto dual = model.with_derivatives(seeds);
  REQUIRE(dual);
  for (const Case& c : cases(model)) {
    INFO(c.what);
    MaterialState out;
    Mat6 tangent;
    REQUIRE(model.integrate(c.state, c.de, out, tangent).status == Status::ok);
    CHECK(active_of(out) == c.active);
    DualState dout;
    Mat6 dtangent;
    REQUIRE(dual->integrate(dual_of(c.state), dual_of(c.de), dout, dtangent).status == Status::ok);
    const MaterialState values = value_of(dout);
    const double stress_scale = out.stress.cwiseAbs().maxCoeff();
    for (int i = 0; i < 6; ++i) CHECK(std::abs(values.stress[i] - out.stress[i]) <= kSameValues * stress_scale);
    for (std::size_t i = 0; i < out.internal.size(); ++i)
      CHECK(std::abs(values.internal[i] - out.internal[i]) <= kSameValues * std::max(1.0, std::abs(out.internal[i])));
    CHECK((dtangent - tangent).cwiseAbs().maxCoeff() <= kSameValues * tangent.cwiseAbs().maxCoeff());
  }
}

TEST_CASE("hyperbolic_hardening derivatives with respect to every parameter equal central differences on elastic, "
          "shear, cap, both-surface and failure states",
          "[hyperbolic_hardening][derivatives]") {
  // Rowe's relation with its contraction cut off (the default) and as is (phi_cv acts below it too).
  const double rule = GENERATE(double(H::rowe_no_contraction), double(H::rowe));
  const ParameterValues v = base_values({{"dilatancy_rule", rule}});
  const H model(v, "test");
  const std::vector<int> params = continuous_parameters();
  for (const Case& c : cases(model)) {
    double worst = 0.0;
    std::string where;
    for (std::size_t first = 0; first < params.size(); first += kDualLanes) {
      const std::vector<int> group(params.begin() + static_cast<std::ptrdiff_t>(first),
                                   params.begin() + static_cast<std::ptrdiff_t>(std::min(first + kDualLanes, params.size())));
      const auto dual = model.with_derivatives(seeds_for(group));
      DualState dout;
      Mat6 t;
      REQUIRE(dual->integrate(dual_of(c.state), dual_of(c.de), dout, t).status == Status::ok);
      for (std::size_t lane = 0; lane < group.size(); ++lane) {
        const int p = group[lane];
        const double scale = std::abs(v[static_cast<std::size_t>(p)]);
        auto run = [&](double h) {
          ParameterValues moved = v;
          moved[static_cast<std::size_t>(p)] += h;
          return integrate_ok(H(moved, "test"), c.state, c.de);
        };
        std::string output;
        const double err = lane_error(dout, integrate_ok(model, c.state, c.de), static_cast<int>(lane), run,
                                      kRelativeStep * scale, scale, c.active, output);
        if (err > worst) {
          worst = err;
          where = parameter_name(p) + " -> " + output;
        }
      }
    }
    INFO(c.what << ", dilatancy_rule " << rule << ": largest scaled difference from central differences " << worst
                << " (" << where << ")");
    CHECK(worst < kAgreement);
  }
}

TEST_CASE("hyperbolic_hardening derivatives with respect to the input stress, hardening variables and strain "
          "increment equal central differences",
          "[hyperbolic_hardening][derivatives]") {
  const H model(base_values(), "test");
  const auto dual = model.with_derivatives(std::vector<double>(kParameters * kDualLanes, 0.0));
  // Inputs: 6 stresses, gamma_p, p_p, eps_v^pc, then 6 strain-increment components.
  constexpr int kStateInputs[] = {H::shear_hardening, H::cap_pressure, H::cap_volumetric_strain};
  constexpr int kInputs = 6 + 3 + 6;
  for (const Case& c : cases(model)) {
    const MaterialState centre = integrate_ok(model, c.state, c.de);
    auto input_scale = [&](int j) {
      if (j < 6) return std::max(1.0, c.state.stress.cwiseAbs().maxCoeff());
      if (j < 9) {
        const int s = kStateInputs[j - 6];
        return std::max(std::abs(c.state.internal[static_cast<std::size_t>(s)]), s == H::cap_pressure ? 1.0 : 1e-4);
      }
      return c.de.norm();
    };
    auto input_name = [&](int j) -> std::string {
      static const char* names[] = {"s_xx", "s_yy", "s_zz", "s_xy", "s_yz", "s_zx"};
      if (j < 6) return std::string("input ") + names[j];
      if (j < 9) return "input " + H::model_info().state_names[static_cast<std::size_t>(kStateInputs[j - 6])];
      return std::string("strain increment ") + std::to_string(j - 9);
    };
    double worst = 0.0;
    std::string where;
    for (int first = 0; first < kInputs; first += kDualLanes) {
      DualState din = dual_of(c.state);
      DualVec6 dde = dual_of(c.de);
      const int count = std::min(kDualLanes, kInputs - first);
      for (int lane = 0; lane < count; ++lane) {
        const int j = first + lane;
        if (j < 6)
          din.stress[j].v[lane] = 1.0;
        else if (j < 9)
          din.internal[static_cast<std::size_t>(kStateInputs[j - 6])].v[lane] = 1.0;
        else
          dde[j - 9].v[lane] = 1.0;
      }
      DualState dout;
      Mat6 t;
      REQUIRE(dual->integrate(din, dde, dout, t).status == Status::ok);
      for (int lane = 0; lane < count; ++lane) {
        const int j = first + lane;
        auto run = [&](double h) {
          MaterialState in = c.state;
          Vec6 de = c.de;
          if (j < 6)
            in.stress[j] += h;
          else if (j < 9)
            in.internal[static_cast<std::size_t>(kStateInputs[j - 6])] += h;
          else
            de[j - 9] += h;
          return integrate_ok(model, in, de);
        };
        std::string output;
        const double scale = input_scale(j);
        const double err = lane_error(dout, centre, lane, run, kRelativeStep * scale, scale, c.active, output);
        if (err > worst) {
          worst = err;
          where = input_name(j) + " -> " + output;
        }
      }
    }
    INFO(c.what << ": largest scaled difference from central differences " << worst << " (" << where << ")");
    CHECK(worst < kAgreement);
  }
}

TEST_CASE("hyperbolic_hardening derivatives carried through two increments equal central differences of the two "
          "double increments",
          "[hyperbolic_hardening][derivatives]") {
  // The second increment starts from a state whose derivatives the first gave: the chain rule
  // through the input state and the parameters at once.
  const ParameterValues v = base_values();
  const H model(v, "test");
  InitialConditions ic;
  ic.stress = triaxial_stress(100.0, 60.0);
  Vec6 first, second;
  first << 1e-4, 1e-4, 1e-4, 0.0, 0.0, 0.0;  // cap
  second << 1.5e-4, -0.4e-4, -0.7e-4, 0.8e-4, -0.3e-4, 0.5e-4;
  auto two_steps = [&](const Model& m) {
    MaterialState s0;
    m.initialise(ic, s0);
    return integrate_ok(m, integrate_ok(m, s0, first), second);
  };
  const MaterialState centre = two_steps(model);
  const std::vector<int> group = {H::unloading_stiffness_ref, H::stress_exponent, H::oedometer_stiffness_ref,
                                  H::k0_normally_consolidated};
  const auto dual = model.with_derivatives(seeds_for(group));
  DualState s0, s1, s2;
  Mat6 t;
  dual->initialise(ic, s0);
  REQUIRE(dual->integrate(s0, dual_of(first), s1, t).status == Status::ok);
  REQUIRE(dual->integrate(s1, dual_of(second), s2, t).status == Status::ok);
  for (std::size_t lane = 0; lane < group.size(); ++lane) {
    const auto p = static_cast<std::size_t>(group[lane]);
    auto run = [&](double h) {
      ParameterValues moved = v;
      moved[p] += h;
      return two_steps(H(moved, "test"));
    };
    std::string output;
    const double err = lane_error(s2, centre, static_cast<int>(lane), run, kRelativeStep * std::abs(v[p]),
                                  std::abs(v[p]), active_of(centre), output);
    INFO(parameter_name(group[lane]) << " -> " << output << ": " << err);
    CHECK(err < kAgreement);
  }
}

TEST_CASE("hyperbolic_hardening derivative version: initialise's derivatives equal central differences",
          "[hyperbolic_hardening][derivatives]") {
  const ParameterValues v = base_values();
  const H model(v, "test");
  const std::vector<int> params = continuous_parameters();
  struct Start {
    const char* what;
    InitialConditions ic;
  };
  std::vector<Start> starts(3);
  starts[0].what = "normally consolidated, anisotropic";
  starts[0].ic.stress = triaxial_stress(100.0, 60.0);
  starts[1].what = "overconsolidated (OCR 4)";
  starts[1].ic.stress = triaxial_stress(160.0, 100.0);
  starts[1].ic.overconsolidation_ratio = 4.0;
  starts[2].what = "preconsolidation pressure given";
  starts[2].ic.stress = triaxial_stress(120.0, 90.0);
  starts[2].ic.preconsolidation_pressure = 300.0;
  for (const Start& st : starts) {
    MaterialState centre;
    model.initialise(st.ic, centre);
    double worst = 0.0;
    std::string where;
    for (std::size_t first = 0; first < params.size(); first += kDualLanes) {
      const std::vector<int> group(params.begin() + static_cast<std::ptrdiff_t>(first),
                                   params.begin() + static_cast<std::ptrdiff_t>(std::min(first + kDualLanes, params.size())));
      const auto dual = model.with_derivatives(seeds_for(group));
      DualState ds;
      dual->initialise(st.ic, ds);
      const MaterialState values = value_of(ds);
      for (int o = 0; o < kOutputs; ++o) CHECK(output_value(values, o) == output_value(centre, o));
      for (std::size_t lane = 0; lane < group.size(); ++lane) {
        const auto p = static_cast<std::size_t>(group[lane]);
        const double scale = std::abs(v[p]);
        const double h = kRelativeStep * scale;
        MaterialState plus, minus;
        ParameterValues moved = v;
        moved[p] += h;
        H(moved, "test").initialise(st.ic, plus);
        moved[p] = v[p] - h;
        H(moved, "test").initialise(st.ic, minus);
        for (int o = 0; o < kOutputs; ++o) {
          const double fd = (output_value(plus, o) - output_value(minus, o)) / (2.0 * h);
          const double err =
              std::abs(output_lane(ds, o, static_cast<int>(lane)) - fd) * scale / output_scale(centre, o);
          if (err > worst) {
            worst = err;
            where = parameter_name(group[lane]) + " -> " + output_name(o);
          }
        }
      }
    }
    INFO(st.what << ": largest scaled difference " << worst << " (" << where << ")");
    CHECK(worst < kAgreement);
    // The cap pressure depends on every cap parameter: its derivatives are not all zero.
    const auto dual = model.with_derivatives(seeds_for({H::oedometer_stiffness_ref, H::k0_normally_consolidated}));
    DualState ds;
    dual->initialise(st.ic, ds);
    CHECK(ds.internal[H::cap_pressure].v[0] != 0.0);
    CHECK(ds.internal[H::cap_pressure].v[1] != 0.0);
  }
}

TEST_CASE("hyperbolic_hardening derivative version: seeds of the wrong size are refused, naming the count",
          "[hyperbolic_hardening][derivatives]") {
  const H model(base_values(), "test");
  const std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes - 1), 0.0);
  CHECK_THROWS_WITH(model.with_derivatives(seeds),
                    "hyperbolic_hardening: with_derivatives: expected 52 seeds (13 parameters x 4 lanes), found 51");
  CHECK_THROWS_AS(model.with_derivatives({}), InputError);
}

TEST_CASE("hyperbolic_hardening derivative version allocates nothing in integrate",
          "[hyperbolic_hardening][derivatives]") {
  if (!test::kCountingAllocations) {
    WARN("allocation counting is off under AddressSanitizer; the Release run checks it");
    return;
  }
  const H model(base_values(), "test");
  const auto dual = model.with_derivatives(seeds_for({H::friction_angle, H::cohesion, H::stress_exponent,
                                                      H::oedometer_stiffness_ref}));
  const std::vector<Case> all = cases(model);
  std::vector<DualState> ins;
  std::vector<DualVec6> des;
  for (const Case& c : all) {
    ins.push_back(dual_of(c.state));
    des.push_back(dual_of(c.de));
  }
  DualState out;
  Mat6 t;
  int ok = 0;
  const long before = test::g_allocations.load();
  for (std::size_t i = 0; i < all.size(); ++i) ok += dual->integrate(ins[i], des[i], out, t).status == Status::ok;
  const long after = test::g_allocations.load();
  CHECK(ok == static_cast<int>(all.size()));
  CHECK(after == before);
}
