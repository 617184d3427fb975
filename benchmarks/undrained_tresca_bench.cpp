// The undrained Tresca model: one plastic increment (main plane from distinct principal stresses, and
// the triaxial compression edge) of the model against one of its derivative version (issue 14, the
// three parameters seeded, one a lane), and a UU compression through the driver (fixed 1000
// increments to 5 % axial strain). Parameters: an invented soft clay (c_u 40 kPa, E_u 30000 kPa).
#include <benchmark/benchmark.h>

#include <vector>

#include "dual_increment.hpp"
#include "protocols.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;

namespace {

std::unique_ptr<Model> model() { return find_model("undrained_tresca").create({40.0, 30000.0, 0.495}, "bench"); }

struct Increment {
  MaterialState in;
  Vec6 de;
};

Increment increment(int which) {
  Increment c;
  c.in.stress = which == 0 ? test::vec(150, 110, 80) : triaxial_stress(160, 100);
  c.de = which == 0 ? test::vec(2e-3, 0, -1.5e-3) : test::vec(2e-3, -1e-3, -1e-3);
  return c;
}

void BM_TrescaIncrement(benchmark::State& state) {
  const auto m = model();
  const Increment c = increment(static_cast<int>(state.range(0)));
  MaterialState out;
  Mat6 t;
  for (auto _ : state) {
    benchmark::DoNotOptimize(m->integrate(c.in, c.de, out, t));
    benchmark::ClobberMemory();
  }
}

void BM_TrescaDualIncrement(benchmark::State& state) {
  const auto m = model();
  const auto dual = m->with_derivatives(bench::lane_seeds(*m, {0, 1, 2}));
  const Increment c = increment(static_cast<int>(state.range(0)));
  bench::time_dual_increment(state, *dual, bench::dual_state(c.in), c.de);
}

void BM_TrescaUndrainedShear(benchmark::State& state) {
  const auto m = model();
  const TestProtocol p = test::isotropic_shear(100.0, Drainage::undrained, 0.05, 1000);
  DriverOptions options;
  options.fixed_steps = true;
  SimulationResult r;
  for (auto _ : state) {
    simulate(options, *m, p, r);
    benchmark::DoNotOptimize(r.steps.data());
  }
  if (!r.ok()) state.SkipWithError(r.message.c_str());
}

}  // namespace

BENCHMARK(BM_TrescaIncrement)->Arg(0)->Arg(1);
BENCHMARK(BM_TrescaDualIncrement)->Arg(0)->Arg(1);
BENCHMARK(BM_TrescaUndrainedShear)->Unit(benchmark::kMicrosecond);
BENCHMARK_MAIN();
