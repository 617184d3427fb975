// The report's classical-interpretation parts: a value the data cannot determine reads "not
// determined" with the reason beside the fitted model's value, and the design line is named by the
// branch of its rule.
#include <catch2/catch.hpp>

#include <limits>

#include "synthetic_specimen.hpp"
#include "triaxcal/calibrate.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/report.hpp"
#include "triaxcal/report_input.hpp"

using namespace triaxcal;
using namespace triaxcal::test;

namespace {

FittedParameter parameter(const std::string& name, double value) {
  FittedParameter p;
  p.name = name;
  p.value = value;
  return p;
}

/// CD tests (invented) whose failure points lie near t = -8 + 0.6 s' (negative intercept), none
/// reaching a steady state, contracting throughout.
Interpretation awkward_interpretation() {
  TestSeries series;
  const double s[] = {60.0, 120.0, 200.0, 300.0};
  const double t[] = {30.0, 62.5, 113.0, 170.0};
  for (int k = 0; k < 4; ++k) {
    DrainedCurve d;
    for (int i = 0; i <= 40; ++i) {
      const double x = 0.001 * i;
      d.x.push_back(x);
      d.y.push_back(0.3 * x);
      d.q.push_back(2.0 * t[k] * std::min(1.0, x / 0.02));
    }
    series.specimens.push_back(drained_specimen("T" + std::to_string(k), s[k] - t[k], d, nullptr));
  }
  return interpret(series, InterpretOptions{});
}

}  // namespace

TEST_CASE("the report shows not determined with the reason for classical values the data cannot determine, and names the design line",
          "[interpret][report][not_determined]") {
  const Interpretation in = awkward_interpretation();
  REQUIRE(in.envelopes.front().design_form == DesignLineForm::origin_secant);
  REQUIRE(!in.critical_m_reason.empty());
  CalibrationSummary summary;
  summary.model = "mohr_coulomb";
  summary.parameters = {parameter("friction_angle", 30.0), parameter("cohesion", 0.0), parameter("dilation_angle", 2.0),
                        parameter("critical_state_friction_angle", 31.0), parameter("secant_stiffness_ref", 20000.0)};
  // The report matches parameters by their declared role (ParameterInfo::role): a made-up model
  // that declares one for each of the names above.
  ModelInfo info;
  info.name = "mohr_coulomb";
  const double inf = std::numeric_limits<double>::infinity();
  info.parameters = {{"friction_angle", "deg", 30.0, 0.0, 90.0, true, true, "", ParameterRole::friction_angle},
                     {"cohesion", "kPa", 0.0, 0.0, inf, false, true, "", ParameterRole::cohesion},
                     {"dilation_angle", "deg", 0.0, 0.0, 90.0, false, true, "", ParameterRole::dilation_angle},
                     {"critical_state_friction_angle", "deg", 30.0, 0.0, 90.0, true, true, "",
                      ParameterRole::critical_state_friction_angle},
                     {"secant_stiffness_ref", "kPa", 20000.0, 0.0, inf, true, true, "", ParameterRole::secant_stiffness_ref}};
  CalibrationProblem problem;
  problem.model = &info;
  const report::ReportData d = report::report_from_calibration(summary, problem, CalibrationProvenance{}, nullptr, &in);
  CHECK(d.strength.design.name == "design line (c' = 0, secant from the origin)");
  CHECK(d.strength.design.intercept == 0.0);
  auto row = [&](const std::string& quantity) -> const report::Comparison* {
    for (const report::Comparison& c : d.comparisons)
      if (c.quantity == quantity) return &c;
    return nullptr;
  };
  const report::Comparison* cs = row("critical-state friction angle phi_cs");
  REQUIRE(cs);
  CHECK(std::isnan(cs->classical));
  CHECK(cs->basis == "large-strain states vs model critical_state_friction_angle; not determined: no compression stage ends in a steady state");
  const report::Comparison* psi = row("dilation angle psi");
  REQUIRE(psi);
  CHECK(std::isnan(psi->classical));
  CHECK(psi->basis.find("not determined: T0: no dilation: the most negative rate") != std::string::npos);
  const report::Comparison* e50 = row("secant stiffness at p_ref");
  REQUIRE(e50);
  CHECK(std::isfinite(e50->classical));  // determined: a number
  CHECK(e50->basis == "E_50 power law vs model secant_stiffness_ref");
  // The report input (JSON) keeps it: classical null, the reason in the basis.
  const report::ReportData back = report::parse_report_input(report::report_input_json(d), "report.json");
  bool found = false;
  for (const report::Comparison& c : back.comparisons)
    if (c.quantity == "critical-state friction angle phi_cs") {
      found = true;
      CHECK(std::isnan(c.classical));
      CHECK(c.basis == cs->basis);
    }
  CHECK(found);
  const std::string html = report::render_report(d);
  CHECK(html.find("<td class=\"num\">not determined</td>") != std::string::npos);
  CHECK(html.find("not determined: no compression stage ends in a steady state") != std::string::npos);
  CHECK(html.find("design line (c&#39; = 0, secant from the origin)") != std::string::npos);
}
