#pragma once
// Parameters as dual numbers for a model's derivative version (Model::with_derivatives,
// sensitivity.hpp): value = the model's value, derivatives = the seeds row of the parameter.
// Internal to models/ (not installed).

#include <array>
#include <span>
#include <string>

#include "triaxcal/error.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

/// seeds[i * kDualLanes + k] = d(parameter i) / d(t_k), parameters in ModelInfo order. Throws
/// InputError naming the model and both counts when `seeds` does not hold kDualLanes numbers a parameter.
template <std::size_t N>
std::array<Dual, N> seeded_parameters(const std::string& model, const std::array<double, N>& values,
                                      std::span<const double> seeds) {
  if (seeds.size() != N * kDualLanes)
    throw InputError(model + ": with_derivatives: expected " + std::to_string(N * kDualLanes) + " seeds (" +
                     std::to_string(N) + " parameters x " + std::to_string(kDualLanes) + " lanes), found " +
                     std::to_string(seeds.size()));
  std::array<Dual, N> p;
  for (std::size_t i = 0; i < N; ++i) {
    p[i] = Dual(values[i]);
    for (int k = 0; k < kDualLanes; ++k) p[i].v[k] = seeds[i * kDualLanes + static_cast<std::size_t>(k)];
  }
  return p;
}

/// The value part of a fixed-size matrix of dual numbers (identity for doubles).
template <class Derived>
auto values_of(const Eigen::MatrixBase<Derived>& m) {
  using Scalar = typename Derived::Scalar;
  if constexpr (std::is_same_v<Scalar, double>)
    return m.eval();
  else
    return m.unaryExpr([](const Scalar& x) { return x.a; }).eval();
}

/// The state type of a scalar: MaterialState for double, DualState for Dual.
template <class T>
using StateOf = std::conditional_t<std::is_same_v<T, double>, MaterialState, DualState>;

}  // namespace triaxcal
