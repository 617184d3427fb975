#pragma once
// Modified Cam-Clay, after Roscoe & Burland (1968), "On the generalised stress-strain behaviour of
// 'wet' clay", in Engineering Plasticity, Cambridge University Press, pp. 535-609.
//
// Yield surface and plastic potential (associated in the meridian plane):
//   f = q^2 + M(theta)^2 p' (p' - p'_c) = 0,
// with q = sqrt(3 J2) and p'_c the preconsolidation pressure (isotropic hardening).
//
// Volumetric behaviour, chosen so that isotropic loading and unloading lie exactly on straight
// lines of slope lambda and kappa in e-ln p' with the engineering volumetric strain the driver and
// a laboratory report, eps_v = dV/V0 = (e0 - e)/(1 + e0):
//   elastic:  p' = p'_n exp(d eps_v^e / kappa*),      kappa* = kappa / (1 + e0)
//   plastic:  p'_c = p'_c,n exp(d eps_v^p / (lambda* - kappa*)),  lambda* = lambda / (1 + e0)
// so the tangent bulk modulus is K = (1 + e0) p' / kappa with e0 the void ratio at the start of the
// protocol (kept as the state variable `reference_void_ratio`), and e = e0 - (1 + e0) eps_v (state
// variable `void_ratio`, identical to the driver's). Both laws are integrated exactly over an
// increment (exponential update), so e-ln p' slopes hold to round-off whatever the increment size.
// An increment that would bring e to zero or below returns Status::invalid_input (the driver then
// stops with its failure report): lambda, kappa and e0 do not fit that stress range.
//
// Shear modulus: either constant (`shear_modulus` > 0) or from Poisson's ratio,
// G = 3 (1 - 2 nu) K / (2 (1 + nu)), evaluated at p' at the start of the increment (constant over
// the increment, so the deviatoric return is radial and the local problem stays two-dimensional).
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

#include <memory>
#include <string>

#include "triaxcal/model.hpp"

namespace triaxcal {

class ModifiedCamClay final : public Model {
 public:
  enum Parameter {
    lambda,
    kappa,
    critical_state_ratio,
    critical_friction_angle,
    poissons_ratio,
    shear_modulus,
    lode_dependence,
  };
  enum StateVariable {
    reference_void_ratio,       ///< e0 at the start of the protocol (-)
    preconsolidation_pressure,  ///< p'_c (kPa)
    void_ratio,                 ///< e = e0 - (1 + e0) eps_v (-)
    volumetric_strain,          ///< eps_v = dV/V0 since the start (-)
    plastic_volumetric_strain,  ///< eps_v^p since the start (-)
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

  /// M at a stress state (the compression value when Lode dependence is off or q = 0).
  double critical_state_ratio_at(const Vec6& stress) const;
  /// M in triaxial compression and in triaxial extension.
  double compression_ratio() const { return m_compression_; }
  double extension_ratio() const;

 private:
  // M and dM/d(sin 3theta) at a deviatoric state.
  double ratio_and_slope(double sin3theta, double& slope) const;

  double lambda_ = 0.0;
  double kappa_ = 0.0;
  double m_compression_ = 0.0;
  double alpha4_ = 1.0;     // a^4 of the Lode shape (1 = circle)
  double nu_ = 0.3;
  double shear_ = 0.0;      // constant G (kPa), 0 = from Poisson's ratio
  bool lode_ = false;
};

}  // namespace triaxcal
