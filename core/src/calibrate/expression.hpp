#pragma once
// Internal: the small arithmetic expressions of tied parameters and constraints.
// Grammar: sum := product (('+'|'-') product)*; product := power (('*'|'/') power)*;
// power := unary ('^' power)?; unary := '-' unary | atom; atom := number | name | '(' sum ')'.

#include <string>
#include <vector>

namespace triaxcal::detail {

class Expression {
 public:
  /// Parses `text`; names resolve against `names` (their index is the variable). Throws InputError
  /// "<where>: <what> in "<text>"" for a syntax error or "unknown name 'x' ... (known: a, b)".
  Expression(const std::string& text, const std::vector<std::string>& names, const std::string& where);
  Expression() = default;

  double evaluate(const std::vector<double>& variables) const;
  /// Indices of the variables it reads.
  const std::vector<int>& variables() const { return used_; }
  const std::string& text() const { return text_; }

 private:
  enum class Op { number, variable, add, subtract, multiply, divide, power, negate };
  struct Instruction {
    Op op;
    double number;
    int variable;
  };
  std::vector<Instruction> code_;  // reverse Polish
  std::vector<int> used_;
  std::string text_;
  friend class ExpressionParser;
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
