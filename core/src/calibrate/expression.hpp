#pragma once
// Internal: the arithmetic expressions of tied parameters and constraints, evaluated by muparser
// (Debian's libmuparser-dev): numbers, parameter names, + - * / ^ (right-associative; unary minus
// binds looser than ^, so -2^2 = -4), parentheses and the functions sin, cos, tan, asin, acos, atan
// (radians), radians, degrees, sqrt, exp, log (natural), abs, min, max. Names are checked before
// muparser sees the text, so messages name the unknown name and the known ones.

#include <memory>
#include <string>
#include <vector>

namespace triaxcal::detail {

class Expression {
 public:
  /// Parses `text`; names resolve against `names` (their index is the variable). Throws InputError
  /// "<where>: <what> in "<text>"" for a syntax error (empty expression, missing ')', unexpected end,
  /// unexpected 'c' at position n) or "unknown name 'x' ... (known: a, b)".
  Expression(const std::string& text, const std::vector<std::string>& names, const std::string& where);
  Expression() = default;

  /// The value with variables[i] for names[i]. Thread-safe (copies share one parser, used under a lock).
  double evaluate(const std::vector<double>& variables) const;
  /// Indices of the variables it reads, in order of first appearance.
  const std::vector<int>& variables() const { return used_; }
  const std::string& text() const { return text_; }

 private:
  struct Compiled;
  std::shared_ptr<Compiled> compiled_;
  std::vector<int> used_;
  std::string text_;
};

/// "lhs <= rhs" as g = lhs - rhs <= 0 (or rhs - lhs for ">=").
struct Inequality {
  Expression lhs, rhs;
  bool less_equal = true;
  double violation(const std::vector<double>& v) const {
    const double g = lhs.evaluate(v) - rhs.evaluate(v);
    return less_equal ? g : -g;
  }
};

/// Throws InputError "<where>: expected "lhs <= rhs" or "lhs >= rhs", found "text"".
Inequality parse_inequality(const std::string& text, const std::vector<std::string>& names, const std::string& where);

}  // namespace triaxcal::detail
