// Calibration wall time, evaluations and evaluations per second on synthetic tests (invented
// parameters, generated with simulate(); bench_problems.hpp): Mohr-Coulomb 5 free on 3 CD tests of
// 300 points, MCC 4 free on 3 CU tests at OCR 1, 2, 6 (300 points), hyperbolic_hardening 6 free on
// 3 CD + 1 oedometer test, sand_state_bounding 10 free on 6 CD and CU tests (dense and loose, about 30
// points a curve). Each case: the default (least-squares multi-start), and the old default of
// the demo, a global CRS2 stage of 4000 evaluations followed by BOBYQA; 1 and 2 threads. The sand
// problem: the default, and one least-squares run from its start without intervals (the round trip
// of tests/calibrate/sand_state_bounding_fit_test.cpp), instead of CRS2.
//   ./calibrate_bench --benchmark_counters_tabular=true

#include <benchmark/benchmark.h>

#include <cmath>

#include "bench_problems.hpp"

using namespace triaxcal;
using namespace triaxcal::test;
using namespace triaxcal::bench;

namespace {

void run(benchmark::State& state, CalibrationProblem (*make)()) {
  const CalibrationProblem problem = make();
  CalibrationOptions o;
  o.threads = static_cast<int>(state.range(0));
  if (state.range(1) == 2) {  // one least-squares run from the start, no intervals
    o.starts = 1;
    o.uncertainty = false;
  }
  if (state.range(1) == 1) {  // the old default of the demo: CRS2 4000 + BOBYQA
    o.global = GlobalAlgorithm::crs2;
    o.global_evaluations = 4000;
    o.local = LocalAlgorithm::bobyqa;
  }
  long evaluations = 0;
  int at_best = 0, runs = 0;
  double objective = 0.0, seconds = 0.0;
  for (auto _ : state) {
    const CalibrationSummary s = calibrate(o, problem);
    evaluations = s.evaluations + s.jacobian_evaluations;
    objective = s.objective;
    seconds = s.wall_time;
    at_best = s.starts_at_best;
    runs = s.local_runs;
  }
  state.counters["evaluations"] = static_cast<double>(evaluations);
  state.counters["evals_per_s"] = static_cast<double>(evaluations) / seconds;
  state.counters["objective"] = objective;
  state.counters["local_runs"] = runs;
  state.counters["at_best"] = at_best;
}

}  // namespace

// Args: {threads, 0 = default least-squares multi-start, 1 = CRS2 4000 + BOBYQA, 2 = one least-squares run}.
BENCHMARK_CAPTURE(run, mohr_coulomb_5free_3cd, &mohr_coulomb)
    ->ArgsProduct({{1, 2}, {0, 1}})->Iterations(1)->UseRealTime()->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(run, cam_clay_4free_3cu, &cam_clay)
    ->ArgsProduct({{1, 2}, {0, 1}})->Iterations(1)->UseRealTime()->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(run, hyperbolic_6free_3cd_1oed, &hyperbolic)
    ->ArgsProduct({{1, 2}, {0, 1}})->Iterations(1)->UseRealTime()->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(run, sand_10free_6tests, &sand)
    ->ArgsProduct({{1, 2}, {0, 2}})->Iterations(1)->UseRealTime()->Unit(benchmark::kMillisecond);

BENCHMARK_MAIN();
