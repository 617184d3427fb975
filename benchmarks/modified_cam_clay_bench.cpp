// Nanoseconds per increment of the driver with Modified Cam-Clay: drained (constant s3', Newton on
// the radial stress) and undrained (strain-controlled) compression of a normally consolidated
// specimen to 20 % axial strain, 1000 fixed increments and doublings of it (DriverOptions::fixed_steps:
// the model's cost and discretisation, not the driver's error control). Beside each timing, the
// error against the reference solutions of models/modified_cam_clay/closed_form.hpp (natural
// strains, like the driver's records):
//   err_q_path, err_p_path: largest |q - q_ref(eps_a)|, |p' - p'_ref(eps_a)| along the curve,
//                            relative to q_cs and p'_cs (first order: halves as increments double);
//   err_pq_closed_form:     undrained only, largest relative distance of q from the closed-form
//                            p'-q path of Wood (1990) (round-off, independent of the increment).
// Material: invented round numbers (lambda 0.2, kappa 0.04, M 0.9, nu' 0.25, e0 1.1, p'_0 200 kPa).
#include <benchmark/benchmark.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "modified_cam_clay/closed_form.hpp"
#include "dual_increment.hpp"
#include "protocols.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/sensitivity.hpp"

using namespace triaxcal;

namespace {

constexpr double kP0 = 200.0;

std::unique_ptr<Model> model() {
  const ModelEntry& e = find_model("modified_cam_clay");
  return e.create(resolve_parameters(e.info(),
                                     {{"lambda", 0.2}, {"kappa", 0.04}, {"critical_state_ratio", 0.9},
                                      {"poissons_ratio", 0.25}},
                                     "bench"),
                  "bench");
}

mcc_reference::Material material() {
  mcc_reference::Material m;
  m.lambda = 0.2;
  m.kappa = 0.04;
  m.m = 0.9;
  m.e0 = 1.1;
  m.poissons_ratio = 0.25;
  return m;
}

TestProtocol shear(Drainage d, int steps) {
  TestProtocol p = test::isotropic_shear(kP0, d, 0.2, steps);
  p.initial.void_ratio = 1.1;  // normally consolidated: p'_c = p'_0
  return p;
}

void run(benchmark::State& state, Drainage d) {
  const auto m = model();
  const TestProtocol p = shear(d, static_cast<int>(state.range(0)));
  DriverOptions fixed;
  fixed.fixed_steps = true;
  SimulationResult r;
  for (auto _ : state) {
    r = simulate(fixed, *m, p);
    benchmark::DoNotOptimize(r.steps.data());
  }
  if (!r.ok()) {
    state.SkipWithError(r.message.c_str());
    return;
  }
  const auto mat = material();
  const auto ref = d == Drainage::drained ? mcc_reference::drained_path(mat, kP0, kP0)
                                          : mcc_reference::undrained_path(mat, kP0, kP0);
  double ep = 0.0;
  double eq = 0.0;
  double epq = 0.0;
  for (const StepRecord& s : r.steps) {
    const auto x = mcc_reference::at_axial_strain(ref, s.axial_strain);
    ep = std::max(ep, std::abs(s.p - x.p) / ref.back().p);
    eq = std::max(eq, std::abs(s.q - x.q) / ref.back().q);
    if (d == Drainage::undrained && s.step > 0) {
      const double qc = mcc_reference::undrained_q_at_p(mat, kP0, kP0, s.p);
      epq = std::max(epq, std::abs(s.q - qc) / qc);
    }
  }
  state.counters["err_q_path"] = eq;
  state.counters["err_p_path"] = ep;
  if (d == Drainage::undrained) state.counters["err_pq_closed_form"] = epq;
  state.counters["model_calls_per_increment"] = static_cast<double>(r.model_calls) / state.range(0);
  // Seconds per increment (printed with an SI prefix: 450n = 450 ns).
  state.counters["time_per_increment"] = benchmark::Counter(
      static_cast<double>(state.iterations() * state.range(0)), benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}

void BM_ModifiedCamClayDrainedShear(benchmark::State& s) { run(s, Drainage::drained); }
void BM_ModifiedCamClayUndrainedShear(benchmark::State& s) { run(s, Drainage::undrained); }

// One plastic return (wet side, 2e-4 axial strain at constant volume) without the driver.
void BM_ModifiedCamClayIntegrate(benchmark::State& state) {
  const auto m = model();
  MaterialState in;
  InitialConditions c;
  c.stress = triaxial_stress(kP0, kP0);
  c.void_ratio = 1.1;
  m->initialise(c, in);
  Vec6 de = Vec6::Zero();
  de << 2e-4, -1e-4, -1e-4, 0, 0, 0;
  MaterialState out;
  Mat6 tangent;
  for (auto _ : state) {
    benchmark::DoNotOptimize(m->integrate(in, de, out, tangent));
    benchmark::DoNotOptimize(tangent.data());
  }
}

// The same return on the derivative version (Model::with_derivatives), four lanes seeded with
// lambda, kappa, M and nu': the cost of the exact sensitivities of one increment against
// BM_ModifiedCamClayIntegrate.
void BM_ModifiedCamClayIntegrateDual(benchmark::State& state) {
  const auto m = model();
  const auto dual = m->with_derivatives(bench::lane_seeds(*m, {0, 1, 2, 4}));
  DualState in;
  InitialConditions c;
  c.stress = triaxial_stress(kP0, kP0);
  c.void_ratio = 1.1;
  dual->initialise(c, in);
  bench::time_dual_increment(state, *dual, in, test::vec(2e-4, -1e-4, -1e-4));
}

}  // namespace

BENCHMARK(BM_ModifiedCamClayDrainedShear)->Arg(1000)->Arg(2000)->Arg(4000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_ModifiedCamClayUndrainedShear)->Arg(1000)->Arg(2000)->Arg(4000)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_ModifiedCamClayIntegrate);
BENCHMARK(BM_ModifiedCamClayIntegrateDual);
BENCHMARK_MAIN();
