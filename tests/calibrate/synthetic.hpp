#pragma once
// Synthetic "measured" tests for calibration round trips: curves generated with the project's own
// simulator from known parameters (invented values, labelled as such in every test), optionally
// with Gaussian noise of lab precision. Not a reference for anything outside these tests.

#include <cmath>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "triaxcal/calibrate.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"

namespace triaxcal::test {

/// Lab precision used for the noisy round trips: standard deviation 0.5 kPa on stresses and 1e-4
/// on strains (common practice for a well-run triaxial apparatus, no source; value from memory).
inline constexpr double kStressNoise = 0.5;
inline constexpr double kStrainNoise = 1e-4;

class Noise {
 public:
  explicit Noise(std::uint64_t seed) : rng_(seed) {}
  /// Standard normal by Box-Muller on the top 53 bits: the same numbers on every platform.
  double normal() {
    const double u1 = (static_cast<double>(rng_() >> 11) + 0.5) * 0x1.0p-53;
    const double u2 = static_cast<double>(rng_() >> 11) * 0x1.0p-53;
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * 3.14159265358979323846 * u2);
  }

 private:
  std::mt19937_64 rng_;
};

inline bool strain_quantity(Quantity q) {
  return q == Quantity::axial_strain || q == Quantity::radial_strain || q == Quantity::volumetric_strain;
}

/// Simulates `protocol` with `model` and returns a test whose curves are y(axial strain) for every
/// quantity in `ys`, strains counted from the start of `zero_stage`, every record from there on.
/// `noise` (may be null) adds kStressNoise / kStrainNoise to y.
inline CalibrationTest synthetic_test(const std::string& id, const TestProtocol& protocol, const Model& model,
                                      const std::vector<Quantity>& ys, int zero_stage, Noise* noise) {
  const SimulationResult r = simulate(DriverOptions{}, model, protocol);
  if (!r.ok()) throw std::runtime_error("synthetic test " + id + " failed: " + r.message);
  CalibrationTest t;
  t.id = id;
  t.protocol = protocol;
  const std::size_t first = zero_stage <= 0 ? 0 : static_cast<std::size_t>(r.stages[static_cast<std::size_t>(zero_stage)].first - 1);
  const StepRecord& base = r.steps[first];
  for (Quantity q : ys) {
    MeasuredCurve c;
    c.x = Quantity::axial_strain;
    c.y = q;
    c.strain_zero_stage = zero_stage;
    for (std::size_t j = first + 1; j < r.steps.size(); ++j) {
      c.xs.push_back(r.steps[j].axial_strain - base.axial_strain);
      double y = value_of(r.steps[j], q) - (strain_quantity(q) ? value_of(base, q) : 0.0);
      if (noise) y += (strain_quantity(q) ? kStrainNoise : kStressNoise) * noise->normal();
      c.ys.push_back(y);
    }
    t.curves.push_back(std::move(c));
  }
  return t;
}

inline TestProtocol consolidated_shear(const std::string& name, double p0, Drainage drainage, double strain, int steps,
                                       double void_ratio = 0.65) {
  TestProtocol p;
  p.name = name;
  p.initial.stress = triaxial_stress(p0, p0);
  p.initial.void_ratio = void_ratio;
  Stage s;
  s.type = StageType::shear;
  s.drainage = drainage;
  s.axial_strain = strain;
  s.steps = steps;
  p.stages.push_back(s);
  return p;
}

inline ParameterSpec free_parameter(const std::string& name, double lower, double upper, double start,
                                    ParameterScale scale = ParameterScale::linear) {
  ParameterSpec s;
  s.name = name;
  s.status = ParameterStatus::free;
  s.lower = lower;
  s.upper = upper;
  s.start = start;
  s.scale = scale;
  return s;
}

inline ParameterSpec fixed_parameter(const std::string& name, double value) {
  ParameterSpec s;
  s.name = name;
  s.status = ParameterStatus::fixed;
  s.value = value;
  return s;
}

inline CalibrationProblem problem_for(const std::string& model) {
  const ModelEntry& entry = find_model(model);
  CalibrationProblem p;
  p.model = &entry.info();
  auto create = entry.create;
  p.create = [create](const ParameterValues& v) { return create(v, "calibration"); };
  return p;
}

inline double value_named(const CalibrationSummary& s, const std::string& name) {
  for (const FittedParameter& p : s.parameters)
    if (p.name == name) return p.value;
  throw std::runtime_error("no parameter " + name);
}

inline const FittedParameter& parameter_named(const CalibrationSummary& s, const std::string& name) {
  for (const FittedParameter& p : s.parameters)
    if (p.name == name) return p;
  throw std::runtime_error("no parameter " + name);
}

/// Largest RMSE of any curve as a fraction of its measured range.
inline double worst_relative_rmse(const CalibrationSummary& s) {
  double worst = 0.0;
  for (const TestFit& t : s.tests)
    for (const CurveFit& c : t.curves) worst = std::max(worst, std::isnan(c.rmse) ? 1e9 : c.rmse / c.range);
  return worst;
}

}  // namespace triaxcal::test
