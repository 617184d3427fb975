// What the data cannot determine is reported as "not determined" with the reason (JSON: value null
// and "not_determined"; text: the words), never as a number; the design line never has a negative
// cohesion nor a friction angle above the best fit's.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include <cmath>

#include "synthetic_specimen.hpp"
#include "tolerances.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/parameters.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

/// A drained curve at constant s3' rising linearly to q_f at 2 % strain, then softening to 0.9 q_f.
Specimen drained_to_failure(const std::string& id, double s3, double qf) {
  std::vector<double> ea, q;
  for (int i = 0; i <= 40; ++i) {
    const double e = 0.001 * i;
    ea.push_back(e);
    q.push_back(e <= 0.02 ? qf * e / 0.02 : qf * (1.0 - 0.1 * (e - 0.02) / 0.02));
  }
  return make_specimen(id, ShearType::cd, s3, ea, q, {}, {});
}

/// CD tests whose failure points (s', t) are given: at constant s3', t = q/2 and s' = s3' + t.
TestSeries series_with_failure_points(const std::vector<double>& s, const std::vector<double>& t) {
  TestSeries series;
  for (std::size_t i = 0; i < s.size(); ++i)
    series.specimens.push_back(drained_to_failure("P" + std::to_string(i), s[i] - t[i], 2.0 * t[i]));
  return series;
}

/// Independent least squares and the lower one-sided 95 % bound of the mean at x (textbook formulas,
/// e.g. Montgomery & Runger, Applied Statistics and Probability for Engineers, ch. 11, from memory).
struct Reference {
  double a = 0, b = 0, se = 0, xm = 0, sxx = 0;
  int n = 0;
  Reference(const std::vector<double>& x, const std::vector<double>& y) {
    n = static_cast<int>(x.size());
    double sx = 0, sy = 0;
    for (int i = 0; i < n; ++i) sx += x[i], sy += y[i];
    xm = sx / n;
    const double ym = sy / n;
    double sxy = 0;
    for (int i = 0; i < n; ++i) sxx += (x[i] - xm) * (x[i] - xm), sxy += (x[i] - xm) * (y[i] - ym);
    b = sxy / sxx;
    a = ym - b * xm;
    double sse = 0;
    for (int i = 0; i < n; ++i) sse += (y[i] - a - b * x[i]) * (y[i] - a - b * x[i]);
    se = std::sqrt(sse / (n - 2));
  }
  /// t95 for n - 2 degrees of freedom from a standard table (value from memory).
  double lower(double x, double t95) const { return a + b * x - t95 * se * std::sqrt(1.0 / n + (x - xm) * (x - xm) / sxx); }
};

double design_t(const StrengthEnvelope& e, double s) {
  return e.design_cohesion * std::cos(degrees_to_radians(e.design_phi)) + s * std::sin(degrees_to_radians(e.design_phi));
}

nlohmann::json json_of(const Interpretation& r) { return nlohmann::json::parse(interpretation_json(r)); }

/// A CU stage ending in a steady state at (p', q) with void ratio e (the last 20 % of 15 % strain flat).
Specimen steady_cu(const std::string& id, double pf, double qf, double e) {
  std::vector<double> ea, q, du, ev;
  const double s3 = 1.2 * pf;
  for (int i = 0; i <= 30; ++i) {
    const double f = std::min(1.0, i / 15.0);
    const double p = s3 + f * (pf - s3), qq = qf * f;
    ea.push_back(0.005 * i);
    q.push_back(qq);
    du.push_back(s3 - (p - qq / 3.0));
    ev.push_back(e);
  }
  return make_specimen(id, ShearType::cu, s3, ea, q, {}, du, ev);
}

}  // namespace

TEST_CASE("a negative s'-t intercept gives a design line through the origin with c' = 0 at the lower bound at the largest s'",
          "[interpret][design_line]") {
  // Invented failure points on t = -8 + 0.6 s' with a few kPa of scatter: the regression's c' is negative.
  const std::vector<double> s = {60.0, 120.0, 200.0, 300.0, 420.0};
  const std::vector<double> t = {-8 + 36.0 + 2.0, -8 + 72.0 - 1.5, -8 + 120.0 + 1.0, -8 + 180.0 - 2.5, -8 + 252.0 + 1.0};
  const Interpretation r = interpret(series_with_failure_points(s, t), InterpretOptions{});
  const StrengthEnvelope& e = r.envelopes.front();
  REQUIRE(e.st.n == 5);
  REQUIRE(e.cohesion < 0.0);
  CHECK(e.design_form == DesignLineForm::origin_secant);
  CHECK(e.design_cohesion == 0.0);
  CHECK(e.design_phi <= e.phi);
  // tan alpha_d = t_L(s'max) / s'max, t_L by hand (t95 with 3 degrees of freedom = 2.353, standard table).
  const Reference ref(s, t);
  const double tan_d = ref.lower(420.0, 2.353) / 420.0;
  CHECK(std::sin(degrees_to_radians(e.design_phi)) == Approx(tan_d).epsilon(1e-9));
  // The rule is stated in the JSON, the text and the notes.
  const nlohmann::json j = json_of(r);
  const auto& dl = j["effective_strength"][0]["design_line"];
  CHECK(dl["form"] == "c' = 0, secant from the origin");
  CHECK(dl["cohesion"]["value"].get<double>() == 0.0);
  CHECK(dl["rule"].get<std::string>() == kDesignLineRule);
  CHECK(interpretation_text(r).find("design line: c' = 0, secant from the origin") != std::string::npos);
  CHECK(std::string(kDesignLineRule).find("c' = 0") != std::string::npos);
}

TEST_CASE("the design line is never steeper than the best fit when the points crowd at one end of the range",
          "[interpret][design_line]") {
  // One point at low s', four at high s' (invented): the lower bound is far below the line at the lone
  // point, so the chord of the bound would be steeper than the fit.
  const std::vector<double> s = {50.0, 300.0, 310.0, 320.0, 330.0};
  const std::vector<double> t = {40.0, 170.0, 178.0, 176.0, 186.0};
  const Interpretation r = interpret(series_with_failure_points(s, t), InterpretOptions{});
  const StrengthEnvelope& e = r.envelopes.front();
  const Reference ref(s, t);
  const double chord = (ref.lower(330.0, 2.353) - ref.lower(50.0, 2.353)) / 280.0;
  REQUIRE(chord > ref.b);  // the case the cap is for
  CHECK(e.design_phi <= e.phi + 1e-12);
  CHECK(e.design_cohesion >= 0.0);
  CHECK(e.design_form == DesignLineForm::lower_bound);
  // Under the lower bound at both ends, on it at one.
  for (double x : {50.0, 330.0}) CHECK(design_t(e, x) <= ref.lower(x, 2.353) + 1e-9);
  CHECK(std::min(ref.lower(50.0, 2.353) - design_t(e, 50.0), ref.lower(330.0, 2.353) - design_t(e, 330.0)) == Approx(0.0).margin(1e-9));
}

TEST_CASE("two failure points give an envelope but no design line, with the reason", "[interpret][design_line][not_determined]") {
  const Interpretation r = interpret(series_with_failure_points({100.0, 300.0}, {55.0, 160.0}), InterpretOptions{});
  const StrengthEnvelope& e = r.envelopes.front();
  CHECK(std::isfinite(e.phi));
  CHECK(std::isnan(e.design_phi));
  CHECK(e.design_reason == "2 failure points: the confidence bound needs 3 or more");
  CHECK(interpretation_text(r).find("design line not determined: 2 failure points: the confidence bound needs 3 or more") !=
        std::string::npos);
  const nlohmann::json j = json_of(r);
  CHECK(j["effective_strength"][0]["design_line"]["phi"]["value"].is_null());
  CHECK(j["effective_strength"][0]["design_line"]["phi"]["not_determined"] == "2 failure points: the confidence bound needs 3 or more");
}

TEST_CASE("a critical-state line with e rising with p' is not determined, never a negative lambda", "[interpret][critical_state][not_determined]") {
  TestSeries series;
  series.specimens.push_back(steady_cu("A", 80.0, 100.0, 0.80));
  series.specimens.push_back(steady_cu("B", 160.0, 200.0, 0.83));  // e rises with p': wrong sign
  series.specimens.push_back(steady_cu("C", 320.0, 400.0, 0.86));
  const Interpretation r = interpret(series, InterpretOptions{});
  REQUIRE(r.cs_count == 3);
  CHECK(r.critical_m == Approx(1.25).epsilon(kExact));  // M is still determined
  CHECK(std::isnan(r.csl.slope));
  CHECK(std::isnan(r.csl.intercept));
  const double lambda = -0.03 / std::log(2.0);  // e = Gamma - lambda ln p' with e up 0.03 per doubling of p'
  CHECK(r.csl_reason == "lambda = " + format_number(lambda) + " is not positive (e must fall as p' rises)");
  const nlohmann::json j = json_of(r);
  CHECK(j["critical_state"]["lambda"]["value"].is_null());
  CHECK(j["critical_state"]["Gamma"]["value"].is_null());
  CHECK(j["critical_state"]["lambda"]["not_determined"] == r.csl_reason);
  CHECK(interpretation_text(r).find("critical-state line e = Gamma - lambda ln p': not determined: lambda = ") != std::string::npos);
}

TEST_CASE("one steady state, or steady states at nearly one p', determine no critical-state line", "[interpret][critical_state][not_determined]") {
  {
    TestSeries series;
    series.specimens.push_back(steady_cu("A", 100.0, 125.0, 0.8));
    const Interpretation r = interpret(series, InterpretOptions{});
    CHECK(r.csl_reason == "2 or more points with positive values are needed, found 1");
    CHECK(std::isfinite(r.critical_m));
  }
  {
    TestSeries series;
    series.specimens.push_back(steady_cu("A", 100.0, 125.0, 0.80));
    series.specimens.push_back(steady_cu("B", 110.0, 137.5, 0.79));
    const Interpretation r = interpret(series, InterpretOptions{});
    CHECK(r.csl_reason == "the values of p' at the steady end states (with a void ratio) span a factor 1.1, below 1.25: the slope is "
                          "not determined");
  }
}

TEST_CASE("no steady end state leaves M and phi_cs not determined, with the reason", "[interpret][critical_state][not_determined]") {
  TestSeries series;
  series.specimens.push_back(drained_to_failure("A", 100.0, 250.0));  // ends at 4 % strain: no steady state
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(std::isnan(r.critical_m));
  CHECK(std::isnan(r.phi_cs));
  CHECK(r.critical_m_reason == "no compression stage ends in a steady state");
  CHECK(json_of(r)["critical_state"]["phi_cs"]["not_determined"] == "no compression stage ends in a steady state");
  CHECK(interpretation_text(r).find("M and phi_cs not determined: no compression stage ends in a steady state") != std::string::npos);
}

TEST_CASE("stiffness laws that the data cannot determine say why: too few points, one confining stress, falling stiffness, "
          "non-positive s3'",
          "[interpret][stiffness][not_determined]") {
  auto linear_cd = [](const std::string& id, double s3, double e50) {
    std::vector<double> ea, q;
    for (int i = 0; i <= 40; ++i) {
      ea.push_back(0.0005 * i);
      q.push_back(std::min(e50 * 0.0005 * i, 2.0 * s3 + 10.0));
    }
    return make_specimen(id, ShearType::cd, s3, ea, q, {}, {});
  };
  auto law_of = [](std::vector<Specimen> specimens) {
    TestSeries series;
    series.specimens = std::move(specimens);
    return interpret(series, InterpretOptions{});
  };
  {
    const Interpretation r = law_of({linear_cd("A", 100.0, 30000.0)});
    CHECK(r.secant_law.reason == "2 or more points with positive values are needed, found 1");
    CHECK(std::isnan(r.secant_law.reference));
    CHECK(json_of(r)["stiffness"]["secant_50"]["exponent"]["not_determined"] == r.secant_law.reason);
    CHECK(interpretation_text(r).find("secant (50 %) not determined: 2 or more points with positive values are needed, found 1") !=
          std::string::npos);
  }
  {
    const Interpretation r = law_of({linear_cd("A", 100.0, 30000.0), linear_cd("B", 100.0, 36000.0)});
    CHECK(r.secant_law.reason == "the values of s3' span a factor 1, below 1.25: the slope is not determined");
    CHECK(std::isnan(r.secant_law.exponent));
  }
  {
    const Interpretation r = law_of({linear_cd("A", 100.0, 30000.0), linear_cd("B", 400.0, 15000.0)});
    CHECK(r.secant_law.reason == "the exponent m = -0.5 is negative (the stiffness falls with s3')");
    CHECK(std::isnan(r.secant_law.exponent));
  }
  {
    // An unconfined test (s3' = 0) has no logarithm: it is left out, and one point remains.
    const Interpretation r = law_of({linear_cd("A", 0.0, 30000.0), linear_cd("B", 100.0, 36000.0)});
    CHECK(r.secant_law.n == 1);
    CHECK(r.secant_law.reason == "2 or more points with positive values are needed, found 1");
  }
}

TEST_CASE("consolidation lambda and kappa of the wrong sign are not determined, with the reason", "[interpret][compressibility][not_determined]") {
  Specimen sp = make_specimen("K", ShearType::cd, 100.0, {0.0, 0.01, 0.02, 0.03, 0.04, 0.05}, {0, 50, 100, 150, 200, 220}, {}, {});
  // Consolidation rows (stage 1): p' 50, 100, 200 with e rising (wrong sign for lambda), then unloading
  // to 100 with e falling (wrong sign for kappa). Invented values.
  ReducedCurves c;
  const double ps[] = {50.0, 100.0, 200.0, 100.0};
  const double es[] = {0.90, 0.92, 0.94, 0.93};
  for (int i = 0; i < 4; ++i) {
    c.stage.push_back(1);
    c.line.push_back(2 + i);
    c.axial_strain.push_back(0.0);
    c.volumetric_strain.push_back(0.0);
    c.deviator_stress.push_back(0.0);
    c.excess_pore_pressure.push_back(0.0);
    c.axial_stress.push_back(ps[i]);
    c.radial_stress.push_back(ps[i]);
    c.mean_stress.push_back(ps[i]);
    c.cell_pressure.push_back(ps[i] + 300.0);
    c.void_ratio.push_back(es[i]);
  }
  const ReducedCurves& shear = sp.curves;
  for (std::size_t i = 0; i < shear.size(); ++i) {
    c.stage.push_back(shear.stage[i]);
    c.line.push_back(shear.line[i] + 4);
    c.axial_strain.push_back(shear.axial_strain[i]);
    c.volumetric_strain.push_back(shear.volumetric_strain[i]);
    c.deviator_stress.push_back(shear.deviator_stress[i]);
    c.excess_pore_pressure.push_back(shear.excess_pore_pressure[i]);
    c.axial_stress.push_back(shear.axial_stress[i]);
    c.radial_stress.push_back(shear.radial_stress[i]);
    c.mean_stress.push_back(shear.mean_stress[i]);
    c.cell_pressure.push_back(shear.cell_pressure[i]);
    c.void_ratio.push_back(shear.void_ratio[i]);
  }
  sp.curves = c;
  sp.data_zero_stage = 1;
  TestSeries series;
  series.specimens.push_back(sp);
  const Interpretation r = interpret(series, InterpretOptions{});
  REQUIRE(r.compressibility.size() == 1);
  const auto& cm = r.compressibility.front();
  CHECK(std::isnan(cm.lambda));
  CHECK(std::isnan(cm.compression_index));
  CHECK(cm.lambda_reason == "lambda = " + format_number(-0.02 / std::log(2.0)) + " is not positive (e must fall as p' rises)");
  CHECK(std::isnan(cm.kappa));
  CHECK(cm.kappa_reason == "kappa = " + format_number(-0.01 / std::log(2.0)) + " is not positive (e must fall as p' rises)");
  const nlohmann::json j = json_of(r);
  CHECK(j["compressibility"][0]["lambda"]["value"].is_null());
  CHECK(j["compressibility"][0]["lambda"]["not_determined"] == cm.lambda_reason);
  CHECK(interpretation_text(r).find("consolidation K: lambda not determined, kappa not determined") != std::string::npos);
}

TEST_CASE("failure points with a falling s'-t line give no friction angle, with the reason", "[interpret][strength][not_determined]") {
  const Interpretation r = interpret(series_with_failure_points({100.0, 200.0, 300.0}, {80.0, 70.0, 60.0}), InterpretOptions{});
  const StrengthEnvelope& e = r.envelopes.front();
  CHECK(std::isnan(e.phi));
  CHECK(std::isnan(e.design_phi));
  CHECK(e.note == "the s'-t slope tan alpha = -0.1 is outside (0, 1): no friction angle");
  CHECK(json_of(r)["effective_strength"][0]["phi"]["not_determined"] == e.note);
  CHECK(interpretation_text(r).find("phi' and c' not determined: the s'-t slope tan alpha = -0.1 is outside (0, 1)") != std::string::npos);
}
