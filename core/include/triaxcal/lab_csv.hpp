#pragma once
// Reading laboratory CSV files strictly: declared columns and units, delimiter (comma, semicolon,
// tab or detected), decimal point or comma, header rows to skip, BOM and CRLF tolerated. Every
// error names the file, line and column, the cell found and what was expected.

#include <string>
#include <vector>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// The kind of a physical quantity, for unit conversion at the boundary.
enum class QuantityKind { stress, strain, length, force, volume, count };

/// Factor that converts a value in `unit` to our internal unit of `kind` (kPa, decimal, mm, N,
/// mm^3, count). Throws InputError "<where>: unit 'X' is not a <kind> unit (expected ...)".
TRIAXCAL_CORE_EXPORT double unit_factor(QuantityKind kind, const std::string& unit, const std::string& where);

struct CsvLayout {
  char delimiter = 0;  ///< ',', ';', '\t', or 0 = detect from the header row
  char decimal = '.';  ///< '.' or ','
  int skip_rows = 0;   ///< lines before the header row
  int skip_after_header = 0;  ///< lines between the header row and the data (e.g. a units row)
};

struct CsvColumnRequest {
  std::string quantity;  ///< for messages, e.g. "pore_pressure"
  std::string header;    ///< name in the header row (compared after trimming spaces and quotes)
  double factor = 1.0;   ///< multiplies every value
  std::string unit;      ///< the declared unit, for messages
};

/// Values of the requested columns, converted; one row a data line (blank lines are skipped).
struct CsvTable {
  std::vector<int> line;                    ///< 1-based line number in the file
  std::vector<std::vector<double>> values;  ///< values[column request][row]
  char delimiter = ',';                     ///< the one used (detected or declared)
};

/// Parses `text` (the contents of `source`). Throws InputError:
///  "<source>: line L: column 'h' (for q) is not in the header (found: a, b, c)",
///  "<source>: line L, column C (q): '12,5x' is not a number",
///  "<source>: line L, column C (q): NaN is not a measured value", an empty cell, a short row,
///  a value that overflows on conversion. The header row is quoted only when one declared column is
///  found in it (otherwise the file may not be a lab data file, and its content is not printed).
TRIAXCAL_CORE_EXPORT CsvTable parse_lab_csv(const std::string& text, const std::string& source, const CsvLayout& layout,
                                            const std::vector<CsvColumnRequest>& columns);

}  // namespace triaxcal
