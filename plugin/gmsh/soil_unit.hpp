#pragma once
// One soil unit's compute, free of Gmsh: load its parameter set (and run a check test) or run its
// calibration, and say what came out: parameters with units and intervals, fit quality, curves.

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

#include "project_file.hpp"
#include "triaxcal/calibrate.hpp"

namespace triaxcal::gmsh {

/// One quantity of one test against axial strain, measured (points) or simulated (line). A graph
/// is one test and quantity: its measured and model curves share it.
struct Curve {
  std::string test;         ///< e.g. "CD-50", "check test (undrained, p' = 80 kPa)"
  std::string quantity;     ///< the graph's y axis with its unit: "q [kPa]", "e_v [%]" (volumetric strain), "du [kPa]" (excess pore pressure)
  bool measured = false;    ///< measured points; false: the model's line
  std::vector<double> axial_strain;  ///< decimal
  std::vector<double> y;             ///< in the unit of `quantity` (strains in %)
};

struct ParameterOutput {
  std::string name;
  std::string unit;
  double value = 0.0;
  std::string status;       ///< "free", "fixed", "tied" or "" (a plain parameter set)
  bool has_interval = false;
  double low = 0.0, high = 0.0;  ///< 95 % interval where the set has one
  bool used = true;         ///< false: the model does not use it at these values (ModelInfo::unused)
};

/// `value` rounded to meaningful digits: to the 95 % interval's precision (its half-width to two
/// significant digits) where there is one, else four significant digits; never "-0".
std::string rounded(double value, bool has_interval = false, double low = 0.0, double high = 0.0);

/// An error message with its reason first: "<reason> (<file and key path>)" from the usual
/// "<file>: <key path>: <reason>" (leading parts without a space are taken as the place).
std::string reason_first(const std::string& message);

struct UnitResult {
  bool ok = false;
  bool converged = true;    ///< calibration: the outcome is converged (false: stopped or poor_fit, a warning)
  std::string message;      ///< the error, or one line on what was done (a calibration: its outcome and reason)
  std::string model;
  nlohmann::json parameter_set;  ///< "triaxcal-parameters" object (null on error)
  std::vector<ParameterOutput> parameters;
  nlohmann::json fit;       ///< calibration: outcome, outcome_reason, termination, objective, curves' RMSE and R^2; else null
  double check_peak_q = 0.0;  ///< parameter set: largest q of the check test (kPa)
  std::vector<Curve> curves;

  /// What the project file keeps: status, message, computed, model, parameters (model order: name,
  /// unit, value, status, interval_95), parameter_set, fit, check_peak_q.
  nlohmann::json to_json(const std::string& computed) const;
};

/// Never throws for bad input: an InputError becomes ok = false with its message.
UnitResult compute_unit(const Project& project, const UnitSettings& settings, const CalibrationCallback& progress);

}  // namespace triaxcal::gmsh
