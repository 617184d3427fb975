#pragma once
// The one model entry point and the metadata that lives beside it. The CLI, the optimiser, the
// report and the plugin read everything they need about a model from ModelInfo; none hard-codes one.

#include <array>
#include <limits>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "triaxcal/conventions.hpp"
#include "triaxcal/core_export.hpp"
#include "triaxcal/status.hpp"

namespace triaxcal {

/// Most internal variables any model keeps; fixed so that a state never allocates.
inline constexpr int kMaxStateVariables = 8;

inline constexpr double kNotGiven = std::numeric_limits<double>::quiet_NaN();

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
};

struct ModelInfo {
  std::string name;                      ///< registry key, e.g. "mohr_coulomb"
  std::string title;                     ///< one line with the published source
  std::vector<ParameterInfo> parameters; ///< in the order of ParameterValues
  std::vector<std::string> state_names;  ///< names of MaterialState::internal[0..n)
};

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
};

}  // namespace triaxcal
