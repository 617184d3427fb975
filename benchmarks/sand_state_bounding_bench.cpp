// Time per increment of the driver with the state-dependent bounding-surface sand model
// (sand_state_bounding, Dafalias & Manzari 2004): drained (constant s3', Newton on the radial stress)
// and undrained (strain-controlled) compression of dense (e 0.735 undrained, 0.83 drained) Toyoura
// sand from p' 100 kPa to 20 % axial strain in 1000, 2000 and 4000 fixed increments
// (DriverOptions::fixed_steps: the model's cost, not the driver's error control), and the same runs
// under the default error control with 50 records (time per record and model calls). Beside each
// timing the end q relative to a 16000-increment reference (first order: halves as increments
// double). One plastic integrate call (undrained-like increment on the cone) without the driver, and
// the same on the derivative version.
// Parameters: the Toyoura set of the paper's table, from memory (see the model's tests).
#include <benchmark/benchmark.h>

#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "dual_increment.hpp"
#include "protocols.hpp"
#include "sand_state_bounding/sand_state_bounding.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;

namespace {

std::unique_ptr<Model> model() {
  const std::map<std::string, double> given = {
      {"critical_state_ratio", 1.25}, {"extension_ratio", 0.712},        {"csl_void_ratio_ref", 0.934},
      {"csl_lambda", 0.019},          {"csl_exponent", 0.7},             {"shear_modulus_constant", 125.0},
      {"poissons_ratio", 0.05},       {"yield_cone_size", 0.01},         {"hardening_constant", 7.05},
      {"hardening_density_factor", 0.968}, {"bounding_exponent", 1.1},   {"dilatancy_constant", 0.704},
      {"dilatancy_exponent", 3.5},    {"fabric_max", 4.0},               {"fabric_rate", 600.0}};
  return SandStateBounding::create(resolve_parameters(SandStateBounding::model_info(), given, "bench"), "bench");
}

TestProtocol shear(Drainage d, int steps) {
  TestProtocol p = test::isotropic_shear(100.0, d, 0.2, steps);
  p.initial.void_ratio = d == Drainage::drained ? 0.83 : 0.735;
  return p;
}

double reference_q(Drainage d) {
  DriverOptions fixed;
  fixed.fixed_steps = true;
  const auto m = model();
  return simulate(fixed, *m, shear(d, 16000)).steps.back().q;
}

void run(benchmark::State& state, Drainage d, bool fixed_steps) {
  const auto m = model();
  const int records = fixed_steps ? static_cast<int>(state.range(0)) : 50;
  const TestProtocol p = shear(d, records);
  DriverOptions o;
  o.fixed_steps = fixed_steps;
  SimulationResult r;
  for (auto _ : state) {
    simulate(o, *m, p, r);
    benchmark::DoNotOptimize(r.steps.data());
  }
  if (!r.ok()) {
    state.SkipWithError(r.message.c_str());
    return;
  }
  const double ref = reference_q(d);
  state.counters["err_q_end"] = std::abs(r.steps.back().q - ref) / std::abs(ref);
  state.counters["model_calls_per_increment"] = static_cast<double>(r.model_calls) / records;
  state.counters["substeps"] = static_cast<double>(r.substeps);
  // Seconds per increment or record (printed with an SI prefix: 1.5u = 1.5 us).
  state.counters["time_per_increment"] = benchmark::Counter(static_cast<double>(state.iterations() * records),
                                                            benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}

void BM_SandDrainedFixed(benchmark::State& s) { run(s, Drainage::drained, true); }
void BM_SandUndrainedFixed(benchmark::State& s) { run(s, Drainage::undrained, true); }
void BM_SandDrainedErrorControl(benchmark::State& s) { run(s, Drainage::drained, false); }
void BM_SandUndrainedErrorControl(benchmark::State& s) { run(s, Drainage::undrained, false); }

void BM_SandIntegrate(benchmark::State& state) {
  const auto m = model();
  DriverOptions fixed;
  fixed.fixed_steps = true;
  TestProtocol p = test::isotropic_shear(100.0, Drainage::undrained, 0.005, 5);
  p.initial.void_ratio = 0.83;
  const auto r = simulate(fixed, *m, p);
  MaterialState in;
  in.stress = triaxial_stress(r.steps.back().axial_stress, r.steps.back().radial_stress);
  in.internal = r.steps.back().state;
  Vec6 de = Vec6::Zero();
  de << 2e-4, -1e-4, -1e-4, 0, 0, 0;
  MaterialState out;
  Mat6 tangent;
  for (auto _ : state) {
    benchmark::DoNotOptimize(m->integrate(in, de, out, tangent));
    benchmark::DoNotOptimize(tangent.data());
  }
}

// The same increment on the derivative version (issue 14; four parameters seeded, one a lane): the
// double integrate for the tangent plus the increment on dual numbers.
void BM_SandDualIntegrate(benchmark::State& state) {
  const auto m = model();
  DriverOptions fixed;
  fixed.fixed_steps = true;
  TestProtocol p = test::isotropic_shear(100.0, Drainage::undrained, 0.005, 5);
  p.initial.void_ratio = 0.83;
  const auto r = simulate(fixed, *m, p);
  const auto dual = m->with_derivatives(bench::lane_seeds(*m, {0, 1, 2, 3}));
  MaterialState in;
  in.stress = triaxial_stress(r.steps.back().axial_stress, r.steps.back().radial_stress);
  in.internal = r.steps.back().state;
  bench::time_dual_increment(state, *dual, bench::dual_state(in), test::vec(2e-4, -1e-4, -1e-4));
}

}  // namespace

BENCHMARK(BM_SandDrainedFixed)->Arg(1000)->Arg(2000)->Arg(4000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_SandUndrainedFixed)->Arg(1000)->Arg(2000)->Arg(4000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_SandDrainedErrorControl)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_SandUndrainedErrorControl)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_SandIntegrate);
BENCHMARK(BM_SandDualIntegrate);
BENCHMARK_MAIN();
