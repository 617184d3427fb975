#pragma once
// The HTML report of a calibration: plain data in (ReportData), one self-contained HTML page out
// (render_report). No network access is needed to view it: styles and the one small script are
// inline, plots are inline SVG (svg_plot.hpp). The page prints on A4 with a page break before
// every section. docs/report.md lists the sections, plots and tables and the element ids.
//
// Units follow conventions.hpp: stresses in kPa, strains as decimals (plotted in %), compression
// positive. NaN (kNotGiven) means "not known" and shows as an em dash.

#include <limits>
#include <string>
#include <utility>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/outcome.hpp"

namespace triaxcal {

/// The caution every summary and report carries.
inline constexpr const char* kCautionText =
    "Caution: these parameters are for numerical analysis. They must be reviewed by a qualified "
    "geotechnical engineer; design values follow local codes and licensed practice.";

namespace report {

inline constexpr double kUnknown = std::numeric_limits<double>::quiet_NaN();

struct XY {
  std::vector<double> x, y;
  bool empty() const { return x.empty() || y.empty(); }
};

/// A measured curve and the model's curve of the same quantities.
struct CurvePair {
  XY measured;
  XY simulated;
  bool empty() const { return measured.empty() && simulated.empty(); }
};

/// One compared curve of a test: a quantity against the axial strain since the start of its shear
/// stage (engineering, decimal; an oedometer test: since the start of its loading), as the fit
/// compares it.
struct TestCurve {
  std::string quantity = "deviator_stress";  ///< y, a Quantity name ("deviator_stress", "excess_pore_pressure", ...)
  std::string unit = "kPa";  ///< of y ("-": a decimal strain, plotted in %)
  /// Which shear stage of the specimen, numbered 1, 2, 3 for people; 0 = the specimen's only one.
  int stage = 0;
  XY measured, simulated;    ///< x: stage axial strain (decimal)
  /// The stage strains the fit compared (decimal; NaN = open): points outside are drawn faded.
  double fitted_from = kUnknown, fitted_to = kUnknown;
  bool empty() const { return measured.empty() && simulated.empty(); }
};

/// Fit quality of one compared curve.
struct CurveQuality {
  std::string name;          ///< e.g. "q vs axial_strain"
  std::string unit;          ///< unit of the compared quantity
  int points = 0;
  double rmse = kUnknown;    ///< in `unit`
  double r_squared = kUnknown;
  /// Normalised residuals (simulated - measured) / range at the compared points, against `x`.
  XY residuals;
  std::string x_name = "axial strain";  ///< what the residuals are plotted against
  double x_scale = 100.0;    ///< residual x values times this (100: decimal strain to %)
  std::string x_unit = "%";
};

enum class Drainage { drained, undrained, oedometer, other };

struct TestReport {
  std::string id;
  std::string description;   ///< the specimen's description, e.g. "CU, s3' = 100 kPa, OCR 1"
  Drainage drainage = Drainage::other;
  bool used = true;          ///< part of the calibration
  bool simulated = true;     ///< the simulation at the fitted parameters completed
  std::string message;       ///< the driver's message when it did not
  double objective = kUnknown;  ///< this test's share of the objective
  double weight = 1.0;
  // Curves. Strains are decimals (the report plots them in %), stresses kPa.
  /// Every compared curve, one a quantity and shear stage (a multi-stage specimen has one per stage).
  std::vector<TestCurve> curves;
  CurvePair stress_path;     ///< q vs p'
  CurvePair compression;     ///< void ratio vs p' (consolidation stages, where e is known)
  std::vector<CurveQuality> quality;
};

struct ParameterRow {
  std::string name;
  std::string unit;
  std::string status = "fixed";  ///< free, fixed or tied
  std::string expression;        ///< tied
  double value = kUnknown;
  double start = kUnknown;
  double lower = kUnknown, upper = kUnknown;  ///< free: bounds of the search
  double standard_error = kUnknown;
  double interval_low = kUnknown, interval_high = kUnknown;  ///< 95 % interval
  bool at_bound = false;
  std::string description;
};

struct Correlation {
  std::vector<std::string> names;
  std::vector<std::vector<double>> matrix;  ///< names.size() square
  double strong = 0.9;                      ///< |r| at or above this is highlighted
};

/// One line of the table "classical interpretation vs fitted model".
struct Comparison {
  std::string quantity;   ///< e.g. "friction angle phi'"
  std::string unit;
  double classical = kUnknown;
  double model = kUnknown;
  std::string basis;      ///< where each number comes from
  std::string note{};     ///< where the model's definition differs from the classical one (ModelInfo::implied); empty if not
};

/// A straight line y = intercept + slope x drawn over [x_from, x_to].
struct Line {
  std::string name;
  double intercept = kUnknown, slope = kUnknown;
  double x_from = kUnknown, x_to = kUnknown;  ///< NaN = across the plot
};

struct StressPoint {
  std::string label;      ///< specimen / stage
  double s = kUnknown, t = kUnknown;  ///< s' = (s1'+s3')/2, t = (s1'-s3')/2 (kPa)
  bool used = true;       ///< inside the stress range and taken into the regression
};

struct Strength {
  std::vector<StressPoint> points;   ///< failure points in s'-t
  Line regression;                   ///< t = a + s' tan alpha (best fit)
  Line design;                       ///< the conservative design line
  Line model;                        ///< the fitted model's envelope in s'-t, if it has one
  double range_low = kUnknown, range_high = kUnknown;  ///< s' range used (shaded)
  double design_stress = kUnknown;   ///< largest normal effective stress of the design problem (kPa), drawn at s' = it
  std::vector<Line> pq_lines;        ///< envelopes / critical state line in p'-q
  std::string criterion;             ///< failure criterion in words
};

struct HistoryPoint {
  long evaluation = 0;
  double objective = kUnknown;
  double best = kUnknown;
  int stage = 0;  ///< 0 start/design, 1 global, 2 local
};

struct Excluded {
  std::string id;
  std::string reason;
};

struct ReportData {
  std::string title = "Calibration report";
  std::string project;            ///< free text (invented demo data says so here)
  std::string model;              ///< model name, e.g. "hyperbolic_hardening"
  std::string model_description;
  CalibrationOutcome outcome = CalibrationOutcome::converged;  ///< only converged shows as a success
  std::string outcome_reason;     ///< why (the budget reached and how to raise it, poor curves, what failed)
  std::string termination;        ///< the optimiser's detailed termination, e.g. "evaluation_limit"
  std::string message;            ///< the calibration's message (what failed, with its numbers)
  double objective = kUnknown;
  double start_objective = kUnknown;
  long evaluations = 0;
  double wall_time = kUnknown;    ///< s
  std::vector<TestReport> tests;
  std::vector<ParameterRow> parameters;
  Correlation correlation;
  std::vector<Comparison> comparisons;
  Strength strength;
  std::vector<HistoryPoint> history;
  /// A staged fit: one line a stage (FitStageSummary::line) and where the intervals come from.
  std::vector<std::string> fit_stages;
  std::string intervals_from;
  std::vector<std::string> warnings;
  std::vector<Excluded> excluded;
  std::vector<std::pair<std::string, std::string>> provenance;  ///< key, value (hashes, version, settings)
  std::string caution = kCautionText;
};

/// The ids of the plots and tables render_report writes for `data`, in page order
/// ("plot-deviator-T1", "table-parameters", ...). Tests look for exactly these.
TRIAXCAL_CORE_EXPORT std::vector<std::string> expected_plot_ids(const ReportData& data);
TRIAXCAL_CORE_EXPORT std::vector<std::string> expected_table_ids(const ReportData& data);

/// The element id of a test's plots: letters, digits, '-' and '_' kept, others as '_'.
TRIAXCAL_CORE_EXPORT std::string html_id(const std::string& text);

/// One self-contained HTML document. Never throws for odd data: missing curves become plots that
/// say "no data", a failed calibration shows what failed at the top.
TRIAXCAL_CORE_EXPORT std::string render_report(const ReportData& data);

}  // namespace report
}  // namespace triaxcal
