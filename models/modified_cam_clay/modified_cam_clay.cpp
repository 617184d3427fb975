// Modified Cam-Clay: metadata, parameter checks and the double model. The arithmetic is
// CamClayCore<double> (cam_clay_core_impl.hpp); the derivative version is in
// modified_cam_clay_derivatives.cpp.
#include "modified_cam_clay/modified_cam_clay.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "modified_cam_clay/cam_clay_core_impl.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {

constexpr double inf = std::numeric_limits<double>::infinity();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Largest M_c for which the Lode shape of Sheng, Sloan & Yu (2000) stays convex
// (phi_cs = 48.59 deg, sin phi_cs = 0.75, M_c = 2).
constexpr double kConvexLimit = 2.0;

// M and phi_cs are one quantity given in either form, M = 6 sin phi_cs/(3 - sin phi_cs) in triaxial
// compression (Wood 1990); the model's strength is its critical state, c' = 0 and phi' = phi_cs.
ImpliedValue cam_clay_implied(ParameterRole role, const std::vector<double>& v) {
  using P = ModifiedCamClay::Parameter;
  if (v.size() <= static_cast<std::size_t>(P::critical_state_friction_angle)) return {};
  const double m_given = v[P::critical_state_ratio], phi_given = v[P::critical_state_friction_angle];
  double phi = kNaN, m = kNaN;
  if (m_given > 0.0) {
    m = m_given;
    phi = radians_to_degrees(std::asin(3.0 * m / (6.0 + m)));
  } else if (phi_given > 0.0) {
    phi = phi_given;
    const double s = std::sin(degrees_to_radians(phi));
    m = 6.0 * s / (3.0 - s);
  }
  const char* strength_note =
      "the model's strength is its critical state (c' = 0, phi' = phi_cs); a peak envelope of overconsolidated "
      "specimens lies above it by definition";
  switch (role) {
    case ParameterRole::critical_state_friction_angle:
      if (m_given > 0.0) return {phi, "critical_state_ratio M: sin phi_cs = 3 M/(6 + M)", ""};
      return {};
    case ParameterRole::critical_state_ratio:
      if (!(m_given > 0.0) && phi_given > 0.0) return {m, "critical_state_friction_angle: M = 6 sin phi_cs/(3 - sin phi_cs)", ""};
      return {};
    case ParameterRole::friction_angle: return {phi, "critical state: phi' = phi_cs", strength_note};
    case ParameterRole::cohesion: return {std::isfinite(phi) ? 0.0 : kNaN, "critical state: c' = 0", strength_note};
    default: return {};
  }
}

// M and phi_cs: the one given (> 0) is used, the other is 0; a constant shear modulus (> 0)
// replaces the Poisson's ratio.
bool cam_clay_unused(std::size_t index, const std::vector<double>& v) {
  using P = ModifiedCamClay::Parameter;
  if (v.size() <= static_cast<std::size_t>(P::shear_modulus)) return false;
  switch (index) {
    case P::critical_state_ratio: return !(v[P::critical_state_ratio] > 0.0);
    case P::critical_state_friction_angle: return !(v[P::critical_state_friction_angle] > 0.0);
    case P::poissons_ratio: return v[P::shear_modulus] > 0.0;
    case P::shear_modulus: return !(v[P::shear_modulus] > 0.0);
    default: return false;
  }
}

}  // namespace

const ModelInfo& ModifiedCamClay::model_info() {
  static const ModelInfo info{
      "modified_cam_clay",
      "Modified Cam-Clay (Roscoe & Burland 1968): elliptical yield surface, isotropic hardening with void ratio",
      {
          {"lambda", "-", kNaN, 0.0, inf, true, true,
           "slope of the normal compression line in e-ln p' (natural log)", ParameterRole::compression_index},
          {"kappa", "-", kNaN, 0.0, inf, true, true,
           "slope of unloading-reloading lines in e-ln p'; elastic K = (1 + e) p'/kappa with the current e; "
           "kappa < lambda", ParameterRole::swelling_index},
          {"critical_state_ratio", "-", 0.0, 0.0, 3.0, false, true,
           "M = q/p' at critical state in triaxial compression; 0 = from critical_state_friction_angle",
           ParameterRole::critical_state_ratio},
          {"critical_state_friction_angle", "deg", 0.0, 0.0, 90.0, false, true,
           "critical-state friction angle phi_cs, M = 6 sin(phi_cs)/(3 - sin(phi_cs)); 0 = use critical_state_ratio (give one)",
           ParameterRole::critical_state_friction_angle},
          {"poissons_ratio", "-", 0.3, -1.0, 0.5, true, true,
           "Poisson's ratio nu' of the elastic part, G = 3 (1 - 2 nu') K / (2 (1 + nu')); ignored when shear_modulus > 0",
           ParameterRole::poissons_ratio},
          {"shear_modulus", "kPa", 0.0, 0.0, inf, false, true,
           "constant elastic shear modulus G; 0 = pressure-dependent G from poissons_ratio",
           ParameterRole::shear_modulus},
          {"lode_dependence", "-", 0.0, 0.0, 1.0, false, false,
           "0 = M the same in every direction; 1 = M(Lode angle) of Sheng, Sloan & Yu (2000): "
           "6 sin(phi_cs)/(3 + sin(phi_cs)) in extension", ParameterRole::none},
      },
      {"preconsolidation_pressure", "void_ratio", "plastic_rate", "multiplier_rate"},
      {{"critical_friction_angle", "critical_state_friction_angle"}},
      cam_clay_implied,
      cam_clay_unused,
  };
  return info;
}

std::unique_ptr<Model> ModifiedCamClay::create(const ParameterValues& v, const std::string& where) {
  const ModelInfo& info = model_info();
  const std::string prefix = where + ": modified_cam_clay: ";
  if (v.size() != info.parameters.size())
    throw InputError(prefix + "expected " + std::to_string(info.parameters.size()) + " parameter values, found " +
                     std::to_string(v.size()));
  for (std::size_t i = 0; i < v.size(); ++i) check_bounds(info, info.parameters[i], v[i], where);
  if (v[kappa] >= v[lambda])
    throw InputError(prefix + "kappa = " + format_number(v[kappa]) + " must be smaller than lambda = " +
                     format_number(v[lambda]));
  const bool has_m = v[critical_state_ratio] > 0.0;
  const bool has_phi = v[critical_state_friction_angle] > 0.0;
  if (!has_m && !has_phi)
    throw InputError(prefix + "give critical_state_ratio (M > 0) or critical_state_friction_angle (phi_cs > 0); both are 0");
  if (has_m && has_phi)
    throw InputError(prefix + "give only one of critical_state_ratio = " + format_number(v[critical_state_ratio]) +
                     " and critical_state_friction_angle = " + format_number(v[critical_state_friction_angle]) +
                     " deg (set the other to 0)");
  if (v[lode_dependence] != 0.0 && v[lode_dependence] != 1.0)
    throw InputError(prefix + "lode_dependence = " + format_number(v[lode_dependence]) +
                     " must be 0 (M the same in every direction) or 1 (M depends on the Lode angle)");
  if (v[lode_dependence] == 1.0) {
    double m = v[critical_state_ratio];
    if (has_phi) {
      const double s = std::sin(degrees_to_radians(v[critical_state_friction_angle]));
      m = 6.0 * s / (3.0 - s);
    }
    if (m > kConvexLimit)
      throw InputError(prefix + "with lode_dependence = 1 the critical state ratio M = " + format_number(m) +
                       " must not exceed 2 (phi_cs = 48.59 deg), where the yield surface stops being convex");
  }
  return std::make_unique<ModifiedCamClay>(v);
}

namespace {

std::array<double, kCamClayParameters> parameter_array(const ParameterValues& v) {
  std::array<double, kCamClayParameters> a{};
  std::copy_n(v.begin(), kCamClayParameters, a.begin());
  return a;
}

}  // namespace

ModifiedCamClay::ModifiedCamClay(const ParameterValues& v) : values_(parameter_array(v)), core_(values_) {}

double ModifiedCamClay::critical_state_ratio_at(const Vec6& stress) const {
  return core_.critical_state_ratio_at(stress);
}

double ModifiedCamClay::extension_ratio() const {
  double slope;
  return core_.ratio_and_slope(1.0, slope);
}

void ModifiedCamClay::initialise(const InitialConditions& c, MaterialState& state) const {
  core_.initialise(c, state);
}

IntegrationResult ModifiedCamClay::integrate(const MaterialState& in, const Vec6& de, MaterialState& out,
                                             Mat6& tangent) const {
  return core_.integrate(in, de, out, tangent);
}

}  // namespace triaxcal
