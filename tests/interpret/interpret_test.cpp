// Classical interpretation on curves built from known parameters.
#include <catch2/catch.hpp>

#include <cmath>

#include "cli_run.hpp"
#include "tolerances.hpp"
#include "triaxcal/conventions.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"

#include "synthetic_specimen.hpp"

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

}  // namespace

TEST_CASE("s'-t regression on Mohr-Coulomb failure points recovers c' and phi' exactly, and the p'-q route agrees", "[interpret][strength]") {
  // Mohr-Coulomb in principal stresses (common practice): s1' = s3' K_p + 2 c' sqrt(K_p), K_p = (1 + sin phi')/(1 - sin phi').
  const double phi = 31.0, c = 12.0;
  const double sphi = std::sin(degrees_to_radians(phi));
  const double kp = (1.0 + sphi) / (1.0 - sphi);
  TestSeries series;
  for (double s3 : {50.0, 100.0, 200.0, 400.0})
    series.specimens.push_back(drained_to_failure("CD-" + std::to_string(static_cast<int>(s3)), s3, s3 * kp + 2.0 * c * std::sqrt(kp) - s3));
  const Interpretation r = interpret(series, InterpretOptions{});
  const StrengthEnvelope& env = r.envelopes.front();
  CHECK(env.st.n == 4);
  CHECK(env.phi == Approx(phi).epsilon(kExact));
  CHECK(env.cohesion == Approx(c).epsilon(kExact));
  CHECK(env.st.r2 == Approx(1.0).epsilon(kExact));
  CHECK(env.phi_pq == Approx(phi).epsilon(kExact));
  CHECK(env.cohesion_pq == Approx(c).epsilon(kExact));
  // Exact points: zero standard errors, and the design line falls on the fit.
  CHECK(env.se_phi == Approx(0.0).margin(1e-9));
  CHECK(env.design_phi == Approx(phi).epsilon(kExact));
  CHECK(env.design_cohesion == Approx(c).epsilon(kExact));
}

TEST_CASE("the design line lies below the mean s'-t line over the range of the points", "[interpret][strength]") {
  TestSeries series;
  const double offsets[] = {4.0, -3.0, 5.0, -6.0, 2.0};
  int k = 0;
  for (double s3 : {50.0, 100.0, 150.0, 200.0, 300.0}) {
    const double qf = 2.0 * s3 + offsets[k++];  // scatter of a few kPa (invented)
    series.specimens.push_back(drained_to_failure("T" + std::to_string(k), s3, qf));
  }
  const Interpretation r = interpret(series, InterpretOptions{});
  const StrengthEnvelope& env = r.envelopes.front();
  REQUIRE(env.st.n == 5);
  for (double s : {env.st.x_min, env.st.x_mean, env.st.x_max}) {
    const double mean = env.cohesion * std::cos(degrees_to_radians(env.phi)) + s * std::sin(degrees_to_radians(env.phi));
    const double design = env.design_cohesion * std::cos(degrees_to_radians(env.design_phi)) + s * std::sin(degrees_to_radians(env.design_phi));
    CHECK(design < mean);
  }
  CHECK(env.se_phi > 0.0);
  CHECK(env.se_cohesion > 0.0);
}

TEST_CASE("for CD tests at constant s3' the max-deviator and max-stress-ratio criteria pick the same step", "[interpret][failure]") {
  // At constant s3', s1'/s3' = 1 + q/s3' grows with q (common practice, no source).
  TestSeries series;
  series.specimens.push_back(drained_to_failure("A", 80.0, 190.0));
  std::vector<double> ea, q;
  for (int i = 0; i <= 60; ++i) {
    ea.push_back(0.002 * i);
    q.push_back(300.0 * std::sin(std::min(1.0, 0.002 * i / 0.05) * 1.3) + 0.01 * i);
  }
  series.specimens.push_back(make_specimen("B", ShearType::cd, 150.0, ea, q, {}, {}));
  const Interpretation r = interpret(series, InterpretOptions{});
  REQUIRE(r.stages.size() == 2);
  for (const StageInterpretation& s : r.stages) {
    CHECK(s.by_max_deviator.index >= 0);
    CHECK(s.by_max_deviator.index == s.by_max_stress_ratio.index);
  }
}

TEST_CASE("the dilation angle is recovered exactly from a noise-free Mohr-Coulomb drained curve", "[interpret][dilatancy]") {
  // Closed form (hand calculation, synthetic_specimen.hpp): after yield d eps_v/d eps_a = -2 sin psi/(1 - sin psi)
  // in natural strain increments; the curve is handed over as engineering strains, as a lab reports it.
  const double psi = 12.0;
  const double sp = std::sin(degrees_to_radians(psi));
  const double rate = -2.0 * sp / (1.0 - sp);
  TestSeries series;
  series.specimens.push_back(drained_specimen("D", 100.0, mohr_coulomb_drained(100.0, 30000.0, 0.3, 33.0, 0.0, psi, 0.1, 0.002), nullptr));
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.stages[0].max_dilation_rate == Approx(rate).epsilon(kExact));
  CHECK(r.stages[0].dilation_angle == Approx(psi).epsilon(kExact));
  CHECK(r.stages[0].dilation_reason.empty());
  // Noise-free: the local window is the fewest points (5, four spacings of 0.002 in natural axial strain).
  CHECK(r.stages[0].dilation_window.width == Approx(0.008).epsilon(1e-6));
}

TEST_CASE("Rowe's stress-dilatancy R = K_cv D on synthetic points returns phi_cv", "[interpret][dilatancy]") {
  // Rowe (1962), Proc. R. Soc. A 269: s1'/s3' = K D with D = 1 - d eps_v/d eps_1, K = tan^2(45 + phi_cv/2);
  // rates in natural strain increments, the curve handed over as engineering strains.
  const double phi_cv = 33.0, s3 = 100.0;
  const double kcv = std::pow(std::tan(degrees_to_radians(45.0 + phi_cv / 2.0)), 2);
  DrainedCurve d;
  for (int i = 0; i <= 80; ++i) {
    const double x = 0.0025 * i;
    const double rate = -0.6 * std::exp(-x / 0.05);  // dilation rate decaying to zero
    d.x.push_back(x);
    d.y.push_back(-0.6 * 0.05 * (1.0 - std::exp(-x / 0.05)));  // its integral
    d.q.push_back(i == 0 ? 0.0 : s3 * (kcv * (1.0 - rate) - 1.0));
  }
  TestSeries series;
  series.specimens.push_back(drained_specimen("R", s3, d, nullptr));
  const Interpretation r = interpret(series, InterpretOptions{});
  // A least-squares slope of an exponential over a window is not exact: within 0.3 deg.
  CHECK(r.stages[0].phi_cv_rowe == Approx(phi_cv).margin(0.3));
}

TEST_CASE("UU undrained strength is half the largest deviator stress, with mean, range and count", "[interpret][undrained]") {
  // c_u = (s1 - s3)_max / 2 (common practice, no source).
  TestSeries series;
  const double cu[] = {30.0, 36.0, 33.0};
  for (int k = 0; k < 3; ++k) {
    std::vector<double> ea, q;
    for (int i = 0; i <= 30; ++i) {
      ea.push_back(0.005 * i);
      q.push_back(2.0 * cu[k] * std::min(1.0, 0.005 * i / 0.05) - (i > 20 ? 0.5 * (i - 20) : 0.0));
    }
    Specimen s = make_specimen("UU" + std::to_string(k), ShearType::uu, 100.0 * (k + 1), ea, q, {}, {});
    s.stages.erase(s.stages.begin(), s.stages.begin() + 2);
    for (int& st : s.curves.stage) st = 0;
    series.specimens.push_back(s);
  }
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.uu_count == 3);
  CHECK(r.cu_mean == Approx(33.0).epsilon(kExact));
  CHECK(r.cu_min == Approx(30.0).epsilon(kExact));
  CHECK(r.cu_max == Approx(36.0).epsilon(kExact));
}

TEST_CASE("E_50 across tests recovers E_ref and m of E = E_ref (s3'/p_ref)^m", "[interpret][stiffness]") {
  const double eref = 40000.0, m = 0.55;
  TestSeries series;
  for (double s3 : {50.0, 100.0, 200.0, 400.0}) {
    const double e50 = eref * std::pow(s3 / 100.0, m);
    std::vector<double> ea, q;
    for (int i = 0; i <= 40; ++i) {
      const double e = 0.0005 * i;
      ea.push_back(e);
      q.push_back(std::min(e50 * e, 2.0 * s3));  // linear to the peak 2 s3', then flat
    }
    series.specimens.push_back(make_specimen("E" + std::to_string(static_cast<int>(s3)), ShearType::cd, s3, ea, q, {}, {}));
  }
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.secant_law.n == 4);
  CHECK(r.secant_law.reference == Approx(eref).epsilon(1e-9));
  CHECK(r.secant_law.exponent == Approx(m).epsilon(1e-9));
}

TEST_CASE("Skempton's A at failure is du/dq on a CU curve with a linear pore-pressure response", "[interpret][pore_pressure]") {
  // Skempton (1954), Geotechnique 4(4): du = B [d s3 + A (d s1 - d s3)], constant cell pressure, B = 1.
  std::vector<double> ea, q, du;
  for (int i = 0; i <= 30; ++i) {
    ea.push_back(0.005 * i);
    q.push_back(120.0 * std::min(1.0, 0.005 * i / 0.1));
    du.push_back(0.7 * q.back());
  }
  TestSeries series;
  series.specimens.push_back(make_specimen("CU", ShearType::cu, 200.0, ea, q, {}, du));
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.stages[0].skempton_a == Approx(0.7).epsilon(kExact));
  CHECK(r.stages[0].undrained_strength == Approx(60.0).epsilon(kExact));
}

TEST_CASE("steady end states give M and phi_cs = asin(3M/(6+M)), and the CSL in e-ln p'", "[interpret][critical_state]") {
  // Critical state q = M p' (Schofield & Wroth 1968); e = Gamma - lambda ln p'.
  const double mcs = 1.25, gamma = 2.1, lambda = 0.15;
  TestSeries series;
  for (double pf : {60.0, 120.0, 240.0}) {
    std::vector<double> ea, q, du, e;
    const double s3 = 1.5 * pf;  // any start; the end state is what counts
    for (int i = 0; i <= 40; ++i) {
      const double f = std::min(1.0, i / 20.0);
      const double p = s3 + f * (pf - s3);
      const double qq = mcs * pf * f;
      ea.push_back(0.005 * i);
      q.push_back(qq);
      du.push_back(s3 - (p - qq / 3.0));
      e.push_back(gamma - lambda * std::log(pf));
    }
    series.specimens.push_back(make_specimen("CS" + std::to_string(static_cast<int>(pf)), ShearType::cu, s3, ea, q, {}, du, e));
  }
  const Interpretation r = interpret(series, InterpretOptions{});
  CHECK(r.cs_count == 3);
  CHECK(r.critical_m == Approx(mcs).epsilon(kExact));
  CHECK(r.phi_cs == Approx(radians_to_degrees(std::asin(3.0 * mcs / (6.0 + mcs)))).epsilon(kExact));
  CHECK(r.csl.intercept == Approx(gamma).epsilon(kExact));
  CHECK(-r.csl.slope == Approx(lambda).epsilon(kExact));
}

TEST_CASE("the stress-range filter leaves out failure points outside LO:HI and says why", "[interpret][strength]") {
  TestSeries series;
  for (double s3 : {50.0, 100.0, 200.0, 800.0}) series.specimens.push_back(drained_to_failure("F" + std::to_string(static_cast<int>(s3)), s3, 2.0 * s3));
  InterpretOptions o;
  o.stress_high = 1000.0;
  const Interpretation r = interpret(series, o);
  const StrengthEnvelope& env = r.envelopes.front();
  CHECK(env.st.n == 3);
  REQUIRE(env.points.size() == 4);
  CHECK_FALSE(env.points[3].used);
  CHECK(env.points[3].reason == "s' = 1600 kPa is outside the stress range [0, 1000] kPa");
}

TEST_CASE("bad interpretation options are named with their value", "[interpret][options]") {
  InterpretOptions o;
  o.limiting_strain = 15.0;
  REQUIRE_THROWS_WITH(o.validate(), "interpret options: limiting_strain = 15 must be in (0, 1) (a decimal)");
  CHECK(student_t95(10) == Approx(1.812));  // one-sided 95 %, standard table (value from memory)
  CHECK(student_t95(1000) == Approx(1.6464).margin(1e-3));
}

TEST_CASE("interpret runs on the invented Kestrel Bay sand and writes a JSON result with units", "[interpret][cli][example]") {
  const std::string out = "interpret_example_result.json";
  std::remove(out.c_str());
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") +
                                  " --material 'sand S' --design-stress 150 --out " + out,
                              "interpret_example");
  CHECK(r.exit_code == 0);
  CHECK(r.out.find("max-stress-ratio") != std::string::npos);
  CHECK(r.out.find("Caution:") != std::string::npos);
  const std::string json = slurp(out);
  CHECK(json.find("\"format\": \"triaxcal-interpretation\"") != std::string::npos);
  CHECK(json.find("\"unit\": \"deg\"") != std::string::npos);
}

TEST_CASE("interpret exits 2 on an unknown criterion and names the accepted ones", "[interpret][cli]") {
  const CliResult r = run_cli("interpret " + source_path("examples/kestrel_bay/kestrel_bay_series.json") + " --criterion peak", "interpret_bad");
  CHECK(r.exit_code == 2);
  CHECK(r.err == "triaxcal: error: --criterion: peak: expected max-deviator, max-stress-ratio, strain:EPS or end "
                 "('triaxcal interpret --help' lists the options)\n");
}
