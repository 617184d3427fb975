#pragma once
// The interpretation report: the classical interpretation of a test series as a deliverable of its
// own, one self-contained HTML page in the style of the calibration report (report.hpp): UU
// undrained strength with total-stress Mohr circles and c_u against depth, effective Mohr circles
// and the s'-t plot with every stress path, both failure criteria, the regression and design lines
// over the s' range used, the stress range and the design stress; stiffness against confining
// stress, stress-dilatancy, oedometer e-log s_v', critical-state points; tables of every number with
// its unit, the tests used and left out and why, the rules, the caution and a sign-off block.
// docs/report.md lists the element ids.

#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::report {

struct InterpretationReportOptions {
  std::string title = "Interpretation of triaxial and oedometer tests";  ///< page title and running header
  std::string site;                  ///< running header; empty: the series' name
  std::string caution = kCautionText;
};

/// The ids of the plots and tables render_interpretation_report writes, in page order.
TRIAXCAL_CORE_EXPORT std::vector<std::string> interpretation_plot_ids(const Interpretation& in, const TestSeries& series);
TRIAXCAL_CORE_EXPORT std::vector<std::string> interpretation_table_ids(const Interpretation& in, const TestSeries& series);

/// One self-contained HTML document. `series` is the one `in` was made from (its curves give the
/// stress paths and the oedometer curves). Never throws for odd data.
TRIAXCAL_CORE_EXPORT std::string render_interpretation_report(const Interpretation& in, const TestSeries& series,
                                                              const InterpretationReportOptions& options = {});

}  // namespace triaxcal::report
