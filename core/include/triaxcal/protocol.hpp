#pragma once
// A test protocol is plain data: what the laboratory did to the specimen, stage by stage.
// simulate() in driver.hpp does the how.

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "triaxcal/model.hpp"

namespace triaxcal {

enum class Drainage { drained, undrained };

enum class StageType {
  isotropic_consolidation,    ///< drained, stress-controlled to p' = target_p (isotropic)
  anisotropic_consolidation,  ///< drained, stress-controlled to (target_axial, target_radial)
  k0_consolidation,           ///< drained, zero radial strain, axial stress to target_axial
  oedometer,                  ///< drained, zero radial strain, axial stress to target_axial or by axial_strain
  shear,                      ///< axial strain-controlled, total radial stress constant
  constant_p_shear,           ///< drained, axial strain-controlled, p' constant
  unload_reload,              ///< stress-controlled unload to q = target_deviator, reload to start q
};

enum class StopCriterion {
  none,               ///< run all steps
  peak_deviator,      ///< stop at the step where q stops increasing (multi-stage testing)
  peak_stress_ratio,  ///< stop at the step where s_a'/s_r' stops increasing
  axial_strain,       ///< stop at the first record where |engineering stage axial strain| reaches stop_value
};

struct Stage {
  StageType type = StageType::shear;
  std::string label;                ///< free text for tables and reports
  Drainage drainage = Drainage::drained;
  /// Equal record steps when record_at is empty (each half of an unload-reload loop gets `steps`).
  /// Records only: the accuracy is DriverOptions::tolerance, unless DriverOptions::fixed_steps makes
  /// every record step one increment.
  int steps = 100;
  double target_p = kNotGiven;      ///< kPa, isotropic consolidation
  double target_axial = kNotGiven;  ///< kPa, effective axial stress target
  double target_radial = kNotGiven; ///< kPa, effective radial stress target
  double target_deviator = kNotGiven;  ///< kPa, unload-reload: q at the bottom of the loop
  double axial_strain = kNotGiven;  ///< signed engineering stage strain dL/L_stage_start (compression positive) for strain control
  /// Where records are written, as fractions of the stage's control path in (0, 1], strictly
  /// increasing, ending at 1 (for strain control the fraction of the natural axial strain of the
  /// stage, see stage_fraction_at; for stress control the fraction of the way from the start
  /// stress to the target); empty = `steps` equal steps. Unload-reload: each half.
  std::vector<double> record_at;
  StopCriterion stop = StopCriterion::none;
  double stop_value = kNotGiven;    ///< for StopCriterion::axial_strain (decimal)
};

struct TestProtocol {
  std::string name;
  InitialConditions initial;       ///< effective stress, void ratio, p'_c or OCR at the start
  double back_pressure = 0.0;      ///< kPa; pore pressure in drained stages
  /// K_f / n (kPa): pore-fluid stiffness over porosity for undrained stages; infinite means an
  /// incompressible pore fluid (B = 1). A finite value gives B = 1 / (1 + K' n / K_f).
  double pore_fluid_stiffness = std::numeric_limits<double>::infinity();
  std::vector<Stage> stages;
};

}  // namespace triaxcal
