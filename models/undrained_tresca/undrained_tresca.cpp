#include "undrained_tresca/undrained_tresca.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "principal_space.hpp"
#include "seeded_parameters.hpp"
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

template <class T>
UndrainedTresca::Constants<T>::Constants(const std::array<T, kParameters>& p) {
  const T e = p[undrained_youngs_modulus];
  const T nu = p[undrained_poissons_ratio];
  cu = p[undrained_shear_strength];
  bulk = e / (3.0 * (1.0 - 2.0 * nu));
  shear = e / (2.0 * (1.0 + nu));
  lame = bulk - 2.0 * shear / 3.0;
  elastic_principal.setConstant(value_of(lame));
  elastic_principal.diagonal().array() += 2.0 * value_of(shear);
  elastic = isotropic_elastic_stiffness(value_of(bulk), value_of(shear));
}

UndrainedTresca::UndrainedTresca(const ParameterValues& v) {
  for (std::size_t i = 0; i < kParameters; ++i) values_[i] = v[i];
  constants_ = Constants<double>(values_);
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

template <class T>
bool admissible(const Eigen::Matrix<T, 3, 1>& s, const T& strength, double tol) {
  return s[0] >= s[1] - tol && s[1] >= s[2] - tol && s[0] - s[2] <= strength + tol && s[0] - s[1] <= strength + tol &&
         s[1] - s[2] <= strength + tol;
}

/// The increment on a scalar T (double: the model; Dual: its derivative version). Decisions on values
/// (Jet comparisons compare values); the returns are closed-form in the trial stress, so the dual
/// numbers carry exact derivatives of the branch taken.
template <class T>
IntegrationResult integrate_tresca(const UndrainedTresca::Constants<T>& c, const StateOf<T>& in,
                                   const Eigen::Matrix<T, 6, 1>& de, StateOf<T>& out, Mat6& tangent) {
  using V3 = Eigen::Matrix<T, 3, 1>;
  using V6 = Eigen::Matrix<T, 6, 1>;
  const T lame_vol = c.lame * (de[0] + de[1] + de[2]);
  V6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + lame_vol + 2.0 * c.shear * de[i];
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + c.shear * de[i];
  out = in;

  principal::Decomposition d;
  if constexpr (std::is_same_v<T, double>) {
    if (!trial.allFinite()) return {Status::numerical_issue, 0};
    if (!principal::decompose_sorted(trial, d)) return {Status::numerical_issue, 0};
  } else {
    const Vec6 trial_values = values_of(trial);
    if (!trial_values.allFinite()) return {Status::numerical_issue, 0};
    if (!principal::decompose_sorted(trial_values, d)) return {Status::numerical_issue, 0};
  }
  const V3 t = principal::principal_values(d, trial);
  const T strength = 2.0 * c.cu;
  const double tol = 1e-11 * d.scale;
  if (t[0] - t[2] <= strength + tol) {
    out.stress = trial;
    tangent = c.elastic;
    out.internal[UndrainedTresca::active_surfaces] = T(0.0);
    return {Status::ok, 0};
  }

  // Every normal a is deviatoric, so D a = 2G a and the multipliers solve 2G (a_i . a_j) l_j = f_i.
  const T two_g = 2.0 * c.shear;
  const double two_g_value = value_of(two_g);
  const V3 main = kMain.template cast<T>();
  const T f_main = t[0] - t[2] - strength;
  V3 returned;
  Mat3 dp = c.elastic_principal;
  T multiplier(0.0);
  int active = 0;
  // Main plane alone: l = f / (4G) (a . a = 2).
  {
    const T l = f_main / (2.0 * two_g);
    returned = t - two_g * l * main;
    if (l >= 0.0 && admissible(returned, strength, tol)) {
      dp -= two_g_value * kMain * kMain.transpose() / 2.0;
      multiplier = l;
      active = 1;
    }
  }
  // An edge: the main plane with one of the others; a_1 . a_2 = 1, so (a_i . a_j) = [[2, 1], [1, 2]]
  // with inverse [[2, -1], [-1, 2]] / 3.
  for (const Vec3* other : {&kCompressionEdge, &kExtensionEdge}) {
    if (active) break;
    const V3 o = other->template cast<T>();
    const T f_other = o.dot(t) - strength;
    const T l1 = (2.0 * f_main - f_other) / (3.0 * two_g);
    const T l2 = (2.0 * f_other - f_main) / (3.0 * two_g);
    const V3 s = t - two_g * (l1 * main + l2 * o);
    if (l1 >= -1e-14 * d.scale && l2 >= -1e-14 * d.scale && admissible(s, strength, tol)) {
      returned = s;
      // D - 2G sum_ij a_i (G^-1)_ij a_j^T
      dp -= two_g_value / 3.0 *
            (2.0 * kMain * kMain.transpose() - kMain * other->transpose() - *other * kMain.transpose() +
             2.0 * *other * other->transpose());
      multiplier = l1 + l2;
      active = 2;
    }
  }
  if (!active) return {Status::no_convergence, 0};
  out.internal[UndrainedTresca::accumulated_plastic_multiplier] =
      in.internal[UndrainedTresca::accumulated_plastic_multiplier] + multiplier;
  out.internal[UndrainedTresca::active_surfaces] = T(active);
  if constexpr (std::is_same_v<T, double>) {
    principal::assemble(d, returned, dp, c.shear, out.stress, tangent);
  } else {
    Vec6 stress_values;
    principal::assemble(d, values_of(returned), dp, c.shear.a, stress_values, tangent);
    principal::rotate_back(d, trial, returned, dp, c.shear.a, out.stress);
  }
  return {Status::ok, 1};
}

/// The derivative version: the same integrate on dual constants.
class UndrainedTrescaDual final : public DualModel {
 public:
  explicit UndrainedTrescaDual(const std::array<Dual, UndrainedTresca::kParameters>& p) : constants_(p) {}
  void initialise(const InitialConditions& conditions, DualState& state) const override {
    state = DualState{};
    for (int i = 0; i < 6; ++i) state.stress[i] = Dual(conditions.stress[i]);
  }
  IntegrationResult integrate(const DualState& in, const DualVec6& de, DualState& out, Mat6& tangent) const override {
    return integrate_tresca(constants_, in, de, out, tangent);
  }

 private:
  UndrainedTresca::Constants<Dual> constants_;
};

}  // namespace

IntegrationResult UndrainedTresca::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                             Mat6& tangent) const {
  return integrate_tresca(constants_, in, de, out, tangent);
}

std::unique_ptr<DualModel> UndrainedTresca::with_derivatives(std::span<const double> seeds) const {
  return std::make_unique<UndrainedTrescaDual>(seeded_parameters("undrained_tresca", values_, seeds));
}

}  // namespace triaxcal
