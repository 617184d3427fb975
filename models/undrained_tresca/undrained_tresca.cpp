#include "undrained_tresca/undrained_tresca.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "principal_space.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {
constexpr double inf = std::numeric_limits<double>::infinity();
}

const ModelInfo& UndrainedTresca::model_info() {
  static const ModelInfo info{
      "undrained_tresca",
      "undrained total-stress model (phi_u = 0): linear elastic, perfectly plastic, Tresca criterion s1 - s3 <= 2 c_u",
      {
          {"undrained_shear_strength", "kPa", kNotGiven, 0.0, inf, true, true,
           "c_u: the largest principal total stress difference is 2 c_u (UU test: q_max = 2 c_u)",
           ParameterRole::undrained_shear_strength},
          {"undrained_youngs_modulus", "kPa", kNotGiven, 0.0, inf, true, true,
           "E_u: undrained Young's modulus (total stress); initial slope of q against axial strain in a UU test",
           ParameterRole::undrained_youngs_modulus},
          {"undrained_poissons_ratio", "-", 0.495, 0.45, 0.4999, false, false,
           "nu_u: close to 0.5 for no volume change (bulk modulus E_u / (3 (1 - 2 nu_u))); an undrained "
           "triaxial stage is isochoric whatever its value",
           ParameterRole::none},
      },
      {"accumulated_plastic_multiplier", "active_surfaces"},
  };
  return info;
}

std::unique_ptr<Model> UndrainedTresca::create(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  if (v.size() != info.parameters.size())
    throw InputError(where + ": undrained_tresca: expected " + std::to_string(info.parameters.size()) +
                     " parameter values, found " + std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  return std::make_unique<UndrainedTresca>(v);
}

UndrainedTresca::UndrainedTresca(const ParameterValues& v) {
  const double e = v[undrained_youngs_modulus];
  const double nu = v[undrained_poissons_ratio];
  cu_ = v[undrained_shear_strength];
  bulk_ = e / (3.0 * (1.0 - 2.0 * nu));
  shear_ = e / (2.0 * (1.0 + nu));
  lame_ = bulk_ - 2.0 * shear_ / 3.0;
  elastic_principal_.setConstant(lame_);
  elastic_principal_.diagonal().array() += 2.0 * shear_;
  elastic_ = isotropic_elastic_stiffness(bulk_, shear_);
}

void UndrainedTresca::initialise(const InitialConditions& conditions, MaterialState& state) const {
  state = MaterialState{};
  state.stress = conditions.stress;
}

namespace {

// Planes a . s <= 2 c_u in sorted principal space: the main plane (A - C), and the planes that meet
// it on the triaxial compression edge (A - B, where s_B = s_C) and the extension edge (B - C, where
// s_A = s_B).
const Vec3 kMain(1.0, 0.0, -1.0);
const Vec3 kCompressionEdge(1.0, -1.0, 0.0);
const Vec3 kExtensionEdge(0.0, 1.0, -1.0);

bool admissible(const Vec3& s, double strength, double tol) {
  return s[0] >= s[1] - tol && s[1] >= s[2] - tol && s[0] - s[2] <= strength + tol && s[0] - s[1] <= strength + tol &&
         s[1] - s[2] <= strength + tol;
}

}  // namespace

IntegrationResult UndrainedTresca::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                             Mat6& tangent) const {
  const double lame_vol = lame_ * (de[0] + de[1] + de[2]);
  Vec6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + lame_vol + 2.0 * shear_ * de[i];
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + shear_ * de[i];
  out = in;
  if (!trial.allFinite()) return {Status::numerical_issue, 0};

  principal::Decomposition d;
  if (!principal::decompose_sorted(trial, d)) return {Status::numerical_issue, 0};
  const Vec3& t = d.values;
  const double strength = 2.0 * cu_;
  const double tol = 1e-11 * d.scale;
  if (t[0] - t[2] <= strength + tol) {
    out.stress = trial;
    tangent = elastic_;
    out.internal[active_surfaces] = 0.0;
    return {Status::ok, 0};
  }

  // Every normal a is deviatoric, so D a = 2G a and the multipliers solve 2G (a_i . a_j) l_j = f_i.
  const double two_g = 2.0 * shear_;
  const double f_main = t[0] - t[2] - strength;
  Vec3 returned;
  Mat3 dp = elastic_principal_;
  double multiplier = 0.0;
  int active = 0;
  // Main plane alone: l = f / (4G) (a . a = 2).
  {
    const double l = f_main / (2.0 * two_g);
    returned = t - two_g * l * kMain;
    if (l >= 0.0 && admissible(returned, strength, tol)) {
      dp -= two_g * kMain * kMain.transpose() / 2.0;
      multiplier = l;
      active = 1;
    }
  }
  // An edge: the main plane with one of the others; a_1 . a_2 = 1, so (a_i . a_j) = [[2, 1], [1, 2]]
  // with inverse [[2, -1], [-1, 2]] / 3.
  for (const Vec3* other : {&kCompressionEdge, &kExtensionEdge}) {
    if (active) break;
    const double f_other = other->dot(t) - strength;
    const double l1 = (2.0 * f_main - f_other) / (3.0 * two_g);
    const double l2 = (2.0 * f_other - f_main) / (3.0 * two_g);
    const Vec3 s = t - two_g * (l1 * kMain + l2 * *other);
    if (l1 >= -1e-14 * d.scale && l2 >= -1e-14 * d.scale && admissible(s, strength, tol)) {
      returned = s;
      // D - 2G sum_ij a_i (G^-1)_ij a_j^T
      dp -= two_g / 3.0 *
            (2.0 * kMain * kMain.transpose() - kMain * other->transpose() - *other * kMain.transpose() +
             2.0 * *other * other->transpose());
      multiplier = l1 + l2;
      active = 2;
    }
  }
  if (!active) return {Status::no_convergence, 0};
  out.internal[accumulated_plastic_multiplier] = in.internal[accumulated_plastic_multiplier] + multiplier;
  out.internal[active_surfaces] = active;
  principal::assemble(d, returned, dp, shear_, out.stress, tangent);
  return {Status::ok, 1};
}

}  // namespace triaxcal
