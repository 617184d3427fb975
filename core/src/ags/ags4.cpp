// The strict AGS4 reader (ags4.hpp). Format rules: AGS4 data format 4.1, as summarised in issue 16
// (GROUP / HEADING / UNIT / TYPE / DATA rows, double-quoted comma-separated fields, CR LF, blank
// line between groups, the data types ID, X, PA, 2DP, 0DP, 2SF, DT, YN). The other data types
// accepted here (XN, PT, PU, RL, T, U, MC, nSCI) are from memory of the standard: text or a number
// of any precision, checked only as far as stated beside each.
#include "triaxcal/ags4.hpp"

#include <cmath>
#include <cstdlib>
#include <set>

#include "../json_checks.hpp"
#include "triaxcal/error.hpp"

namespace triaxcal {

namespace {

struct UnitDef {
  const char* name;
  Ags4Dimension dimension;
  double factor;  // to the internal unit of the dimension
};

// Internal units: kPa, decimal, m, m2/MN, m2/yr, Mg/m3, degrees (ags4.hpp).
constexpr UnitDef kUnits[] = {
    {"", Ags4Dimension::none, 1.0},
    {"-", Ags4Dimension::none, 1.0},
    {"kPa", Ags4Dimension::stress, 1.0},
    {"MPa", Ags4Dimension::stress, 1000.0},
    {"Pa", Ags4Dimension::stress, 0.001},
    {"%", Ags4Dimension::fraction, 0.01},
    {"m", Ags4Dimension::length, 1.0},
    {"cm", Ags4Dimension::length, 0.01},
    {"mm", Ags4Dimension::length, 0.001},
    {"m2/MN", Ags4Dimension::compressibility, 1.0},
    {"m2/kN", Ags4Dimension::compressibility, 1000.0},
    {"m2/yr", Ags4Dimension::consolidation, 1.0},
    {"Mg/m3", Ags4Dimension::density, 1.0},
    {"kg/m3", Ags4Dimension::density, 0.001},
    {"deg", Ags4Dimension::angle, 1.0},
};

std::string known_units() {
  std::string list;
  for (const UnitDef& u : kUnits)
    if (u.dimension != Ags4Dimension::none) list += (list.empty() ? "" : ", ") + std::string(u.name);
  return list + ", a date pattern such as yyyy-mm-dd for DT, or none (\"\" or -)";
}

/// True when `s` is valid UTF-8 (no overlong forms, no surrogates, at most U+10FFFF).
bool valid_utf8(const std::string& s) {
  std::size_t i = 0;
  const std::size_t n = s.size();
  while (i < n) {
    const unsigned char c = static_cast<unsigned char>(s[i]);
    int len = 0;
    unsigned int cp = 0;
    if (c < 0x80) { ++i; continue; }
    if (c >= 0xC2 && c <= 0xDF) { len = 1; cp = c & 0x1F; }
    else if (c >= 0xE0 && c <= 0xEF) { len = 2; cp = c & 0x0F; }
    else if (c >= 0xF0 && c <= 0xF4) { len = 3; cp = c & 0x07; }
    else return false;
    if (i + static_cast<std::size_t>(len) >= n) return false;
    for (int k = 1; k <= len; ++k) {
      const unsigned char d = static_cast<unsigned char>(s[i + static_cast<std::size_t>(k)]);
      if ((d & 0xC0) != 0x80) return false;
      cp = (cp << 6) | (d & 0x3F);
    }
    if ((len == 2 && cp < 0x800) || (len == 3 && (cp < 0x10000 || cp > 0x10FFFF)) || (cp >= 0xD800 && cp <= 0xDFFF)) return false;
    i += static_cast<std::size_t>(len) + 1;
  }
  return true;
}

std::string latin1_to_utf8(const std::string& s) {
  std::string out;
  out.reserve(s.size() + s.size() / 8);
  for (char ch : s) {
    const unsigned char c = static_cast<unsigned char>(ch);
    if (c < 0x80) {
      out.push_back(ch);
    } else {
      out.push_back(static_cast<char>(0xC0 | (c >> 6)));
      out.push_back(static_cast<char>(0x80 | (c & 0x3F)));
    }
  }
  return out;
}

std::string show(const std::string& v) {
  // A field quoted in a message is cut: the file may not be an AGS4 file at all.
  return v.size() > 40 ? v.substr(0, 40) + "..." : v;
}

struct Parser {
  const std::string& source;
  std::string where(int line, const std::string& group) const {
    return source + ": line " + std::to_string(line) + (group.empty() ? "" : ", group " + group);
  }

  /// The fields of one line: each "..." with "" inside for a quote, separated by commas.
  std::vector<std::string> fields(const std::string& l, int line, const std::string& group) const {
    std::vector<std::string> out;
    std::size_t i = 0;
    const std::size_t n = l.size();
    while (true) {
      const std::string at = where(line, group) + ": field " + std::to_string(out.size() + 1);
      if (i >= n || l[i] != '"')
        throw InputError(at + ": expected a double-quoted field (every AGS4 field is in double quotes), found " +
                         (i >= n ? std::string("the end of the line") : "'" + show(l.substr(i, 10)) + "'"));
      ++i;
      std::string f;
      bool closed = false;
      while (i < n) {
        if (l[i] == '"') {
          if (i + 1 < n && l[i + 1] == '"') {
            f.push_back('"');
            i += 2;
            continue;
          }
          closed = true;
          ++i;
          break;
        }
        f.push_back(l[i++]);
      }
      if (!closed) throw InputError(at + ": the closing double quote is missing");
      out.push_back(std::move(f));
      if (i == n) break;
      if (l[i] != ',')
        throw InputError(at + ": expected a comma or the end of the line after the closing quote, found '" + show(l.substr(i, 10)) + "'");
      ++i;
    }
    return out;
  }
};

bool is_digit(char c) { return c >= '0' && c <= '9'; }

/// Digits with an optional leading minus and an optional decimal point: "-12.50". Returns the
/// number of decimals, or -1 when `v` is not of that form.
int plain_decimals(const std::string& v) {
  std::size_t i = v[0] == '-' ? 1 : 0;
  std::size_t int_digits = 0;
  while (i < v.size() && is_digit(v[i])) ++i, ++int_digits;
  if (int_digits == 0) return -1;
  if (i == v.size()) return 0;
  if (v[i] != '.') return -1;
  ++i;
  const std::size_t from = i;
  while (i < v.size() && is_digit(v[i])) ++i;
  if (i != v.size() || i == from) return -1;
  return static_cast<int>(i - from);
}

bool any_number(const std::string& v) {
  const char* b = v.c_str();
  char* end = nullptr;
  const double x = std::strtod(b, &end);
  if (end != b + v.size() || v.empty()) return false;
  if (v.find_first_of("xXpPnNiI") != std::string::npos) return false;  // no hex, nan or inf
  return std::isfinite(x);
}

/// Significant figures of a plain decimal: from the first non-zero digit to the last digit given
/// when there is a decimal point; trailing zeros of an integer may or may not be significant.
bool significant_figures_ok(const std::string& v, int n) {
  if (plain_decimals(v) < 0) return false;
  std::string digits;
  bool point = false;
  for (char c : v) {
    if (c == '.') point = true;
    else if (is_digit(c)) digits.push_back(c);
  }
  const std::size_t first = digits.find_first_not_of('0');
  if (first == std::string::npos) return true;  // zero
  const std::string sig = digits.substr(first);
  if (point) return static_cast<int>(sig.size()) == n;
  const std::size_t last = sig.find_last_not_of('0');
  return static_cast<int>(last + 1) <= n && static_cast<int>(sig.size()) >= n;
}

/// nSCI: "d.ddE+x" with n decimals (from memory).
bool scientific_ok(const std::string& v, int n) {
  const std::size_t e = v.find_first_of("eE");
  if (e == std::string::npos) return false;
  const std::string mant = v.substr(0, e), ex = v.substr(e + 1);
  const std::string m = mant.size() && mant[0] == '-' ? mant.substr(1) : mant;
  if (m.size() < 1 || !is_digit(m[0]) || plain_decimals(m) != n || (n > 0 && m[1] != '.')) return false;
  std::size_t i = (ex.size() && (ex[0] == '+' || ex[0] == '-')) ? 1 : 0;
  if (i >= ex.size()) return false;
  for (; i < ex.size(); ++i)
    if (!is_digit(ex[i])) return false;
  return any_number(v);
}

/// A DT value against its unit, a pattern of y, m, d, h, n (minutes), s and separators: each
/// pattern letter a digit, each separator itself (AGS4 data format 4.1, as summarised in issue 16,
/// names DT; the pattern form is from memory).
bool date_ok(const std::string& v, const std::string& pattern) {
  if (v.size() != pattern.size()) return false;
  for (std::size_t i = 0; i < v.size(); ++i) {
    const char p = pattern[i];
    if (p == 'y' || p == 'm' || p == 'd' || p == 'h' || p == 's' || p == 'n' || p == 'Y' || p == 'M' || p == 'D') {
      if (!is_digit(v[i])) return false;
    } else if (v[i] != p) {
      return false;
    }
  }
  return true;
}

bool date_pattern(const std::string& unit) {
  if (unit.empty()) return false;
  bool letter = false;
  for (char c : unit) {
    if (c == 'y' || c == 'm' || c == 'd' || c == 'h' || c == 's' || c == 'n') letter = true;
    else if (c != '-' && c != ':' && c != '/' && c != 'T' && c != ' ' && c != '.') return false;
  }
  return letter;
}

/// Parses "2DP" -> ('D', 2), "2SF" -> ('S', 2), "3SCI" -> ('E', 3).
bool counted_type(const std::string& t, char& kind, int& n) {
  std::size_t i = 0;
  while (i < t.size() && is_digit(t[i])) ++i;
  if (i == 0 || i > 2) return false;
  n = std::atoi(t.substr(0, i).c_str());
  const std::string rest = t.substr(i);
  if (rest == "DP") kind = 'D';
  else if (rest == "SF") kind = 'S';
  else if (rest == "SCI") kind = 'E';
  else return false;
  return kind != 'S' || n > 0;
}

bool known_type(const std::string& t) {
  static const std::set<std::string> text = {"ID", "X", "XN", "PA", "PT", "PU", "RL", "T", "U", "MC", "DT", "YN"};
  char k = 0;
  int n = 0;
  return text.count(t) > 0 || counted_type(t, k, n);
}

/// Empty when `v` matches `type` (with `unit` for DT), else what was expected.
std::string type_mismatch(const std::string& v, const std::string& type, const std::string& unit) {
  if (v.empty()) return {};
  char kind = 0;
  int n = 0;
  if (counted_type(type, kind, n)) {
    if (kind == 'D' && plain_decimals(v) != n)
      return n == 0 ? "a whole number (0DP)" : "a number with " + std::to_string(n) + " decimal place" + (n == 1 ? "" : "s");
    if (kind == 'S' && !significant_figures_ok(v, n)) return "a number with " + std::to_string(n) + " significant figures";
    if (kind == 'E' && !scientific_ok(v, n)) return "a number in scientific notation with " + std::to_string(n) + " decimals";
    return {};
  }
  if (type == "U" || type == "MC") return any_number(v) ? std::string() : std::string("a number");
  if (type == "YN") return v == "Y" || v == "N" ? std::string() : std::string("Y or N");
  if (type == "DT") return date_ok(v, unit) ? std::string() : "a date or time in the form " + unit;
  return {};
}

}  // namespace

std::string to_string(Ags4Dimension d) {
  switch (d) {
    case Ags4Dimension::none: return "no unit";
    case Ags4Dimension::stress: return "stress (kPa, MPa, Pa)";
    case Ags4Dimension::fraction: return "percentage (%)";
    case Ags4Dimension::length: return "length (m, cm, mm)";
    case Ags4Dimension::compressibility: return "compressibility (m2/MN, m2/kN)";
    case Ags4Dimension::consolidation: return "coefficient of consolidation (m2/yr)";
    case Ags4Dimension::density: return "density (Mg/m3, kg/m3)";
    case Ags4Dimension::angle: return "angle (deg)";
    case Ags4Dimension::date: return "date";
  }
  return "?";
}

int Ags4Group::column(const std::string& heading) const {
  for (std::size_t i = 0; i < headings.size(); ++i)
    if (headings[i] == heading) return static_cast<int>(i);
  return -1;
}

const Ags4Group* Ags4File::group(const std::string& name) const {
  for (const Ags4Group& g : groups)
    if (g.name == name) return &g;
  return nullptr;
}

std::string ags4_where(const Ags4File& file, const Ags4Group& group, int line, const std::string& heading) {
  return file.source + ": line " + std::to_string(line) + ", group " + group.name + (heading.empty() ? "" : ", heading " + heading);
}

Ags4File parse_ags4(const std::string& raw, const std::string& source) {
  Ags4File file;
  file.source = source;
  std::string text = raw;
  if (text.size() >= 3 && text.compare(0, 3, "\xEF\xBB\xBF") == 0) text.erase(0, 3);
  if (!valid_utf8(text)) {
    text = latin1_to_utf8(text);
    file.latin1 = true;
  }
  const Parser p{source};
  enum class Expect { group, heading, unit, type, data };
  Expect expect = Expect::group;
  std::set<std::string> names;
  std::size_t pos = 0;
  int line = 0;
  Ags4Group* g = nullptr;
  static const char* const kNext[] = {"GROUP", "HEADING", "UNIT", "TYPE", "DATA"};
  while (pos < text.size()) {
    std::size_t end = text.find('\n', pos);
    if (end == std::string::npos) end = text.size();
    std::string l = text.substr(pos, end - pos);
    pos = end + 1;
    ++line;
    if (!l.empty() && l.back() == '\r') l.pop_back();
    const std::string gname = g ? g->name : std::string();
    if (l.find_first_not_of(" \t") == std::string::npos) {
      if (expect == Expect::heading || expect == Expect::unit || expect == Expect::type)
        throw InputError(p.where(line, gname) + ": a blank line before the " + kNext[static_cast<int>(expect)] +
                         " row (each group has GROUP, HEADING, UNIT and TYPE rows, then DATA rows)");
      if (expect == Expect::data) expect = Expect::group;
      continue;
    }
    std::vector<std::string> f = p.fields(l, line, gname);
    const std::string& kind = f[0];
    if (kind == "GROUP") {
      if (expect == Expect::heading || expect == Expect::unit || expect == Expect::type)
        throw InputError(p.where(line, gname) + ": expected the " + std::string(kNext[static_cast<int>(expect)]) +
                         " row, found \"GROUP\" (each group has GROUP, HEADING, UNIT and TYPE rows, then DATA rows)");
      if (expect == Expect::data)
        throw InputError(p.where(line, gname) + ": a new GROUP row without the blank line that ends the group before");
      if (f.size() != 2 || f[1].empty())
        throw InputError(p.where(line, "") + ": a GROUP row has 2 fields, \"GROUP\" and the group name, found " +
                         std::to_string(f.size()) + (f.size() == 2 ? " with an empty name" : ""));
      if (!names.insert(f[1]).second) throw InputError(p.where(line, f[1]) + ": the group appears a second time");
      file.groups.emplace_back();
      g = &file.groups.back();
      g->name = f[1];
      g->line = line;
      expect = Expect::heading;
      continue;
    }
    if (expect == Expect::group)
      throw InputError(p.where(line, gname) + ": expected a GROUP row, found \"" + show(kind) + "\"");
    const std::string want = kNext[static_cast<int>(expect)];
    if (kind != want && !(expect == Expect::data && kind == "DATA"))
      throw InputError(p.where(line, gname) + ": expected the " + want + " row after " +
                       (expect == Expect::heading ? std::string("GROUP") : expect == Expect::unit ? "HEADING" : expect == Expect::type ? "UNIT" : "TYPE") +
                       ", found \"" + show(kind) + "\"");
    f.erase(f.begin());
    if (expect == Expect::heading) {
      if (f.empty()) throw InputError(p.where(line, gname) + ": the HEADING row names no heading");
      std::set<std::string> seen;
      for (std::size_t i = 0; i < f.size(); ++i) {
        if (f[i].empty()) throw InputError(p.where(line, gname) + ": heading " + std::to_string(i + 1) + " is empty");
        if (!seen.insert(f[i]).second) throw InputError(p.where(line, gname) + ", heading " + show(f[i]) + ": appears twice in the HEADING row");
      }
      g->headings = std::move(f);
      expect = Expect::unit;
      continue;
    }
    if (f.size() != g->headings.size())
      throw InputError(p.where(line, gname) + ": the " + want + " row has " + std::to_string(f.size()) + " fields, the HEADING row has " +
                       std::to_string(g->headings.size()));
    if (expect == Expect::unit) {
      g->units = std::move(f);
      expect = Expect::type;
      continue;
    }
    if (expect == Expect::type) {
      for (std::size_t i = 0; i < f.size(); ++i) {
        const std::string here = p.where(line, gname) + ", heading " + g->headings[i];
        if (!known_type(f[i]))
          throw InputError(here + ": type '" + show(f[i]) +
                           "' is not known (expected ID, X, XN, PA, PT, PU, RL, T, U, MC, DT, YN, nDP, nSF or nSCI)");
        const std::string& unit = g->units[i];
        if (f[i] == "DT") {
          if (!unit.empty() && !date_pattern(unit))
            throw InputError(p.where(line - 1, gname) + ", heading " + g->headings[i] + ": unit '" + show(unit) +
                             "' is not a date pattern (e.g. yyyy-mm-dd) for a DT field");
          g->dimensions.push_back(Ags4Dimension::date);
          g->factors.push_back(1.0);
          continue;
        }
        const UnitDef* def = nullptr;
        for (const UnitDef& u : kUnits)
          if (unit == u.name) def = &u;
        if (!def)
          throw InputError(p.where(line - 1, gname) + ", heading " + g->headings[i] + ": unit '" + show(unit) +
                           "' is not known (expected one of: " + known_units() + ")");
        g->dimensions.push_back(def->dimension);
        g->factors.push_back(def->factor);
      }
      g->types = std::move(f);
      expect = Expect::data;
      continue;
    }
    for (std::size_t i = 0; i < f.size(); ++i) {
      const std::string why = type_mismatch(f[i], g->types[i], g->units[i]);
      if (!why.empty())
        throw InputError(p.where(line, gname) + ", heading " + g->headings[i] + ": '" + show(f[i]) + "' is not a " + g->types[i] +
                         " value (expected " + why + ")");
    }
    g->rows.push_back({line, std::move(f)});
  }
  if (expect == Expect::heading || expect == Expect::unit || expect == Expect::type)
    throw InputError(p.where(line, g ? g->name : "") + ": the file ends before the " + std::string(kNext[static_cast<int>(expect)]) +
                     " row (each group has GROUP, HEADING, UNIT and TYPE rows, then DATA rows)");
  if (file.groups.empty()) throw InputError(source + ": no GROUP row: not an AGS4 file");
  return file;
}

Ags4File read_ags4(const std::string& path) { return parse_ags4(detail::read_text_file(path), path); }

double ags4_number(const Ags4File& file, const Ags4Group& group, const Ags4Group::Row& row, const std::string& heading,
                   Ags4Dimension dimension, bool required) {
  const int c = group.column(heading);
  if (c < 0) {
    if (required)
      throw InputError(ags4_where(file, group, group.line, "") + ": heading " + heading + " is missing (it is required here)");
    return std::nan("");
  }
  const std::size_t uc = static_cast<std::size_t>(c);
  const std::string& v = row.text[uc];
  if (v.empty()) {
    if (required) throw InputError(ags4_where(file, group, row.line, heading) + ": empty (a value is required here)");
    return std::nan("");
  }
  if (group.dimensions[uc] != dimension)
    throw InputError(ags4_where(file, group, row.line, heading) + ": unit '" + group.units[uc] + "' is not a unit of " +
                     to_string(dimension));
  if (!any_number(v))
    throw InputError(ags4_where(file, group, row.line, heading) + ": '" + show(v) + "' is not a number (type " + group.types[uc] + ")");
  const double x = std::strtod(v.c_str(), nullptr) * group.factors[uc];
  if (!std::isfinite(x)) throw InputError(ags4_where(file, group, row.line, heading) + ": '" + show(v) + "' overflows");
  return x;
}

}  // namespace triaxcal
