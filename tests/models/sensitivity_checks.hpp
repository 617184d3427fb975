#pragma once
// Checks of a model's derivative version (Model::with_derivatives, sensitivity.hpp) against its
// double integrate: equal values, and derivatives equal to central differences of the double
// integrate along every parameter, every stress component and read internal variable of the input
// state, and every strain-increment component.

#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <string>
#include <vector>

#include "triaxcal/models/registry.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal::test {

/// One increment to differentiate.
struct DerivativeCase {
  std::string model;             ///< registry name
  ParameterValues parameters;    ///< in ModelInfo order
  MaterialState in;
  Vec6 de = Vec6::Zero();
  std::vector<int> internal_read;  ///< internal variables of `in` that integrate reads
  std::vector<int> internal_out;   ///< internal variables of `out` that carry derivatives
  double tangent_scale = 0.0;      ///< kPa; 0: the tangent's largest entry (give a modulus where it vanishes, at an apex)
};

inline std::unique_ptr<Model> create_model(const std::string& name, const ParameterValues& values) {
  return find_model(name).create(values, "test");
}

inline DualState dual_of(const MaterialState& s) {
  DualState d;
  for (int i = 0; i < 6; ++i) d.stress[i] = Dual(s.stress[i]);
  for (std::size_t j = 0; j < s.internal.size(); ++j) d.internal[j] = Dual(s.internal[j]);
  return d;
}

inline DualVec6 dual_of(const Vec6& v) {
  DualVec6 d;
  for (int i = 0; i < 6; ++i) d[i] = Dual(v[i]);
  return d;
}

/// Largest relative difference between the dual integrate's values (zero seeds) and the double
/// integrate's: stress, the internal variables `internal_out`, tangent, each relative to its largest entry.
inline double value_difference(const DerivativeCase& c) {
  const auto model = create_model(c.model, c.parameters);
  const std::vector<double> seeds(c.parameters.size() * kDualLanes, 0.0);
  const auto dual = model->with_derivatives(seeds);
  REQUIRE(dual);
  MaterialState out;
  Mat6 tangent;
  REQUIRE(model->integrate(c.in, c.de, out, tangent).status == Status::ok);
  DualState dout;
  Mat6 dtangent;
  REQUIRE(dual->integrate(dual_of(c.in), dual_of(c.de), dout, dtangent).status == Status::ok);
  const MaterialState v = value_of(dout);
  double worst = (v.stress - out.stress).cwiseAbs().maxCoeff() / std::max(out.stress.cwiseAbs().maxCoeff(), 1e-300);
  for (int j : c.internal_out)
    worst = std::max(worst, std::abs(v.internal[j] - out.internal[j]) / std::max(std::abs(out.internal[j]), 1e-300));
  const double tangent_scale = c.tangent_scale > 0.0 ? c.tangent_scale : tangent.cwiseAbs().maxCoeff();
  worst = std::max(worst, (dtangent - tangent).cwiseAbs().maxCoeff() / tangent_scale);
  return worst;
}

/// Largest difference between the dual derivatives and central differences of the double integrate,
/// err = |analytic - numeric| * input scale / max(output scale, |numeric| * input scale), over every
/// input direction and output (relative to the derivative itself where an output is very sensitive,
/// as the bulk modulus to a Poisson's ratio near 0.5, whose central difference errs by h^2 f'''/6).
/// Steps 1e-6 of each input's scale (a parameter's value, the largest stress, the largest strain increment).
struct DerivativeErrors {
  double parameters = 0.0;  ///< d out / d parameters
  double state = 0.0;       ///< d out / d (stress and read internal variables of in)
  double strain = 0.0;      ///< d out / d strain increment
  double worst() const { return std::max({parameters, state, strain}); }
};

namespace detail {

enum class Input { parameter, stress, internal, strain };
struct Direction {
  Input kind;
  int index;
};

inline double output_scale_stress(const MaterialState& out) { return std::max(out.stress.cwiseAbs().maxCoeff(), 1.0); }
inline double output_scale_internal(const MaterialState& out, int j) { return std::max(std::abs(out.internal[j]), 1e-6); }

}  // namespace detail

inline DerivativeErrors derivative_errors(const DerivativeCase& c) {
  using detail::Direction;
  using detail::Input;
  const auto model = create_model(c.model, c.parameters);
  MaterialState out;
  Mat6 unused;
  REQUIRE(model->integrate(c.in, c.de, out, unused).status == Status::ok);

  const double stress_scale = std::max(c.in.stress.cwiseAbs().maxCoeff(), 1.0);
  const double strain_scale = std::max(c.de.cwiseAbs().maxCoeff(), 1e-4);
  auto input_scale = [&](const Direction& d) {
    switch (d.kind) {
      case Input::parameter: {
        const double p = std::abs(c.parameters[static_cast<std::size_t>(d.index)]);
        return p > 0.0 ? p : 1.0;
      }
      case Input::stress: return stress_scale;
      case Input::internal: return std::max(std::abs(c.in.internal[static_cast<std::size_t>(d.index)]), 1e-3);
      case Input::strain: return strain_scale;
    }
    return 1.0;
  };
  // The double integrate with one input moved by `h`.
  auto moved = [&](const Direction& d, double h) {
    MaterialState in = c.in;
    Vec6 de = c.de;
    MaterialState result;
    Mat6 t;
    if (d.kind == Input::parameter) {
      ParameterValues p = c.parameters;
      p[static_cast<std::size_t>(d.index)] += h;
      const auto m = create_model(c.model, p);
      REQUIRE(m->integrate(in, de, result, t).status == Status::ok);
      return result;
    }
    if (d.kind == Input::stress) in.stress[d.index] += h;
    if (d.kind == Input::internal) in.internal[static_cast<std::size_t>(d.index)] += h;
    if (d.kind == Input::strain) de[d.index] += h;
    REQUIRE(model->integrate(in, de, result, t).status == Status::ok);
    return result;
  };

  std::vector<Direction> directions;
  for (std::size_t i = 0; i < c.parameters.size(); ++i) directions.push_back({Input::parameter, static_cast<int>(i)});
  for (int i = 0; i < 6; ++i) directions.push_back({Input::stress, i});
  for (int j : c.internal_read) directions.push_back({Input::internal, j});
  for (int i = 0; i < 6; ++i) directions.push_back({Input::strain, i});

  DerivativeErrors errors;
  // Passes of kDualLanes directions of one kind (parameters through the seeds, the rest through `in`
  // and the strain increment).
  for (std::size_t first = 0; first < directions.size();) {
    const bool parameters = directions[first].kind == Input::parameter;
    std::size_t last = first;
    while (last < directions.size() && last - first < static_cast<std::size_t>(kDualLanes) &&
           (directions[last].kind == Input::parameter) == parameters)
      ++last;
    std::vector<double> seeds(c.parameters.size() * kDualLanes, 0.0);
    DualState din = dual_of(c.in);
    DualVec6 dde = dual_of(c.de);
    for (std::size_t k = first; k < last; ++k) {
      const int lane = static_cast<int>(k - first);
      const Direction& d = directions[k];
      switch (d.kind) {
        case Input::parameter: seeds[static_cast<std::size_t>(d.index) * kDualLanes + lane] = 1.0; break;
        case Input::stress: din.stress[d.index].v[lane] = 1.0; break;
        case Input::internal: din.internal[static_cast<std::size_t>(d.index)].v[lane] = 1.0; break;
        case Input::strain: dde[d.index].v[lane] = 1.0; break;
      }
    }
    const auto dual = model->with_derivatives(seeds);
    DualState dout;
    Mat6 t;
    REQUIRE(dual->integrate(din, dde, dout, t).status == Status::ok);
    for (std::size_t k = first; k < last; ++k) {
      const int lane = static_cast<int>(k - first);
      const Direction& d = directions[k];
      const double scale = input_scale(d);
      const double h = 1e-6 * scale;
      const MaterialState plus = moved(d, h), minus = moved(d, -h);
      double worst = 0.0;
      for (int i = 0; i < 6; ++i) {
        const double numeric = (plus.stress[i] - minus.stress[i]) / (2.0 * h);
        const double e = std::abs(dout.stress[i].v[lane] - numeric) * scale /
                         std::max(detail::output_scale_stress(out), std::abs(numeric) * scale);
        INFO("input kind " << static_cast<int>(d.kind) << " index " << d.index << ", stress " << i << ": dual "
                           << dout.stress[i].v[lane] << ", central " << numeric);
        CHECK(e < 1e-6);
        worst = std::max(worst, e);
      }
      for (int j : c.internal_out) {
        const auto jj = static_cast<std::size_t>(j);
        const double numeric = (plus.internal[jj] - minus.internal[jj]) / (2.0 * h);
        const double e = std::abs(dout.internal[jj].v[lane] - numeric) * scale /
                         std::max(detail::output_scale_internal(out, j), std::abs(numeric) * scale);
        INFO("input kind " << static_cast<int>(d.kind) << " index " << d.index << ", internal " << j << ": dual "
                           << dout.internal[jj].v[lane] << ", central " << numeric);
        CHECK(e < 1e-6);
        worst = std::max(worst, e);
      }
      double& slot = d.kind == Input::parameter ? errors.parameters
                     : d.kind == Input::strain  ? errors.strain
                                                : errors.state;
      slot = std::max(slot, worst);
    }
    first = last;
  }
  return errors;
}

/// TRIAXCAL_PRINT_DERIVATIVE_ERRORS=1 prints each state's largest errors (for the notes; never asserted).
inline void print_errors(const char* what, const DerivativeErrors& e, double values) {
  if (!std::getenv("TRIAXCAL_PRINT_DERIVATIVE_ERRORS")) return;
  std::printf("%-48s values %.1e  parameters %.1e  state %.1e  strain %.1e\n", what, values, e.parameters, e.state,
              e.strain);
}

/// The number of active surfaces the double integrate of `c` reports in internal variable `index`
/// (Mohr-Coulomb and Tresca keep it in internal[1]).
inline int active_surfaces(const DerivativeCase& c, int index = 1) {
  const auto m = create_model(c.model, c.parameters);
  MaterialState out;
  Mat6 t;
  REQUIRE(m->integrate(c.in, c.de, out, t).status == Status::ok);
  return static_cast<int>(out.internal[static_cast<std::size_t>(index)]);
}

/// The case returns on `active` surfaces, its values equal the double integrate's and its
/// derivatives central differences (relative 1e-6).
inline void check_case(const char* what, const DerivativeCase& c, int active) {
  CHECK(active_surfaces(c) == active);
  const double values = value_difference(c);
  CHECK(values < 1e-12);
  const DerivativeErrors e = derivative_errors(c);
  CHECK(e.worst() < 1e-6);
  print_errors(what, e, values);
}

/// The derivative version of `m` (every seed 1) integrates each case 100 times, every time with
/// status ok, and allocates nothing (where `counting` says the test counts allocations; `allocations`
/// reads the counter of tests/support/allocation_counter.hpp).
template <class Counter>
void check_dual_integrate_allocates_nothing(const Model& m, const std::vector<DerivativeCase>& cases,
                                            const Counter& allocations, bool counting) {
  const std::vector<double> seeds(m.info().parameters.size() * kDualLanes, 1.0);
  const auto dual = m.with_derivatives(seeds);
  REQUIRE(dual != nullptr);
  std::vector<DualState> in;
  std::vector<DualVec6> de;
  for (const auto& c : cases) {
    in.push_back(dual_of(c.in));
    de.push_back(dual_of(c.de));
  }
  DualState out;
  Mat6 t;
  const long before = allocations.load();
  int ok = 0;
  for (int i = 0; i < 100; ++i)
    for (std::size_t k = 0; k < cases.size(); ++k) ok += dual->integrate(in[k], de[k], out, t).status == Status::ok;
  CHECK(ok == 100 * static_cast<int>(cases.size()));
  if (counting) CHECK(allocations.load() == before);
}

}  // namespace triaxcal::test
