#include "mohr_coulomb/mohr_coulomb.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/LU>

#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/error.hpp"
#include "principal_space.hpp"
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
  const double e = v[youngs_modulus];
  const double nu = v[poissons_ratio];
  bulk_ = e / (3.0 * (1.0 - 2.0 * nu));
  shear_ = e / (2.0 * (1.0 + nu));
  const double sphi = std::sin(degrees_to_radians(v[friction_angle]));
  const double spsi = std::sin(degrees_to_radians(v[dilation_angle]));
  k_phi_ = (1.0 + sphi) / (1.0 - sphi);
  k_psi_ = (1.0 + spsi) / (1.0 - spsi);
  strength_ = 2.0 * v[cohesion] * std::sqrt(k_phi_);
  const double apex = v[cohesion] / std::tan(degrees_to_radians(v[friction_angle]));
  tension_ = std::min(v[tensile_strength], apex);
  lame_ = bulk_ - 2.0 * shear_ / 3.0;
  elastic_principal_.setConstant(lame_);
  elastic_principal_.diagonal().array() += 2.0 * shear_;
  elastic_ = isotropic_elastic_stiffness(bulk_, shear_);
  prepare_return();
}

void MohrCoulomb::initialise(const InitialConditions& conditions, MaterialState& state) const {
  state = MaterialState{};
  state.stress = conditions.stress;
}

namespace {

enum SurfaceId { main_plane, compression_edge, extension_edge, tension_c, tension_b, tension_a };

// Active sets to try, smallest first. In sorted space the main plane (A-C) is the most critical
// Mohr-Coulomb plane and s_C the most critical for tension, so single-surface returns need only
// those two; edges, apex and tension corners follow.
constexpr int kCandidateSets[10][3] = {
    {main_plane, -1, -1},
    {tension_c, -1, -1},
    {main_plane, compression_edge, -1},
    {main_plane, extension_edge, -1},
    {main_plane, tension_c, -1},
    {tension_c, tension_b, -1},
    {main_plane, compression_edge, extension_edge},
    {main_plane, tension_c, tension_b},
    {main_plane, extension_edge, tension_c},
    {tension_c, tension_b, tension_a},
};

}  // namespace

void MohrCoulomb::prepare_return() {
  // Planes a . s <= k in sorted principal space (s_A >= s_B >= s_C), flow directions b.
  const Vec3 normals[kSurfaces] = {Vec3(1.0, 0.0, -k_phi_), Vec3(1.0, -k_phi_, 0.0), Vec3(0.0, 1.0, -k_phi_),
                                   Vec3(0.0, 0.0, -1.0),    Vec3(0.0, -1.0, 0.0),    Vec3(-1.0, 0.0, 0.0)};
  const Vec3 flows[kSurfaces] = {Vec3(1.0, 0.0, -k_psi_), Vec3(1.0, -k_psi_, 0.0), Vec3(0.0, 1.0, -k_psi_),
                                 Vec3(0.0, 0.0, -1.0),    Vec3(0.0, -1.0, 0.0),    Vec3(-1.0, 0.0, 0.0)};
  const double limits[kSurfaces] = {strength_, strength_, strength_, tension_, tension_, tension_};
  for (int i = 0; i < kSurfaces; ++i) planes_[i] = {normals[i], limits[i]};
  for (int c = 0; c < kSets; ++c) {
    ActiveSet& set = sets_[c];
    set.n = 0;
    for (int id : kCandidateSets[c])
      if (id >= 0) set.ids[set.n++] = id;
    Mat3 m = Mat3::Identity();
    set.flow.setZero();
    for (int i = 0; i < set.n; ++i) set.flow.col(i) = elastic_principal_ * flows[set.ids[i]];
    for (int j = 0; j < set.n; ++j)
      for (int i = 0; i < set.n; ++i) m(j, i) = normals[set.ids[j]].dot(set.flow.col(i));
    Eigen::PartialPivLU<Mat3> lu(m);
    set.usable = std::abs(lu.determinant()) > 1e-12 * std::pow(m.cwiseAbs().maxCoeff(), set.n);
    if (!set.usable) continue;
    set.inverse = lu.inverse();
    set.tangent = elastic_principal_;
    for (int i = 0; i < set.n; ++i)
      for (int j = 0; j < set.n; ++j)
        set.tangent -= set.inverse(i, j) * set.flow.col(i) * (elastic_principal_ * normals[set.ids[j]]).transpose();
  }
}

bool MohrCoulomb::admissible(const Vec3& s, double tol) const {
  // The order first: it is what a single-plane return from a triaxial state (s_B = s_C) breaks,
  // and it is cheaper than the six planes.
  if (!(s[0] >= s[1] - tol && s[1] >= s[2] - tol)) return false;
  for (const Plane& f : planes_)
    if (f.a.dot(s) - f.k > tol * (1.0 + k_phi_)) return false;
  return true;
}

template <int N>
bool MohrCoulomb::try_set(const ActiveSet& set, const Vec3& trial, double scale, double ftol, Vec3& stress,
                          double& multiplier) const {
  // Sum_i (a_j . D b_i) lambda_i = a_j . trial - k_j for every active j; N is the size of the set,
  // a template argument so that the small loops unroll.
  double f[N], lambda[N];
  for (int j = 0; j < N; ++j) f[j] = planes_[set.ids[j]].a.dot(trial) - planes_[set.ids[j]].k;
  for (int i = 0; i < N; ++i) {
    lambda[i] = 0.0;
    for (int j = 0; j < N; ++j) lambda[i] += set.inverse(i, j) * f[j];
    if (!(lambda[i] >= -1e-14 * scale)) return false;
  }
  Vec3 s = trial;
  for (int i = 0; i < N; ++i) s -= lambda[i] * set.flow.col(i);
  if (!admissible(s, ftol)) return false;
  stress = s;
  multiplier = 0.0;
  for (int i = 0; i < N; ++i) multiplier += lambda[i];
  return true;
}

int MohrCoulomb::return_principal(const Vec3& trial, Vec3& stress, Mat3& tangent, double& multiplier) const {
  const double scale = std::max(1.0, trial.cwiseAbs().maxCoeff());
  const double ftol = 1e-11 * scale;
  multiplier = 0.0;
  if (admissible(trial, ftol)) {
    stress = trial;
    tangent = elastic_principal_;
    return 0;
  }
  for (const ActiveSet& set : sets_) {
    if (!set.usable) continue;
    bool found = false;
    switch (set.n) {
      case 1: found = try_set<1>(set, trial, scale, ftol, stress, multiplier); break;
      case 2: found = try_set<2>(set, trial, scale, ftol, stress, multiplier); break;
      case 3: found = try_set<3>(set, trial, scale, ftol, stress, multiplier); break;
    }
    if (!found) continue;
    tangent = set.tangent;
    return set.n;
  }
  return -1;
}

IntegrationResult MohrCoulomb::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                         Mat6& tangent) const {
  // Elastic trial D de, written out for the isotropic D (a third of the cost of the 6x6 product).
  const double lame_vol = lame_ * (de[0] + de[1] + de[2]);
  Vec6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + lame_vol + 2.0 * shear_ * de[i];
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + shear_ * de[i];
  out = in;
  if (!trial.allFinite()) return {Status::numerical_issue, 0};

  // Principal values (sorted descending: A, B, C) and directions of the trial stress
  // (principal_space.hpp: no eigen-decomposition on triaxial paths).
  principal::Decomposition d;
  if (!principal::decompose_sorted(trial, d)) return {Status::numerical_issue, 0};

  Vec3 returned;
  Mat3 dp;
  double multiplier = 0.0;
  const int active = return_principal(d.values, returned, dp, multiplier);
  if (active < 0) return {Status::no_convergence, 0};
  if (active == 0) {
    out.stress = trial;
    tangent = elastic_;
    out.internal[1] = 0.0;
    return {Status::ok, 0};
  }

  out.internal[0] = in.internal[0] + multiplier;
  out.internal[1] = active;
  principal::assemble(d, returned, dp, shear_, out.stress, tangent);
  return {Status::ok, 1};
}

}  // namespace triaxcal
