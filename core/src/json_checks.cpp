#include "json_checks.hpp"

#include <fstream>
#include <sstream>

#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal::detail {

json parse_json(const std::string& text, const std::string& source) {
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
    throw InputError(source + ": line " + std::to_string(line) + ", column " + std::to_string(column) +
                     ": malformed JSON (" + what + ")");
  }
}

std::string read_text_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(path + ": cannot open the file");
  std::ostringstream buffer;
  buffer << in.rdbuf();
  return buffer.str();
}

std::string where(const std::string& source, const std::string& path) {
  return path.empty() ? source : source + ": " + path;
}

static std::string child(const std::string& path, const std::string& key) {
  return path.empty() ? key : path + "." + key;
}

void require_object(const json& value, const std::string& source, const std::string& path) {
  if (!value.is_object())
    throw InputError(where(source, path.empty() ? "top level" : path) + ": expected an object, found " +
                     value.type_name());
}

void check_keys(const json& object, std::initializer_list<const char*> allowed, const std::string& source,
                const std::string& path) {
  require_object(object, source, path);
  for (const auto& item : object.items()) {
    bool ok = false;
    for (const char* a : allowed) ok = ok || item.key() == a;
    if (!ok) {
      std::string list;
      for (const char* a : allowed) list += (list.empty() ? "" : ", ") + std::string(a);
      throw InputError(where(source, child(path, item.key())) + ": unknown key '" + item.key() +
                       "' (expected one of: " + list + ")");
    }
  }
}

double get_number(const json& object, const char* key, const std::string& source, const std::string& path) {
  const auto it = object.find(key);
  if (it == object.end()) throw InputError(where(source, child(path, key)) + ": missing (a number is required)");
  if (!it->is_number())
    throw InputError(where(source, child(path, key)) + ": expected a number, found " + it->dump());
  return it->get<double>();
}

double get_number_or(const json& object, const char* key, double fallback, const std::string& source,
                     const std::string& path) {
  if (!object.contains(key) || object.at(key).is_null()) return fallback;
  return get_number(object, key, source, path);
}

int get_int_or(const json& object, const char* key, int fallback, const std::string& source, const std::string& path) {
  const auto it = object.find(key);
  if (it == object.end()) return fallback;
  if (!it->is_number_integer())
    throw InputError(where(source, child(path, key)) + ": expected an integer, found " + it->dump());
  return it->get<int>();
}

std::string get_string(const json& object, const char* key, const std::string& source, const std::string& path) {
  const auto it = object.find(key);
  if (it == object.end()) throw InputError(where(source, child(path, key)) + ": missing (a string is required)");
  if (!it->is_string()) throw InputError(where(source, child(path, key)) + ": expected a string, found " + it->dump());
  return it->get<std::string>();
}

std::string get_string_or(const json& object, const char* key, const std::string& fallback,
                          const std::string& source, const std::string& path) {
  if (!object.contains(key)) return fallback;
  return get_string(object, key, source, path);
}

void check_format(const json& root, const char* format, int version, const std::string& source) {
  require_object(root, source, "");
  const std::string found = get_string(root, "format", source, "");
  if (found != format)
    throw InputError(source + ": format: expected \"" + std::string(format) + "\", found \"" + found + "\"");
  const int v = get_int_or(root, "version", -1, source, "");
  if (v != version)
    throw InputError(source + ": version: expected " + std::to_string(version) + ", found " +
                     (root.contains("version") ? root.at("version").dump() : std::string("nothing")));
}

}  // namespace triaxcal::detail
