#pragma once
// Internal: strict JSON reading with messages that name the file and the key path, and the limits
// every input file of ours is read under (docs/test-series-format.md, "Limits").

#include <nlohmann/json.hpp>

#include <cstdint>
#include <initializer_list>
#include <string>

#include "key_path.hpp"

namespace triaxcal::detail {

using nlohmann::json;

/// Largest input file read (lab data, JSON): 256 MiB. A lab export of a few hundred thousand rows
/// is a few tens of MiB; the limit keeps an endless or huge file from exhausting memory.
inline constexpr std::uintmax_t kMaxInputFileBytes = std::uintmax_t{256} << 20;
/// Largest JSON text parsed: 64 MiB (our JSON files are kilobytes; the parsed tree takes several
/// times the text's size).
inline constexpr std::size_t kMaxJsonBytes = std::size_t{64} << 20;
/// Deepest nesting of arrays and objects: 64 (our formats need fewer than 10). Checked before the
/// recursive parse, which would otherwise overflow the stack on a deeply nested value.
inline constexpr int kMaxJsonDepth = 64;

/// Parse `text`; throws InputError naming `source`, line and column for malformed JSON
/// "<source>: line L, column C: malformed JSON (...)", nesting deeper than kMaxJsonDepth, a number
/// out of the range of a double (1e400) and a text longer than kMaxJsonBytes.
json parse_json(const std::string& text, const std::string& source);

/// Read a whole regular file of at most `limit` bytes; throws InputError naming the path when it
/// cannot be opened, is a directory or not a regular file (a device, a pipe), or is too large.
std::string read_text_file(const std::string& path, std::uintmax_t limit = kMaxInputFileBytes);

/// "<source>: <path>" or "<source>" for the root.
std::string where(const std::string& source, const KeyPath& path);

/// Throws InputError "<source>: <path>: <what>" ("<source>: <what>" at the top).
[[noreturn]] void fail_at(const std::string& source, const KeyPath& path, const std::string& what);

/// Rejects keys not in `allowed`: "<source>: <path>: unknown key 'k' (expected one of: a, b)".
void check_keys(const json& object, std::initializer_list<const char*> allowed, const std::string& source,
                const KeyPath& path);

void require_object(const json& value, const std::string& source, const KeyPath& path);

/// Number at object[key]; missing or not a number throws with the path.
double get_number(const json& object, const char* key, const std::string& source, const KeyPath& path);
/// Number or `fallback` when absent; present but not a number throws.
double get_number_or(const json& object, const char* key, double fallback, const std::string& source,
                     const KeyPath& path);
/// Integer or `fallback` when absent; not an integer, or outside the range of an int, throws
/// "<source>: <path>.<key>: expected an integer from -2147483648 to 2147483647, found 4294967297".
int get_int_or(const json& object, const char* key, int fallback, const std::string& source, const KeyPath& path);
/// The integer `value` (at `path`, for the message) within [low, high]: not an integer throws
/// "<source>: <path>: expected an integer, found 1.5", out of range "...: expected an integer from
/// <low> to <high>, found 18446744073709551615" (never wrapped, as get<long>() would).
long long get_integer_in(const json& value, long long low, long long high, const std::string& source,
                         const KeyPath& path);
std::string get_string(const json& object, const char* key, const std::string& source, const KeyPath& path);
std::string get_string_or(const json& object, const char* key, const std::string& fallback,
                          const std::string& source, const KeyPath& path);

/// Checks "format" and "version" of a file of ours.
void check_format(const json& root, const char* format, int version, const std::string& source);

}  // namespace triaxcal::detail
