#pragma once
// Internal: what the calibration report (report.cpp) shares with the interpretation report
// (interpretation_report.cpp), so both look alike and run the same page check.

namespace triaxcal::report::detail {

/// The report stylesheet (screen and A4 print).
const char* report_style();
/// The page check script: counts svg.tx-plot and table.report-table, writes #render-check.
const char* report_check_script();

}  // namespace triaxcal::report::detail
