#pragma once
// Report data for tests: an invented project (no real site, lab or client) with curves from simple
// closed forms, so every plot and table of the report has something to show. Demo only, never a
// reference: the numbers check rendering, not soil behaviour.

#include <cmath>
#include <string>

#include "triaxcal/report.hpp"

namespace triaxcal::test {

inline report::ReportData demo_report() {
  using namespace triaxcal::report;
  ReportData d;
  d.title = "Calibration report (test fixture)";
  d.project = "Invented test fixture \"Marsh Lane\" <demo> & co: not a real site";
  d.model = "hyperbolic_hardening";
  d.model_description = "double-hardening model after Schanz, Vermeer & Bonnier (1999)";
  d.outcome = CalibrationOutcome::converged;
  d.outcome_reason = "the local (bobyqa) stage met its tolerance; every used curve has R^2 >= 0.9 (lowest 0.962, "
                     "CD-300 volumetric_strain)";
  d.termination = "converged";
  d.message = "local stage met the relative tolerance 1e-10 after 412 evaluations";
  d.objective = 0.0123;
  d.start_objective = 0.87;
  d.evaluations = 412;
  d.wall_time = 3.4;

  // Three undrained and two drained triaxial tests: q = e / (1/E + e/q_f) (hyperbola), invented.
  const double cell[] = {50, 100, 200, 100, 300};
  for (int k = 0; k < 5; ++k) {
    TestReport t;
    const bool undrained = k < 3;
    t.id = std::string(undrained ? "CU-" : "CD-") + std::to_string(static_cast<int>(cell[k]));
    t.description = std::string(undrained ? "CU" : "CD") + ", s3' = " + std::to_string(static_cast<int>(cell[k])) + " kPa";
    t.drainage = undrained ? Drainage::undrained : Drainage::drained;
    t.objective = 0.002 + 0.001 * k;
    const double qf = (undrained ? 1.2 : 2.4) * cell[k], E = 120.0 * cell[k];
    CurveQuality qq{"q vs axial strain", "kPa", 0, 4.0 + k, 0.98, {}, "axial strain", 100.0, "%"};
    TestCurve deviator, second;
    second.quantity = undrained ? "excess_pore_pressure" : "volumetric_strain";
    second.unit = undrained ? "kPa" : "-";
    if (k == 4) deviator.fitted_to = second.fitted_to = 0.15;  // the fit compared 0 to 15 % only
    for (int i = 0; i <= 200; ++i) {
      const double e = 0.001 * i;
      const double q = e / (1.0 / E + e / qf);
      const double qm = q * (1.0 + 0.03 * std::sin(0.7 * i + k));
      deviator.simulated.x.push_back(e);
      deviator.simulated.y.push_back(q);
      const double p = cell[k] + q / 3.0 - (undrained ? 0.45 * q : 0.0);
      t.stress_path.simulated.x.push_back(p);
      t.stress_path.simulated.y.push_back(q);
      if (undrained) {
        second.simulated.x.push_back(e);
        second.simulated.y.push_back(0.45 * q);
      } else {
        second.simulated.x.push_back(e);
        second.simulated.y.push_back(0.004 * std::sin(20 * e) - 0.15 * e * e * 10);
      }
      if (i % 4 == 0) {
        deviator.measured.x.push_back(e);
        deviator.measured.y.push_back(qm);
        t.stress_path.measured.x.push_back(cell[k] + qm / 3.0 - (undrained ? 0.47 * qm : 0.0));
        t.stress_path.measured.y.push_back(qm);
        if (undrained) {
          second.measured.x.push_back(e);
          second.measured.y.push_back(0.47 * qm);
        } else {
          second.measured.x.push_back(e);
          second.measured.y.push_back(0.0042 * std::sin(20 * e) - 1.4 * e * e);
        }
        qq.residuals.x.push_back(e);
        qq.residuals.y.push_back((q - qm) / qf);
        ++qq.points;
      }
    }
    t.curves = {deviator, second};
    t.quality.push_back(qq);
    d.tests.push_back(t);
    d.strength.points.push_back({t.id, cell[k] + qf / 2.0, qf / 2.0, k != 4});
  }
  // An oedometer test with void ratios: e = 1.1 - 0.2 ln(p'/10), invented.
  TestReport oed;
  oed.id = "OED-1";
  oed.description = "oedometer, loading to 800 kPa";
  oed.drainage = Drainage::oedometer;
  for (double p : {10.0, 20.0, 40.0, 80.0, 160.0, 320.0, 640.0, 800.0}) {
    oed.compression.measured.x.push_back(p);
    oed.compression.measured.y.push_back(1.1 - 0.2 * std::log(p / 10.0) + 0.005);
    oed.compression.simulated.x.push_back(p);
    oed.compression.simulated.y.push_back(1.1 - 0.2 * std::log(p / 10.0));
  }
  d.tests.push_back(oed);

  d.strength.regression = {"regression t = a + s' tan alpha", 4.0, 0.5, kUnknown, kUnknown};
  d.strength.design = {"conservative design line", 1.0, 0.46, kUnknown, kUnknown};
  d.strength.model = {"model envelope", 3.0, 0.49, kUnknown, kUnknown};
  d.strength.range_low = 40.0;
  d.strength.range_high = 450.0;
  d.strength.design_stress = 250.0;
  d.strength.criterion = "maximum deviator stress";
  d.strength.pq_lines.push_back({"critical state line q = M p'", 0.0, 1.2, kUnknown, kUnknown});

  d.parameters = {
      {"secant_stiffness_ref", "kPa", "free", "", 30000, 20000, 5000, 100000, 1500, 27000, 33000, false, ""},
      {"oedometric_stiffness_ref", "kPa", "tied", "secant_stiffness_ref", 30000, kUnknown, kUnknown, kUnknown, kUnknown,
       kUnknown, kUnknown, false, ""},
      {"friction_angle", "deg", "free", "", 30.1, 32, 20, 45, 0.8, 28.5, 31.7, false, ""},
      {"cohesion", "kPa", "free", "", 0.0, 5, 0, 50, 1.1, 0.0, 2.2, true, ""},
      {"poissons_ratio", "-", "fixed", "", 0.2, kUnknown, kUnknown, kUnknown, kUnknown, kUnknown, kUnknown, false, ""},
  };
  d.correlation.names = {"secant_stiffness_ref", "friction_angle", "cohesion"};
  d.correlation.matrix = {{1.0, 0.31, -0.2}, {0.31, 1.0, -0.96}, {-0.2, -0.96, 1.0}};
  d.correlation.strong = 0.9;
  d.comparisons = {{"friction angle phi'", "deg", 30.0, 30.1, "s'-t regression, max deviator; model parameter"},
                   {"cohesion c'", "kPa", 4.6, 0.0, "s'-t regression; model parameter"}};
  for (int i = 1; i <= 412; ++i) {
    const double f = 0.0123 + 0.85 * std::exp(-i / 40.0) * (1.0 + 0.5 * std::sin(i * 1.7) * std::sin(i * 1.7));
    HistoryPoint h;
    h.evaluation = i;
    h.objective = f;
    h.best = d.history.empty() ? f : std::min(f, d.history.back().best);
    h.stage = i < 50 ? 0 : 2;
    d.history.push_back(h);
  }
  d.warnings = {"cohesion ends at its lower bound 0 kPa",
                "friction_angle and cohesion are strongly correlated (r = -0.96): c' and phi' trade off"};
  d.excluded = {{"CU-400", "membrane leak noted on the data sheet (invented)"}};
  d.provenance = {{"software", "triaxcal 0.1.0"},
                  {"created", "2024-01-01T00:00:00Z"},
                  {"input demo.calibration.json", "sha256 0123abcd"},
                  {"options", "local = bobyqa; starts = 1"}};
  return d;
}

/// The demo with a calibration that found nothing: no history, no simulated curves.
inline report::ReportData failed_report() {
  report::ReportData d = demo_report();
  d.outcome = CalibrationOutcome::failed;
  d.outcome_reason = "no point free of a failure penalty in 40 evaluations; at the best point these tests could not "
                     "be simulated: CU-50 (no convergence)";
  d.termination = "no_usable_result";
  d.message = "no usable result: no evaluation in 40 succeeded (40 failed simulations)";
  d.objective = report::kUnknown;
  d.history.clear();
  d.correlation = {};
  for (auto& t : d.tests) {
    t.simulated = false;
    t.message = "stage 1, step 3, axial strain 0.0021: no convergence after 8 increment cuts";
    for (auto& c : t.curves) c.simulated = {};
    t.stress_path.simulated = {};
    t.compression.simulated = {};
    t.quality.clear();
  }
  return d;
}

/// The demo whose deviator curve of CU-100 the model does not follow (R^2 = -2.1, the value of the
/// reviewer's case in issue 12): a poor fit, shown as a warning.
inline report::ReportData poor_fit_report() {
  report::ReportData d = demo_report();
  d.outcome = CalibrationOutcome::poor_fit;
  d.outcome_reason = "the model does not follow 1 used curve (R^2 below min_r_squared = 0.9): CU-100 "
                     "deviator_stress (R^2 = -2.100)";
  d.tests[1].quality.at(0).r_squared = -2.1;
  return d;
}

/// The demo stopped at its evaluation budget.
inline report::ReportData stopped_report() {
  report::ReportData d = demo_report();
  d.outcome = CalibrationOutcome::stopped;
  d.termination = "evaluation_limit";
  d.outcome_reason = "the local (bobyqa) stage used its budget of 400 evaluations before it met its tolerance: raise "
                     "options.local_evaluations";
  d.message = "the local (bobyqa) stage used its budget of 400 evaluations; not converged to the tolerance";
  return d;
}

}  // namespace triaxcal::test
