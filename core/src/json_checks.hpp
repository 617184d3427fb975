#pragma once
// Internal: strict JSON reading with messages that name the file and the key path.

#include <nlohmann/json.hpp>

#include <initializer_list>
#include <string>

namespace triaxcal::detail {

using nlohmann::json;

/// Parse `text`; malformed JSON throws InputError "<source>: line L, column C: malformed JSON (...)".
json parse_json(const std::string& text, const std::string& source);

/// Read a whole file; throws InputError "<path>: cannot open" when it cannot.
std::string read_text_file(const std::string& path);

/// "<source>: <path>" or "<source>" for the root.
std::string where(const std::string& source, const std::string& path);

/// Rejects keys not in `allowed`: "<source>: <path>: unknown key 'k' (expected one of: a, b)".
void check_keys(const json& object, std::initializer_list<const char*> allowed, const std::string& source,
                const std::string& path);

void require_object(const json& value, const std::string& source, const std::string& path);

/// Number at object[key]; missing or not a number throws with the path.
double get_number(const json& object, const char* key, const std::string& source, const std::string& path);
/// Number or `fallback` when absent; present but not a number throws.
double get_number_or(const json& object, const char* key, double fallback, const std::string& source,
                     const std::string& path);
int get_int_or(const json& object, const char* key, int fallback, const std::string& source, const std::string& path);
std::string get_string(const json& object, const char* key, const std::string& source, const std::string& path);
std::string get_string_or(const json& object, const char* key, const std::string& fallback,
                          const std::string& source, const std::string& path);

/// Checks "format" and "version" of a file of ours.
void check_format(const json& root, const char* format, int version, const std::string& source);

}  // namespace triaxcal::detail
