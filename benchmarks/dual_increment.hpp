#pragma once
// The timed loop of one increment of a model's derivative version (issue 14, Model::with_derivatives),
// shared by the models' benchmarks: the cost of exact sensitivities against the double integrate.

#include <benchmark/benchmark.h>

#include <cstddef>
#include <initializer_list>
#include <vector>

#include "triaxcal/model.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal::bench {

/// Seeds with parameter parameters[k] (ModelInfo order) on lane k.
inline std::vector<double> lane_seeds(const Model& m, std::initializer_list<std::size_t> parameters) {
  std::vector<double> seeds(m.info().parameters.size() * kDualLanes, 0.0);
  std::size_t lane = 0;
  for (std::size_t i : parameters) seeds[i * kDualLanes + lane++] = 1.0;
  return seeds;
}

/// A state on dual numbers with no derivatives (stress and internal variables of `s`).
inline DualState dual_state(const MaterialState& s) {
  DualState d;
  for (int i = 0; i < 6; ++i) d.stress[i] = Dual(s.stress[i]);
  for (std::size_t j = 0; j < d.internal.size(); ++j) d.internal[j] = Dual(s.internal[j]);
  return d;
}

/// Times dual.integrate(in, de) (the increment without derivatives of its own).
inline void time_dual_increment(benchmark::State& state, const DualModel& dual, const DualState& in, const Vec6& de) {
  DualVec6 d;
  for (int i = 0; i < 6; ++i) d[i] = Dual(de[i]);
  DualState out;
  Mat6 tangent;
  for (auto _ : state) {
    benchmark::DoNotOptimize(dual.integrate(in, d, out, tangent));
    benchmark::DoNotOptimize(tangent.data());
    benchmark::ClobberMemory();
  }
}

}  // namespace triaxcal::bench
