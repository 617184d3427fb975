// Nanoseconds per increment of the general driver with Mohr-Coulomb: drained (Newton on the radial
// stress) and undrained (strain-controlled) shear of 1000 increments to 20 % axial strain, with the
// error against the closed-form q_f = (2 s3' sin phi + 2 c cos phi)/(1 - sin phi) beside each figure;
// and one plastic increment of the model against one of its derivative version (issue 14).
#include <benchmark/benchmark.h>

#include <cmath>
#include <vector>

#include "dual_increment.hpp"
#include "protocols.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;

namespace {

constexpr double kPhi = 32.0, kC = 5.0, kPsi = 6.0, kS3 = 100.0;

std::unique_ptr<Model> model(double psi) {
  const ModelEntry& e = find_model("mohr_coulomb");
  return e.create(resolve_parameters(e.info(),
                                     {{"youngs_modulus", 30000.0}, {"poissons_ratio", 0.3}, {"cohesion", kC},
                                      {"friction_angle", kPhi}, {"dilation_angle", psi}},
                                     "bench"),
                  "bench");
}

TestProtocol shear(Drainage d, int steps) { return test::isotropic_shear(kS3, d, 0.2, steps); }

// range(0) = record steps; range(1) = 1: fixed steps (one increment a record), 0: error control at
// the default tolerance.
void run(benchmark::State& state, Drainage d, double psi) {
  const auto m = model(psi);
  const TestProtocol p = shear(d, static_cast<int>(state.range(0)));
  DriverOptions options;
  options.fixed_steps = state.range(1) != 0;
  SimulationResult r;
  for (auto _ : state) {
    simulate(options, *m, p, r);
    benchmark::DoNotOptimize(r.steps.data());
  }
  const double sp = std::sin(kPhi * M_PI / 180), cp = std::cos(kPhi * M_PI / 180);
  if (d == Drainage::drained) {
    const double qf = (2 * kS3 * sp + 2 * kC * cp) / (1 - sp);
    state.counters["rel_error_qf"] = std::abs(r.steps.back().q - qf) / qf;
  } else {
    // psi = 0: p' stays at s3' and q ends on the envelope q = M p' + 6 c cos phi/(3 - sin phi).
    const double qf = 6 * sp / (3 - sp) * kS3 + 6 * kC * cp / (3 - sp);
    state.counters["rel_error_qf"] = std::abs(r.steps.back().q - qf) / qf;
  }
  state.counters["model_calls"] = static_cast<double>(r.model_calls);
  state.counters["model_calls_per_increment"] = static_cast<double>(r.model_calls) / state.range(0);
  // Seconds per increment (printed with an SI prefix: 450n = 450 ns).
  state.counters["time_per_increment"] = benchmark::Counter(
      static_cast<double>(state.iterations() * state.range(0)), benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
  if (!r.ok()) state.SkipWithError(r.message.c_str());
}

void BM_MohrCoulombDrainedShear(benchmark::State& s) { run(s, Drainage::drained, kPsi); }
void BM_MohrCoulombUndrainedShear(benchmark::State& s) { run(s, Drainage::undrained, 0.0); }

// One increment, the model against its derivative version (all four lanes seeded): range(0) = 0 a
// main-plane return from distinct principal stresses, 1 the triaxial compression edge.
struct Increment {
  MaterialState in;
  Vec6 de;
};
Increment increment(int which) {
  Increment c;
  Vec6 s, de;
  if (which == 0) {
    s << 150, 100, 60, 0, 0, 0;
    de << 2e-2, 0, -5e-3, 0, 0, 0;
  } else {
    s << 100, 50, 50, 0, 0, 0;
    de << 2e-2, -4e-3, -4e-3, 0, 0, 0;
  }
  c.in.stress = s;
  c.de = de;
  return c;
}

void BM_MohrCoulombIncrement(benchmark::State& state) {
  const auto m = model(kPsi);
  const Increment c = increment(static_cast<int>(state.range(0)));
  MaterialState out;
  Mat6 t;
  for (auto _ : state) {
    benchmark::DoNotOptimize(m->integrate(c.in, c.de, out, t));
    benchmark::ClobberMemory();
  }
}

void BM_MohrCoulombDualIncrement(benchmark::State& state) {
  const auto m = model(kPsi);
  const auto dual = m->with_derivatives(bench::lane_seeds(*m, {0, 1, 2, 3}));
  const Increment c = increment(static_cast<int>(state.range(0)));
  bench::time_dual_increment(state, *dual, bench::dual_state(c.in), c.de);
}

}  // namespace

BENCHMARK(BM_MohrCoulombIncrement)->Arg(0)->Arg(1);
BENCHMARK(BM_MohrCoulombDualIncrement)->Arg(0)->Arg(1);
// Fixed 200 steps (the old default accuracy) against the error control with 50, 100 and 200 records.
BENCHMARK(BM_MohrCoulombDrainedShear)->Args({1000, 1})->Args({200, 1})->Args({50, 0})->Args({100, 0})->Args({200, 0})->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_MohrCoulombUndrainedShear)->Args({1000, 1})->Args({200, 1})->Args({50, 0})->Args({100, 0})->Args({200, 0})->Unit(benchmark::kMicrosecond);
BENCHMARK_MAIN();
