#include "engine.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include "../key_path.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"

namespace triaxcal {

namespace {
struct QuantityName {
  Quantity q;
  const char* name;
  const char* unit;
};
constexpr QuantityName kQuantities[] = {
    {Quantity::axial_strain, "axial_strain", "-"},
    {Quantity::radial_strain, "radial_strain", "-"},
    {Quantity::volumetric_strain, "volumetric_strain", "-"},
    {Quantity::axial_stress, "axial_stress", "kPa"},
    {Quantity::radial_stress, "radial_stress", "kPa"},
    {Quantity::mean_stress, "mean_stress", "kPa"},
    {Quantity::deviator_stress, "deviator_stress", "kPa"},
    {Quantity::excess_pore_pressure, "excess_pore_pressure", "kPa"},
    {Quantity::void_ratio, "void_ratio", "-"},
    {Quantity::stress_ratio, "stress_ratio", "-"},
};

bool is_strain(Quantity q) {
  return q == Quantity::axial_strain || q == Quantity::radial_strain || q == Quantity::volumetric_strain;
}
}  // namespace

std::string to_string(Quantity quantity) {
  for (const auto& n : kQuantities)
    if (n.q == quantity) return n.name;
  return "unknown";
}

std::string unit_of(Quantity quantity) {
  for (const auto& n : kQuantities)
    if (n.q == quantity) return n.unit;
  return "?";
}

Quantity parse_quantity(const std::string& text, const std::string& where) {
  std::string list;
  for (const auto& n : kQuantities) {
    if (text == n.name) return n.q;
    list += (list.empty() ? "" : ", ") + std::string(n.name);
  }
  throw InputError(where + ": expected one of: " + list + ", found \"" + text + "\"");
}

double value_of(const StepRecord& r, Quantity quantity) {
  switch (quantity) {
    case Quantity::axial_strain: return r.axial_strain;
    case Quantity::radial_strain: return r.radial_strain;
    case Quantity::volumetric_strain: return r.volumetric_strain;
    case Quantity::axial_stress: return r.axial_stress;
    case Quantity::radial_stress: return r.radial_stress;
    case Quantity::mean_stress: return r.p;
    case Quantity::deviator_stress: return r.q;
    case Quantity::excess_pore_pressure: return r.excess_pore_pressure;
    case Quantity::void_ratio: return r.void_ratio;
    case Quantity::stress_ratio: return r.stress_ratio;
  }
  return kNotGiven;
}

namespace {
// The record member a quantity reads (value_of without the switch, for the hot loops).
template <class T>
const T BasicStepRecord<T>::*member_of(Quantity quantity) {
  using R = BasicStepRecord<T>;
  switch (quantity) {
    case Quantity::axial_strain: return &R::axial_strain;
    case Quantity::radial_strain: return &R::radial_strain;
    case Quantity::volumetric_strain: return &R::volumetric_strain;
    case Quantity::axial_stress: return &R::axial_stress;
    case Quantity::radial_stress: return &R::radial_stress;
    case Quantity::mean_stress: return &R::p;
    case Quantity::deviator_stress: return &R::q;
    case Quantity::excess_pore_pressure: return &R::excess_pore_pressure;
    case Quantity::void_ratio: return &R::void_ratio;
    case Quantity::stress_ratio: return &R::stress_ratio;
  }
  return &R::q;
}
}  // namespace

std::string to_string(ParameterStatus status) {
  switch (status) {
    case ParameterStatus::free: return "free";
    case ParameterStatus::fixed: return "fixed";
    case ParameterStatus::tied: return "tied";
  }
  return "unknown";
}

namespace detail {

// ---------------------------------------------------------------------------------------------
// TaskPool

TaskPool::TaskPool(int threads) {
  for (int i = 1; i < threads; ++i) workers_.emplace_back([this] { work(); });
}

TaskPool::~TaskPool() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    quit_ = true;
  }
  wake_.notify_all();
  for (auto& w : workers_) w.join();
}

void TaskPool::drain() {
  for (;;) {
    const int i = next_.fetch_add(1);
    if (i >= count_) return;
    (*task_)(i);
  }
}

// Evaluations follow each other within microseconds during a fit, so the threads spin briefly
// (about 50 us) before sleeping: a condition-variable wake-up costs as much as a short simulation.
constexpr int kSpins = 20000;

void TaskPool::work() {
  long seen = 0;
  for (;;) {
    bool ready = false;
    for (int i = 0; i < kSpins && !ready; ++i) ready = quit_.load() || generation_.load() != seen;
    if (!ready) {
      std::unique_lock<std::mutex> lock(mutex_);
      wake_.wait(lock, [&] { return quit_.load() || generation_.load() != seen; });
    }
    if (quit_.load()) return;
    seen = generation_.load();
    drain();
    if (busy_.fetch_sub(1) == 1) {
      std::lock_guard<std::mutex> lock(mutex_);
      done_.notify_one();
    }
  }
}

void TaskPool::run(int n, const std::function<void(int)>& task) {
  if (workers_.empty() || n <= 1) {
    for (int i = 0; i < n; ++i) task(i);
    return;
  }
  {
    std::lock_guard<std::mutex> lock(mutex_);
    task_ = &task;
    count_ = n;
    next_.store(0);
    busy_.store(static_cast<int>(workers_.size()));
    generation_.fetch_add(1);
  }
  wake_.notify_all();
  drain();
  for (int i = 0; i < kSpins; ++i)
    if (busy_.load() == 0) return;
  std::unique_lock<std::mutex> lock(mutex_);
  done_.wait(lock, [&] { return busy_.load() == 0; });
}

namespace {

// Splits x(begin..end) into monotone runs with hysteresis `tol`: a reversal counts once x has come
// back more than tol from the running extreme. starts[k] is the first index of run k; consecutive
// runs share their turning point.
template <typename F>
void split_runs(std::size_t begin, std::size_t end, F x, double tol, std::vector<std::size_t>& starts) {
  starts.clear();
  starts.push_back(begin);
  int dir = 0;
  std::size_t extreme = begin;
  for (std::size_t j = begin + 1; j <= end; ++j) {
    const double d = value_of(x(j)) - value_of(x(extreme));
    if (dir == 0) {
      if (std::abs(d) > tol) {
        dir = d > 0 ? 1 : -1;
        extreme = j;
      }
    } else if (d * dir >= 0.0) {
      extreme = j;
    } else if (std::abs(d) > tol) {
      starts.push_back(extreme);
      dir = -dir;
      extreme = j;
    }
  }
}

// Interpolates y at xi on the records [a, b] from `cursor` on; false when no segment contains xi.
// T: double, or Dual (the segment is chosen on the values; the interpolation carries derivatives).
template <typename T, typename FX, typename FY>
bool bracket(std::size_t& cursor, std::size_t b, double xi, FX X, FY Y, T& out) {
  T xa = X(cursor);
  for (std::size_t j = cursor; j < b; ++j) {
    const T xb = X(j + 1);
    const double va = value_of(xa), vb = value_of(xb);
    if ((va <= xi && xi <= vb) || (vb <= xi && xi <= va)) {
      const T t = vb == va ? T(0.0) : T((xi - xa) / (xb - xa));
      const T ya = Y(j);
      out = ya + t * (Y(j + 1) - ya);
      cursor = j;
      return true;
    }
    xa = xb;
  }
  return false;
}

template <typename FX, typename FY>
auto nearest(std::size_t a, std::size_t b, double xi, FX X, FY Y) {
  std::size_t best = a;
  double distance = std::numeric_limits<double>::infinity();
  for (std::size_t j = a; j <= b; ++j) {
    const double d = std::abs(value_of(X(j)) - xi);
    if (d < distance) {
      distance = d;
      best = j;
    }
  }
  return Y(best);
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// Prepared problem

double Prepared::to_physical(int k, double u) const {
  u = std::clamp(u, 0.0, 1.0);
  const auto i = static_cast<std::size_t>(k);
  if (scale[i] == ParameterScale::log) return std::exp(std::log(lower[i]) + u * (std::log(upper[i]) - std::log(lower[i])));
  return lower[i] + u * (upper[i] - lower[i]);
}

double Prepared::to_unit(int k, double value) const {
  const auto i = static_cast<std::size_t>(k);
  if (scale[i] == ParameterScale::log)
    return (std::log(value) - std::log(lower[i])) / (std::log(upper[i]) - std::log(lower[i]));
  return (value - lower[i]) / (upper[i] - lower[i]);
}

double Prepared::slope(int k, double value) const {
  const auto i = static_cast<std::size_t>(k);
  if (scale[i] == ParameterScale::log) return value * (std::log(upper[i]) - std::log(lower[i]));
  return upper[i] - lower[i];
}

ParameterValues Prepared::values(const std::vector<double>& unit) const {
  ParameterValues v = fixed;
  for (std::size_t k = 0; k < free.size(); ++k) v[static_cast<std::size_t>(free[k])] = to_physical(static_cast<int>(k), unit[k]);
  for (const auto& [index, e] : ties) v[static_cast<std::size_t>(index)] = e.evaluate(v);
  return v;
}

double Prepared::violation(const ParameterValues& v) const {
  double worst = -std::numeric_limits<double>::infinity();
  for (const Inequality& q : constraints) {
    const double g = q.violation(v);
    const double size = std::abs(q.lhs.evaluate(v)) + std::abs(q.rhs.evaluate(v)) + 1e-12;
    worst = std::max(worst, g / size);
  }
  return worst;
}

namespace {

std::string test_where(std::size_t i, const CalibrationTest& t) {
  return detail::KeyPath("tests")[i].str() + (t.id.empty() ? "" : " (" + t.id + ")");
}

// Normalisation floor where a curve is nearly flat (e.g. excess pore pressure in a drained test):
// 1 kPa for stresses, 1e-4 for strains (lab resolution), 0.01 for void and stress ratios.
double range_floor(Quantity q) {
  if (is_strain(q)) return 1e-4;
  if (q == Quantity::void_ratio || q == Quantity::stress_ratio) return 1e-2;
  return 1.0;
}

}  // namespace

Prepared prepare(const CalibrationProblem& problem) {
  if (problem.model == nullptr || !problem.create) throw InputError("calibration: no model given");
  problem.driver.validate();
  const ModelInfo& info = *problem.model;
  Prepared p;
  p.problem = &problem;
  const std::size_t n = info.parameters.size();
  for (const auto& pi : info.parameters) p.names.push_back(pi.name);
  p.status.assign(n, ParameterStatus::fixed);
  p.fixed.assign(n, kNotGiven);
  std::vector<const ParameterSpec*> spec(n, nullptr);
  for (const ParameterSpec& s : problem.parameters) {
    const std::string where = detail::KeyPath("parameters") / s.name;
    const int i = parameter_index(info, s.name);
    if (i < 0) {
      std::string known;
      for (const auto& name : p.names) known += (known.empty() ? "" : ", ") + name;
      throw InputError(where + ": " + info.name + " has no parameter '" + s.name + "' (known: " + known + ")");
    }
    if (spec[static_cast<std::size_t>(i)] != nullptr) throw InputError(where + ": given twice");
    spec[static_cast<std::size_t>(i)] = &s;
  }
  // Fixed and free first; ties need every name's status.
  std::vector<std::pair<int, const ParameterSpec*>> tied;
  for (std::size_t i = 0; i < n; ++i) {
    const ParameterInfo& pi = info.parameters[i];
    const std::string where = detail::KeyPath("parameters") / pi.name;
    const ParameterSpec* s = spec[i];
    if (s == nullptr || s->status == ParameterStatus::fixed) {
      const double v = (s != nullptr && !std::isnan(s->value)) ? s->value : pi.default_value;
      if (std::isnan(v)) throw InputError(where + ": fixed without a value, and " + info.name + " has no default for it");
      check_bounds(info, pi, v, where);
      p.fixed[i] = v;
      continue;
    }
    p.status[i] = s->status;
    if (s->status == ParameterStatus::tied) {
      if (s->expression.empty()) throw InputError(where + ": a tied parameter needs an expression");
      tied.emplace_back(static_cast<int>(i), s);
      continue;
    }
    const std::string unit = " (" + pi.unit + ")";
    if (std::isnan(s->lower) || std::isnan(s->upper) || !std::isfinite(s->lower) || !std::isfinite(s->upper))
      throw InputError(where + ": a free parameter needs finite lower and upper bounds" + unit);
    if (!(s->lower < s->upper))
      throw InputError(where + ": lower = " + format_number(s->lower) + " must be below upper = " +
                       format_number(s->upper) + unit);
    for (const auto& [key, v] : {std::pair<const char*, double>{"lower", s->lower}, {"upper", s->upper}}) {
      const bool below = pi.lower_open ? !(v > pi.lower) : !(v >= pi.lower);
      const bool above = pi.upper_open ? !(v < pi.upper) : !(v <= pi.upper);
      if (below || above)
        throw InputError(where + ": " + key + " = " + format_number(v) + " is outside the model's range " +
                         format_bounds(pi) + unit);
    }
    if (s->scale == ParameterScale::log && !(s->lower > 0.0))
      throw InputError(where + ": a log scale needs lower > 0, found lower = " + format_number(s->lower));
    const double start = std::isnan(s->start)
                             ? (s->scale == ParameterScale::log ? std::sqrt(s->lower * s->upper) : 0.5 * (s->lower + s->upper))
                             : s->start;
    if (!(start >= s->lower && start <= s->upper))
      throw InputError(where + ": start = " + format_number(start) + " is outside the bounds [" +
                       format_number(s->lower) + ", " + format_number(s->upper) + "]" + unit);
    p.free.push_back(static_cast<int>(i));
    p.lower.push_back(s->lower);
    p.upper.push_back(s->upper);
    p.start.push_back(start);
    p.scale.push_back(s->scale);
  }
  if (p.free.empty()) throw InputError("parameters: no parameter is free (nothing to fit)");
  // Ties in dependency order; a tie may read fixed, free or other tied parameters.
  std::vector<std::pair<int, Expression>> pending;
  for (const auto& [i, s] : tied)
    pending.emplace_back(i, Expression(s->expression, p.names, (detail::KeyPath("parameters") / p.names[static_cast<std::size_t>(i)] / "expression").str()));
  std::vector<bool> known(n, true);
  for (const auto& [i, e] : pending) known[static_cast<std::size_t>(i)] = false;
  while (!pending.empty()) {
    bool progress = false;
    for (auto it = pending.begin(); it != pending.end();) {
      bool ready = true;
      for (int v : it->second.variables()) ready = ready && known[static_cast<std::size_t>(v)];
      if (ready) {
        known[static_cast<std::size_t>(it->first)] = true;
        p.ties.push_back(std::move(*it));
        it = pending.erase(it);
        progress = true;
      } else {
        ++it;
      }
    }
    if (!progress) {
      std::string cycle;
      for (const auto& [i, e] : pending) cycle += (cycle.empty() ? "" : ", ") + p.names[static_cast<std::size_t>(i)];
      throw InputError((detail::KeyPath("parameters") / p.names[static_cast<std::size_t>(pending.front().first)] / "expression").str() +
                       ": tied parameters refer to each other in a cycle (" + cycle + ")");
    }
  }
  for (std::size_t c = 0; c < problem.constraints.size(); ++c)
    p.constraints.push_back(parse_inequality(problem.constraints[c], p.names, detail::KeyPath("constraints")[c]));
  // Ties and constraints at the start point must make sense.
  {
    std::vector<double> unit(p.free.size());
    for (std::size_t k = 0; k < p.free.size(); ++k) unit[k] = p.to_unit(static_cast<int>(k), p.start[k]);
    const ParameterValues v = p.values(unit);
    for (const auto& [i, e] : p.ties)
      if (!std::isfinite(v[static_cast<std::size_t>(i)]))
        throw InputError((detail::KeyPath("parameters") / p.names[static_cast<std::size_t>(i)] / "expression").str() + ": \"" + e.text() +
                         "\" is not a finite number at the start values");
  }

  if (problem.tests.empty()) throw InputError("tests: no test to fit");
  std::set<std::string> ids;
  for (std::size_t t = 0; t < problem.tests.size(); ++t) {
    const CalibrationTest& test = problem.tests[t];
    const std::string tw = test_where(t, test);
    if (!test.id.empty() && !ids.insert(test.id).second) throw InputError(tw + ": id \"" + test.id + "\" is used twice");
    try {
      validate_protocol(test.protocol);
    } catch (const InputError& e) {
      throw InputError(tw + ": protocol: " + e.what());
    }
    if (!(test.weight >= 0.0 && std::isfinite(test.weight)))
      throw InputError(tw + ": weight = " + format_number(test.weight) + " must be a finite number >= 0");
    if (test.curves.empty()) throw InputError(tw + ": no curve to compare");
    PreparedTest pt;
    pt.test = &test;
    for (std::size_t c = 0; c < test.curves.size(); ++c) {
      const MeasuredCurve& m = test.curves[c];
      const std::string cw = tw + ": curves[" + std::to_string(c) + "] (" + to_string(m.y) + ")";
      if (m.xs.size() != m.ys.size())
        throw InputError(cw + ": " + std::to_string(m.xs.size()) + " x values but " + std::to_string(m.ys.size()) +
                         " y values");
      if (!(m.weight >= 0.0 && std::isfinite(m.weight)))
        throw InputError(cw + ": weight = " + format_number(m.weight) + " must be a finite number >= 0");
      if (m.stage < -1 || m.stage >= static_cast<int>(test.protocol.stages.size()))
        throw InputError(cw + ": stage = " + std::to_string(m.stage) + " is not a stage of the protocol (0 to " +
                         std::to_string(test.protocol.stages.size() - 1) + ", or -1 for all)");
      if (m.strain_zero_stage < -1 || m.strain_zero_stage >= static_cast<int>(test.protocol.stages.size()))
        throw InputError(cw + ": strain_zero_stage = " + std::to_string(m.strain_zero_stage) +
                         " is not a stage of the protocol (0 to " + std::to_string(test.protocol.stages.size() - 1) +
                         ", or -1 for the start)");
      if (!(m.x_min <= m.x_max))
        throw InputError(cw + ": x range [" + format_number(m.x_min) + ", " + format_number(m.x_max) + "] is reversed");
      PreparedCurve pc;
      pc.source = static_cast<int>(c);
      pc.x = m.x;
      pc.y = m.y;
      pc.stage = m.stage;
      pc.zero_stage = m.strain_zero_stage;
      for (std::size_t k = 0; k < m.xs.size(); ++k) {
        if (!std::isfinite(m.xs[k]) || !std::isfinite(m.ys[k]))
          throw InputError(cw + ": point " + std::to_string(k) + " is not a pair of finite numbers");
        if (m.xs[k] < m.x_min || m.xs[k] > m.x_max) continue;
        pc.xs.push_back(m.xs[k]);
        pc.ys.push_back(m.ys[k]);
      }
      if (pc.xs.size() < 2)
        throw InputError(cw + ": fewer than 2 points within the x range [" + format_number(m.x_min) + ", " +
                         format_number(m.x_max) + "]");
      const auto [lo, hi] = std::minmax_element(pc.ys.begin(), pc.ys.end());
      pc.range = std::max(*hi - *lo, range_floor(m.y));
      {
        const auto [xlo, xhi] = std::minmax_element(pc.xs.begin(), pc.xs.end());
        pc.x_span = *xhi - *xlo;
        // Measured reversals smaller than 0.1 % of the x span are scatter, not a loop.
        split_runs(0, pc.xs.size() - 1, [&](std::size_t j) { return pc.xs[j]; }, 1e-3 * pc.x_span, pc.runs);
      }
      const double np = static_cast<double>(pc.xs.size());
      pc.weight = test.weight * m.weight / np;
      double mean = 0.0;
      for (double y : pc.ys) mean += y;
      mean /= np;
      for (double y : pc.ys) pc.sst += (y - mean) * (y - mean);
      pt.points += static_cast<int>(pc.xs.size());
      pt.total_weight += test.weight * m.weight;
      pt.curves.push_back(std::move(pc));
    }
    pt.protocol = test.protocol;
    if (!problem.driver.fixed_steps) place_records(pt.protocol, pt.curves);
    p.points += pt.points;
    p.tests.push_back(std::move(pt));
  }
  return p;
}

// ---------------------------------------------------------------------------------------------
// Curve comparison

// Both curves are split into monotone runs of x (loading, unloading, reloading ...). When they have
// the same number of runs, run k of the measured points is compared with run k of the simulation,
// so an unload-reload loop is matched branch by branch even where the simulated loop is narrower
// or wider than the measured one; a point beyond its simulated run takes the run's nearest value.
// Otherwise each point (in time order) is matched on the first simulated segment, from the previous
// match onward, that contains it, or else on the nearest simulated point in x.
namespace {

template <class T>
void interpolate_records(const BasicSimulationResult<T>& result, const PreparedCurve& curve, T* out) {
  using std::expm1;
  const auto& steps = result.steps;
  // Record at the start of stage s: the last record of the stage before (record 0 for stage 0).
  auto stage_start = [&](int s) -> std::size_t {
    if (s < 0 || static_cast<std::size_t>(s) >= result.stages.size()) return 0;
    return static_cast<std::size_t>(std::max(0, result.stages[static_cast<std::size_t>(s)].first - 1));
  };
  std::size_t first = stage_start(curve.zero_stage), last = steps.size() - 1;
  if (curve.stage >= 0 && static_cast<std::size_t>(curve.stage) < result.stages.size()) {
    first = stage_start(curve.stage);
    last = static_cast<std::size_t>(result.stages[static_cast<std::size_t>(curve.stage)].last);
  }
  // Records carry natural strains since the protocol start; measured strains are engineering
  // strains relative to the curve's origin (the start of zero_stage, or of the protocol), so a
  // strain column becomes 1 - exp(-(eps - eps_origin)) (conventions.hpp).
  const BasicStepRecord<T>& base = steps[stage_start(curve.zero_stage)];
  const bool strain_x = is_strain(curve.x), strain_y = is_strain(curve.y);
  const bool shift = curve.zero_stage >= 0;
  const T BasicStepRecord<T>::*mx = member_of<T>(curve.x);
  const T BasicStepRecord<T>::*my = member_of<T>(curve.y);
  const T x0 = strain_x && shift ? base.*mx : T(0.0);
  const T y0 = strain_y && shift ? base.*my : T(0.0);
  // The compared columns of the records, copied once into contiguous arrays (indices relative to
  // `first`): the searches below then read plain numbers.
  thread_local std::vector<T> xs_sim, ys_sim;
  const std::size_t count = last - first + 1;
  xs_sim.resize(count);
  ys_sim.resize(count);
  for (std::size_t j = 0; j < count; ++j) {
    const T x = steps[first + j].*mx - x0, y = steps[first + j].*my - y0;
    xs_sim[j] = strain_x ? T(-expm1(-x)) : x;  // engineering_strain (conventions.hpp)
    ys_sim[j] = strain_y ? T(-expm1(-y)) : y;
  }
  const T* xv = xs_sim.data();
  const T* yv = ys_sim.data();
  auto X = [xv](std::size_t j) { return xv[j]; };
  auto Y = [yv](std::size_t j) { return yv[j]; };
  const std::size_t end = count - 1;
  const std::size_t n = curve.xs.size();
  thread_local std::vector<std::size_t> runs;
  const double sim_range = std::abs(value_of(X(end)) - value_of(X(0))) + 1e-300;
  split_runs(0, end, X, 1e-9 * std::max(sim_range, curve.x_span), runs);
  if (runs.size() == curve.runs.size() && runs.size() > 1) {
    for (std::size_t k = 0; k < runs.size(); ++k) {
      const std::size_t a = runs[k], b = k + 1 < runs.size() ? runs[k + 1] : end;
      const std::size_t p0 = curve.runs[k], p1 = k + 1 < curve.runs.size() ? curve.runs[k + 1] : n;
      std::size_t cursor = a;
      for (std::size_t i = p0; i < p1; ++i)
        if (!bracket(cursor, b, curve.xs[i], X, Y, out[i])) out[i] = nearest(a, b, curve.xs[i], X, Y);
    }
    return;
  }
  std::size_t cursor = 0;
  for (std::size_t i = 0; i < n; ++i)
    if (!bracket(cursor, end, curve.xs[i], X, Y, out[i])) out[i] = nearest(cursor, end, curve.xs[i], X, Y);
}

}  // namespace

void interpolate_curve(const SimulationResult& result, const PreparedCurve& curve, double* out) {
  interpolate_records(result, curve, out);
}

void interpolate_curve(const DualSimulationResult& result, const PreparedCurve& curve, Dual* out) {
  interpolate_records(result, curve, out);
}

// ---------------------------------------------------------------------------------------------
// Record points

namespace {

bool strain_controlled(const Stage& s) {
  return s.type == StageType::shear || s.type == StageType::constant_p_shear ||
         (s.type == StageType::oedometer && std::isnan(s.target_axial));
}

}  // namespace

void place_records(TestProtocol& protocol, const std::vector<PreparedCurve>& curves) {
  const std::size_t n = protocol.stages.size();
  std::vector<std::vector<double>> fractions(n);
  for (const PreparedCurve& c : curves) {
    if (c.x != Quantity::axial_strain) continue;
    // Natural axial strain of each stage's start relative to the curve's origin, walking forward
    // from the origin; a stress-controlled stage is taken to leave it unchanged (see the header).
    const std::size_t origin = c.zero_stage < 0 ? 0 : static_cast<std::size_t>(c.zero_stage);
    if (c.zero_stage < 0) {
      // Strains from the protocol start: only known when every stage up to the compared ones is
      // strain-controlled, which is rare (consolidation comes first); place nothing then.
      bool all = true;
      for (std::size_t k = 0; k < n && all; ++k) all = strain_controlled(protocol.stages[k]);
      if (!all) continue;
    }
    double offset = 0.0;
    for (std::size_t k = origin; k < n; ++k) {
      const Stage& st = protocol.stages[k];
      if (!strain_controlled(st)) continue;
      if (c.stage >= 0 && static_cast<std::size_t>(c.stage) != k) {
        offset += natural_strain(st.axial_strain);
        continue;
      }
      const double span = natural_strain(st.axial_strain);
      for (double xe : c.xs) {
        if (!(xe < 1.0)) continue;
        const double f = (natural_strain(xe) - offset) / span;
        if (f > 1e-9 && f < 1.0 - 1e-9) fractions[k].push_back(f);
      }
      offset += span;
    }
  }
  for (std::size_t k = 0; k < n; ++k) {
    std::vector<double>& f = fractions[k];
    if (f.empty()) continue;
    Stage& st = protocol.stages[k];
    // Only the measured points and the stage end: the error control sets the substeps between
    // records, so sparse data do not make a coarse simulation.
    f.push_back(1.0);
    for (double g : st.record_at) f.push_back(g);
    std::sort(f.begin(), f.end());
    std::vector<double> kept;
    kept.reserve(f.size());
    for (double g : f)
      if (kept.empty() || g - kept.back() > 1e-9) kept.push_back(g);
    kept.back() = 1.0;
    st.record_at = std::move(kept);
  }
}

// ---------------------------------------------------------------------------------------------
// Evaluator

Evaluator::Evaluator(const Prepared& prepared, const CalibrationOptions& options, int threads)
    : prepared_(prepared), options_(options), pool_(threads), outcomes_(prepared.tests.size()),
      plans_(prepared.tests.size()), limited_(prepared.tests.size(), prepared.problem->driver) {
  for (std::size_t t = 0; t < prepared.tests.size(); ++t)
    outcomes_[t].simulated.assign(static_cast<std::size_t>(prepared.tests[t].points), 0.0);
  if (options.max_substeps_per_record > 0) {
    // Substeps ~ tolerance^-1/2 under the driver's step doubling (the first-order error estimate
    // ~ h^2 sets the step), so a tighter tolerance widens the limit by that factor.
    const DriverOptions& d = prepared.problem->driver;
    const double widen = std::max(1.0, std::sqrt(1e-4 / d.tolerance));
    for (std::size_t t = 0; t < prepared.tests.size(); ++t) {
      double records = 1.0;
      for (const Stage& st : prepared.tests[t].protocol.stages)
        records += static_cast<double>(st.record_at.empty() ? st.steps : static_cast<int>(st.record_at.size())) *
                   (st.type == StageType::unload_reload ? 2.0 : 1.0);
      const double limit = std::max(kWorkLimitFloor, options.max_substeps_per_record * records) * widen;
      limited_[t].max_substeps = std::min(d.max_substeps, static_cast<long>(std::min(limit, 1e15)));
    }
  }
  task_ = [this](int t) { run_test(t); };
}

void Evaluator::run_test(int t) {
  const PreparedTest& pt = prepared_.tests[static_cast<std::size_t>(t)];
  TestOutcome& o = outcomes_[static_cast<std::size_t>(t)];
  o.ok = false;
  o.work_limited = false;
  try {
    // Into the test's own result: its vectors keep their capacity from one evaluation to the next.
    // The driver options and the protocol were checked when the problem was prepared.
    SimulationResult& r = o.result;
    const auto i = static_cast<std::size_t>(t);
    // A replay takes exactly its plan's substeps: it needs no work limit.
    const DriverOptions& driver = limit_work_ && mode_ != PlanMode::replay ? limited_[i] : prepared_.problem->driver;
    triaxcal::simulate(driver, *model_, pt.protocol, r, true, mode_ == PlanMode::record ? &plans_[i] : nullptr,
                       mode_ == PlanMode::replay ? &(*replay_)[i] : nullptr);
    o.work_limited = !r.ok() && driver.max_substeps < prepared_.problem->driver.max_substeps &&
                     r.substeps + r.rejected_substeps >= driver.max_substeps;
    if (r.ok()) {
      double* out = o.simulated.data();
      for (const PreparedCurve& c : pt.curves) {
        interpolate_curve(r, c, out);
        out += c.xs.size();
      }
      o.ok = true;
      for (double v : o.simulated) o.ok = o.ok && std::isfinite(v);
    }
  } catch (const std::exception& e) {
    // A model that rejects the initial conditions (InputError) fails this test like a diverged run.
    o.result.clear();
    o.result.termination = Termination::failed;
    o.result.message = e.what();
  }
}

bool Evaluator::simulate(const ParameterValues& values, PlanMode mode, const std::vector<SubstepPlan>* replay) {
  mode_ = mode == PlanMode::replay && replay == nullptr ? PlanMode::none : mode;
  replay_ = replay;
  std::unique_ptr<Model> model;
  try {
    model = prepared_.problem->create(values);
  } catch (const std::exception& e) {
    for (TestOutcome& o : outcomes_) {
      o.ok = false;
      o.work_limited = false;
      o.result.clear();
      o.result.termination = Termination::failed;
      o.result.message.append("the model rejected the parameters: ").append(e.what());
    }
    return false;
  }
  model_ = model.get();
  pool_.run(static_cast<int>(outcomes_.size()), task_);
  model_ = nullptr;
  return true;
}

int Evaluator::failed_tests() const {
  int n = 0;
  for (const TestOutcome& o : outcomes_) n += o.ok ? 0 : 1;
  return n;
}

int Evaluator::work_limited_tests() const {
  int n = 0;
  for (const TestOutcome& o : outcomes_) n += o.work_limited ? 1 : 0;
  return n;
}

namespace {
// rho(z) of z = e^2 for the loss of calibrate.hpp, with c the loss scale.
double loss(Loss kind, double z, double c) {
  switch (kind) {
    case Loss::linear: return z;
    case Loss::soft_l1: return 2.0 * c * c * (std::sqrt(1.0 + z / (c * c)) - 1.0);
    case Loss::huber: return z <= c * c ? z : 2.0 * c * std::sqrt(z) - c * c;
  }
  return z;
}
}  // namespace

double loss_weight(Loss kind, double z, double c) {
  switch (kind) {
    case Loss::linear: return 1.0;
    case Loss::soft_l1: return 1.0 / std::sqrt(1.0 + z / (c * c));
    case Loss::huber: return z <= c * c ? 1.0 : c / std::sqrt(z);
  }
  return 1.0;
}

double loss_curvature(Loss kind, double z, double c) {
  switch (kind) {
    case Loss::linear: return 1.0;
    case Loss::soft_l1: {
      const double r = 1.0 + z / (c * c);
      return 1.0 / (r * std::sqrt(r));
    }
    case Loss::huber: return z <= c * c ? 1.0 : 0.0;
  }
  return 1.0;
}

double Evaluator::objective(bool model_built, std::vector<double>* per_test) const {
  double total = 0.0;
  if (per_test) per_test->assign(outcomes_.size(), 0.0);
  for (std::size_t t = 0; t < outcomes_.size(); ++t) {
    const PreparedTest& pt = prepared_.tests[t];
    const TestOutcome& o = outcomes_[t];
    double share = 0.0;
    if (!model_built || !o.ok) {
      share = options_.failure_penalty * pt.total_weight;
    } else {
      const double* sim = o.simulated.data();
      for (const PreparedCurve& c : pt.curves) {
        double sum = 0.0;
        for (std::size_t i = 0; i < c.xs.size(); ++i) {
          const double e = (sim[i] - c.ys[i]) / c.range;
          sum += loss(options_.loss, e * e, options_.loss_scale);
        }
        share += c.weight * sum;
        sim += c.xs.size();
      }
    }
    if (per_test) (*per_test)[t] = share;
    total += share;
  }
  return total;
}

}  // namespace detail
}  // namespace triaxcal
