#include "mohr_coulomb/mohr_coulomb.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/LU>

#include <algorithm>
#include <cmath>
#include <limits>

#include "triaxcal/error.hpp"
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

namespace {

// Column by column: g++ 12 turns a whole-matrix setZero of the 288-byte Mat6 into `rep stos`,
// whose start-up cost was a fifth of a plastic increment; per column it is 18 vector stores.
void zero_columns(Mat6& m) {
  for (int j = 0; j < 6; ++j) m.col(j).setZero();
}

// Voigt slot of the shear pair (i, j), i != j.
int shear_slot(int i, int j) {
  const int lo = std::min(i, j), hi = std::max(i, j);
  return lo == 0 ? (hi == 1 ? voigt::xy : voigt::zx) : voigt::yz;
}

}  // namespace

IntegrationResult MohrCoulomb::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                         Mat6& tangent) const {
  // Elastic trial D de, written out for the isotropic D (a third of the cost of the 6x6 product).
  const double lame_vol = lame_ * (de[0] + de[1] + de[2]);
  Vec6 trial;
  for (int i = 0; i < 3; ++i) trial[i] = in.stress[i] + lame_vol + 2.0 * shear_ * de[i];
  for (int i = 3; i < 6; ++i) trial[i] = in.stress[i] + shear_ * de[i];
  out = in;
  if (!trial.allFinite()) return {Status::numerical_issue, 0};

  // Principal values (sorted descending: A, B, C) and directions of the trial stress. When the
  // shear components vanish (every triaxial path) the axes are the coordinate axes: no
  // eigen-decomposition.
  const double scale = std::max(1.0, trial.cwiseAbs().maxCoeff());
  const bool diagonal = std::abs(trial[3]) + std::abs(trial[4]) + std::abs(trial[5]) <= 1e-14 * scale;
  Vec3 principal;
  Mat3 axes;  // columns: unit directions of A, B, C
  int order[3] = {0, 1, 2};  // diagonal case: coordinate index of A, B, C
  if (diagonal) {
    if (trial[order[0]] < trial[order[1]]) std::swap(order[0], order[1]);
    if (trial[order[1]] < trial[order[2]]) std::swap(order[1], order[2]);
    if (trial[order[0]] < trial[order[1]]) std::swap(order[0], order[1]);
    for (int i = 0; i < 3; ++i) principal[i] = trial[order[i]];
  } else {
    Mat3 t;
    t << trial[0], trial[3], trial[5], trial[3], trial[1], trial[4], trial[5], trial[4], trial[2];
    Eigen::SelfAdjointEigenSolver<Mat3> es(t);
    if (es.info() != Eigen::Success) return {Status::numerical_issue, 0};
    for (int i = 0; i < 3; ++i) {  // eigenvalues ascending
      principal[i] = es.eigenvalues()[2 - i];
      axes.col(i) = es.eigenvectors().col(2 - i);
    }
  }

  Vec3 returned;
  Mat3 dp;
  double multiplier = 0.0;
  const int active = return_principal(principal, returned, dp, multiplier);
  if (active < 0) return {Status::no_convergence, 0};
  if (active == 0) {
    out.stress = trial;
    tangent = elastic_;
    out.internal[1] = 0.0;
    return {Status::ok, 0};
  }

  out.internal[0] = in.internal[0] + multiplier;
  out.internal[1] = active;
  if (diagonal) {
    // Principal axes = coordinate axes: the same formula as below, written out without dyads.
    out.stress.setZero();
    zero_columns(tangent);
    for (int a = 0; a < 3; ++a) {
      out.stress[order[a]] = returned[a];
      for (int b = 0; b < 3; ++b) tangent(order[a], order[b]) = dp(a, b);
    }
    for (int a = 0; a < 3; ++a) {
      for (int b = a + 1; b < 3; ++b) {
        const double gap = principal[a] - principal[b];
        const double coef = std::abs(gap) > 1e-9 * scale ? 2.0 * shear_ * (returned[a] - returned[b]) / gap
                                                          : 0.5 * (dp(a, a) - dp(a, b) + dp(b, b) - dp(b, a));
        // sym(e_i e_j) has 1/2 in Voigt slot of the pair: 2 coef (1/2)^2 = coef / 2.
        tangent(shear_slot(order[a], order[b]), shear_slot(order[a], order[b])) = 0.5 * coef;
      }
    }
    return {Status::ok, 1};
  }
  Vec6 n[3];
  for (int i = 0; i < 3; ++i) n[i] = symmetric_dyad(axes.col(i), axes.col(i));
  out.stress = returned[0] * n[0] + returned[1] * n[1] + returned[2] * n[2];

  // Consistent tangent of an isotropic tensor function (de Souza Neto, Peric & Owen 2008,
  // "Computational Methods for Plasticity", eq. A.46): the principal tangent on the principal
  // dyads, plus 2 (s_a - s_b)/(e_a - e_b) on each sym(n_a n_b) pair, where e_a - e_b =
  // (trial_a - trial_b) / 2G; for coincident trial values the limit from the principal tangent.
  zero_columns(tangent);
  for (int a = 0; a < 3; ++a)
    for (int b = 0; b < 3; ++b) tangent += dp(a, b) * n[a] * n[b].transpose();
  for (int a = 0; a < 3; ++a) {
    for (int b = a + 1; b < 3; ++b) {
      const double gap = principal[a] - principal[b];
      double coef;
      if (std::abs(gap) > 1e-9 * scale)
        coef = 2.0 * shear_ * (returned[a] - returned[b]) / gap;
      else
        coef = 0.5 * (dp(a, a) - dp(a, b) + dp(b, b) - dp(b, a));
      const Vec6 s = symmetric_dyad(axes.col(a), axes.col(b));
      tangent += 2.0 * coef * s * s.transpose();
    }
  }
  return {Status::ok, 1};
}

}  // namespace triaxcal
