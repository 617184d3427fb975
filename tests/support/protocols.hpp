#pragma once
// Small builders shared by tests and benchmarks: a specimen at an isotropic stress sheared in one
// stage, and a Voigt vector from its components.

#include "triaxcal/protocol.hpp"

namespace triaxcal::test {

/// Isotropic effective stress p0 (kPa) at the start, then one shear stage of `steps` increments to
/// the signed axial strain (compression positive), drained or undrained.
inline TestProtocol isotropic_shear(double p0, Drainage drainage, double axial_strain, int steps) {
  TestProtocol p;
  p.name = "synthetic";
  p.initial.stress = triaxial_stress(p0, p0);
  Stage s;
  s.type = StageType::shear;
  s.drainage = drainage;
  s.axial_strain = axial_strain;
  s.steps = steps;
  p.stages = {s};
  return p;
}

inline Vec6 vec(double a, double b, double c, double d = 0, double e = 0, double f = 0) {
  Vec6 v;
  v << a, b, c, d, e, f;
  return v;
}

}  // namespace triaxcal::test
