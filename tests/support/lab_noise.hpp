#pragma once
// Gaussian noise of lab precision for synthetic "measured" curves in the tests.

#include <cmath>
#include <cstdint>
#include <random>

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

}  // namespace triaxcal::test
