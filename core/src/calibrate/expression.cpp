#include "expression.hpp"

#include <muParser.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>
#include <mutex>

#include "triaxcal/error.hpp"

namespace triaxcal::detail {

namespace {

constexpr double kPi = 3.14159265358979323846;

double radians(double degrees) { return degrees * kPi / 180.0; }
double degrees(double radians) { return radians * 180.0 / kPi; }
double natural_log(double x) { return std::log(x); }

/// The functions an expression may call (muparser's own, with log and the angle conversions
/// defined here so that their meaning does not depend on the library's version).
bool is_function(const std::string& name) {
  for (const char* f : {"sin", "cos", "tan", "asin", "acos", "atan", "radians", "degrees", "sqrt", "exp", "log", "abs",
                        "min", "max"})
    if (name == f) return true;
  return false;
}

}  // namespace

/// One parsed expression: muparser bound to one slot per variable. muparser evaluates through
/// mutable state (the slots, its stack), so evaluation holds the lock.
struct Expression::Compiled {
  std::mutex lock;
  mu::Parser parser;
  std::vector<double> slots;
};

Expression::Expression(const std::string& text, const std::vector<std::string>& names, const std::string& where)
    : text_(text) {
  const auto fail = [&](const std::string& what) { throw InputError(where + ": " + what + " in \"" + text + "\""); };
  const auto blank = [](char c) { return std::isspace(static_cast<unsigned char>(c)) != 0; };
  if (std::all_of(text.begin(), text.end(), blank)) fail("empty expression");

  // Names first, with our messages: every identifier not followed by '(' must be a parameter.
  for (std::size_t pos = 0; pos < text.size();) {
    const char c = text[pos];
    if (std::isdigit(static_cast<unsigned char>(c)) || c == '.') {
      while (pos < text.size() && (std::isdigit(static_cast<unsigned char>(text[pos])) || text[pos] == '.')) ++pos;
      if (pos < text.size() && (text[pos] == 'e' || text[pos] == 'E')) {
        std::size_t after = pos + 1;
        if (after < text.size() && (text[after] == '+' || text[after] == '-')) ++after;
        if (after < text.size() && std::isdigit(static_cast<unsigned char>(text[after]))) {
          pos = after;
          while (pos < text.size() && std::isdigit(static_cast<unsigned char>(text[pos]))) ++pos;
        }
      }
      continue;
    }
    if (!(std::isalpha(static_cast<unsigned char>(c)) || c == '_')) {
      ++pos;
      continue;
    }
    const std::size_t start = pos;
    while (pos < text.size() && (std::isalnum(static_cast<unsigned char>(text[pos])) || text[pos] == '_')) ++pos;
    const std::string name = text.substr(start, pos - start);
    std::size_t next = pos;
    while (next < text.size() && blank(text[next])) ++next;
    if (next < text.size() && text[next] == '(' && is_function(name)) continue;
    const auto it = std::find(names.begin(), names.end(), name);
    if (it == names.end()) {
      std::string known;
      for (const auto& n : names) known += (known.empty() ? "" : ", ") + n;
      throw InputError(where + ": unknown name '" + name + "' in \"" + text + "\" (known: " + known + ")");
    }
    const int index = static_cast<int>(it - names.begin());
    if (std::find(used_.begin(), used_.end(), index) == used_.end()) used_.push_back(index);
  }

  compiled_ = std::make_shared<Compiled>();
  Compiled& c = *compiled_;
  c.slots.assign(names.size(), 0.0);
  try {
    for (const int i : used_) c.parser.DefineVar(names[static_cast<std::size_t>(i)], &c.slots[static_cast<std::size_t>(i)]);
    c.parser.DefineFun("radians", radians);
    c.parser.DefineFun("degrees", degrees);
    c.parser.DefineFun("log", natural_log);
    c.parser.SetExpr(text);
    c.parser.Eval();  // parses now: syntax errors are input errors here, not at the first evaluation
  } catch (const mu::Parser::exception_type& e) {
    std::string what = "unexpected end";
    const int pos = e.GetPos();
    if (e.GetCode() == mu::ecMISSING_PARENS)
      what = "missing ')'";
    else if (e.GetCode() != mu::ecUNEXPECTED_EOF && pos >= 0 && static_cast<std::size_t>(pos) < text.size())
      what = std::string("unexpected '") + text[static_cast<std::size_t>(pos)] + "' at position " + std::to_string(pos + 1);
    fail(what);
  }
}

double Expression::evaluate(const std::vector<double>& v) const {
  if (!compiled_) return std::numeric_limits<double>::quiet_NaN();
  Compiled& c = *compiled_;
  const std::lock_guard<std::mutex> guard(c.lock);
  for (const int i : used_) c.slots[static_cast<std::size_t>(i)] = v[static_cast<std::size_t>(i)];
  try {
    return c.parser.Eval();
  } catch (const mu::Parser::exception_type&) {
    return std::numeric_limits<double>::quiet_NaN();
  }
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
