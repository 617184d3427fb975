// Simulates a drained test through the installed package and checks q_f of Mohr-Coulomb.
#include <cmath>
#include <cstdio>

#include "triaxcal/driver.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameters.hpp"

int main() {
  using namespace triaxcal;
  const ModelEntry& e = find_model("mohr_coulomb");
  const auto model = e.create(resolve_parameters(e.info(), {{"youngs_modulus", 1e4}, {"friction_angle", 30.0}}, "c"), "c");
  TestProtocol p;
  p.initial.stress = triaxial_stress(100, 100);
  Stage s;
  s.axial_strain = 0.05;
  p.stages = {s};
  const SimulationResult r = simulate(DriverOptions{}, *model, p);
  const double qf = 2 * 100 * 0.5 / 0.5;  // 2 s3' sin phi/(1 - sin phi), phi' = 30 deg
  std::printf("q_end = %.6f, q_f = %.6f\n", r.steps.back().q, qf);
  return r.ok() && std::abs(r.steps.back().q - qf) < 1e-6 * qf ? 0 : 1;
}
