#pragma once
// Linear-elastic, perfectly plastic Mohr-Coulomb with non-associated flow (dilation angle) and a
// tension cut-off. Return mapping in principal stress space onto the main plane, the triaxial
// compression and extension edges and the apex, after the multi-surface scheme of
// Clausen, Damkilde & Andersen (2007), "An efficient return algorithm for non-associated
// plasticity with linear yield criteria in principal stress space", Comput. Struct. 85.
// Compression positive, principal stresses sorted s_A >= s_B >= s_C.

#include <array>
#include <memory>
#include <string>

#include "mohr_coulomb/mohr_coulomb_return.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal {

class MohrCoulomb final : public Model {
 public:
  enum Parameter { youngs_modulus, poissons_ratio, cohesion, friction_angle, dilation_angle, tensile_strength };
  static constexpr std::size_t kParameters = 6;

  static const ModelInfo& model_info();
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  explicit MohrCoulomb(const ParameterValues& values);

  const ModelInfo& info() const override { return model_info(); }
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;
  /// Parameters as dual numbers: the same return (MohrCoulombReturn<Dual>), its constants built once here.
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override;

 private:
  std::array<double, kParameters> values_{};
  MohrCoulombReturn<double> return_;
};

}  // namespace triaxcal
