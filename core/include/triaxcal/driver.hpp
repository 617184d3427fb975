#pragma once
// The single material-point driver: one general 6-component state under mixed control.

#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/model.hpp"
#include "triaxcal/protocol.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

/// Most records one simulation may hold: the protocol's steps (or record_at points) of every stage,
/// twice for an unload-reload loop, plus the initial state. validate_protocol refuses more up front.
/// Every record ends at least one substep, so under error control more records than the default
/// max_substeps (1e6) could never complete anyway; the records are reserved before the run, and a
/// record takes sizeof(StepRecord) = 176 bytes (g++ 12, x86-64): at most about 176 MB a simulation.
inline constexpr long kMaxRecords = 1000000;

struct DriverOptions {
  /// Local error tolerance of the adaptive substepping, in [1e-10, 0.1]: the step-doubling estimate
  /// of each substep's error (stress relative to max(|sigma'|, 1 kPa), strains of the stress-controlled
  /// rows relative to max(|stage strain|, 1e-3)) stays below it (DEVELOPERS.md "The driver"). The
  /// default keeps the simulated curves at the recorded points within 0.1 % of each curve's range of
  /// the converged solution.
  double tolerance = 1e-4;
  /// true: every record step is one increment (halved only when the model fails), no error control.
  bool fixed_steps = false;
  /// Error control: keep 2 x_halves - x_one of each step-doubling pair (local extrapolation, second
  /// order) where every internal variable changed smoothly; false = keep the two halves (first order).
  bool extrapolate = true;
  int max_newton_iterations = 25;      ///< per (sub)increment on the stress-controlled rows
  double newton_tolerance = 1e-10;     ///< relative to the largest stress component (floor 1 kPa)
  int max_cuts = 12;                   ///< bisections of one record step (model failures) before the run gives up
  int max_total_cuts = 10000;          ///< over the whole protocol
  long max_substeps = 1000000;         ///< accepted + rejected substeps over the whole protocol (error control)

  /// Throws InputError naming the field, its value and the rule it broke.
  void validate() const;
};

/// One converged step, in the units of conventions.hpp. T = double (StepRecord), or Dual
/// (DualStepRecord: every value with its derivatives, from a simulation on dual numbers).
template <class T>
struct BasicStepRecord {
  int stage = 0;                   ///< index into TestProtocol::stages
  int step = 0;                    ///< 1-based within the stage (0 = initial state)
  // Natural (logarithmic) strains since the start of the protocol, additive (conventions.hpp).
  T axial_strain = T(0.0);       ///< eps_11 = ln(L0/L)
  T radial_strain = T(0.0);      ///< (eps_22 + eps_33) / 2
  T volumetric_strain = T(0.0);  ///< eps_11 + eps_22 + eps_33 = ln(V0/V)
  // Engineering strains relative to the specimen at the start of this record's stage (lab convention).
  T stage_axial_strain = T(0.0);       ///< dL / L_stage_start
  T stage_volumetric_strain = T(0.0);  ///< dV / V_stage_start
  T axial_stress = T(0.0);       ///< s_a' (kPa)
  T radial_stress = T(0.0);      ///< s_r' (kPa)
  T p = T(0.0);                  ///< p' (kPa)
  T q = T(0.0);                  ///< s_a' - s_r' (kPa, signed)
  T excess_pore_pressure = T(0.0);  ///< u - back pressure (kPa)
  T void_ratio = T(kNotGiven);   ///< (1 + e0) exp(-eps_v) - 1, NaN when e0 is unknown
  T stress_ratio = T(0.0);       ///< s_a' / s_r'
  int cuts = 0;                    ///< bisections needed by this step
  std::array<double, kMaxStateVariables> state{};  ///< model internal variables
};

using StepRecord = BasicStepRecord<double>;
using DualStepRecord = BasicStepRecord<Dual>;

struct StageSummary {
  int stage = 0;
  int first = 0;                   ///< index of its first record in SimulationResult::steps
  int last = -1;                   ///< index of its last record
  bool stopped_early = false;      ///< a stop criterion ended it
  double peak_q = 0.0;             ///< largest |q| in the stage (kPa, signed as reached)
  double end_q = 0.0;
};

enum class Termination { completed, failed, not_run };

/// What a simulation returns: T = double (SimulationResult) or Dual (DualSimulationResult, records
/// with derivatives; counts and summaries as for double).
template <class T>
struct BasicSimulationResult {
  Termination termination = Termination::not_run;
  std::string message;             ///< where and why it stopped, with the numbers
  std::vector<BasicStepRecord<T>> steps;   ///< record 0 is the initial state
  std::vector<StageSummary> stages;
  int total_cuts = 0;
  long substeps = 0;               ///< accepted substeps (error-controlled) or increments (fixed)
  long rejected_substeps = 0;      ///< substeps rejected by the error estimate
  long newton_iterations = 0;
  long model_calls = 0;
  int failed_stage = -1;
  int failed_step = -1;

  bool ok() const { return termination == Termination::completed; }
  /// Back to a default (not run) result; the vectors and the message keep their capacity.
  TRIAXCAL_CORE_EXPORT void clear();
  TRIAXCAL_CORE_EXPORT std::string brief() const;
};

using SimulationResult = BasicSimulationResult<double>;
using DualSimulationResult = BasicSimulationResult<Dual>;

/// The accepted substeps of an error-controlled run, so that another run (other parameters) can
/// take exactly the same ones: finite differences on this frozen sequence are smooth in the
/// parameters, where re-run error control would change its substeps with them (calibration
/// Jacobian). Ignored with fixed_steps, whose steps never depend on the parameters.
struct SubstepPlan {
  std::vector<double> ends;  ///< path fraction of each accepted substep's end; -1 closes a stage (or loop half)
};

/// Simulate every stage of `protocol` with `model`. Never throws for numerical failure: the
/// result says where and why. Throws InputError for a protocol that cannot be run (e.g. a stage
/// without its target), naming the stage and key.
TRIAXCAL_CORE_EXPORT SimulationResult simulate(const DriverOptions& options, const Model& model,
                                               const TestProtocol& protocol);

/// The same into `result`, which is cleared first; its vectors keep their capacity, so a caller
/// that simulates the same protocol many times (the optimiser) allocates nothing after the first
/// run. `checked` = the caller has already passed `options` and `protocol` through
/// DriverOptions::validate and validate_protocol, which are then skipped.
TRIAXCAL_CORE_EXPORT void simulate(const DriverOptions& options, const Model& model, const TestProtocol& protocol,
                                   SimulationResult& result, bool checked = false);

/// The same, with error control as usual and its accepted substeps written into `record` (cleared
/// first), or, with `replay`, taking exactly the substeps of that plan: each by the same
/// step-doubling pair and extrapolation, none rejected; a plan that does not fit the protocol or a
/// model failure fails the run. Null = neither.
TRIAXCAL_CORE_EXPORT void simulate(const DriverOptions& options, const Model& model, const TestProtocol& protocol,
                                   SimulationResult& result, bool checked, SubstepPlan* record,
                                   const SubstepPlan* replay);

/// The simulation on dual numbers (exact sensitivities, sensitivity.hpp): the same stages, substeps
/// and decisions as simulate() with `model`'s double version, every value carrying its derivatives
/// along the directions seeded into `model` (Model::with_derivatives). With `replay` the substeps of
/// that plan (what the calibration uses: the plan of the double run at the same parameters), else
/// error control on the values. Where the driver solves for strain components (stress-controlled
/// rows) the converged solution's derivatives follow from the implicit function theorem (one more
/// model call a converged solve). `checked` as for simulate().
TRIAXCAL_CORE_EXPORT void simulate(const DriverOptions& options, const DualModel& model, const TestProtocol& protocol,
                                   DualSimulationResult& result, bool checked, const SubstepPlan* replay);

/// For a strain-controlled stage (shear, constant_p_shear, oedometer by axial_strain): the fraction
/// of the stage's control path at which its engineering stage axial strain equals
/// `engineering_stage_strain` (same sign convention as Stage::axial_strain), for Stage::record_at:
/// ln(1 - eps) / ln(1 - eps_stage_end). NaN for a stress-controlled stage (no axial_strain).
TRIAXCAL_CORE_EXPORT double stage_fraction_at(const Stage& stage, double engineering_stage_strain);

/// Checks that every stage has what it needs; throws InputError "stages[i]: ...".
TRIAXCAL_CORE_EXPORT void validate_protocol(const TestProtocol& protocol);

TRIAXCAL_CORE_EXPORT std::string to_string(StageType type);
TRIAXCAL_CORE_EXPORT std::string to_string(StopCriterion stop);

}  // namespace triaxcal
