#pragma once
// Undrained total-stress model (phi_u = 0): linear elastic, perfectly plastic with the Tresca
// criterion s_1 - s_3 <= 2 c_u (Tresca 1864; the phi = 0 case of Mohr-Coulomb) and associated flow,
// for the total-stress analysis of undrained clay and for fitting UU tests. The stresses it sees
// are total stresses: in an undrained triaxial stage the driver keeps the specimen isochoric
// (eps_r = -eps_a/2), so the mean stress stays at its start and the driver's "excess pore
// pressure" (q/3) has no meaning for it; compare q only.
// Return mapping in principal space, sorted s_A >= s_B >= s_C, onto the main plane A-C and the
// triaxial compression (s_B = s_C) and extension (s_A = s_B) edges; since every plane's normal is
// deviatoric, D a = 2G a and the returns are closed-form (de Souza Neto, Peric & Owen 2008,
// "Computational Methods for Plasticity", section 8.1, the Tresca return in principal stresses).

#include <array>
#include <memory>
#include <string>

#include "triaxcal/model.hpp"

namespace triaxcal {

class UndrainedTresca final : public Model {
 public:
  enum Parameter { undrained_shear_strength, undrained_youngs_modulus, undrained_poissons_ratio };
  enum StateVariable { accumulated_plastic_multiplier, active_surfaces };
  static constexpr std::size_t kParameters = 3;

  /// The constants of the return on a scalar T: double for the model, Dual (sensitivity.hpp) for
  /// its derivative version; one integrate for both (undrained_tresca.cpp).
  template <class T>
  struct Constants {
    Constants() = default;
    explicit Constants(const std::array<T, kParameters>& p);
    T cu{};
    T bulk{};
    T shear{};
    T lame{};
    Mat3 elastic_principal = Mat3::Zero();  // values
    Mat6 elastic = Mat6::Zero();            // values
  };

  static const ModelInfo& model_info();
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  explicit UndrainedTresca(const ParameterValues& values);

  const ModelInfo& info() const override { return model_info(); }
  /// The stress of the conditions, taken as total stress.
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;

  /// Parameters as dual numbers: the same integrate on Constants<Dual>.
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override;

  double shear_modulus() const { return constants_.shear; }  ///< G = E_u / (2 (1 + nu_u)) (kPa)

 private:
  std::array<double, kParameters> values_{};
  Constants<double> constants_;
};

}  // namespace triaxcal
