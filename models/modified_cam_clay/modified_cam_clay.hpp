#pragma once
// Modified Cam-Clay, after Roscoe & Burland (1968), "On the generalised stress-strain behaviour of
// 'wet' clay", in Engineering Plasticity, Cambridge University Press, pp. 535-609.
//
// Yield surface and plastic potential (associated in the meridian plane):
//   f = q^2 + M(theta)^2 p' (p' - p'_c) = 0,
// with q = sqrt(3 J2) and p'_c the preconsolidation pressure (isotropic hardening).
//
// Strain measure: the driver's natural (logarithmic) strain increments, eps_v = ln(V0/V), so that
// d eps_v = dV/V = -de/(1 + e) on the CURRENT void ratio e (state variable `void_ratio`). No
// quantity of the protocol's start enters the response: the state is (stress, e, p'_c) plus the
// warm-start rates of the local solve, and the same state answers the same way however reached.
//
// Volumetric laws (Wood 1990, "Soil Behaviour and Critical State Soil Mechanics", CUP, ch. 4 and 6):
// straight lines in e-ln p', de^e = -kappa d ln p' (unloading-reloading) and
// de^p = -(lambda - kappa) d ln p'_c (normal compression: de = -lambda d ln p' with p' = p'_c),
// so the tangent bulk modulus is K = (1 + e) p'/kappa. Over one increment with total natural
// volumetric strain d (known: the increment is strain-driven) the void ratio changes exactly,
//   e_{n+1} = (1 + e_n) exp(-d) - 1,   de = e_{n+1} - e_n = -s d,
//   s(d) = (1 + e_n) (1 - exp(-d))/d   (chord of 1 + e over the increment; s -> 1 + e_n as d -> 0),
// and the elastic and plastic parts of d share that chord, de^e = -s d eps_v^e, de^p = -s d eps_v^p:
//   p'   = p'_n   exp(a (d - d eps_v^p)),   a = s / kappa,
//   p'_c = p'_c,n exp(b d eps_v^p),         b = s / (lambda - kappa).
// On isotropic paths this is the e-ln p' line itself (slope kappa, or lambda where p' = p'_c), to
// round-off whatever the increment size. An increment that would bring e to zero or below returns
// Status::invalid_input (the driver then stops with its failure report): lambda, kappa and e do not
// fit that stress range.
//
// Consistent tangent: s depends on d = m . d eps (m = [1 1 1 0 0 0]), s' = ds/dd =
// (1 + e_n) phi'(d) with phi(d) = (1 - exp(-d))/d, phi' = (exp(-d) - phi)/d (-1/2 at d = 0; a
// series near zero). So d ln p'/d eps = (a + a'(d - d eps_v^p)) m - a d(d eps_v^p)/d eps and
// d ln p'_c/d eps = b' d eps_v^p m + b d(d eps_v^p)/d eps, with a' = s'/kappa, b' = s'/(lambda - kappa);
// these terms enter the right-hand side of the linearised local equations of the return.
//
// Shear modulus: either constant (`shear_modulus` > 0) or from Poisson's ratio,
// G = 3 (1 - 2 nu) K / (2 (1 + nu)) with the current K = (1 + e_n) p'_n / kappa at the start of the
// increment (constant over the increment, so the deviatoric return is radial and the local problem
// stays two-dimensional).
//
// Integration: implicit (backward Euler) return mapping in p'-q from the elastic trial state, two
// unknowns (plastic volumetric strain increment, plastic multiplier), Newton with a bounded,
// damped iteration; the consistent tangent is the exact derivative of that discrete map
// (Borja & Lee 1990, "Cam-clay plasticity, part I", CMAME 78, give the same structure).
//
// Lode-angle dependence (`lode_dependence` = 1): M(theta) = M_c g(theta) with the smooth shape of
// Sheng, Sloan & Yu (2000), "Aspects of finite element implementation of critical state models",
// Computational Mechanics 26, eq. for g(theta):
//   g = [2 a^4 / (1 + a^4 + (1 - a^4) sin 3theta)]^(1/4),  a = (3 - sin phi_cs)/(3 + sin phi_cs),
// written for the convention of conventions.hpp (sin 3theta = -1 in triaxial compression, +1 in
// extension), so M = M_c = 6 sin phi/(3 - sin phi) in compression and 6 sin phi/(3 + sin phi) in
// extension. The shape is convex for phi_cs up to about 48.6 deg (M_c <= 2), enforced here. Plastic
// flow stays radial in the deviatoric plane (M(theta) is not differentiated in the flow rule);
// on triaxial compression and extension paths that equals associated flow, since dg/dtheta = 0 there.

#include <array>
#include <memory>
#include <span>
#include <string>

#include "modified_cam_clay/cam_clay_core.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal {

class ModifiedCamClay final : public Model {
 public:
  enum Parameter {
    lambda,
    kappa,
    critical_state_ratio,
    critical_state_friction_angle,
    poissons_ratio,
    shear_modulus,
    lode_dependence,
  };
  static_assert(static_cast<std::size_t>(lode_dependence) + 1 == kCamClayParameters);
  enum StateVariable {
    preconsolidation_pressure,  ///< p'_c (kPa)
    void_ratio,                 ///< current e (-); the driver's (1 + e0) exp(-eps_v) - 1
    plastic_rate,               ///< d eps_v^p of the last plastic step per unit strain-increment norm
    multiplier_rate,            ///< plastic multiplier likewise (both only warm-start the local solve)
  };

  static const ModelInfo& model_info();
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  explicit ModifiedCamClay(const ParameterValues& values);

  const ModelInfo& info() const override { return model_info(); }
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;
  /// The derivative version (sensitivity.hpp): the same arithmetic (cam_clay_core.hpp) on dual
  /// numbers. Every parameter may carry derivatives except lode_dependence (a switch; its seeds
  /// are ignored); M or phi_cs, whichever is not given (0), and poissons_ratio or shear_modulus,
  /// whichever is not used, take no part, so their derivatives vanish.
  std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const override;

  /// M at a stress state (the compression value when Lode dependence is off or q = 0).
  double critical_state_ratio_at(const Vec6& stress) const;
  /// M in triaxial compression and in triaxial extension.
  double compression_ratio() const { return core_.compression_ratio(); }
  double extension_ratio() const;

 private:
  std::array<double, kCamClayParameters> values_{};
  CamClayCore<double> core_;
};

}  // namespace triaxcal
