#pragma once
// CSV that triaxcal writes: simulated curves (one row a step, units in the header) and the quoting
// and reading rules every CSV writer and reader of our own outputs shares: RFC 4180 (Shafranovich
// 2005, "Common Format and MIME Type for CSV Files", section 2) for fields; lines end in LF (the RFC
// says CRLF; readers of it, Python's csv module among them, accept both; common practice, no source).

#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/driver.hpp"

namespace triaxcal {

struct NamedResult {
  std::string test;                 ///< protocol name
  const SimulationResult* result;   ///< not owned
};

/// Header: test,stage,step,axial_strain[-],radial_strain[-],volumetric_strain[-],stage_axial_strain[-],
/// stage_volumetric_strain[-],axial_stress[kPa],... Every strain is an engineering strain
/// (conventions.hpp): the first three since the protocol start (dL/L0, dV/V0), the stage ones since
/// the start of the record's stage.
/// Test names and state names are fields per csv_field.
TRIAXCAL_CORE_EXPORT std::string format_results_csv(const std::vector<NamedResult>& results,
                                                    const std::vector<std::string>& state_names);

/// One field per RFC 4180: enclosed in double quotes when it contains a comma, a double quote, CR or
/// LF, with every inner double quote doubled; otherwise unchanged.
TRIAXCAL_CORE_EXPORT std::string csv_field(const std::string& text);

/// A record of a CSV file and the line it starts on (1-based).
struct CsvRecord {
  int line = 0;
  std::vector<std::string> fields;
};

/// Splits CSV text into records per RFC 4180 (quoted fields may hold commas, doubled quotes and
/// line breaks; records end in LF or CRLF; an empty line is no record). Throws InputError
/// "<source>: line N: ..." for a quote that is never closed or text after a closing quote.
TRIAXCAL_CORE_EXPORT std::vector<CsvRecord> parse_csv(const std::string& text, const std::string& source);

}  // namespace triaxcal
