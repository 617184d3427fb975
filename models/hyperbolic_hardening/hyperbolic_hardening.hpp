#pragma once
// The double-hardening model of Schanz, Vermeer & Bonnier (1999), "The hardening soil model:
// formulation and verification", in Brinkgreve (ed.), Beyond 2000 in Computational Geotechnics,
// Balkema, pp. 281-296. Named `hyperbolic_hardening` here, with parameter names of our own.
//
// Compression positive, kPa. The paper writes everything in the principal stresses s1' >= s3';
// for general states we use smooth measures that equal them exactly in triaxial compression
// (s2' = s3') and triaxial extension (s1' = s2'):
//   q  = sqrt(3 J2)                                  (= s1' - s3' in both)
//   s3 = p' - q/2 + (3/4) J3/J2                      (the minor principal stress in both)
//   q~ = q (1 + delta)/2 - (9/4)(delta - 1) J3/J2     (paper's cap deviator: q in compression,
//                                                      delta q in extension, delta = (3+sin phi)/(3-sin phi))
//
// - Power-law stiffness (paper eqs. 5, 7, 11): E = E_ref ((s3 + c cot phi)/(p_ref + c cot phi))^m
//   for the secant stiffness E50 and the unloading-reloading stiffness E_ur; the oedometric
//   stiffness uses s1' instead of s3'. Elasticity: isotropic with E_ur and nu_ur, evaluated at the
//   stress at the start of each increment (the stress term is floored at 1e-3 (p_ref + c cot phi)).
// - Shear hardening (paper eqs. 1-3, 8-10): f_s = q - q_y with q_y = min(q_f, q_h(gamma_p)), where
//   q_h solves 2 q/(E_i (1 - q/q_a)) - 2 q/E_ur = gamma_p; q_f = 2 sin phi/(1 - sin phi)(s3 + c cot phi),
//   q_a = q_f / R_f, E_i = 2 E50/(2 - R_f). The same zero set as the paper's f = f_bar - gamma_p,
//   without its pole at q_a; beyond q_f the surface is the Mohr-Coulomb criterion (perfectly plastic).
// - Flow on the shear surface (paper eqs. 14-16): g_s = q/2 - sin psi_m (s3 + q/2), so that in
//   triaxial compression d eps_v^p = -sin psi_m d gamma_p (dilation negative) with
//   gamma_p = eps_1^p - eps_2^p - eps_3^p; d gamma_p = d lambda_s.
//   sin psi_m from Rowe's (1962) stress-dilatancy, sin psi_m = (sin phi_m - sin phi_cv)/(1 - sin phi_m sin phi_cv),
//   sin phi_m = (s1' - s3')/(s1' + s3' + 2 c cot phi), capped at sin phi, then a cut-off rule:
//   "rowe" = as is (contraction below phi_cv), "rowe_no_contraction" (psi_m >= 0), "no_dilatancy" (psi_m = 0).
// - Cap (paper eqs. 20-22): f_c = sqrt(q~^2/alpha^2 + p'^2) - p_p, associated flow; hardening
//   d p_p = H_ref (p_p/p_ref)^m d eps_v^pc (the paper's eps_v^pc = beta/(1-m) (p_p/p_ref)^(1-m) with
//   H_ref = p_ref/beta), integrated in closed form over an increment. alpha and H_ref follow from
//   k0_normally_consolidated and oedometer_stiffness_ref (see calibrate_cap in the .cpp).
// - Tension cut-off: s3 >= -min(tensile_strength, c cot phi), associated.
// Integration: implicit (backward Euler) return mapping in principal stress space, multi-surface
// (shear, cap, tension), Newton with an exact Jacobian, and the consistent tangent of an isotropic
// tensor function (de Souza Neto, Peric & Owen 2008, eq. A.46). The Jacobian is written out by hand
// (chain rule through q, X = J3/J2 and s3, whose second derivatives are in closed form) for the
// surfaces in the active set only; forward automatic differentiation (dual.hpp) of the same
// residual is kept as the reference (LocalJacobian::automatic), and the tests compare the two.
// The consistent tangent is formed from the LU factors of the Jacobian at the last iterate (those
// of the last Newton step when the plain check after it has converged).
//
// Derivative version (with_derivatives, sensitivity.hpp): the model's arithmetic is written once,
// templated on the scalar (Constants<S>, the stress measures, the elastic predictor, the surfaces,
// the residual, the state update), and runs on doubles for integrate and on triaxcal::Dual for the
// derivatives. The decisions (elastic or plastic, active set) and the local Newton solve are those
// of the double integrate; the derivatives of its converged point follow from the implicit function
// theorem (see HyperbolicHardeningDual in the .cpp).

#include <array>
#include <memory>
#include <span>
#include <string>

#include "triaxcal/model.hpp"

namespace triaxcal {

class HyperbolicHardening final : public Model {
 public:
  enum Parameter {
    friction_angle,
    cohesion,
    tensile_strength,
    critical_state_friction_angle,
    dilatancy_rule,
    secant_stiffness_ref,
    unloading_stiffness_ref,
    poissons_ratio_ur,
    stress_exponent,
    reference_pressure,
    failure_ratio,
    oedometer_stiffness_ref,
    k0_normally_consolidated,
    parameter_count
  };
  /// Words of dilatancy_rule (files write the word; the value is its index).
  enum DilatancyRule { rowe = 0, rowe_no_contraction = 1, no_dilatancy = 2 };
  enum StateVariable {
    shear_hardening,          ///< gamma_p (-)
    cap_pressure,             ///< p_p (kPa)
    cap_volumetric_strain,    ///< accumulated eps_v^pc (-)
    mobilised_friction,       ///< phi_m (deg)
    mobilised_dilation,       ///< psi_m (deg), positive = dilation
    active_surfaces,          ///< bits: 1 shear, 2 cap, 4 tension; 0 = elastic step
    shear_rate,               ///< shear multiplier of the last plastic step per unit strain increment norm
    cap_rate,                 ///< cap multiplier likewise (both only warm-start the local solve)
  };
  enum Surface { shear = 0, cap = 1, tension = 2 };

  static const ModelInfo& model_info();
  /// Checks bounds and the rules between parameters, calibrates the cap; throws InputError.
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  /// Throws InputError like create().
  HyperbolicHardening(const ParameterValues& values, const std::string& where);

  const ModelInfo& info() const override { return model_info(); }
  /// Stress from the conditions; cap through the preconsolidation state (the initial stress times
  /// OCR = p'_c / p'_0, default 1); shear locus through the initial stress (gamma_p = f_bar(sigma_0)).
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;
  /// The derivative version (sensitivity.hpp); throws InputError when `seeds` does not hold
  /// kDualLanes numbers for each of the parameter_count parameters (dilatancy_rule, a word, takes
  /// no derivative).
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override;

  /// How the local Newton solve gets its Jacobian: written out by hand (what integrate uses) or by
  /// forward automatic differentiation of the residual (the reference, slower).
  enum class LocalJacobian { hand_written, automatic };
  /// integrate() with the Jacobian of the local solve chosen (for tests and benchmarks).
  IntegrationResult integrate_with(LocalJacobian method, const MaterialState& in, const Vec6& strain_increment,
                                   MaterialState& out, Mat6& tangent) const;

  /// The local equations at one point, for tests: unknowns x = (s1', s2', s3', multipliers of the
  /// surfaces in the active set in the order shear, cap, tension); residual R(x) and dR/dx.
  struct LocalSystem {
    int size = 0;              ///< 3 + number of active surfaces
    double residual[5]{};      ///< principal stress rows (kPa), then yield functions (kPa)
    double jacobian[5][5]{};   ///< jacobian[i][j] = dR_i / dx_j
  };
  /// R and dR/dx at principal stresses `principal` (kPa) and multipliers `multipliers` (shear, cap,
  /// tension; those outside `mask` are ignored) for the surfaces in `mask` (bits 1 shear, 2 cap,
  /// 4 tension, at most two), from hardening state (gamma_n, p_p,n), elastic modulus `eur` (kPa)
  /// and principal trial stress `trial` (kPa).
  LocalSystem local_system(LocalJacobian method, const double principal[3], const double multipliers[3], int mask,
                           double gamma_n, double pp_n, double eur, const double trial[3]) const;

  double cap_alpha() const { return alpha_; }          ///< cap shape alpha (-)
  double cap_modulus_ref() const { return cap_h_ref_; } ///< H_ref = p_ref / beta (kPa)

  /// Constants shared with the local solver (public so that the .cpp's helpers can read them), in
  /// the scalar S: double, or triaxcal::Dual for the derivative version.
  template <class S>
  struct Constants {
    S e50_ref, eur_ref, m, p_ref, nu, rf, c_cot, sin_phi, sin_cv, kf, tension;
    int rule;
    S alpha2, h_ref, delta;
    S floor;  ///< stiffness stress term floor (kPa)
  };

  /// What integrate decided for one increment (active set, converged local solution, principal
  /// axes of the trial stress), for the derivative version's second pass (.cpp).
  struct Decision;

 private:
  friend class HyperbolicHardeningDual;
  template <LocalJacobian method>
  IntegrationResult integrate_impl(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                                   Mat6& tangent, Decision* decision) const;

  std::array<double, parameter_count> values_{};
  Constants<double> k_{};
  double alpha_ = 0.0;
  double cap_h_ref_ = 0.0;
};

}  // namespace triaxcal
