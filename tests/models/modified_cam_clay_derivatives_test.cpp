// Modified Cam-Clay's derivative version (Model::with_derivatives, sensitivity.hpp; issue 14):
// the dual integrate's values against the double integrate's, its derivatives against central
// differences of the double integrate for every parameter, stress component, internal variable
// and strain-increment component, at elastic, hardening (wet side), critical-state (perfectly
// plastic), softening (dry side), isotropic-compression (the ellipse's cap), undrained and
// Lode-dependent states; initialise's derivatives; independence of the warm start; no allocation;
// the wrong number of seeds; and the derivatives along a whole undrained path by fixed increments,
// against central differences of the same double path and against the derivative of the
// closed-form undrained p'-q relation (Wood 1990, ch. 7; models/modified_cam_clay/closed_form.hpp),
// which every step end of the discrete path satisfies whatever the parameters; and along a chain of
// volume-changing, Lode-dependent increments from initialise, against central differences of the chain.
//
// Material constants are invented round numbers (lambda = 0.2, kappa = 0.04, M = 0.9, nu' = 0.25,
// e0 = 1.1), not from any real soil. Set TRIAXCAL_PRINT_DERIVATIVE_ERRORS=1 to print the largest
// differences per state.
#include <catch2/catch.hpp>

#include <array>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "modified_cam_clay/closed_form.hpp"
#include "modified_cam_clay/modified_cam_clay.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/sensitivity.hpp"

#include "allocation_counter.hpp"

using namespace triaxcal;

namespace {

using P = ModifiedCamClay::Parameter;
constexpr int kParameters = static_cast<int>(kCamClayParameters);
constexpr int kInternal = 4;  // preconsolidation_pressure, void_ratio, plastic_rate, multiplier_rate
constexpr int kOutputs = 6 + kInternal;

// Central differences with a step of 1e-6 of each input's scale: truncation ~1e-12 and round-off
// ~1e-16/1e-6 = 1e-10 relative, plus the local Newton's converged residual (below 1e-12
// relative) over the step, ~1e-6 at worst. Common practice, no source.
constexpr double kRelativeStep = 1e-6;
// Agreement of a derivative with central differences, as a change of the output relative to its
// scale per relative change of the input (a dimensionless sensitivity).
constexpr double kDerivativeTolerance = 1e-6;
// The dual integrate's values against the double integrate's (the same arithmetic; round-off).
constexpr double kSameValues = 1e-12;

bool report() { return std::getenv("TRIAXCAL_PRINT_DERIVATIVE_ERRORS") != nullptr; }

// Flat index of an input: the parameters (ModelInfo order), the six stress components, the four
// internal variables, the six strain-increment components.
enum : int { kFirstStress = kParameters, kFirstInternal = kFirstStress + 6, kFirstStrain = kFirstInternal + kInternal,
             kInputs = kFirstStrain + 6 };

std::string input_name(int i) {
  static const char* const voigt[] = {"11", "22", "33", "12", "23", "31"};
  if (i < kFirstStress) return ModifiedCamClay::model_info().parameters[static_cast<std::size_t>(i)].name;
  if (i < kFirstInternal) return std::string("stress_") + voigt[i - kFirstStress];
  if (i < kFirstStrain)
    return "internal " + ModifiedCamClay::model_info().state_names[static_cast<std::size_t>(i - kFirstInternal)];
  return std::string("strain_increment_") + voigt[i - kFirstStrain];
}

std::string output_name(int o) {
  static const char* const voigt[] = {"11", "22", "33", "12", "23", "31"};
  if (o < 6) return std::string("stress_") + voigt[o];
  return ModifiedCamClay::model_info().state_names[static_cast<std::size_t>(o - 6)];
}

// Invented round numbers (header comment).
ParameterValues base_values() { return {0.2, 0.04, 0.9, 0.0, 0.25, 0.0, 0.0}; }

std::unique_ptr<Model> create(const ParameterValues& v) { return ModifiedCamClay::create(v, "test"); }

// One increment: the parameters, the state it starts from and the strain increment.
struct Point {
  ParameterValues values = base_values();
  MaterialState in;
  Vec6 de = Vec6::Zero();

  double& operator[](int i) {
    if (i < kFirstStress) return values[static_cast<std::size_t>(i)];
    if (i < kFirstInternal) return in.stress[i - kFirstStress];
    if (i < kFirstStrain) return in.internal[static_cast<std::size_t>(i - kFirstInternal)];
    return de[i - kFirstStrain];
  }
};

using Outputs = Eigen::Matrix<double, kOutputs, 1>;

Outputs outputs_of(const MaterialState& s) {
  Outputs o;
  for (int i = 0; i < 6; ++i) o[i] = s.stress[i];
  for (int i = 0; i < kInternal; ++i) o[6 + i] = s.internal[static_cast<std::size_t>(i)];
  return o;
}

Outputs run_double(const Point& at, Mat6* tangent = nullptr) {
  const auto model = create(at.values);
  MaterialState out;
  Mat6 t;
  const IntegrationResult r = model->integrate(at.in, at.de, out, t);
  REQUIRE(r.status == Status::ok);
  if (tangent) *tangent = t;
  return outputs_of(out);
}

// The parameters a state of `values` uses (the others take no part: M or phi_cs, whichever is 0;
// poissons_ratio or shear_modulus, whichever is unused; lode_dependence, a switch).
bool parameter_used(const ParameterValues& v, int i) {
  if (i == P::lode_dependence) return false;
  return !ModifiedCamClay::model_info().unused(static_cast<std::size_t>(i), v);
}

// Scale of an input (the step is kRelativeStep of it) and of an output.
double input_scale(const Point& at, int i) {
  Point p = at;
  if (i < kFirstStress) return std::abs(p[i]);
  if (i < kFirstInternal) return at.in.stress.cwiseAbs().maxCoeff();
  if (i < kFirstInternal + 2) return std::abs(p[i]);                // p'_c, e
  if (i < kFirstStrain) return std::max(std::abs(p[i]), 1e-3);      // the warm-start rates
  return at.de.norm();
}

double output_scale(const Outputs& o, int k) {
  if (k < 6) return o.head<6>().cwiseAbs().maxCoeff();
  if (k < 6 + 2) return std::abs(o[k]);  // p'_c, e
  return std::max(std::abs(o[k]), 1e-3);  // the rates (0 at critical state)
}

// The dual integrate with the inputs `lanes` (flat indices, at most kDualLanes) seeded one a lane.
struct DualRun {
  DualState out;
  Mat6 tangent;
  IntegrationResult result;
};

DualRun run_dual(const Point& at, const std::vector<int>& lanes) {
  REQUIRE(lanes.size() <= static_cast<std::size_t>(kDualLanes));
  std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes), 0.0);
  DualState in;
  DualVec6 de;
  for (int i = 0; i < 6; ++i) {
    in.stress[i] = Dual(at.in.stress[i]);
    de[i] = Dual(at.de[i]);
  }
  for (int i = 0; i < kMaxStateVariables; ++i)
    in.internal[static_cast<std::size_t>(i)] = Dual(at.in.internal[static_cast<std::size_t>(i)]);
  for (std::size_t k = 0; k < lanes.size(); ++k) {
    const int i = lanes[k];
    if (i < kFirstStress)
      seeds[static_cast<std::size_t>(i * kDualLanes) + k] = 1.0;
    else if (i < kFirstInternal)
      in.stress[i - kFirstStress].v[static_cast<int>(k)] = 1.0;
    else if (i < kFirstStrain)
      in.internal[static_cast<std::size_t>(i - kFirstInternal)].v[static_cast<int>(k)] = 1.0;
    else
      de[i - kFirstStrain].v[static_cast<int>(k)] = 1.0;
  }
  const auto model = create(at.values);
  const auto dual = model->with_derivatives(seeds);
  REQUIRE(dual != nullptr);
  DualRun run;
  run.result = dual->integrate(in, de, run.out, run.tangent);
  REQUIRE(run.result.status == Status::ok);
  return run;
}

double dual_output(const DualState& s, int o, int lane) {
  return o < 6 ? s.stress[o].v[lane] : s.internal[static_cast<std::size_t>(o - 6)].v[lane];
}
double dual_value(const DualState& s, int o) { return o < 6 ? s.stress[o].a : s.internal[static_cast<std::size_t>(o - 6)].a; }

// The largest difference of the dual integrate's derivatives from central differences over every
// input the state uses, as a dimensionless sensitivity (kDerivativeTolerance); also checks the
// values and the tangent against the double integrate, and the derivatives of the stress with
// respect to the strain increment against the consistent tangent.
double largest_difference(const Point& at, const std::string& state) {
  Mat6 tangent;
  const Outputs base = run_double(at, &tangent);
  std::vector<int> inputs;
  for (int i = 0; i < kInputs; ++i)
    if (i >= kFirstStress || parameter_used(at.values, i)) inputs.push_back(i);
  double worst = 0.0, worst_rates = 0.0;  // stress, p'_c and e; the warm-start rates
  std::string worst_at;
  for (std::size_t first = 0; first < inputs.size(); first += kDualLanes) {
    const std::vector<int> lanes(inputs.begin() + static_cast<std::ptrdiff_t>(first),
                                 inputs.begin() + static_cast<std::ptrdiff_t>(std::min(first + kDualLanes, inputs.size())));
    const DualRun run = run_dual(at, lanes);
    // Values and tangent: the double integrate's.
    for (int o = 0; o < kOutputs; ++o) {
      INFO(state << ": value of " << output_name(o));
      CHECK(std::abs(dual_value(run.out, o) - base[o]) <= kSameValues * output_scale(base, o));
    }
    INFO(state);
    CHECK((run.tangent - tangent).cwiseAbs().maxCoeff() <= kSameValues * tangent.cwiseAbs().maxCoeff());
    for (std::size_t k = 0; k < lanes.size(); ++k) {
      const int i = lanes[k];
      const double scale = input_scale(at, i);
      const double h = kRelativeStep * scale;
      Point plus = at, minus = at;
      plus[i] += h;
      minus[i] -= h;
      const Outputs numeric = (run_double(plus) - run_double(minus)) / (2.0 * h);
      for (int o = 0; o < kOutputs; ++o) {
        const double exact = dual_output(run.out, o, static_cast<int>(k));
        const double difference = std::abs(exact - numeric[o]) * scale / output_scale(base, o);
        INFO(state << ": d " << output_name(o) << " / d " << input_name(i) << ": dual " << exact
                   << ", central differences " << numeric[o]);
        CHECK(difference <= kDerivativeTolerance);
        if (o >= 6 + 2) {
          worst_rates = std::max(worst_rates, difference);
        } else if (difference > worst) {
          worst = difference;
          worst_at = output_name(o) + " / " + input_name(i);
        }
        // The stress's derivative along the strain increment is the consistent tangent.
        if (i >= kFirstStrain && o < 6)
          CHECK(std::abs(exact - tangent(o, i - kFirstStrain)) <= 1e-10 * tangent.cwiseAbs().maxCoeff());
      }
    }
  }
  if (report())
    std::printf("%-36s largest difference %.2e (d %s), of the rates %.2e\n", state.c_str(), worst,
                worst_at.c_str(), worst_rates);
  return std::max(worst, worst_rates);
}

// q on the yield surface at p' (triaxial compression).
double q_on_surface(double m, double p, double pc) { return m * std::sqrt(p * (pc - p)); }

Point triaxial_point(double p, double q, double pc, double e, const Vec6& de) {
  Point at;
  at.in.stress = triaxial_stress_from_pq(p, q);
  at.in.internal[ModifiedCamClay::preconsolidation_pressure] = pc;
  at.in.internal[ModifiedCamClay::void_ratio] = e;
  at.de = de;
  return at;
}

// The warm-start rates a previous plastic step along the same increment leaves (a state as the
// driver passes it on a plastic path).
void warm_start(Point& at) {
  const auto model = create(at.values);
  MaterialState out;
  Mat6 t;
  REQUIRE(model->integrate(at.in, at.de, out, t).status == Status::ok);
  at.in.internal[ModifiedCamClay::plastic_rate] = out.internal[ModifiedCamClay::plastic_rate];
  at.in.internal[ModifiedCamClay::multiplier_rate] = out.internal[ModifiedCamClay::multiplier_rate];
}

bool plastic(const Point& at) {
  const auto model = create(at.values);
  MaterialState out;
  Mat6 t;
  return model->integrate(at.in, at.de, out, t).iterations > 0;
}

Vec6 vec(double a, double b, double c, double d = 0.0, double e = 0.0, double f = 0.0) {
  Vec6 v;
  v << a, b, c, d, e, f;
  return v;
}

}  // namespace

TEST_CASE("MCC derivatives: elastic increment inside an overconsolidated yield surface") {
  // OCR 6: p' = 100 kPa, q = 20 kPa, p'_c = 600 kPa; a general increment stays inside.
  Point at = triaxial_point(100.0, 20.0, 600.0, 1.1, vec(1e-4, -2e-5, -3e-5, 2e-5, -1e-5, 1.5e-5));
  REQUIRE_FALSE(plastic(at));
  largest_difference(at, "elastic");
  // A constant shear modulus (poissons_ratio unused).
  at.values[P::shear_modulus] = 5000.0;
  largest_difference(at, "elastic, constant G");
}

TEST_CASE("MCC derivatives: hardening on the wet side of critical state") {
  // Normally consolidated, p' = 150 kPa on the surface p'_c = 200 kPa; drained compression with
  // shear components, from rest (no warm start) and with the rates of a previous plastic step.
  Point at = triaxial_point(150.0, 0.999 * q_on_surface(0.9, 150.0, 200.0), 200.0, 1.1,
                            vec(2e-4, -4e-5, -6e-5, 2e-5, -1e-5, 3e-5));
  REQUIRE(plastic(at));
  largest_difference(at, "hardening (wet side), cold start");
  warm_start(at);
  largest_difference(at, "hardening (wet side), warm start");
  at.values[P::shear_modulus] = 3000.0;
  largest_difference(at, "hardening, constant G");
}

TEST_CASE("MCC derivatives: at critical state (perfectly plastic)") {
  // p' = p'_c / 2 = 100 kPa, q = M p' = 90 kPa; an undrained and a drained shear increment.
  Point at = triaxial_point(100.0, 90.0, 200.0, 1.1, vec(2e-4, -1e-4, -1e-4));
  REQUIRE(at.de.sum() == 0.0);  // undrained: the chord factor's d = 0 branch
  REQUIRE(plastic(at));
  largest_difference(at, "critical state, undrained");
  at.de = vec(2e-4, -5e-5, -5e-5, 1e-5);
  warm_start(at);
  largest_difference(at, "critical state, drained");
}

TEST_CASE("MCC derivatives: softening on the dry side") {
  // Heavily overconsolidated: p' = 50 kPa on the surface p'_c = 300 kPa.
  Point at = triaxial_point(50.0, 0.999 * q_on_surface(0.9, 50.0, 300.0), 300.0, 1.1, vec(2e-4, -2e-4, -2e-4));
  REQUIRE(plastic(at));
  largest_difference(at, "softening (dry side)");
  warm_start(at);
  largest_difference(at, "softening (dry side), warm start");
}

TEST_CASE("MCC derivatives: isotropic compression on the cap of the ellipse") {
  // p' = p'_c = 200 kPa, q = 0: an isotropic compression increment (q_tr = 0) and one with shear.
  Point at = triaxial_point(200.0, 0.0, 200.0, 1.1, vec(1e-4, 1e-4, 1e-4));
  REQUIRE(plastic(at));
  largest_difference(at, "isotropic compression (cap)");
  at.de = vec(1.5e-4, 8e-5, 7e-5, 1e-5);
  largest_difference(at, "cap, with shear");
}

TEST_CASE("MCC derivatives: Lode-dependent M on a general stress state") {
  // lode_dependence = 1, a stress state off the triaxial axes, yielding; with M given, and with
  // phi_cs given and a constant G.
  Point at;
  at.values[P::lode_dependence] = 1.0;
  at.in.stress = vec(180.0, 120.0, 100.0, 15.0, -10.0, 8.0);
  at.in.internal[ModifiedCamClay::preconsolidation_pressure] = 190.0;
  at.in.internal[ModifiedCamClay::void_ratio] = 1.05;
  at.de = vec(2e-4, -5e-5, -1e-4, 3e-5, 2e-5, -1e-5);
  REQUIRE(plastic(at));
  largest_difference(at, "Lode-dependent, M given");
  warm_start(at);
  largest_difference(at, "Lode-dependent, warm start");
  at.values[P::critical_state_ratio] = 0.0;
  at.values[P::critical_state_friction_angle] = 22.0;  // M = 0.856
  at.values[P::shear_modulus] = 4000.0;
  REQUIRE(plastic(at));
  largest_difference(at, "Lode-dependent, phi_cs and G given");
}

TEST_CASE("MCC derivatives do not depend on the warm start of the local solve") {
  // The same increment from rest and from a previous step's rates: different iterations, the same
  // derivatives (implicit function theorem at the converged point).
  Point at = triaxial_point(150.0, 0.999 * q_on_surface(0.9, 150.0, 200.0), 200.0, 1.1,
                            vec(2e-4, -4e-5, -6e-5, 2e-5, -1e-5, 3e-5));
  const std::vector<int> lanes = {P::lambda, P::kappa, P::critical_state_ratio, P::poissons_ratio};
  const DualRun cold = run_dual(at, lanes);
  warm_start(at);
  const DualRun warm = run_dual(at, lanes);
  REQUIRE(cold.result.iterations != warm.result.iterations);
  for (int o = 0; o < 7; ++o)  // stress and p'_c (the rates' inputs differ by construction)
    for (int k = 0; k < kDualLanes; ++k) {
      const double a = dual_output(cold.out, o, k), b = dual_output(warm.out, o, k);
      INFO(output_name(o) << " lane " << k << ": " << a << " against " << b);
      CHECK(std::abs(a - b) <= 1e-9 * std::max(std::abs(a), 1e-3 * std::abs(dual_value(cold.out, o))));
    }
}

TEST_CASE("MCC initialise: the derivatives of the initial preconsolidation pressure") {
  // p'_c = p' + q^2/(M^2 p') where nothing else is given (the surface through the initial stress,
  // q > 0); a given p'_c or OCR does not depend on the parameters.
  const auto derivative = [](ParameterValues v, const InitialConditions& c, int parameter, double& dual) {
    std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes), 0.0);
    seeds[static_cast<std::size_t>(parameter * kDualLanes)] = 1.0;
    DualState ds;
    create(v)->with_derivatives(seeds)->initialise(c, ds);
    MaterialState ms;
    create(v)->initialise(c, ms);
    for (int i = 0; i < 6; ++i) CHECK(ds.stress[i].a == ms.stress[i]);
    for (int i = 0; i < kInternal; ++i)
      CHECK(ds.internal[static_cast<std::size_t>(i)].a == ms.internal[static_cast<std::size_t>(i)]);
    dual = ds.internal[ModifiedCamClay::preconsolidation_pressure].v[0];
    const double h = kRelativeStep * std::abs(v[static_cast<std::size_t>(parameter)]);
    ParameterValues plus = v, minus = v;
    plus[static_cast<std::size_t>(parameter)] += h;
    minus[static_cast<std::size_t>(parameter)] -= h;
    MaterialState sp, sm;
    create(plus)->initialise(c, sp);
    create(minus)->initialise(c, sm);
    return (sp.internal[ModifiedCamClay::preconsolidation_pressure] -
            sm.internal[ModifiedCamClay::preconsolidation_pressure]) / (2.0 * h);
  };
  InitialConditions c;
  c.stress = triaxial_stress(100.0, 60.0);  // q = 40 kPa
  c.void_ratio = 1.1;
  for (double lode : {0.0, 1.0}) {
    for (const char* given : {"nothing", "ocr 3", "larger p'_c"}) {
      ParameterValues v = base_values();
      v[P::lode_dependence] = lode;
      InitialConditions ci = c;
      if (std::string(given) == "ocr 3") ci.overconsolidation_ratio = 3.0;
      if (std::string(given) == "larger p'_c") ci.preconsolidation_pressure = 300.0;
      if (lode == 1.0) ci.stress = vec(100.0, 60.0, 70.0, 5.0, 0.0, -3.0);  // off the triaxial axes
      MaterialState ms;
      create(v)->initialise(ci, ms);
      const double pc = ms.internal[ModifiedCamClay::preconsolidation_pressure];
      for (int parameter : {static_cast<int>(P::lambda), static_cast<int>(P::critical_state_ratio)}) {
        double dual = 0.0;
        const double numeric = derivative(v, ci, parameter, dual);
        const double scale = std::abs(v[static_cast<std::size_t>(parameter)]) / pc;
        INFO("lode " << lode << ", " << given << ", d p'_c / d " << input_name(parameter) << ": dual " << dual
                     << ", central differences " << numeric);
        CHECK(std::abs(dual - numeric) * scale <= kDerivativeTolerance);
        if (std::string(given) != "nothing" || parameter == P::lambda) CHECK(dual == 0.0);
        if (std::string(given) == "nothing" && parameter == P::critical_state_ratio) CHECK(dual < 0.0);
      }
      // phi_cs given instead of M.
      v[P::critical_state_ratio] = 0.0;
      v[P::critical_state_friction_angle] = 25.0;
      double dual = 0.0;
      const double numeric = derivative(v, ci, P::critical_state_friction_angle, dual);
      create(v)->initialise(ci, ms);
      INFO("lode " << lode << ", " << given << ", d p'_c / d phi_cs: dual " << dual << ", central differences "
                   << numeric);
      CHECK(std::abs(dual - numeric) * 25.0 / ms.internal[ModifiedCamClay::preconsolidation_pressure] <=
            kDerivativeTolerance);
    }
  }
}

TEST_CASE("MCC derivatives: the wrong number of seeds is an input error naming the count") {
  const auto model = create(base_values());
  const std::vector<double> seeds(27, 0.0);
  CHECK_THROWS_MATCHES(model->with_derivatives(seeds), InputError,
                       Catch::Message("modified_cam_clay: with_derivatives: expected 28 seeds (7 parameters x 4 "
                                      "lanes), found 27"));
  CHECK(model->with_derivatives(std::vector<double>(28, 0.0)) != nullptr);
}

TEST_CASE("MCC dual integrate allocates nothing") {
  if (!test::kCountingAllocations) {
    WARN("allocation counting is off under AddressSanitizer; the Release run checks it");
    return;
  }
  Point at = triaxial_point(150.0, 0.999 * q_on_surface(0.9, 150.0, 200.0), 200.0, 1.1, vec(2e-4, -1e-4, -1e-4));
  const auto model = create(at.values);
  const auto dual = model->with_derivatives(std::vector<double>(28, 0.5));
  DualState in, out;
  dual->initialise(InitialConditions{triaxial_stress(150.0, 100.0), 1.1, kNotGiven, 1.5}, in);
  DualVec6 de;
  for (int i = 0; i < 6; ++i) de[i] = Dual(at.de[i]);
  Mat6 tangent;
  const long before = test::g_allocations.load();
  for (int step = 0; step < 50; ++step) {
    REQUIRE(dual->integrate(in, de, out, tangent).status == Status::ok);
    in = out;
  }
  CHECK(test::g_allocations.load() == before);
}

namespace {

// Undrained triaxial compression (natural strains, eps_r = -eps_a/2) from an isotropic state, by
// fixed increments, on the dual model with lanes = d/d(lambda, kappa, M, nu'); and on the double
// model (for central differences of the same discrete path).
constexpr double kPathP0 = 100.0;
constexpr double kPathOcr = 1.5;
constexpr int kPathSteps = 300;
constexpr double kPathStrain = 0.3;

struct PathPoint {
  double p = 0.0, q = 0.0, pc = 0.0;
  std::array<double, kDualLanes> dp{}, dq{};
};

InitialConditions path_start() {
  InitialConditions c;
  c.stress = triaxial_stress(kPathP0, kPathP0);
  c.void_ratio = 1.1;
  c.overconsolidation_ratio = kPathOcr;
  return c;
}

Vec6 path_increment() { return vec(kPathStrain / kPathSteps, -0.5 * kPathStrain / kPathSteps, -0.5 * kPathStrain / kPathSteps); }

std::vector<PathPoint> dual_path(const ParameterValues& v) {
  std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes), 0.0);
  const int lanes[kDualLanes] = {P::lambda, P::kappa, P::critical_state_ratio, P::poissons_ratio};
  for (int k = 0; k < kDualLanes; ++k) seeds[static_cast<std::size_t>(lanes[k] * kDualLanes + k)] = 1.0;
  const auto dual = create(v)->with_derivatives(seeds);
  DualState s, next;
  dual->initialise(path_start(), s);
  DualVec6 de;
  const Vec6 d = path_increment();
  for (int i = 0; i < 6; ++i) de[i] = Dual(d[i]);
  std::vector<PathPoint> path;
  Mat6 tangent;
  for (int step = 0; step < kPathSteps; ++step) {
    REQUIRE(dual->integrate(s, de, next, tangent).status == Status::ok);
    s = next;
    const Dual p = (s.stress[0] + s.stress[1] + s.stress[2]) / 3.0;
    const Dual q = s.stress[0] - s.stress[1];
    PathPoint pt;
    pt.p = p.a;
    pt.q = q.a;
    pt.pc = s.internal[ModifiedCamClay::preconsolidation_pressure].a;
    for (int k = 0; k < kDualLanes; ++k) {
      pt.dp[static_cast<std::size_t>(k)] = p.v[k];
      pt.dq[static_cast<std::size_t>(k)] = q.v[k];
    }
    path.push_back(pt);
  }
  return path;
}

std::vector<PathPoint> double_path(const ParameterValues& v) {
  const auto model = create(v);
  MaterialState s, next;
  model->initialise(path_start(), s);
  std::vector<PathPoint> path;
  Mat6 tangent;
  for (int step = 0; step < kPathSteps; ++step) {
    REQUIRE(model->integrate(s, path_increment(), next, tangent).status == Status::ok);
    s = next;
    path.push_back({mean_stress(s.stress), s.stress[0] - s.stress[1],
                    s.internal[ModifiedCamClay::preconsolidation_pressure], {}, {}});
  }
  return path;
}

mcc_reference::Material reference(const ParameterValues& v) {
  mcc_reference::Material m;
  m.lambda = v[P::lambda];
  m.kappa = v[P::kappa];
  m.m = v[P::critical_state_ratio];
  m.e0 = 1.1;
  m.poissons_ratio = v[P::poissons_ratio];
  return m;
}

}  // namespace

TEST_CASE("MCC derivatives along an undrained path: central differences of the path and the closed form") {
  const ParameterValues v = base_values();
  const std::vector<PathPoint> path = dual_path(v);
  const double pc0 = kPathOcr * kPathP0;
  const int lanes[kDualLanes] = {P::lambda, P::kappa, P::critical_state_ratio, P::poissons_ratio};
  double worst_path = 0.0, worst_closed = 0.0, worst_end = 0.0;
  std::vector<std::vector<PathPoint>> plus(kDualLanes), minus(kDualLanes);
  std::array<double, kDualLanes> steps{};
  for (int k = 0; k < kDualLanes; ++k) {
    ParameterValues vp = v, vm = v;
    const std::size_t i = static_cast<std::size_t>(lanes[k]);
    steps[static_cast<std::size_t>(k)] = kRelativeStep * v[i];
    vp[i] += steps[static_cast<std::size_t>(k)];
    vm[i] -= steps[static_cast<std::size_t>(k)];
    plus[static_cast<std::size_t>(k)] = double_path(vp);
    minus[static_cast<std::size_t>(k)] = double_path(vm);
  }
  int yielded = 0;
  for (std::size_t n = 0; n < path.size(); ++n) {
    const PathPoint& pt = path[n];
    REQUIRE(pt.p > 0.0);
    for (int k = 0; k < kDualLanes; ++k) {
      const std::size_t kk = static_cast<std::size_t>(k);
      const double scale = v[static_cast<std::size_t>(lanes[k])];
      const double h = steps[kk];
      // (1) Central differences of the same discrete path of the double model.
      const double dq = (plus[kk][n].q - minus[kk][n].q) / (2.0 * h);
      const double dp = (plus[kk][n].p - minus[kk][n].p) / (2.0 * h);
      const double e1 = std::max(std::abs(pt.dq[kk] - dq), std::abs(pt.dp[kk] - dp)) * scale / kPathP0;
      INFO("step " << n + 1 << ", lane " << input_name(lanes[k]) << ": dq dual " << pt.dq[kk] << ", central "
                   << dq << "; dp dual " << pt.dp[kk] << ", central " << dp);
      CHECK(e1 <= kDerivativeTolerance);
      worst_path = std::max(worst_path, e1);
    }
    // (2) Once yielding, every step end lies on the closed-form undrained path q = Q(p'; lambda,
    // kappa, M) (constant volume: kappa ln p' + (lambda - kappa) ln p'_c constant, and the yield
    // surface; Wood 1990, ch. 7), whatever the parameters, so dq/dt = dQ/dt + dQ/dp' dp'/dt, with
    // the partial derivatives of Q by central differences of closed_form.hpp.
    const bool on_surface = std::abs(pt.pc - pc0) > 1e-9 * pc0;
    if (!on_surface) continue;
    ++yielded;
    const double hp = kRelativeStep * pt.p;
    const auto mat = reference(v);
    const double q_closed = mcc_reference::undrained_q_at_p(mat, kPathP0, pc0, pt.p);
    REQUIRE(std::abs(q_closed - pt.q) <= 1e-9 * kPathP0);
    const double dq_dp = (mcc_reference::undrained_q_at_p(mat, kPathP0, pc0, pt.p + hp) -
                          mcc_reference::undrained_q_at_p(mat, kPathP0, pc0, pt.p - hp)) / (2.0 * hp);
    for (int k = 0; k < kDualLanes; ++k) {
      const std::size_t kk = static_cast<std::size_t>(k);
      const std::size_t i = static_cast<std::size_t>(lanes[k]);
      ParameterValues vp = v, vm = v;
      vp[i] += steps[kk];
      vm[i] -= steps[kk];
      const double dq_dt = (mcc_reference::undrained_q_at_p(reference(vp), kPathP0, pc0, pt.p) -
                            mcc_reference::undrained_q_at_p(reference(vm), kPathP0, pc0, pt.p)) / (2.0 * steps[kk]);
      const double expected = dq_dt + dq_dp * pt.dp[kk];
      const double e2 = std::abs(pt.dq[kk] - expected) * v[i] / kPathP0;
      INFO("step " << n + 1 << ", lane " << input_name(lanes[k]) << ": dq dual " << pt.dq[kk]
                   << ", closed-form relation " << expected);
      CHECK(e2 <= kDerivativeTolerance);
      worst_closed = std::max(worst_closed, e2);
    }
  }
  CHECK(yielded > kPathSteps / 2);
  // (3) The end of the path, at critical state to within a fraction of the tolerance: q_cs =
  // M p'_0 (R/2)^Lambda (Wood 1990, ch. 7), its derivatives by central differences of the closed form.
  const PathPoint& end = path.back();
  for (int k = 0; k < kDualLanes; ++k) {
    const std::size_t kk = static_cast<std::size_t>(k);
    const std::size_t i = static_cast<std::size_t>(lanes[k]);
    ParameterValues vp = v, vm = v;
    vp[i] += steps[kk];
    vm[i] -= steps[kk];
    const auto q_cs = [&](const ParameterValues& w) {
      return w[P::critical_state_ratio] * mcc_reference::undrained_critical_p(reference(w), kPathP0, pc0);
    };
    const double expected = (q_cs(vp) - q_cs(vm)) / (2.0 * steps[kk]);
    const double e3 = std::abs(end.dq[kk] - expected) * v[i] / kPathP0;
    INFO("end, lane " << input_name(lanes[k]) << ": dq dual " << end.dq[kk] << ", closed-form q_cs " << expected);
    CHECK(e3 <= kDerivativeTolerance);
    worst_end = std::max(worst_end, e3);
  }
  if (report())
    std::printf("undrained path (OCR %.1f, %d steps): largest difference %.2e against central differences of the path, "
                "%.2e against the closed-form relation, %.2e against d q_cs at %.0f %% axial strain\n",
                kPathOcr, kPathSteps, worst_path, worst_closed, worst_end, 100.0 * kPathStrain);
}

TEST_CASE("MCC derivatives along a chain of volume-changing increments: central differences of the chain") {
  // 100 strain-controlled increments that compress and shear (e, p'_c and the warm start change
  // each step), from a K0-like normally consolidated state with p'_c on the surface through it
  // (initialise's derivative through M enters), Lode dependence on and the radial strains unequal:
  // the derivatives of the end state in lambda, kappa, M and nu' against central differences of
  // the same chain of double increments.
  ParameterValues v = base_values();
  v[P::lode_dependence] = 1.0;
  InitialConditions c;
  c.stress = vec(150.0, 90.0, 80.0);
  c.void_ratio = 1.2;
  const Vec6 de = vec(1e-3, -1e-4, -2e-4, 5e-5);
  constexpr int kSteps = 100;
  const int lanes[kDualLanes] = {P::lambda, P::kappa, P::critical_state_ratio, P::poissons_ratio};
  std::vector<double> seeds(static_cast<std::size_t>(kParameters * kDualLanes), 0.0);
  for (int k = 0; k < kDualLanes; ++k) seeds[static_cast<std::size_t>(lanes[k] * kDualLanes + k)] = 1.0;
  const auto dual = create(v)->with_derivatives(seeds);
  DualState s, next;
  dual->initialise(c, s);
  DualVec6 dde;
  for (int i = 0; i < 6; ++i) dde[i] = Dual(de[i]);
  Mat6 tangent;
  for (int step = 0; step < kSteps; ++step) {
    REQUIRE(dual->integrate(s, dde, next, tangent).status == Status::ok);
    s = next;
  }
  const auto chain = [&](const ParameterValues& w) {
    const auto model = create(w);
    MaterialState m, n;
    model->initialise(c, m);
    Mat6 t;
    for (int step = 0; step < kSteps; ++step) {
      REQUIRE(model->integrate(m, de, n, t).status == Status::ok);
      m = n;
    }
    return outputs_of(m);
  };
  const Outputs end = chain(v);
  REQUIRE(end[6] > 1.5 * 150.0);  // p'_c grew: the chain hardened
  double worst = 0.0;
  for (int k = 0; k < kDualLanes; ++k) {
    const std::size_t i = static_cast<std::size_t>(lanes[k]);
    const double h = kRelativeStep * v[i];
    ParameterValues vp = v, vm = v;
    vp[i] += h;
    vm[i] -= h;
    const Outputs numeric = (chain(vp) - chain(vm)) / (2.0 * h);
    for (int o = 0; o < 6 + 2; ++o) {  // stress, p'_c, e
      const double exact = dual_output(s, o, k);
      const double difference = std::abs(exact - numeric[o]) * v[i] / output_scale(end, o);
      INFO("d " << output_name(o) << " / d " << input_name(lanes[k]) << ": dual " << exact << ", central differences "
                << numeric[o]);
      CHECK(difference <= kDerivativeTolerance);
      worst = std::max(worst, difference);
    }
  }
  if (report()) std::printf("chain of %d volume-changing increments: largest difference %.2e\n", kSteps, worst);
}
