#pragma once
// Monte Carlo coverage of the calibration's 95 % intervals: noise-free "measured" curves from a run
// much finer than the fit's, many noisy copies of them (noise on every measured column, the axial
// strain included), one local fit a copy, and the tally of how often each interval holds the truth.
// The "true" parameters of the tests that use this are invented demo values, not a reference.

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <sstream>
#include <stdexcept>
#include <string>
#include <thread>
#include <vector>

#include "synthetic.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/driver.hpp"

namespace triaxcal::test {

/// A test as the "lab" would have measured it without noise: values of each quantity in `ys` at
/// the engineering axial strains `strains` of the protocol's last stage (strain-controlled), strains
/// relative to the specimen at that stage's start (the lab convention).
struct CleanTest {
  std::string id;
  TestProtocol protocol;
  std::vector<Quantity> ys;
  std::vector<double> strains;
  std::vector<std::vector<double>> values;  ///< values[y][point]
};

/// `count` equally spaced engineering strains from to/count to `to` (the zero row is left out: a lab
/// zeroes its strains there, so it carries no information).
inline std::vector<double> equally_spaced(int count, double to) {
  std::vector<double> x;
  for (int j = 1; j <= count; ++j) x.push_back(to * j / count);
  return x;
}

/// The clean test from a reference run that shares no code path with the fit's error-controlled
/// simulations: fixed increments, `refine` of them per measured interval (the fit takes at least
/// one substep per interval, so this is `refine` times finer; 100 keeps Modified Cam-Clay's
/// first-order error below 0.1 kPa on these tests, measured against 800 per interval); the
/// records at the measured strains are read off.
inline CleanTest reference_test(const std::string& id, const TestProtocol& protocol, const Model& model,
                                const std::vector<Quantity>& ys, const std::vector<double>& strains,
                                const DriverOptions& fit_driver, int refine = 100) {
  CleanTest c{id, protocol, ys, strains, {}};
  TestProtocol fine = protocol;
  Stage& shear = fine.stages.back();
  std::vector<double> fractions;
  double previous = 0.0;
  for (double x : strains) {
    const double f = stage_fraction_at(shear, x);
    for (int k = 1; k <= refine; ++k) fractions.push_back(previous + (f - previous) * k / refine);
    previous = f;
  }
  if (std::abs(fractions.back() - 1.0) > 1e-12) throw std::runtime_error(id + ": the last strain must end the stage");
  fractions.back() = 1.0;
  shear.record_at = fractions;
  DriverOptions reference = fit_driver;
  reference.fixed_steps = true;
  const SimulationResult r = simulate(reference, model, fine);
  if (!r.ok()) throw std::runtime_error("reference run of " + id + " failed: " + r.message);
  const StageSummary& st = r.stages.back();
  const StepRecord& base = r.steps[static_cast<std::size_t>(st.first - 1)];
  c.values.assign(ys.size(), {});
  for (std::size_t j = 0; j < strains.size(); ++j) {
    const StepRecord& rec = r.steps[static_cast<std::size_t>(st.first) + (j + 1) * static_cast<std::size_t>(refine) - 1];
    if (std::abs(rec.stage_axial_strain - strains[j]) > 1e-9 * std::max(1.0, std::abs(strains[j])))
      throw std::runtime_error(id + ": record " + std::to_string(j) + " is not at its measured strain");
    for (std::size_t y = 0; y < ys.size(); ++y) {
      double v = value_of(rec, ys[y]);
      // Strain columns as the lab reports them: engineering, relative to the stage start.
      if (ys[y] == Quantity::volumetric_strain) v = rec.stage_volumetric_strain;
      else if (strain_quantity(ys[y])) v = engineering_strain(value_of(rec, ys[y]) - value_of(base, ys[y]));
      c.values[y].push_back(v);
    }
  }
  return c;
}

/// A measured copy of `clean`: every row gets its own Gaussian error on the axial strain (shared by
/// the curves, as they share the column) and every y column its own, standard deviations
/// `stress_sd` (kPa) for stresses and `strain_sd` for strains.
inline CalibrationTest noisy_copy(const CleanTest& clean, Noise& noise, double stress_sd, double strain_sd) {
  CalibrationTest t;
  t.id = clean.id;
  t.protocol = clean.protocol;
  const int stage = static_cast<int>(clean.protocol.stages.size()) - 1;
  std::vector<double> xs;
  for (double x : clean.strains) xs.push_back(x + strain_sd * noise.normal());
  for (std::size_t y = 0; y < clean.ys.size(); ++y) {
    MeasuredCurve m;
    m.x = Quantity::axial_strain;
    m.y = clean.ys[y];
    m.strain_zero_stage = stage;
    m.stage = stage;
    m.xs = xs;
    const double sd = strain_quantity(clean.ys[y]) ? strain_sd : stress_sd;
    for (double v : clean.values[y]) m.ys.push_back(v + sd * noise.normal());
    t.curves.push_back(std::move(m));
  }
  return t;
}

/// What one fit of one copy reported for one parameter.
struct Estimate {
  double value = kNotGiven, standard_error = kNotGiven, low = kNotGiven, high = kNotGiven;
};

/// The tally of one parameter over the copies.
struct ParameterCoverage {
  std::string name;
  double truth = 0.0;
  std::vector<Estimate> estimates;

  int copies() const { return static_cast<int>(estimates.size()); }
  int hits() const {
    int h = 0;
    for (const Estimate& e : estimates) h += (e.low <= truth && truth <= e.high) ? 1 : 0;
    return h;
  }
  double coverage() const { return copies() > 0 ? static_cast<double>(hits()) / copies() : 0.0; }
  double mean() const {
    double m = 0.0;
    for (const Estimate& e : estimates) m += e.value;
    return m / std::max(1, copies());
  }
  /// Standard deviation of the estimates about their mean.
  double spread() const {
    const double m = mean();
    double s = 0.0;
    for (const Estimate& e : estimates) s += (e.value - m) * (e.value - m);
    return std::sqrt(s / std::max(1, copies() - 1));
  }
  /// Root mean square of the reported standard errors.
  double mean_standard_error() const {
    double s = 0.0;
    for (const Estimate& e : estimates) s += e.standard_error * e.standard_error;
    return std::sqrt(s / std::max(1, copies()));
  }
  double spread_ratio() const { return spread() / mean_standard_error(); }
  /// Mean estimate minus the truth, in mean standard errors.
  double bias_ratio() const { return (mean() - truth) / mean_standard_error(); }
};

/// Fits `copies` noisy problems (make_problem(copy) builds the one of copy `copy`) with `options`
/// on `workers` threads, one calibration a thread (options.threads should be 1), and tallies the
/// parameters in `truth`. The result does not depend on `workers`: each copy has its own seed.
template <typename MakeProblem>
std::vector<ParameterCoverage> run_coverage(int copies, const MakeProblem& make_problem, const CalibrationOptions& options,
                                            const std::vector<std::pair<std::string, double>>& truth, int workers,
                                            std::vector<std::string>& failures) {
  std::vector<std::vector<Estimate>> found(static_cast<std::size_t>(copies));
  std::vector<std::string> why(static_cast<std::size_t>(copies));
  auto work = [&](int w) {
    for (int k = w; k < copies; k += workers) {
      const CalibrationSummary s = calibrate(options, make_problem(k));
      if (std::getenv("TRIAXCAL_COVERAGE_VERBOSE") != nullptr) {
        std::ostringstream line;
        line << "copy " << k << ": " << s.evaluations << " evaluations, " << s.wall_time << " s, " << s.message << "\n";
        std::fputs(line.str().c_str(), stderr);
      }
      if (!s.usable()) {
        why[static_cast<std::size_t>(k)] = "copy " + std::to_string(k) + ": " + s.message;
        continue;
      }
      for (const auto& [name, value] : truth) {
        const FittedParameter& p = parameter_named(s, name);
        found[static_cast<std::size_t>(k)].push_back({p.value, p.standard_error, p.interval_low, p.interval_high});
      }
    }
  };
  std::vector<std::thread> pool;
  for (int w = 1; w < workers; ++w) pool.emplace_back(work, w);
  work(0);
  for (std::thread& t : pool) t.join();
  std::vector<ParameterCoverage> tally;
  for (const auto& [name, value] : truth) tally.push_back({name, value, {}});
  for (int k = 0; k < copies; ++k) {
    if (!why[static_cast<std::size_t>(k)].empty()) failures.push_back(why[static_cast<std::size_t>(k)]);
    for (std::size_t i = 0; i < found[static_cast<std::size_t>(k)].size(); ++i)
      tally[i].estimates.push_back(found[static_cast<std::size_t>(k)][i]);
  }
  return tally;
}

/// One line a parameter: coverage, spread / standard error, bias / standard error.
inline std::string coverage_table(const std::vector<ParameterCoverage>& tally) {
  std::ostringstream s;
  s << "parameter: truth, copies, coverage of the 95 % interval, spread / mean SE, bias / mean SE\n";
  for (const ParameterCoverage& c : tally) {
    char b[200];
    std::snprintf(b, sizeof b, "%-22s %-10g %3d  %5.1f %%  %5.2f  %+5.2f\n", c.name.c_str(), c.truth, c.copies(),
                  100.0 * c.coverage(), c.spread_ratio(), c.bias_ratio());
    s << b;
  }
  return s.str();
}

/// Model parameters in ModelInfo order: the defaults, with `given` by name.
inline ParameterValues values_by_name(const ModelInfo& info, const std::map<std::string, double>& given) {
  ParameterValues v;
  for (const ParameterInfo& p : info.parameters) {
    const auto it = given.find(p.name);
    v.push_back(it != given.end() ? it->second : p.default_value);
  }
  return v;
}

}  // namespace triaxcal::test
