#pragma once
// A state-dependent bounding-surface model for sands after Dafalias & Manzari (2004), "Simple
// plasticity sand model accounting for fabric change effects", J. Eng. Mech. 130(6), 622-634.
// Equation numbers below are from memory of the paper and marked so; the equations themselves are
// written out in the .cpp beside the code.
//
// Ingredients (general 6-component stress, compression positive, p_at = 101.325 kPa):
// - hypoelasticity G = G0 p_at (2.97 - e)^2/(1 + e) (p'/p_at)^0.5, K from Poisson's ratio;
// - critical state line e_c = e_0 - lambda_c (p'/p_at)^xi, state parameter psi = e - e_c;
// - a narrow yield cone f = ||s - p' alpha|| - sqrt(2/3) m p' with kinematic hardening of the
//   back-stress ratio alpha (deviatoric tensor);
// - bounding and dilatancy surfaces M g(theta, c) exp(-n_b psi) and M g(theta, c) exp(n_d psi);
// - plastic modulus K_p = (2/3) p' h (alpha_b - alpha):n, h = b0 / ((alpha - alpha_in):n);
// - dilatancy D = A_d (alpha_d - alpha):n, A_d = A0 (1 + <z:n>), fabric dz = -c_z <-d eps_v^p> (z_max n + z).
//
// Integration: one forward-Euler (explicit) step of the elastoplastic rate equations with every
// coefficient at the start of the increment; where the increment starts inside the cone and leaves it,
// the elastic part up to the cone is found exactly (a quadratic in the fraction of the increment) and
// the rest is plastic from the crossing point. After a plastic step the back-stress ratio is moved
// radially in the deviatoric ratio plane so that the stress lies on the cone again (drift correction;
// the stress itself is not changed). The driver's error control (step doubling) keeps the error of
// these first-order steps within its tolerance; an increment that would bring p' to zero or below,
// or where the elastoplastic denominator is not positive, returns a failure status so the driver cuts.
// Tangent: the exact derivative of this discrete map (closed form on steps that start on the cone or
// stay elastic, forward-mode automatic differentiation where the increment crosses the cone).
//
// State (16 variables: kMaxStateVariables): void ratio (the driver's (1 + e0) exp(-eps_v) - 1),
// back-stress ratio alpha, fabric z and alpha_in (alpha at the last load reversal), each deviatoric
// tensor stored as its components 11, 22, 12, 23, 31 (the 33 component is minus the sum of 11 and 22).

#include <array>
#include <memory>
#include <string>

#include "triaxcal/model.hpp"

namespace triaxcal {

class SandStateBounding final : public Model {
 public:
  enum Parameter {
    critical_state_ratio,
    extension_ratio,
    csl_void_ratio_ref,
    csl_lambda,
    csl_exponent,
    shear_modulus_constant,
    poissons_ratio,
    yield_cone_size,
    hardening_constant,
    hardening_density_factor,
    bounding_exponent,
    dilatancy_constant,
    dilatancy_exponent,
    fabric_max,
    fabric_rate,
  };
  static constexpr std::size_t kParameters = 15;
  /// First index of each deviatoric tensor in MaterialState::internal (components 11, 22, 12, 23, 31).
  enum StateVariable {
    void_ratio = 0,
    back_stress_ratio = 1,
    fabric = 6,
    reversal_back_stress_ratio = 11,
  };

  /// Reference (atmospheric) pressure p_at of the paper's normalisations (kPa).
  static constexpr double kReferencePressure = 101.325;
  /// Below this mean effective stress (kPa) the sand counts as liquefied (p' ~ 0, where G ~ p'^0.5
  /// and the stress ratio lose their meaning): integrate returns Status::invalid_input and the driver
  /// ends the run with its failure message (common practice, no source: 1e-3 p_at, about 0.1 kPa).
  static constexpr double kLiquefiedPressure = 1e-3 * kReferencePressure;

  static const ModelInfo& model_info();
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  explicit SandStateBounding(const ParameterValues& values);

  const ModelInfo& info() const override { return model_info(); }
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;
  /// Parameters as dual numbers: the same increment on ConstantsOf<Dual> (one code, templated on the
  /// scalar); the tangent is the double model's.
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override;

  /// e_c(p') on the critical state line.
  double critical_void_ratio(double p) const;
  /// Elastic shear modulus G (kPa) at void ratio e and p'.
  double shear_modulus(double e, double p) const;
  /// Bulk modulus over shear modulus, 2 (1 + nu) / (3 (1 - 2 nu)).
  double bulk_over_shear() const { return k_.bulk_factor; }

  /// Model constants in the paper's symbols (public for tests and benchmarks), on a scalar R
  /// (double for the model, the dual numbers of sensitivity.hpp for its derivative version).
  template <class R>
  struct ConstantsOf {
    R m_c{};        ///< M
    R c{};          ///< c
    R e0{};         ///< e_0 of the CSL
    R lambda_c{};   ///< lambda_c
    R xi{};         ///< xi
    R g0{};         ///< G0
    R nu{};         ///< nu
    R m{};          ///< m
    R h0{};         ///< h0
    R c_h{};        ///< c_h
    R n_b{};        ///< n_b
    R a0{};         ///< A0
    R n_d{};        ///< n_d
    R z_max{};      ///< z_max
    R c_z{};        ///< c_z
    R bulk_factor{};  ///< K / G
    R radius{};       ///< sqrt(2/3) m
  };
  using Constants = ConstantsOf<double>;
  const Constants& constants() const { return k_; }

 private:
  std::array<double, kParameters> values_{};
  Constants k_;
};

}  // namespace triaxcal
