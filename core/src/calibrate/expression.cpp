#include "expression.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <limits>

#include "triaxcal/error.hpp"

namespace triaxcal::detail {

class ExpressionParser {
 public:
  ExpressionParser(Expression& e, const std::vector<std::string>& names, const std::string& where)
      : e_(e), names_(names), where_(where), s_(e.text_) {}

  void parse() {
    skip();
    if (pos_ >= s_.size()) fail("empty expression");
    sum();
    skip();
    if (pos_ < s_.size()) fail(std::string("unexpected '") + s_[pos_] + "' at position " + std::to_string(pos_ + 1));
  }

 private:
  using Op = Expression::Op;
  [[noreturn]] void fail(const std::string& what) const {
    throw InputError(where_ + ": " + what + " in \"" + s_ + "\"");
  }
  void skip() {
    while (pos_ < s_.size() && std::isspace(static_cast<unsigned char>(s_[pos_]))) ++pos_;
  }
  bool accept(char c) {
    skip();
    if (pos_ < s_.size() && s_[pos_] == c) {
      ++pos_;
      return true;
    }
    return false;
  }
  void emit(Op op, double number = 0.0, int variable = -1) { e_.code_.push_back({op, number, variable}); }
  void sum() {
    product();
    for (;;) {
      if (accept('+')) { product(); emit(Op::add); }
      else if (accept('-')) { product(); emit(Op::subtract); }
      else return;
    }
  }
  void product() {
    power();
    for (;;) {
      if (accept('*')) { power(); emit(Op::multiply); }
      else if (accept('/')) { power(); emit(Op::divide); }
      else return;
    }
  }
  void power() {
    unary();
    if (accept('^')) {
      power();
      emit(Op::power);
    }
  }
  void unary() {
    if (accept('-')) {
      unary();
      emit(Op::negate);
      return;
    }
    if (accept('+')) {
      unary();
      return;
    }
    atom();
  }
  void atom() {
    skip();
    if (pos_ >= s_.size()) fail("unexpected end");
    const char c = s_[pos_];
    if (c == '(') {
      ++pos_;
      sum();
      if (!accept(')')) fail("missing ')'");
      return;
    }
    if (std::isdigit(static_cast<unsigned char>(c)) || c == '.') {
      const char* begin = s_.c_str() + pos_;
      char* end = nullptr;
      const double v = std::strtod(begin, &end);
      if (end == begin) fail("bad number at position " + std::to_string(pos_ + 1));
      pos_ += static_cast<std::size_t>(end - begin);
      emit(Op::number, v);
      return;
    }
    if (std::isalpha(static_cast<unsigned char>(c)) || c == '_') {
      const std::size_t start = pos_;
      while (pos_ < s_.size() && (std::isalnum(static_cast<unsigned char>(s_[pos_])) || s_[pos_] == '_')) ++pos_;
      const std::string name = s_.substr(start, pos_ - start);
      const auto it = std::find(names_.begin(), names_.end(), name);
      if (it == names_.end()) {
        std::string known;
        for (const auto& n : names_) known += (known.empty() ? "" : ", ") + n;
        throw InputError(where_ + ": unknown name '" + name + "' in \"" + s_ + "\" (known: " + known + ")");
      }
      const int index = static_cast<int>(it - names_.begin());
      emit(Op::variable, 0.0, index);
      if (std::find(e_.used_.begin(), e_.used_.end(), index) == e_.used_.end()) e_.used_.push_back(index);
      return;
    }
    fail(std::string("unexpected '") + c + "' at position " + std::to_string(pos_ + 1));
  }

  Expression& e_;
  const std::vector<std::string>& names_;
  const std::string& where_;
  const std::string& s_;
  std::size_t pos_ = 0;
};

Expression::Expression(const std::string& text, const std::vector<std::string>& names, const std::string& where)
    : text_(text) {
  ExpressionParser(*this, names, where).parse();
}

double Expression::evaluate(const std::vector<double>& v) const {
  double stack[64];
  int top = 0;
  for (const Instruction& in : code_) {
    if (top >= 63) return std::numeric_limits<double>::quiet_NaN();  // deeper than any sensible tie
    switch (in.op) {
      case Op::number: stack[top++] = in.number; break;
      case Op::variable: stack[top++] = v[static_cast<std::size_t>(in.variable)]; break;
      case Op::negate: stack[top - 1] = -stack[top - 1]; break;
      default: {
        const double b = stack[--top];
        double& a = stack[top - 1];
        switch (in.op) {
          case Op::add: a += b; break;
          case Op::subtract: a -= b; break;
          case Op::multiply: a *= b; break;
          case Op::divide: a /= b; break;
          case Op::power: a = std::pow(a, b); break;
          default: break;
        }
      }
    }
  }
  return top == 1 ? stack[0] : std::numeric_limits<double>::quiet_NaN();
}

Inequality parse_inequality(const std::string& text, const std::vector<std::string>& names, const std::string& where) {
  const auto le = text.find("<=");
  const auto ge = text.find(">=");
  if ((le == std::string::npos) == (ge == std::string::npos))
    throw InputError(where + ": expected \"lhs <= rhs\" or \"lhs >= rhs\", found \"" + text + "\"");
  const auto at = le != std::string::npos ? le : ge;
  Inequality q;
  q.less_equal = le != std::string::npos;
  q.lhs = Expression(text.substr(0, at), names, where);
  q.rhs = Expression(text.substr(at + 2), names, where);
  return q;
}

}  // namespace triaxcal::detail
