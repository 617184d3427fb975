#pragma once
// The one model entry point and the metadata that lives beside it. The CLI, the optimiser, the
// report and the plugin read everything they need about a model from ModelInfo; none hard-codes one.

#include <array>
#include <limits>
#include <memory>
#include <span>
#include <string>
#include <utility>
#include <vector>

#include "triaxcal/conventions.hpp"
#include "triaxcal/core_export.hpp"
#include "triaxcal/status.hpp"

namespace triaxcal {

/// Most internal variables any model keeps; fixed so that a state never allocates.
inline constexpr int kMaxStateVariables = 16;

/// Directions one forward-mode derivative pass carries (sensitivity.hpp): a calibration with more
/// free parameters takes several passes. Four: a pass costs about 1 + lanes model evaluations, so 4
/// lanes cost 5/4 of their share where 8 would cost 9/8 but leave half of them idle for the common
/// 4-6 free parameters.
inline constexpr int kDualLanes = 4;

class DualModel;  // sensitivity.hpp

inline constexpr double kNotGiven = std::numeric_limits<double>::quiet_NaN();

/// What a parameter means to the rest of triaxcal. Calibration seeds and bounds a free parameter
/// from the interpretation by its role, and the report compares a fitted parameter with the
/// classical value of its role: neither knows a model's parameter names, so adding a model touches
/// models/ only. A role is declared by at most one parameter of a model; `none` where no classical
/// value corresponds (a numerical switch, a ratio of the model's own).
enum class ParameterRole {
  none,
  friction_angle,                 ///< effective friction angle phi' (deg) of the failure envelope
  cohesion,                       ///< effective cohesion c' (kPa)
  dilation_angle,                 ///< dilation angle psi (deg), peak dilation rate
  critical_state_ratio,           ///< M = q/p' at critical state in triaxial compression (-)
  critical_state_friction_angle,  ///< phi_cs (deg)
  youngs_modulus,                 ///< a constant Young's modulus E (kPa), seeded from the initial stiffness
  shear_modulus,                  ///< a constant shear modulus G (kPa)
  secant_stiffness_ref,           ///< E_50 at the reference pressure (kPa)
  unload_reload_stiffness_ref,    ///< E_ur at the reference pressure (kPa)
  oedometer_stiffness_ref,        ///< tangent constrained modulus at the reference pressure (kPa)
  stiffness_exponent,             ///< exponent of the stiffness power law (-)
  reference_pressure,             ///< reference pressure of the stiffness power laws (kPa)
  poissons_ratio,                 ///< Poisson's ratio nu (-)
  compression_index,              ///< lambda, slope of the normal compression line in e-ln p' (-)
  swelling_index,                 ///< kappa, slope of unloading-reloading lines in e-ln p' (-)
  earth_pressure_at_rest,         ///< K0 = s3'/s1' in one-dimensional loading (-)
  tensile_strength,               ///< tension cut-off (kPa)
  undrained_shear_strength,       ///< c_u (kPa), total stress
  undrained_youngs_modulus,       ///< E_u (kPa), total stress
  /// The power-law critical-state line e_c = e_Gamma - lambda_c (p'/p_at)^xi, p_at = 101.325 kPa
  /// (Li & Wang 1998; the form of Dafalias & Manzari 2004), as the sand interpretation fits it:
  csl_void_ratio_ref,             ///< e_Gamma, the line's void ratio at p' = 0 (-)
  csl_slope,                      ///< lambda_c, its slope against (p'/p_at)^xi (-)
  csl_exponent,                   ///< xi (-): the interpretation takes it as given (InterpretOptions::csl_exponent)
};

/// The role's name as printed (`triaxcal models NAME`), e.g. "friction_angle"; "none" for none.
TRIAXCAL_CORE_EXPORT const char* to_string(ParameterRole role);

/// One parameter: what the user sets, in which unit, and where it is physically meaningful.
struct ParameterInfo {
  std::string name;          ///< snake_case key used in files and on the command line
  std::string unit;          ///< "kPa", "deg", "-" ...
  double default_value;      ///< used when a parameter file omits it; NaN = required
  double lower;              ///< physical lower bound
  double upper;              ///< physical upper bound
  bool lower_open = false;   ///< true: value must be > lower, else >= lower
  bool upper_open = false;   ///< true: value must be < upper, else <= upper
  std::string description;   ///< one line, shown by `triaxcal models NAME`
  ParameterRole role = ParameterRole::none;  ///< what calibration and the report take it for
  /// A word parameter (a choice among named rules): the value is the index of the word; files and
  /// outputs write the word, never the number. Empty for a number.
  std::vector<std::string> words{};
};

/// What a model implies for the classical quantity of a role, for the report's comparison of the
/// interpretation with the fitted model: a value the model carries in another form (phi_cs from its
/// M when only M is given), and a note where the model's definition of the quantity differs from
/// the classical one (e.g. a hardening law that the curve's own E_50 follows only without plastic
/// volume change). The report asks ModelInfo::implied and never matches a model or parameter name.
struct ImpliedValue {
  double value = std::numeric_limits<double>::quiet_NaN();  ///< NaN: the parameter that declares the role, if any
  std::string how;   ///< how value follows from the parameters (shown as the model's basis)
  std::string note;  ///< where the model's definition differs from the classical one; empty when it does not
};

/// `values` in the order of ModelInfo::parameters.
using ImpliedFunction = ImpliedValue (*)(ParameterRole role, const std::vector<double>& values);

/// Whether parameter `index` takes no part in the response at `values`: an alternative left at its
/// "not given" value (Modified Cam-Clay's critical_state_friction_angle = 0 when M is given) or a
/// parameter switched off by another. Displays of the parameters a model uses (the Gmsh results)
/// leave it out; parameter sets keep every parameter.
using UnusedFunction = bool (*)(std::size_t index, const std::vector<double>& values);

struct ModelInfo {
  std::string name;                      ///< registry key, e.g. "mohr_coulomb"
  std::string title;                     ///< one line with the published source
  std::vector<ParameterInfo> parameters; ///< in the order of ParameterValues
  std::vector<std::string> state_names;  ///< names of MaterialState::internal[0..n)
  /// Former parameter names and the names that replaced them: an old name is an error that names
  /// the new one (no silent alias).
  std::vector<std::pair<std::string, std::string>> renamed{};
  /// Values and notes for the comparison table (ImpliedValue); nullptr: every role is its parameter's value.
  ImpliedFunction implied = nullptr;
  /// Parameters not used at given values (UnusedFunction); nullptr: every parameter is used.
  UnusedFunction unused = nullptr;
};

/// Index of the parameter that declares `role` in `info`, -1 when none does.
TRIAXCAL_CORE_EXPORT int parameter_with_role(const ModelInfo& info, ParameterRole role);

/// Values in the order of ModelInfo::parameters.
using ParameterValues = std::vector<double>;

/// State of the material point as a model sees it.
struct MaterialState {
  Vec6 stress = Vec6::Zero();                       ///< effective stress (kPa), compression positive
  std::array<double, kMaxStateVariables> internal{}; ///< model-defined, named by ModelInfo::state_names
};

/// What a specimen looks like when the protocol starts (after sampling, set-up and saturation).
struct InitialConditions {
  Vec6 stress = Vec6::Zero();               ///< effective stress (kPa)
  double void_ratio = kNotGiven;            ///< e0 (-)
  double preconsolidation_pressure = kNotGiven;  ///< p'_c (kPa); models that need it say so
  double overconsolidation_ratio = kNotGiven;    ///< OCR = p'_c / p'_0 where p'_c is not given
};

/// What integrate returns besides the new state.
struct IntegrationResult {
  Status status = Status::ok;
  int iterations = 0;  ///< local iterations (0 for an elastic step)
};

class TRIAXCAL_CORE_EXPORT Model {
 public:
  virtual ~Model() = default;

  virtual const ModelInfo& info() const = 0;

  /// Fill `state` (stress and internal variables) from the initial conditions. Throws InputError
  /// when the conditions lack what the model needs (e.g. a void ratio), naming it.
  virtual void initialise(const InitialConditions& conditions, MaterialState& state) const = 0;

  /// Integrate one strain increment (engineering shear) from `in`. On Status::ok, `out` holds the
  /// new state and `tangent` the consistent tangent d(sigma)/d(strain increment). On failure the
  /// contents of `out` and `tangent` are unspecified; the driver cuts the increment.
  /// Must not allocate.
  virtual IntegrationResult integrate(const MaterialState& in, const Vec6& strain_increment,
                                      MaterialState& out, Mat6& tangent) const = 0;

  /// The same model with parameters that carry derivatives, for exact sensitivities
  /// (sensitivity.hpp): `seeds` holds kDualLanes numbers a parameter in ModelInfo order,
  /// seeds[i * kDualLanes + k] = d(parameter i) / d(t_k) (row-major, parameters().size() rows).
  /// nullptr (the default): the model has no derivative version (the calibration then takes
  /// finite differences). Callers include triaxcal/sensitivity.hpp.
  virtual std::unique_ptr<DualModel> with_derivatives(std::span<const double> seeds) const;
};

}  // namespace triaxcal
