#pragma once
// Shared checks for every model: the consistent tangent against central differences of integrate.

#include <catch2/catch.hpp>

#include <string>

#include "tolerances.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal::test {

/// Central differences of integrate(in, d_eps + h e_j) - integrate(in, d_eps - h e_j) over 2h.
inline Mat6 numerical_tangent(const Model& model, const MaterialState& in, const Vec6& d_eps, double h = 1e-7) {
  Mat6 numeric;
  MaterialState out;
  Mat6 unused;
  for (int j = 0; j < 6; ++j) {
    Vec6 plus = d_eps, minus = d_eps;
    plus[j] += h;
    minus[j] -= h;
    REQUIRE(model.integrate(in, plus, out, unused).status == Status::ok);
    const Vec6 s_plus = out.stress;
    REQUIRE(model.integrate(in, minus, out, unused).status == Status::ok);
    numeric.col(j) = (s_plus - out.stress) / (2.0 * h);
  }
  return numeric;
}

/// Largest entry-wise difference between the returned tangent and central differences, relative to
/// the largest entry of either, or to `scale` (kPa) where given: pass an elastic modulus where the
/// tangent vanishes (apex, critical state), else round-off would count as a relative error of 1.
inline double tangent_error(const Model& model, const MaterialState& in, const Vec6& d_eps, double h = 1e-7,
                            double scale = 0.0) {
  MaterialState out;
  Mat6 tangent;
  REQUIRE(model.integrate(in, d_eps, out, tangent).status == Status::ok);
  const Mat6 numeric = numerical_tangent(model, in, d_eps, h);
  if (!(scale > 0.0)) scale = std::max(tangent.cwiseAbs().maxCoeff(), numeric.cwiseAbs().maxCoeff());
  return (tangent - numeric).cwiseAbs().maxCoeff() / scale;
}

}  // namespace triaxcal::test
