#pragma once
// Synthetic "measured" tests for calibration round trips: curves generated with the project's own
// simulator from known parameters (invented values, labelled as such in every test), optionally
// with Gaussian noise of lab precision. Not a reference for anything outside these tests.
//
// Like a laboratory's, the synthetic strains are ENGINEERING strains relative to the curve's origin
// (dL / L_origin, dV / V_origin; conventions.hpp engineering_strain of the natural-strain difference),
// and the reference run is never the fit's own discretisation: by default it runs the driver's error
// control at a tolerance 1000x tighter than the default the fits use (reference_options()), so a bias of
// the integrator at the fit's tolerance shows up as a parameter error instead of cancelling out.

#include <cmath>
#include <cstdint>
#include <random>
#include <string>
#include <vector>

#include "../support/lab_noise.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"

namespace triaxcal::test {

inline bool strain_quantity(Quantity q) {
  return q == Quantity::axial_strain || q == Quantity::radial_strain || q == Quantity::volumetric_strain;
}

/// The driver options of a synthetic reference run: the error control at a tolerance 1000x tighter
/// than DriverOptions' default (the fits' tolerance), i.e. curves about 1000x closer to the converged
/// solution than the fit's simulations (DEVELOPERS.md "The driver").
inline DriverOptions reference_options() {
  DriverOptions o;
  o.tolerance = DriverOptions{}.tolerance / 1000.0;
  return o;
}

/// Simulates `protocol` with `model` (by `reference`, default reference_options()) and returns a
/// test whose curves are y(axial strain) for every quantity in `ys`, every record from the start of
/// `zero_stage` on. Strains (x, and y where it is a strain) are engineering strains relative to the
/// specimen at the start of `zero_stage` (0 = the protocol start), 1 - exp(-(eps - eps_origin)) of the
/// records' natural strains, as a laboratory zeroes them. `noise` (may be null) adds kStressNoise /
/// kStrainNoise to y.
inline CalibrationTest synthetic_test(const std::string& id, const TestProtocol& protocol, const Model& model,
                                      const std::vector<Quantity>& ys, int zero_stage, Noise* noise,
                                      const DriverOptions& reference = reference_options()) {
  const SimulationResult r = simulate(reference, model, protocol);
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
      c.xs.push_back(engineering_strain(r.steps[j].axial_strain - base.axial_strain));
      double y = strain_quantity(q) ? engineering_strain(value_of(r.steps[j], q) - value_of(base, q)) : value_of(r.steps[j], q);
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
