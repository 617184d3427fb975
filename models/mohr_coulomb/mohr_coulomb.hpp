#pragma once
// Linear-elastic, perfectly plastic Mohr-Coulomb with non-associated flow (dilation angle) and a
// tension cut-off. Return mapping in principal stress space onto the main plane, the triaxial
// compression and extension edges and the apex, after the multi-surface scheme of
// Clausen, Damkilde & Andersen (2007), "An efficient return algorithm for non-associated
// plasticity with linear yield criteria in principal stress space", Comput. Struct. 85.
// Compression positive, principal stresses sorted s_A >= s_B >= s_C.

#include <memory>
#include <string>

#include "triaxcal/model.hpp"

namespace triaxcal {

class MohrCoulomb final : public Model {
 public:
  enum Parameter { youngs_modulus, poissons_ratio, cohesion, friction_angle, dilation_angle, tensile_strength };

  static const ModelInfo& model_info();
  static std::unique_ptr<Model> create(const ParameterValues& values, const std::string& where);

  explicit MohrCoulomb(const ParameterValues& values);

  const ModelInfo& info() const override { return model_info(); }
  void initialise(const InitialConditions& conditions, MaterialState& state) const override;
  IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment, MaterialState& out,
                              Mat6& tangent) const override;

  /// Return in principal space (sorted trial values); fills the principal elastoplastic tangent.
  /// Returns the number of active surfaces (0 = elastic) or -1 when no active set fits.
  int return_principal(const Vec3& trial, Vec3& stress, Mat3& tangent, double& multiplier) const;

 private:
  double bulk_ = 0.0;
  double shear_ = 0.0;
  double lame_ = 0.0;    // K - 2G/3
  double k_phi_ = 0.0;   // (1 + sin phi) / (1 - sin phi)
  double k_psi_ = 0.0;   // (1 + sin psi) / (1 - sin psi)
  double strength_ = 0.0;  // 2 c sqrt(k_phi): s_A - k_phi s_C <= strength_
  double tension_ = 0.0;   // s_C >= -tension_ (effective, capped at the apex c cot phi)
  Mat3 elastic_principal_ = Mat3::Zero();
  Mat6 elastic_ = Mat6::Zero();

  // The surfaces are planes and the elasticity is linear, so everything about an active set but
  // the multipliers is constant: prepared once in the constructor.
  static constexpr int kSurfaces = 6;
  static constexpr int kSets = 10;
  struct Plane {
    Vec3 a;       // normal: a . s <= k
    double k = 0.0;
  };
  struct ActiveSet {
    int n = 0;
    int ids[3] = {-1, -1, -1};
    bool usable = false;   // linearly independent
    Mat3 inverse = Mat3::Zero();   // (a_j . D b_i)^-1
    Mat3 flow = Mat3::Zero();      // columns D b_i
    Mat3 tangent = Mat3::Zero();   // D - (D B) M^-1 (A^T D)
  };
  Plane planes_[kSurfaces];
  ActiveSet sets_[kSets];
  bool admissible(const Vec3& s, double tol) const;
  template <int N>
  bool try_set(const ActiveSet& set, const Vec3& trial, double scale, double ftol, Vec3& stress,
               double& multiplier) const;
  void prepare_return();
};

}  // namespace triaxcal
