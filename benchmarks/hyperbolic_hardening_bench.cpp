// Time per increment of the driver with the hyperbolic double-hardening model, and beside it the
// accuracy at that increment count:
//   drained / undrained: normally consolidated compression (isotropic 200 kPa) to 20 % axial strain;
//     err_q, err_p = largest |q - q_ref|, |p' - p'_ref| along the curve relative to the final q_ref,
//     p'_ref, where the reference is the same run with 64000 increments (no closed form exists for
//     this path; backward Euler is first order, so the error halves as increments double).
//   hyperbola: heavily overconsolidated drained compression (cap never reached) with dilatancy off;
//     err_hyperbola = largest relative |q - q_hyperbola(eps_a)| up to 0.95 q_f, against
//     eps_a = q / (E_i (1 - q/q_a)) (Kondner 1963; Duncan & Chang 1970; Schanz, Vermeer & Bonnier 1999).
//     The implicit return satisfies it at every step end, so it stays at round-off for any count.
//   drained_automatic: drained with the local Newton's Jacobian by forward automatic
//     differentiation (the reference that the tests compare the hand-written Jacobian with): the
//     same curve, and what the hand-written Jacobian saves.
//   create: the model's constructor, which calibrates the cap (alpha, H) from the oedometer
//     stiffness and K0_nc; a calibration calls it once per objective evaluation.
//   increment / increment_dual: one integrate from each of the 200 recorded states of a drained
//     compression from OCR 1.1 (elastic, shear, cap and both surfaces, failure), triaxial strain
//     increment 2e-4: the double integrate, and the derivative version (with_derivatives, four
//     parameters seeded); time per integrate.
//   create_dual: with_derivatives (the constants and the cap calibration on dual numbers).
// Material: the model's defaults (invented round numbers), s3' = 200 kPa.
#include <benchmark/benchmark.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "hyperbolic_hardening/hyperbolic_hardening.hpp"
#include "protocols.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;

namespace {

constexpr double kS3 = 200.0;
constexpr int kReferenceSteps = 64000;

ParameterValues parameters(const std::map<std::string, double>& over) {
  return resolve_parameters(HyperbolicHardening::model_info(), over, "bench");
}

TestProtocol shear(Drainage d, int steps, double pc) {
  TestProtocol p = test::isotropic_shear(kS3, d, 0.2, steps);
  p.initial.preconsolidation_pressure = pc;
  return p;
}

const SimulationResult& reference(Drainage d) {
  static const HyperbolicHardening model(parameters({}), "bench");
  static const SimulationResult drained = simulate(DriverOptions{}, model, shear(Drainage::drained, kReferenceSteps, kNotGiven));
  static const SimulationResult undrained =
      simulate(DriverOptions{}, model, shear(Drainage::undrained, kReferenceSteps, kNotGiven));
  return d == Drainage::drained ? drained : undrained;
}

void set_time_per_increment(benchmark::State& state, int steps) {
  state.counters["time_per_increment"] =
      benchmark::Counter(static_cast<double>(steps), benchmark::Counter::kIsIterationInvariantRate |
                                                         benchmark::Counter::kInvert);
}

// The model with the forward-AD local Jacobian.
class AutomaticJacobian final : public Model {
 public:
  explicit AutomaticJacobian(const HyperbolicHardening& m) : m_(m) {}
  const ModelInfo& info() const override { return m_.info(); }
  void initialise(const InitialConditions& c, MaterialState& s) const override { m_.initialise(c, s); }
  IntegrationResult integrate(const MaterialState& in, const Vec6& de, MaterialState& out, Mat6& t) const override {
    return m_.integrate_with(HyperbolicHardening::LocalJacobian::automatic, in, de, out, t);
  }

 private:
  const HyperbolicHardening& m_;
};

void run(benchmark::State& state, Drainage d, bool automatic = false) {
  const HyperbolicHardening hand_written(parameters({}), "bench");
  const AutomaticJacobian with_ad(hand_written);
  const Model& model = automatic ? static_cast<const Model&>(with_ad) : hand_written;
  const int steps = static_cast<int>(state.range(0));
  const TestProtocol p = shear(d, steps, kNotGiven);
  SimulationResult r;
  for (auto _ : state) {
    r = simulate(DriverOptions{}, model, p);
    benchmark::DoNotOptimize(r.steps.data());
  }
  const SimulationResult& ref = reference(d);
  if (!r.ok() || !ref.ok()) {
    state.SkipWithError(r.ok() ? ref.message.c_str() : r.message.c_str());
    return;
  }
  const int every = kReferenceSteps / steps;
  double eq = 0.0, ep = 0.0;
  for (std::size_t i = 0; i < r.steps.size(); ++i) {
    const StepRecord& x = ref.steps[i * every];
    eq = std::max(eq, std::abs(r.steps[i].q - x.q) / std::abs(ref.steps.back().q));
    ep = std::max(ep, std::abs(r.steps[i].p - x.p) / ref.steps.back().p);
  }
  set_time_per_increment(state, steps);
  state.counters["err_q"] = eq;
  state.counters["err_p"] = ep;
  state.counters["cuts"] = r.total_cuts;
  state.counters["model_calls_per_increment"] = static_cast<double>(r.model_calls) / steps;
}

void BM_drained(benchmark::State& state) { run(state, Drainage::drained); }
void BM_undrained(benchmark::State& state) { run(state, Drainage::undrained); }
void BM_drained_automatic(benchmark::State& state) { run(state, Drainage::drained, true); }

void BM_hyperbola(benchmark::State& state) {
  const HyperbolicHardening model(parameters({{"dilatancy_rule", 2.0}}), "bench");
  const int steps = static_cast<int>(state.range(0));
  const TestProtocol p = shear(Drainage::drained, steps, 40.0 * kS3);
  SimulationResult r;
  for (auto _ : state) {
    r = simulate(DriverOptions{}, model, p);
    benchmark::DoNotOptimize(r.steps.data());
  }
  if (!r.ok()) {
    state.SkipWithError(r.message.c_str());
    return;
  }
  const ParameterValues v = parameters({{"dilatancy_rule", 2.0}});
  const double ratio = std::pow(kS3 / v[HyperbolicHardening::reference_pressure], v[HyperbolicHardening::stress_exponent]);
  const double rf = v[HyperbolicHardening::failure_ratio];
  const double ei = 2.0 * v[HyperbolicHardening::secant_stiffness_ref] * ratio / (2.0 - rf);
  const double sphi = std::sin(degrees_to_radians(v[HyperbolicHardening::friction_angle]));
  const double qf = 2.0 * sphi / (1.0 - sphi) * kS3;
  double worst = 0.0;
  for (std::size_t i = 1; i < r.steps.size() && r.steps[i].q <= 0.95 * qf; ++i) {
    const double e = r.steps[i].axial_strain;
    const double expected = e * ei / (1.0 + e * ei * rf / qf);
    worst = std::max(worst, std::abs(r.steps[i].q - expected) / expected);
  }
  set_time_per_increment(state, steps);
  state.counters["err_hyperbola"] = worst;
}

void BM_create(benchmark::State& state) {
  const ParameterValues v = parameters({});
  for (auto _ : state) {
    HyperbolicHardening m(v, "bench");
    benchmark::DoNotOptimize(m.cap_alpha());
  }
}

// The states of one drained compression (200 records) and the strain increment integrated from each.
const std::vector<MaterialState>& increment_states() {
  static const std::vector<MaterialState> states = [] {
    const HyperbolicHardening model(parameters({{"cohesion", 5.0}}), "bench");
    TestProtocol p = shear(Drainage::drained, 200, 1.1 * kS3);
    const SimulationResult r = simulate(DriverOptions{}, model, p);
    std::vector<MaterialState> s;
    for (const StepRecord& x : r.steps) {
      MaterialState m;
      m.stress = triaxial_stress(x.axial_stress, x.radial_stress);
      m.internal = x.state;
      s.push_back(m);
    }
    return s;
  }();
  return states;
}

Vec6 increment() {
  Vec6 de;
  de << 2e-4, -0.6e-4, -0.6e-4, 0.0, 0.0, 0.0;
  return de;
}

void BM_increment(benchmark::State& state) {
  const HyperbolicHardening model(parameters({{"cohesion", 5.0}}), "bench");
  const std::vector<MaterialState>& states = increment_states();
  const Vec6 de = increment();
  MaterialState out;
  Mat6 t;
  for (auto _ : state)
    for (const MaterialState& in : states) {
      benchmark::DoNotOptimize(model.integrate(in, de, out, t));
      benchmark::ClobberMemory();
    }
  state.counters["time_per_integrate"] =
      benchmark::Counter(static_cast<double>(states.size()),
                         benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
}

std::vector<double> four_seeds() {
  std::vector<double> seeds(HyperbolicHardening::parameter_count * kDualLanes, 0.0);
  const int seeded[kDualLanes] = {HyperbolicHardening::friction_angle, HyperbolicHardening::secant_stiffness_ref,
                                  HyperbolicHardening::stress_exponent, HyperbolicHardening::oedometer_stiffness_ref};
  for (int k = 0; k < kDualLanes; ++k) seeds[static_cast<std::size_t>(seeded[k] * kDualLanes + k)] = 1.0;
  return seeds;
}

void BM_increment_dual(benchmark::State& state) {
  const HyperbolicHardening model(parameters({{"cohesion", 5.0}}), "bench");
  const auto dual = model.with_derivatives(four_seeds());
  std::vector<DualState> states;
  for (const MaterialState& m : increment_states()) {
    DualState d;
    for (int i = 0; i < 6; ++i) d.stress[i] = Dual(m.stress[i]);
    for (std::size_t i = 0; i < m.internal.size(); ++i) d.internal[i] = Dual(m.internal[i]);
    states.push_back(d);
  }
  DualVec6 de;
  for (int i = 0; i < 6; ++i) de[i] = Dual(increment()[i]);
  DualState out;
  Mat6 t;
  for (auto _ : state)
    for (const DualState& in : states) {
      benchmark::DoNotOptimize(dual->integrate(in, de, out, t));
      benchmark::ClobberMemory();
    }
  state.counters["time_per_integrate"] =
      benchmark::Counter(static_cast<double>(states.size()),
                         benchmark::Counter::kIsIterationInvariantRate | benchmark::Counter::kInvert);
}

void BM_create_dual(benchmark::State& state) {
  const HyperbolicHardening model(parameters({}), "bench");
  const std::vector<double> seeds = four_seeds();
  for (auto _ : state) benchmark::DoNotOptimize(model.with_derivatives(seeds));
}

}  // namespace

BENCHMARK(BM_drained)->Arg(1000)->Arg(2000)->Arg(4000)->Arg(8000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_undrained)->Arg(1000)->Arg(2000)->Arg(4000)->Arg(8000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_drained_automatic)->Arg(1000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_hyperbola)->Arg(1000)->Arg(2000)->Arg(4000)->Arg(8000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_create)->Unit(benchmark::kNanosecond);
BENCHMARK(BM_increment)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_increment_dual)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_create_dual)->Unit(benchmark::kNanosecond);

BENCHMARK_MAIN();
