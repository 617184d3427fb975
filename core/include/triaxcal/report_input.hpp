#pragma once
// Where report data comes from. (1) A "report input" JSON (format "triaxcal-report-input",
// version 3, docs/report.md; versions 1 and 2 are still read): ReportData written out as it is, so any run can hand its report to
// `triaxcal report`. (2) A calibration summary with its problem (what `triaxcal fit` has in memory).
// (3) The files `triaxcal fit` writes today (<stem>.parameters.json and <stem>.curves.csv), when
// no report input is there: parameters, fit quality and the compared points, but no optimiser
// history and no stress paths.

#include <filesystem>
#include <string>

#include "triaxcal/calibrate.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/core_export.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::report {

inline constexpr const char* kReportInputFormat = "triaxcal-report-input";
/// 2: outcome converged/stopped/poor_fit/failed; 3: a test's compared curves as a list ("curves"),
/// one a quantity and shear stage, with the fitted strain range (versions 1 and 2 are still read)
inline constexpr int kReportInputVersion = 3;

/// ReportData as JSON; NaN is written as null.
TRIAXCAL_CORE_EXPORT std::string report_input_json(const ReportData& data);

/// Strict reader: unknown keys and wrong types throw InputError "<source>: <key path>: ...".
TRIAXCAL_CORE_EXPORT ReportData parse_report_input(const std::string& text, const std::string& source);

/// Report data of a calibration: `summary` and `problem` as calibrate() saw them; `series` (may be
/// null) adds the measured stress paths and void ratios; `interpretation` (may be null) adds the
/// s'-t points, envelopes and the classical-vs-model table.
TRIAXCAL_CORE_EXPORT ReportData report_from_calibration(const CalibrationSummary& summary,
                                                        const CalibrationProblem& problem,
                                                        const CalibrationProvenance& provenance,
                                                        const TestSeries* series = nullptr,
                                                        const Interpretation* interpretation = nullptr);

/// What `triaxcal report DIR` reads: the one <stem>.report.json in `dir`, else the one
/// <stem>.parameters.json with its <stem>.curves.csv. Sets `stem` (for the output name).
/// Throws InputError "<dir>: ..." naming what is missing or ambiguous.
TRIAXCAL_CORE_EXPORT ReportData read_result_directory(const std::filesystem::path& dir, std::string& stem);

}  // namespace triaxcal::report
