#include "json_checks.hpp"

#include <charconv>
#include <climits>
#include <filesystem>
#include <fstream>
#include <limits>
#include <system_error>

#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::detail {

namespace {

std::string at_position(const std::string& source, std::size_t line, std::size_t column) {
  return source + ": line " + std::to_string(line) + ", column " + std::to_string(column);
}

/// True when a JSON number token that std::from_chars reports out of range is too large (rather
/// than too small: 1e-400 underflows to 0 as in every JSON reader). The decimal exponent of the
/// first significant digit decides.
bool overflows(const std::string& token) {
  long exponent = 0;
  std::size_t i = token[0] == '-' ? 1 : 0;
  long integer_digits = 0, leading_fraction_zeros = 0;
  bool significant = false;
  for (; i < token.size() && token[i] >= '0' && token[i] <= '9'; ++i) {
    significant = significant || token[i] != '0';
    if (significant) ++integer_digits;
  }
  if (i < token.size() && token[i] == '.')
    for (++i; i < token.size() && token[i] >= '0' && token[i] <= '9'; ++i) {
      if (!significant && token[i] == '0') ++leading_fraction_zeros;
      significant = significant || token[i] != '0';
    }
  if (i < token.size() && (token[i] == 'e' || token[i] == 'E')) {
    ++i;
    const bool negative = i < token.size() && token[i] == '-';
    if (i < token.size() && (token[i] == '-' || token[i] == '+')) ++i;
    for (; i < token.size() && token[i] >= '0' && token[i] <= '9'; ++i)
      exponent = std::min(exponent * 10 + (token[i] - '0'), 100000000L);
    if (negative) exponent = -exponent;
  }
  if (!significant) return false;
  return exponent + (integer_digits > 0 ? integer_digits : -leading_fraction_zeros) > 0;
}

/// One pass over the text outside strings, before nlohmann's recursive parse: the nesting depth
/// and numbers beyond the range of a double (which nlohmann reports as out_of_range.406 without a
/// position). Malformed text is left to the parser.
void check_json_limits(const std::string& text, const std::string& source) {
  if (text.size() > kMaxJsonBytes)
    throw InputError(source + ": " + std::to_string(text.size()) + " bytes of JSON, more than the largest accepted (" +
                     std::to_string(kMaxJsonBytes) + " bytes = " + std::to_string(kMaxJsonBytes >> 20) + " MiB)");
  std::size_t line = 1, line_start = 0;
  int depth = 0;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char ch = text[i];
    if (ch == '\n') {
      ++line;
      line_start = i + 1;
    } else if (ch == '"') {
      for (++i; i < text.size() && text[i] != '"'; ++i) {
        if (text[i] == '\\') ++i;
        else if (text[i] == '\n') {  // not valid inside a string; the parser names it
          ++line;
          line_start = i + 1;
        }
      }
    } else if (ch == '[' || ch == '{') {
      if (++depth > kMaxJsonDepth)
        throw InputError(at_position(source, line, i - line_start + 1) + ": arrays and objects nested deeper than " +
                         std::to_string(kMaxJsonDepth) + " levels");
    } else if (ch == ']' || ch == '}') {
      if (depth > 0) --depth;
    } else if (ch == '-' || (ch >= '0' && ch <= '9')) {
      std::size_t end = i;
      while (end < text.size() && ((text[end] >= '0' && text[end] <= '9') || text[end] == '-' || text[end] == '+' ||
                                   text[end] == '.' || text[end] == 'e' || text[end] == 'E'))
        ++end;
      const std::string token = text.substr(i, end - i);
      double value = 0.0;
      const auto result = std::from_chars(token.data(), token.data() + token.size(), value);
      if (result.ec == std::errc::result_out_of_range && overflows(token)) {
        const std::string shown = token.size() > 40 ? token.substr(0, 40) + "..." : token;
        throw InputError(at_position(source, line, i - line_start + 1) + ": the number " + shown +
                         " is out of the range of a double (largest magnitude about 1.8e308)");
      }
      i = end - 1;
    }
  }
}

}  // namespace

json parse_json(const std::string& text, const std::string& source) {
  check_json_limits(text, source);
  try {
    return json::parse(text);
  } catch (const json::parse_error& e) {
    // e.byte is 1-based and points just past the offending character.
    std::size_t line = 1, column = 1;
    const std::size_t end = std::min<std::size_t>(e.byte > 0 ? e.byte - 1 : 0, text.size());
    for (std::size_t i = 0; i < end; ++i) {
      if (text[i] == '\n') {
        ++line;
        column = 1;
      } else {
        ++column;
      }
    }
    std::string what = e.what();
    const auto colon = what.find(": ", what.find("parse error"));
    if (colon != std::string::npos) what = what.substr(colon + 2);
    // nlohmann quotes the token it last read; the line and column name the place without quoting
    // the content of a file that may not be ours.
    const auto last_read = what.find("; last read: ");
    if (last_read != std::string::npos) what = what.substr(0, last_read);
    throw InputError(at_position(source, line, column) + ": malformed JSON (" + what + ")");
  } catch (const json::out_of_range& e) {
    // check_json_limits finds numbers out of range first; kept for anything it does not foresee.
    throw InputError(source + ": a value out of range (" + std::string(e.what()) + ")");
  }
}

std::string read_text_file(const std::string& path, std::uintmax_t limit) {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::file_status status = fs::status(path, ec);
  if (ec || !fs::exists(status)) throw InputError(path + ": cannot open the file");
  if (fs::is_directory(status)) throw InputError(path + ": is a directory, not a file");
  if (!fs::is_regular_file(status))
    throw InputError(path + ": not a regular file (a device, pipe or socket is not read)");
  const std::string too_large = path + ": larger than the largest input file accepted (" + std::to_string(limit) +
                                " bytes = " + std::to_string(limit >> 20) + " MiB)";
  const std::uintmax_t size = fs::file_size(path, ec);
  if (!ec && size > limit) throw InputError(too_large);
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path + ": cannot open the file");
  // Read at most limit + 1 bytes: the file may grow after its size was taken.
  std::string content;
  content.resize(static_cast<std::size_t>(ec ? 0 : size));
  std::size_t used = 0;
  while (in) {
    if (content.size() - used < 65536) content.resize(content.size() + 65536);
    in.read(content.data() + used, static_cast<std::streamsize>(content.size() - used));
    used += static_cast<std::size_t>(in.gcount());
    if (used > limit) throw InputError(too_large);
  }
  if (in.bad()) throw InputError(path + ": cannot read the file");
  content.resize(used);
  return content;
}

std::string where(const std::string& source, const KeyPath& path) { return path.in(source); }

void fail_at(const std::string& source, const KeyPath& path, const std::string& what) {
  throw InputError(path.in(source) + ": " + what);
}

void require_object(const json& value, const std::string& source, const KeyPath& path) {
  if (!value.is_object())
    throw InputError(where(source, path.top() ? KeyPath("top level") : path) + ": expected an object, found " +
                     value.type_name());
}

void check_keys(const json& object, std::initializer_list<const char*> allowed, const std::string& source,
                const KeyPath& path) {
  require_object(object, source, path);
  for (const auto& item : object.items()) {
    bool ok = false;
    for (const char* a : allowed) ok = ok || item.key() == a;
    if (!ok) {
      std::string list;
      for (const char* a : allowed) list += (list.empty() ? "" : ", ") + std::string(a);
      throw InputError(where(source, path / item.key()) + ": unknown key '" + item.key() +
                       "' (expected one of: " + list + ")");
    }
  }
}

double get_number(const json& object, const char* key, const std::string& source, const KeyPath& path) {
  const auto it = object.find(key);
  if (it == object.end()) throw InputError(where(source, path / key) + ": missing (a number is required)");
  if (!it->is_number())
    throw InputError(where(source, path / key) + ": expected a number, found " + it->dump());
  return it->get<double>();
}

double get_number_or(const json& object, const char* key, double fallback, const std::string& source,
                     const KeyPath& path) {
  if (!object.contains(key) || object.at(key).is_null()) return fallback;
  return get_number(object, key, source, path);
}

long long get_integer_in(const json& value, long long low, long long high, const std::string& source,
                         const KeyPath& path) {
  if (!value.is_number_integer()) throw InputError(where(source, path) + ": expected an integer, found " + value.dump());
  // nlohmann keeps integers as int64 or uint64; get<int>() would wrap 4294967297 to 1.
  const bool fits = value.is_number_unsigned()
                        ? high >= 0 && value.get<std::uint64_t>() <= static_cast<std::uint64_t>(high) &&
                              (low <= 0 || value.get<std::uint64_t>() >= static_cast<std::uint64_t>(low))
                        : value.get<std::int64_t>() >= low && value.get<std::int64_t>() <= high;
  if (!fits)
    throw InputError(where(source, path) + ": expected an integer from " + std::to_string(low) + " to " +
                     std::to_string(high) + ", found " + value.dump());
  return value.is_number_unsigned() ? static_cast<long long>(value.get<std::uint64_t>()) : value.get<std::int64_t>();
}

int get_int_or(const json& object, const char* key, int fallback, const std::string& source, const KeyPath& path) {
  const auto it = object.find(key);
  if (it == object.end()) return fallback;
  return static_cast<int>(get_integer_in(*it, INT_MIN, INT_MAX, source, path / key));
}

std::string get_string(const json& object, const char* key, const std::string& source, const KeyPath& path) {
  const auto it = object.find(key);
  if (it == object.end()) throw InputError(where(source, path / key) + ": missing (a string is required)");
  if (!it->is_string()) throw InputError(where(source, path / key) + ": expected a string, found " + it->dump());
  return it->get<std::string>();
}

std::string get_string_or(const json& object, const char* key, const std::string& fallback,
                          const std::string& source, const KeyPath& path) {
  if (!object.contains(key)) return fallback;
  return get_string(object, key, source, path);
}

void check_format(const json& root, const char* format, int version, const std::string& source) {
  require_object(root, source, "");
  const std::string found = get_string(root, "format", source, "");
  if (found != format)
    throw InputError(source + ": format: expected \"" + std::string(format) + "\", found \"" + found + "\"");
  // Compared as JSON: a version that does not fit an int (4294967297) is another version, not 1.
  const auto v = root.find("version");
  if (v == root.end() || !v->is_number_integer() || *v != version)
    throw InputError(source + ": version: expected " + std::to_string(version) + ", found " +
                     (v != root.end() ? v->dump() : std::string("nothing")));
}

}  // namespace triaxcal::detail
