#pragma once
// Named tolerances, scaled to the physics: relative with an absolute floor near zero.

#include <algorithm>
#include <cmath>

namespace triaxcal::test {

/// Round-off of a converged return mapping or Newton solve (relative).
inline constexpr double kRoundOff = 1e-9;
/// Closed forms that the driver reproduces exactly up to the Newton tolerance (relative).
inline constexpr double kExact = 1e-7;
/// The driver's default accuracy: a simulated curve at the recorded points within 0.1 % of the
/// curve's range of the converged solution (issue 12; the default DriverOptions::tolerance).
inline constexpr double kCurveRange = 1e-3;
/// Central-difference tangent checks: h = 1e-7 strain gives truncation ~h^2 and round-off ~eps/h.
inline constexpr double kTangent = 1e-5;
/// Floor for stresses near zero (kPa) and strains near zero (-).
inline constexpr double kStressFloor = 1e-6;
inline constexpr double kStrainFloor = 1e-12;

inline bool close(double a, double b, double rel, double floor) {
  return std::abs(a - b) <= rel * std::max(std::abs(a), std::abs(b)) + floor;
}

}  // namespace triaxcal::test
