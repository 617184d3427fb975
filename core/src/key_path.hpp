#pragma once
// Internal: where a value sits in a file of ours, as messages print it, e.g.
// "specimens[2].stages[1].cell_pressure". Every reader builds its paths with this one type
// (issue 13) instead of concatenating strings at each throw site.

#include <cstddef>
#include <string>
#include <string_view>
#include <utility>

namespace triaxcal::detail {

class KeyPath {
 public:
  /// The top of the file.
  KeyPath() = default;
  /// A path written out whole ("options", "parameters.friction_angle").
  KeyPath(std::string text) : text_(std::move(text)) {}  // NOLINT(google-explicit-constructor)
  KeyPath(const char* text) : text_(text) {}             // NOLINT(google-explicit-constructor)

  /// The member `key` of the object here: "options" / "seed" is "options.seed"; at the top "seed".
  KeyPath operator/(std::string_view key) const {
    return KeyPath(text_.empty() ? std::string(key) : text_ + "." + std::string(key));
  }
  /// The element `index` of the array here: "stages" [1] is "stages[1]".
  KeyPath operator[](std::size_t index) const { return KeyPath(text_ + "[" + std::to_string(index) + "]"); }

  bool top() const { return text_.empty(); }
  const std::string& str() const { return text_; }
  operator const std::string&() const { return text_; }  // NOLINT(google-explicit-constructor)

  /// "<source>: <path>", or "<source>" at the top.
  std::string in(const std::string& source) const { return text_.empty() ? source : source + ": " + text_; }

 private:
  std::string text_;
};

}  // namespace triaxcal::detail
