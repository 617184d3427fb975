#include "mohr_coulomb/mohr_coulomb.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {
constexpr double inf = std::numeric_limits<double>::infinity();
}

const ModelInfo& MohrCoulomb::model_info() {
  static const ModelInfo info{
      "mohr_coulomb",
      "Mohr-Coulomb, linear elastic perfectly plastic, non-associated flow and tension cut-off",
      {
          {"youngs_modulus", "kPa", kNotGiven, 0.0, inf, true, true, "Young's modulus E' (drained, constant)",
           ParameterRole::youngs_modulus},
          {"poissons_ratio", "-", 0.3, -1.0, 0.5, true, true, "Poisson's ratio nu' (drained)",
           ParameterRole::poissons_ratio},
          {"cohesion", "kPa", 0.0, 0.0, inf, false, true, "effective cohesion c'", ParameterRole::cohesion},
          {"friction_angle", "deg", kNotGiven, 0.0, 90.0, true, true, "effective friction angle phi'",
           ParameterRole::friction_angle},
          {"dilation_angle", "deg", 0.0, 0.0, 90.0, false, true, "dilation angle psi (psi <= phi'); 0 = no plastic volume change",
           ParameterRole::dilation_angle},
          {"tensile_strength", "kPa", 0.0, 0.0, inf, false, false,
           "largest tensile principal effective stress (tension cut-off); capped at c' cot(phi')",
           ParameterRole::tensile_strength},
      },
      {"accumulated_plastic_multiplier", "active_surfaces"},
  };
  return info;
}

std::unique_ptr<Model> MohrCoulomb::create(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  if (v.size() != info.parameters.size())
    throw InputError(where + ": mohr_coulomb: expected " + std::to_string(info.parameters.size()) +
                     " parameter values, found " + std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  if (v[dilation_angle] > v[friction_angle])
    throw InputError(where + ": mohr_coulomb: dilation_angle = " + format_number(v[dilation_angle]) +
                     " deg must not exceed friction_angle = " + format_number(v[friction_angle]) + " deg");
  return std::make_unique<MohrCoulomb>(v);
}

MohrCoulomb::MohrCoulomb(const ParameterValues& v) {
  for (std::size_t i = 0; i < kParameters; ++i) values_[i] = v[i];
  return_ = MohrCoulombReturn<double>(values_);
}

void MohrCoulomb::initialise(const InitialConditions& conditions, MaterialState& state) const {
  state = MaterialState{};
  state.stress = conditions.stress;
}

IntegrationResult MohrCoulomb::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                         Mat6& tangent) const {
  return return_.integrate(in, de, out, tangent);
}

namespace {

/// The derivative version: the same return on dual numbers, its constants (planes, active sets,
/// their inverses) built once with their derivatives.
class MohrCoulombDual final : public DualModel {
 public:
  explicit MohrCoulombDual(const std::array<Dual, MohrCoulomb::kParameters>& p) : return_(p) {}
  void initialise(const InitialConditions& conditions, DualState& state) const override {
    state = DualState{};
    for (int i = 0; i < 6; ++i) state.stress[i] = Dual(conditions.stress[i]);
  }
  IntegrationResult integrate(const DualState& in, const DualVec6& de, DualState& out, Mat6& tangent) const override {
    return return_.integrate(in, de, out, tangent);
  }

 private:
  MohrCoulombReturn<Dual> return_;
};

}  // namespace

std::unique_ptr<DualModel> MohrCoulomb::with_derivatives(std::span<const double> seeds) const {
  return std::make_unique<MohrCoulombDual>(seeded_parameters("mohr_coulomb", values_, seeds));
}

template struct MohrCoulombReturn<double>;
template struct MohrCoulombReturn<Dual>;

}  // namespace triaxcal
