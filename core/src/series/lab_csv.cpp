#include "triaxcal/lab_csv.hpp"

#include <charconv>
#include <cmath>

#include "triaxcal/error.hpp"

namespace triaxcal {

namespace {

struct UnitEntry {
  const char* name;
  double factor;
};

// Internal units: kPa, decimal strain, mm, N, mm^3 (conventions.hpp). 1 psi = 6.894757293 kPa
// (exact from 1 lbf = 4.4482216152605 N and 1 in = 25.4 mm); 1 bar = 100 kPa.
constexpr UnitEntry kStress[] = {{"kPa", 1.0}, {"MPa", 1000.0}, {"psi", 6.894757293168361}, {"bar", 100.0}};
constexpr UnitEntry kStrain[] = {{"decimal", 1.0}, {"%", 0.01}};
constexpr UnitEntry kLength[] = {{"mm", 1.0}, {"cm", 10.0}, {"m", 1000.0}};
constexpr UnitEntry kForce[] = {{"N", 1.0}, {"kN", 1000.0}};
constexpr UnitEntry kVolume[] = {{"mm3", 1.0},   {"mm^3", 1.0},   {"mm\u00b3", 1.0}, {"cm3", 1000.0},
                                 {"cm^3", 1000.0}, {"cm\u00b3", 1000.0}, {"ml", 1000.0},   {"mL", 1000.0}};
constexpr UnitEntry kCount[] = {{"-", 1.0}};

template <std::size_t N>
double lookup(const UnitEntry (&table)[N], const char* kind, const std::string& unit, const std::string& where) {
  std::string list;
  for (const UnitEntry& e : table) {
    if (unit == e.name) return e.factor;
    list += (list.empty() ? "" : ", ") + std::string(e.name);
  }
  throw InputError(where + ": unit '" + unit + "' is not a " + kind + " unit (expected one of: " + list + ")");
}

std::string trim(const std::string& s) {
  std::size_t a = 0, b = s.size();
  while (a < b && (s[a] == ' ' || s[a] == '\t' || s[a] == '\r')) ++a;
  while (b > a && (s[b - 1] == ' ' || s[b - 1] == '\t' || s[b - 1] == '\r')) --b;
  std::string t = s.substr(a, b - a);
  if (t.size() >= 2 && t.front() == '"' && t.back() == '"') t = t.substr(1, t.size() - 2);
  return t;
}

std::vector<std::string> split(const std::string& line, char delimiter) {
  std::vector<std::string> cells;
  std::string cell;
  bool quoted = false;
  for (char ch : line) {
    if (ch == '"') quoted = !quoted;
    if (ch == delimiter && !quoted) {
      cells.push_back(cell);
      cell.clear();
    } else {
      cell += ch;
    }
  }
  cells.push_back(cell);
  return cells;
}

bool blank(const std::string& line) {
  for (char ch : line)
    if (ch != ' ' && ch != '\t' && ch != '\r') return false;
  return true;
}

std::string delimiter_name(char d) {
  if (d == '\t') return "tab";
  return std::string(1, d);
}

}  // namespace

double unit_factor(QuantityKind kind, const std::string& unit, const std::string& where) {
  switch (kind) {
    case QuantityKind::stress: return lookup(kStress, "stress", unit, where);
    case QuantityKind::strain: return lookup(kStrain, "strain", unit, where);
    case QuantityKind::length: return lookup(kLength, "length", unit, where);
    case QuantityKind::force: return lookup(kForce, "force", unit, where);
    case QuantityKind::volume: return lookup(kVolume, "volume", unit, where);
    case QuantityKind::count: return lookup(kCount, "count", unit, where);
  }
  return 1.0;
}

CsvTable parse_lab_csv(const std::string& input, const std::string& source, const CsvLayout& layout,
                       const std::vector<CsvColumnRequest>& columns) {
  std::string text = input;
  if (text.size() >= 3 && static_cast<unsigned char>(text[0]) == 0xEF && static_cast<unsigned char>(text[1]) == 0xBB &&
      static_cast<unsigned char>(text[2]) == 0xBF)
    text = text.substr(3);
  std::vector<std::string> lines;
  {
    std::size_t start = 0;
    while (start <= text.size()) {
      std::size_t end = text.find('\n', start);
      if (end == std::string::npos) end = text.size();
      std::string l = text.substr(start, end - start);
      if (!l.empty() && l.back() == '\r') l.pop_back();
      lines.push_back(l);
      start = end + 1;
    }
    if (!lines.empty() && lines.back().empty()) lines.pop_back();
  }
  const std::size_t header_index = static_cast<std::size_t>(layout.skip_rows);
  if (header_index >= lines.size())
    throw InputError(source + ": the file has " + std::to_string(lines.size()) + " lines; expected a header row at line " +
                     std::to_string(header_index + 1) + " (after skip_rows = " + std::to_string(layout.skip_rows) + ")");
  const std::string& header_line = lines[header_index];
  const int header_no = static_cast<int>(header_index) + 1;
  char delimiter = layout.delimiter;
  if (delimiter == 0) {
    if (header_line.find('\t') != std::string::npos) delimiter = '\t';
    else if (header_line.find(';') != std::string::npos) delimiter = ';';
    else if (header_line.find(',') != std::string::npos && layout.decimal != ',') delimiter = ',';
    else
      throw InputError(source + ": line " + std::to_string(header_no) +
                       ": cannot detect the delimiter of the header row (expected a tab, ';' or ',' between column names)");
  }
  CsvTable table;
  table.delimiter = delimiter;
  const std::vector<std::string> names = split(header_line, delimiter);
  std::vector<int> index(columns.size(), -1);
  for (std::size_t k = 0; k < columns.size(); ++k) {
    for (std::size_t j = 0; j < names.size(); ++j)
      if (trim(names[j]) == columns[k].header) {
        index[k] = static_cast<int>(j);
        break;
      }
  }
  // The header row is quoted only when it is recognisably the lab data file (one declared column
  // found): a path to another file (a system file, a JSON file) must not have its content printed.
  bool any_found = false;
  for (const int i : index) any_found = any_found || i >= 0;
  for (std::size_t k = 0; k < columns.size(); ++k) {
    if (index[k] >= 0) continue;
    if (!any_found) {
      std::string declared;
      for (const CsvColumnRequest& c : columns) declared += (declared.empty() ? "'" : ", '") + c.header + "'";
      throw InputError(source + ": line " + std::to_string(header_no) + ": none of the declared columns (" + declared +
                       ") is in the header row (is this the data file? check its skip_rows, delimiter and headers)");
    }
    std::string found;
    for (const std::string& n : names) found += (found.empty() ? "" : ", ") + trim(n);
    throw InputError(source + ": line " + std::to_string(header_no) + ": column '" + columns[k].header + "' (for " +
                     columns[k].quantity + ") is not in the header (found: " + found + "; delimiter " +
                     delimiter_name(delimiter) + ")");
  }
  table.values.assign(columns.size(), {});
  for (std::size_t i = header_index + 1 + static_cast<std::size_t>(layout.skip_after_header); i < lines.size(); ++i) {
    if (blank(lines[i])) continue;
    const int line_no = static_cast<int>(i) + 1;
    const std::vector<std::string> cells = split(lines[i], delimiter);
    for (std::size_t k = 0; k < columns.size(); ++k) {
      const int col = index[k];
      const std::string at = source + ": line " + std::to_string(line_no) + ", column " + std::to_string(col + 1) +
                             " (" + columns[k].quantity + ")";
      if (col >= static_cast<int>(cells.size()))
        throw InputError(at + ": missing (the row has " + std::to_string(cells.size()) + " cells, the header " +
                         std::to_string(names.size()) + ")");
      const std::string cell = trim(cells[static_cast<std::size_t>(col)]);
      if (cell.empty()) throw InputError(at + ": empty cell (a number is expected)");
      std::string number = cell;
      if (layout.decimal == ',') {
        if (number.find('.') != std::string::npos)
          throw InputError(at + ": '" + cell + "' is not a number (the declared decimal separator is a comma)");
        for (char& ch : number)
          if (ch == ',') ch = '.';
      }
      double v = 0.0;
      const char* first = number.data();
      const char* last = number.data() + number.size();
      if (*first == '+') ++first;
      const auto [ptr, ec] = std::from_chars(first, last, v);
      if (ec != std::errc() || ptr != last) {
        if (ec == std::errc::result_out_of_range)
          throw InputError(at + ": '" + cell + "' is out of the range of a double");
        throw InputError(at + ": '" + cell + "' is not a number");
      }
      if (std::isnan(v)) throw InputError(at + ": '" + cell + "' (NaN) is not a measured value; remove the row or give a number");
      if (!std::isfinite(v)) throw InputError(at + ": '" + cell + "' is not a finite number");
      const double converted = v * columns[k].factor;
      if (!std::isfinite(converted))
        throw InputError(at + ": '" + cell + "'" + (columns[k].unit.empty() ? std::string() : " " + columns[k].unit) +
                         " is out of the range of a double once converted to the internal unit");
      table.values[k].push_back(converted);
    }
    table.line.push_back(line_no);
  }
  return table;
}

}  // namespace triaxcal
