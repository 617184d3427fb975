#pragma once
// A small model written for the tests of exact sensitivities (issue 14): hypoelastic, with a
// pressure-dependent and strain-softening shear modulus, G = G0 (p'/100 kPa)^n / (1 + a gamma),
// gamma a signed distortion (eps_11 - eps_22 summed), constant Poisson's ratio, explicit update
// sigma += D(sigma, gamma) d_eps (exact tangent D). Nonlinear in its state and parameters, so that
// derivatives travel through states, pore pressures and the driver's Newton. Invented for the tests,
// not a soil model; its derivative version runs the same template on dual numbers.

#include <cmath>
#include <memory>
#include <span>
#include <vector>

#include "triaxcal/error.hpp"
#include "triaxcal/model.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal::test {

// Parameters: shear modulus at 100 kPa (kPa), Poisson's ratio, pressure exponent, softening rate.
enum { kG0, kNu, kN, kSoft, kParameters };

template <class T>
struct SoftCore {
  T g0, nu, n, soft;

  template <class S, class V>
  IntegrationResult integrate(const S& in, const V& de, S& out, Mat6& tangent) const {
    using std::pow;
    const T p = (in.stress[0] + in.stress[1] + in.stress[2]) / 3.0;
    const T shear = g0 * pow(p / 100.0, n) / (1.0 + soft * in.internal[0]);
    const T bulk = 2.0 * shear * (1.0 + nu) / (3.0 * (1.0 - 2.0 * nu));
    const T lame = bulk - 2.0 / 3.0 * shear;
    Eigen::Matrix<T, 6, 6> d = Eigen::Matrix<T, 6, 6>::Zero();
    for (int i = 0; i < 3; ++i) {
      for (int j = 0; j < 3; ++j) d(i, j) = lame;
      d(i, i) += 2.0 * shear;
      d(i + 3, i + 3) = shear;
    }
    out.stress = in.stress + d * de;
    out.internal = in.internal;
    out.internal[0] = in.internal[0] + (de[0] - de[1]);  // a signed distortion: smooth
    for (int i = 0; i < 6; ++i)
      for (int j = 0; j < 6; ++j) tangent(i, j) = value_of(d(i, j));
    return {};
  }
};

class SoftDual final : public DualModel {
 public:
  explicit SoftDual(const SoftCore<Dual>& core) : core_(core) {}
  void initialise(const InitialConditions& c, DualState& s) const override {
    for (int i = 0; i < 6; ++i) s.stress[i] = Dual(c.stress[i]);
    s.internal.fill(Dual(0.0));
  }
  IntegrationResult integrate(const DualState& in, const DualVec6& de, DualState& out, Mat6& tangent) const override {
    return core_.integrate(in, de, out, tangent);
  }

 private:
  SoftCore<Dual> core_;
};

inline const ModelInfo& soft_info() {
  static const ModelInfo i{"soft_test",
                           "invented test model (hypoelastic, softening)",
                           {{"shear_modulus_ref", "kPa", 8000.0, 100.0, 1e6, true, false, "G0 at p' = 100 kPa"},
                            {"poissons_ratio", "-", 0.25, 0.0, 0.45, false, false, "nu"},
                            {"pressure_exponent", "-", 0.5, 0.0, 1.0, false, false, "n"},
                            {"softening_rate", "-", 3.0, 0.0, 50.0, false, false, "a"}},
                           {"distortion"}};
  return i;
}

class Soft final : public Model {
 public:
  explicit Soft(const std::vector<double>& v) : values_(v), core_{v[kG0], v[kNu], v[kN], v[kSoft]} {}
  const ModelInfo& info() const override {
    return soft_info();
  }
  void initialise(const InitialConditions& c, MaterialState& s) const override {
    s.stress = c.stress;
    s.internal.fill(0.0);
  }
  IntegrationResult integrate(const MaterialState& in, const Vec6& de, MaterialState& out, Mat6& tangent) const override {
    return core_.integrate(in, de, out, tangent);
  }
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override {
    if (seeds.size() != values_.size() * kDualLanes) throw InputError("seeds: wrong size");
    auto lift = [&](int i) {
      Dual x(values_[static_cast<std::size_t>(i)]);
      for (int k = 0; k < kDualLanes; ++k) x.v[k] = seeds[static_cast<std::size_t>(i * kDualLanes + k)];
      return x;
    };
    return std::make_unique<SoftDual>(SoftCore<Dual>{lift(kG0), lift(kNu), lift(kN), lift(kSoft)});
  }

 private:
  std::vector<double> values_;
  SoftCore<double> core_;
};

}  // namespace triaxcal::test
