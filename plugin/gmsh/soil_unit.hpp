#pragma once
// One soil unit's compute, free of Gmsh: load its parameter set (and run a check test) or run its
// calibration, and say what came out: parameters with units and intervals, fit quality, curves.

#include <nlohmann/json.hpp>

#include <string>
#include <vector>

#include "project_file.hpp"
#include "triaxcal/calibrate.hpp"

namespace triaxcal::gmsh {

/// q against axial strain, measured (points) or simulated (line).
struct Curve {
  std::string label;        ///< e.g. "CD-50 measured", "check test"
  bool measured = false;
  std::vector<double> axial_strain;  ///< decimal
  std::vector<double> q;             ///< kPa
};

struct ParameterOutput {
  std::string name;
  std::string unit;
  double value = 0.0;
  std::string status;       ///< "free", "fixed", "tied" or "" (a plain parameter set)
  bool has_interval = false;
  double low = 0.0, high = 0.0;  ///< 95 % interval where the set has one
};

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
