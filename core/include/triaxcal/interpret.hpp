#pragma once
// Classical interpretation of a test series: failure points, undrained strength, effective
// strength envelopes (s'-t and p'-q), stiffness and its stress dependency, dilatancy, critical
// state, compressibility, Skempton's pore-pressure parameters. Units: kPa, decimal strain, degrees.
// Sources are named beside each formula in interpret/*.cpp and in docs/test-series-format.md.

#include <limits>
#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal {

enum class FailureCriterion {
  max_deviator,      ///< largest q in the shear direction
  max_stress_ratio,  ///< largest s1'/s3'
  limiting_strain,   ///< the point at (or the last before) a limiting axial strain from the stage start
  end_of_test,       ///< the last point of the stage
};

TRIAXCAL_CORE_EXPORT std::string to_string(FailureCriterion c);

/// A specimen, or one shear stage of it, that the user leaves out, with the reason the outputs repeat.
struct LeftOut {
  std::string specimen;
  int shear_stage = 0;   ///< 1, 2, 3: the specimen's shear stages in order; 0 = the whole specimen
  std::string reason;
};

struct InterpretOptions {
  FailureCriterion criterion = FailureCriterion::max_deviator;  ///< the one the design line uses
  double limiting_strain = 0.15;     ///< decimal, for limiting_strain
  double stress_low = 0.0;           ///< s' range (kPa) of failure points used for the envelope
  double stress_high = std::numeric_limits<double>::infinity();
  double design_stress = kNotGiven;  ///< largest normal effective stress of the design problem (kPa)
  double reference_pressure = 100.0; ///< p_ref of E = E_ref (s3'/p_ref)^m (kPa)
  bool curved_envelope = true;       ///< also fit t = a_p p_ref (s'/p_ref)^b
  std::string material;              ///< only specimens of this material (empty: all)
  std::vector<std::string> only;     ///< when not empty: only these specimens (the others are listed as left out)
  std::vector<LeftOut> left_out;     ///< specimens or shear stages left out, each with its reason
  bool origin_regression = false;    ///< also fit t = s' tan(alpha_0) through the origin (kOriginRegressionRule)
  bool cu_depth_trend = false;       ///< fit c_u = c_u0 + k z on the UU tests with a depth
  /// xi of the power-law critical-state line e_c = e_Gamma - lambda_c (p'/p_at)^xi, p_at = 101.325 kPa
  /// (xi fixed; 0.7 is the value commonly used for sands, from memory of Li & Wang 1998).
  double csl_exponent = 0.7;

  /// Throws InputError naming the field, its value and the rule.
  void validate() const;
};

/// One point of a curve picked as failure.
struct FailurePoint {
  int index = -1;              ///< point index in the specimen's curves, -1 when none
  double axial_strain = kNotGiven;  ///< from the stage start (decimal)
  double q = kNotGiven;        ///< kPa, signed
  double s1 = kNotGiven;       ///< major principal effective stress (kPa)
  double s3 = kNotGiven;       ///< minor principal effective stress (kPa)
  double p = kNotGiven;        ///< p' (kPa)
  double s = kNotGiven;        ///< s' = (s1' + s3')/2 (kPa)
  double t = kNotGiven;        ///< t = (s1' - s3')/2 (kPa)
  double excess_pore_pressure = kNotGiven;  ///< kPa
  double cell_pressure = kNotGiven;         ///< total s3 (kPa)
  bool reported = false;  ///< the lab's reported values at failure (a failure-value stage; index stays -1)
};

/// Where a stage's peak dilation rate was taken: local windows of `width` give a rate at every
/// point; the peak rate is the least-squares slope over the stretch [from, to] around the most
/// negative of them (interpret.cpp).
struct DilationWindow {
  double width = kNotGiven;   ///< width of the local windows in natural axial strain (-), the same for every point of a stage
  double from = kNotGiven;    ///< first point of the peak stretch: engineering axial strain from the stage start (-)
  double to = kNotGiven;      ///< last point of the peak stretch (-)
  int points = 0;             ///< points in the peak stretch
  double noise = kNotGiven;   ///< scatter of eps_v about a smooth curve estimated from the stage (-)
};

/// Where sigma'_nf of a test lies against the design stress (kDesignStressRule).
enum class DesignStressFlag {
  not_checked,   ///< no design stress given, or sigma'_nf not determined
  within,        ///< sigma'_nf at or below the design stress
  above,         ///< above the design stress, at or below twice it
  above_twice,   ///< above twice the design stress
};

TRIAXCAL_CORE_EXPORT std::string to_string(DesignStressFlag flag);

/// Rules stated in the outputs beside the numbers they produce (interpret.cpp).
TRIAXCAL_CORE_EXPORT extern const char* const kDesignStressRule;
TRIAXCAL_CORE_EXPORT extern const char* const kSecantAtDesignRule;
TRIAXCAL_CORE_EXPORT extern const char* const kOriginRegressionRule;
/// Which end states count as critical (StageInterpretation::steady_state), and the sand-state rules.
TRIAXCAL_CORE_EXPORT extern const char* const kSteadyStateRule;
TRIAXCAL_CORE_EXPORT extern const char* const kSandStateRule;

/// Results of one shear stage.
struct StageInterpretation {
  std::string specimen;
  int stage = -1;               ///< index into Specimen::stages
  int shear_stage = 1;          ///< 1, 2, 3: the specimen's shear stages in order (what people call stage 1, 2, 3)
  std::string left_out;         ///< why the user left this stage out (empty: used)
  double depth = kNotGiven;     ///< m: the first number of the specimen's depth text, when it reads as metres
  ShearType test = ShearType::cu;
  ShearDirection direction = ShearDirection::compression;
  int points = 0;
  /// Known by the lab's reported failure values only (series "failure", no curves): the point is put under the
  /// lab's criterion (reported_criterion); the other criterion cannot be recomputed from failure values.
  bool failure_values_only = false;
  std::string reported_criterion;  ///< the lab's failure criterion as reported (free text)
  double consolidation_radial = kNotGiven;  ///< s3' at the stage start (kPa)
  FailurePoint by_max_deviator;
  FailurePoint by_max_stress_ratio;
  FailurePoint by_criterion;    ///< the declared criterion
  /// sigma'_nf = s' - t sin phi' (kPa): normal effective stress on the failure plane at the declared
  /// criterion's failure point, phi' of the declared criterion's envelope (effective-stress stages).
  double normal_stress_on_failure_plane = kNotGiven;
  DesignStressFlag design_stress_flag = DesignStressFlag::not_checked;
  double undrained_strength = kNotGiven;    ///< c_u = (s1 - s3)_max / 2 (kPa), undrained stages
  double initial_stiffness = kNotGiven;     ///< E_i (kPa): slope of q-e_a up to 20 % of peak q
  double secant_stiffness_50 = kNotGiven;   ///< E_50 (kPa): secant to 50 % of peak q
  std::string initial_stiffness_reason;     ///< why E_i is not determined (empty when it is)
  std::string secant_stiffness_reason;      ///< why E_50 is not determined (empty when it is)
  std::vector<double> unload_reload_stiffness;  ///< E_ur (kPa) of each loop
  // Dilatancy (drained): rates d = d eps_v / d eps_a in natural (logarithmic) strain increments in
  // the shear direction, each a least-squares slope over a window of axial strain (DilationWindow).
  double max_dilation_rate = kNotGiven;     ///< most negative d (drained)
  double max_dilation_rate_se = kNotGiven;  ///< its standard error from the window's regression
  double dilation_angle = kNotGiven;        ///< psi (deg) from the peak dilation rate
  DilationWindow dilation_window;           ///< the window the peak rate was taken over
  std::string dilation_reason;              ///< why psi is not determined (empty when it is)
  double phi_cv_rowe = kNotGiven;           ///< phi_cv (deg) from the stress-dilatancy points
  std::string phi_cv_reason;                ///< why phi_cv is not determined (empty when it is)
  double bolton_index = kNotGiven;          ///< Bolton's I_R where the relative density is given
  double bolton_phi_difference = kNotGiven; ///< 3 I_R (deg), Bolton (1986) triaxial
  double measured_phi_difference = kNotGiven;  ///< phi_peak - phi_cv (deg) from this test
  bool steady_state = false;                ///< the end of the test is a steady (critical) state (kSteadyStateRule)
  std::string steady_reason;                ///< why the end is not a steady state (empty when it is)
  double end_p = kNotGiven, end_q = kNotGiven, end_void_ratio = kNotGiven;
  double skempton_a = kNotGiven;            ///< A_f = du_f / dq_f (undrained)
  // Sand state (issue 17): the state at the start of shear and the state parameter psi = e - e_c(p')
  // against the critical-state line of the whole set (Been & Jefferies 1985).
  double start_p = kNotGiven, start_void_ratio = kNotGiven;  ///< p' (kPa) and e at the first point
  double state_parameter = kNotGiven;       ///< psi at the start of shear, against Interpretation::psi_line
  double peak_friction_angle = kNotGiven;   ///< phi'_peak (deg) from the largest s1'/s3' (c' = 0), CD
  /// Undrained (CU): phase transformation, the point of least p' followed by a rise of p' (the
  /// dilatancy changes sign: the excess pore pressure stops rising), and instability, the first peak
  /// of q followed by a fall of more than 5 % of it while p' falls (a loose specimen's strength loss).
  FailurePoint phase_transformation;
  double phase_transformation_ratio = kNotGiven;  ///< q/p' there
  FailurePoint instability;
  double instability_ratio = kNotGiven;           ///< q/p' there
  std::vector<double> dilatancy_d, dilatancy_ratio;  ///< stress-dilatancy plot: D = 1 - de_v/de_a, R = s1'/s3'
};

struct LineFit {
  int n = 0;
  double intercept = kNotGiven, slope = kNotGiven;
  double se_intercept = kNotGiven, se_slope = kNotGiven;
  double covariance = kNotGiven;  ///< cov(intercept, slope)
  double residual_sd = kNotGiven; ///< s = sqrt(SSE / (n - 2))
  double x_mean = kNotGiven, sxx = kNotGiven;
  double r2 = kNotGiven;
  double x_min = kNotGiven, x_max = kNotGiven;
};

/// Ordinary least squares y = a + b x with standard errors (n >= 3 for errors).
TRIAXCAL_CORE_EXPORT LineFit fit_line(const std::vector<double>& x, const std::vector<double>& y);

/// E_50 of one shear stage's deviator curve, the rule of StageInterpretation::secant_stiffness_50
/// (common practice, no source): q_0 the first point's deviator stress, q_peak the curve's first
/// largest one, q_50 = q_0 + (q_peak - q_0)/2; the secant (q_50 - q_0)/e_50 with e_50 the axial
/// strain where the curve first crosses q_50 before the peak, linearly interpolated. Strains are the
/// stage's own (zero at the stage start); q signed so that the stage loads it upwards (-q in
/// extension). NaN with the reason when not determined. The report applies the same rule to the
/// model's simulated curves, so that both E_50 mean one thing.
struct SecantModulus {
  double value = kNotGiven;
  std::string reason;  ///< empty when determined
};
TRIAXCAL_CORE_EXPORT SecantModulus secant_modulus_50(const std::vector<double>& axial_strain,
                                                      const std::vector<double>& deviator_stress);

/// One-sided 95 % Student t quantile with `dof` degrees of freedom.
TRIAXCAL_CORE_EXPORT double student_t95(int dof);

struct UsedPoint {
  std::string specimen;
  int stage = -1;        ///< index into Specimen::stages
  int shear_stage = 1;   ///< 1, 2, 3 for people
  double s = kNotGiven, t = kNotGiven;
  bool used = false;
  std::string reason;  ///< why it was left out
};

/// Which branch of the design-line rule gave the line.
enum class DesignLineForm {
  not_determined,
  lower_bound,   ///< the line under the lower 95 % bound of the regression mean (cohesion 0 or more)
  origin_secant, ///< c' = 0: the secant from the origin to the lower bound at the largest s' used
};

TRIAXCAL_CORE_EXPORT std::string to_string(DesignLineForm form);

/// The design-line rule in words, as stated in the outputs (our rule; see interpret.cpp).
TRIAXCAL_CORE_EXPORT extern const char* const kDesignLineRule;

struct StrengthEnvelope {
  FailureCriterion criterion = FailureCriterion::max_deviator;
  LineFit st;                     ///< t = a + s' tan(alpha)
  double phi = kNotGiven;         ///< deg, sin phi' = tan alpha
  double cohesion = kNotGiven;    ///< kPa, c' = a / cos phi'
  double se_phi = kNotGiven;      ///< deg, from se of tan alpha
  double se_cohesion = kNotGiven; ///< kPa, first order
  LineFit pq;                     ///< q = d + M p'
  double phi_pq = kNotGiven;      ///< sin phi' = 3M/(6+M)
  double cohesion_pq = kNotGiven; ///< c' = d (3 - sin phi')/(6 cos phi')
  std::string pq_reason;          ///< why phi_pq is not determined (empty when it is)
  // Design line (kDesignLineRule): never a negative cohesion, never a phi' above the best fit's.
  double design_phi = kNotGiven;      ///< deg
  double design_cohesion = kNotGiven; ///< kPa, 0 or more
  DesignLineForm design_form = DesignLineForm::not_determined;
  std::string design_reason;      ///< why there is no design line (empty when there is)
  // At the design stress sigma'_d (kSecantAtDesignRule): tan phi'_sec = (c' + sigma'_d tan phi') / sigma'_d.
  double secant_phi_at_design = kNotGiven;         ///< deg, from the best fit c', phi'
  double design_secant_phi_at_design = kNotGiven;  ///< deg, from the design line
  // Through the origin on request (kOriginRegressionRule): t = s' tan(alpha_0), sin phi'_0 = tan alpha_0.
  double origin_phi = kNotGiven;      ///< deg
  double origin_se_phi = kNotGiven;   ///< deg, first order
  double origin_r2 = kNotGiven;       ///< 1 - SSE / sum (t - mean t)^2
  std::string origin_reason;          ///< why not determined (empty when it is, or when not asked for)
  double power_a = kNotGiven;     ///< t = power_a p_ref (s'/p_ref)^power_b
  double power_b = kNotGiven;
  std::string power_reason;       ///< why the power law is not determined (empty when it is)
  std::vector<UsedPoint> points;
  std::string note;               ///< why no fit (phi' and c' not determined), when none
};

struct StiffnessLaw {
  int n = 0;
  double reference = kNotGiven;   ///< E_ref (kPa) at s3' = p_ref
  double exponent = kNotGiven;    ///< m
  double r2 = kNotGiven;
  std::string basis;              ///< which tests
  std::string reason;             ///< why the law is not determined (empty when it is)
};

struct Interpretation {
  std::string series;
  InterpretOptions options;
  std::vector<std::string> materials;  ///< materials of the specimens interpreted
  std::vector<StageInterpretation> stages;
  /// What the user left out (InterpretOptions::only and left_out), in series order, reasons repeated.
  std::vector<LeftOut> left_out;
  // UU
  int uu_count = 0;
  double cu_mean = kNotGiven, cu_min = kNotGiven, cu_max = kNotGiven;
  /// c_u = c_u0 + k z (intercept kPa, slope kPa/m) over the UU tests with a depth, on request.
  LineFit cu_depth;
  std::string cu_depth_reason;  ///< why the trend is not determined (empty when it is, or when not asked for)
  // effective strength: the declared criterion first, then the other of max-deviator / max-ratio
  std::vector<StrengthEnvelope> envelopes;
  StiffnessLaw secant_law, unload_reload_law;
  // critical state
  int cs_count = 0;
  double critical_m = kNotGiven, phi_cs = kNotGiven;
  std::string critical_m_reason;   ///< why M and phi_cs are not determined (empty when they are)
  /// e = Gamma - lambda ln p' (p' in kPa): intercept Gamma, slope -lambda. Intercept and slope are
  /// NaN when the line is not determined (n, x_min, x_max still say what the data were).
  LineFit csl;
  std::string csl_reason;          ///< why the critical-state line is not determined (empty when it is)
  /// e = e_Gamma - lambda_c (p'/p_at)^xi, fitted as a line of e against x = (p'/p_at)^xi (intercept
  /// e_Gamma, slope -lambda_c), xi = csl_exponent; NaN when not determined.
  LineFit csl_power;
  double csl_exponent = kNotGiven;
  std::string csl_power_reason;
  /// Which line the state parameters use: "power" (csl_power), "log" (csl) or "" (none: psi not given).
  std::string psi_line;
  std::string psi_reason;  ///< why psi is not given (empty when it is)
  /// phi'_peak = a + b psi and the peak dilation rate -d_max = a + b psi over the CD compression stages:
  /// roughly linear trends (Been & Jefferies 1985, from memory).
  LineFit peak_angle_vs_psi, dilation_vs_psi;
  std::string peak_angle_vs_psi_reason, dilation_vs_psi_reason;
  double phi_cv_rowe = kNotGiven;  ///< mean over drained stages
  std::string phi_cv_rowe_reason;  ///< why the mean is not determined (empty when it is)
  // compressibility
  struct Compressibility {
    std::string specimen;
    int stage = -1;
    double lambda = kNotGiven, kappa = kNotGiven;
    std::string basis;  ///< "consolidation: e - ln p'" or "oedometer: e - ln s_a'" (s_a' as a proxy of p')
    double compression_index = kNotGiven, swelling_index = kNotGiven;  ///< C_c, C_s in e - log10 = lambda, kappa ln 10
    double constrained_modulus = kNotGiven;         ///< oedometer: d s_a' / d e_a on the first loading (kPa)
    double constrained_modulus_stress = kNotGiven;  ///< the s_a' it is taken at (kPa): InterpretOptions::reference_pressure
    std::string lambda_reason, kappa_reason, constrained_modulus_reason;  ///< why not determined (empty when it is)
    /// The fitted lines for plotting: e = e_at_1 - slope ln(stress / 1 kPa) over [from, to] kPa of the stress used
    /// (p' for consolidation, s_a' for the oedometer); NaN where the slope is not determined.
    double lambda_e_at_1 = kNotGiven, lambda_from = kNotGiven, lambda_to = kNotGiven;
    double kappa_e_at_1 = kNotGiven, kappa_from = kNotGiven, kappa_to = kNotGiven;
  };
  std::vector<Compressibility> compressibility;
  // pore pressure
  std::vector<std::pair<std::string, double>> b_values;
  std::vector<std::string> warnings;
  std::vector<std::string> notes;  ///< rules and assumptions stated in the output
};

/// Interprets every shear stage of `series`. Throws InputError only for bad options.
TRIAXCAL_CORE_EXPORT Interpretation interpret(const TestSeries& series, const InterpretOptions& options);

/// A shear stage with curves and the lab's reported failure values (a series specimen with `data` and
/// `failure`, e.g. an AGS4 import with curve files): the failure point recomputed from the curve by
/// the lab's criterion (max-deviator when not recognised) against the reported one. Tolerance (our
/// rule, no source): 2 % of the reported deviator stress, 2 kPa floor, on q_f and (CU) u_f.
struct ReportedFailureCheck {
  std::string specimen;
  int stage = -1;        ///< index into the specimen's stages
  int shear_stage = 0;   ///< 1, 2, 3
  FailureCriterion criterion = FailureCriterion::max_deviator;
  double q_reported = std::numeric_limits<double>::quiet_NaN();  ///< kPa
  double q_curve = std::numeric_limits<double>::quiet_NaN();
  double u_reported = std::numeric_limits<double>::quiet_NaN();  ///< kPa, absolute; CU only
  double u_curve = std::numeric_limits<double>::quiet_NaN();
  double tolerance = std::numeric_limits<double>::quiet_NaN();
  std::vector<std::string> warnings;  ///< one a value over the tolerance (the texts interpret warns with)
};

/// Every stage of `series` with curves and reported failure values, compared (as interpret does).
TRIAXCAL_CORE_EXPORT std::vector<ReportedFailureCheck> check_reported_failures(const TestSeries& series);

/// A terminal table of `checks` (empty text for none); the id column as wide as the widest id.
TRIAXCAL_CORE_EXPORT std::string reported_failure_table(const std::vector<ReportedFailureCheck>& checks);

/// The JSON result file: every number with its unit, the criterion, the tests used and excluded.
TRIAXCAL_CORE_EXPORT std::string interpretation_json(const Interpretation& result);

/// Plain-text tables for the terminal.
TRIAXCAL_CORE_EXPORT std::string interpretation_text(const Interpretation& result);

}  // namespace triaxcal
