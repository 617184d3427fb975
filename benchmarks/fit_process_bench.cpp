// One calibration a process, for whole-process timings (start-up, problem set-up, the fit,
// intervals): fit_process_bench <mohr_coulomb|cam_clay|hyperbolic|sand> <new|fd|old> [threads]
//   new: the default (least-squares multi-start, exact Jacobians where the model has a derivative
//   version, intervals); fd: the same with finite-difference Jacobians (sensitivities =
//   finite_differences); old: CRS2 4000 + BOBYQA, the demo's former default. Prints evaluations (objective + Jacobian simulations), objective, failed
//   simulations (those at the search's work limit), local runs (those whose start failed), runs at
//   the best objective and the in-process wall time. Time it from outside, interleaved
//   (benchmarks/time_fits.sh). The problems are synthetic (bench_problems.hpp, invented values).
#include <cstdio>
#include <cstdlib>
#include <string>

#include "bench_problems.hpp"

using namespace triaxcal;
using namespace triaxcal::bench;

int main(int argc, char** argv) {
  if (argc < 3) {
    std::fprintf(stderr, "usage: fit_process_bench <mohr_coulomb|cam_clay|hyperbolic|sand> <new|fd|old> [threads]\n");
    return 2;
  }
  const std::string which = argv[1], mode = argv[2];
  CalibrationProblem problem;
  if (which == "mohr_coulomb")
    problem = mohr_coulomb();
  else if (which == "cam_clay")
    problem = cam_clay();
  else if (which == "hyperbolic")
    problem = hyperbolic();
  else if (which == "sand")
    problem = sand();
  else
    return 2;
  CalibrationOptions o;
  if (argc > 3) o.threads = std::atoi(argv[3]);
  if (mode == "fd") o.sensitivities = Sensitivities::finite_differences;
  if (mode == "old") {
    o.global = GlobalAlgorithm::crs2;
    o.global_evaluations = 4000;
    o.local = LocalAlgorithm::bobyqa;
  }
  const CalibrationSummary s = calibrate(o, problem);
  std::printf("%s %s: %s, objective %.9g, evaluations %ld + %ld Jacobian (%ld exact, %ld by differences), failed simulations %ld (%ld at the work "
              "limit), local runs %d (%d failed at the start), at best %d, %.4f s\n",
              which.c_str(), mode.c_str(), to_string(s.outcome).c_str(), s.objective, s.evaluations,
              s.jacobian_evaluations, s.exact_jacobians, s.difference_jacobians, s.failed_simulations, s.work_limited_simulations, s.local_runs, s.failed_starts,
              s.starts_at_best, s.wall_time);
  return 0;
}
