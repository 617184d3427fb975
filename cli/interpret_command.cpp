#include <algorithm>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <limits>
#include <memory>
#include <system_error>

#include "commands.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/interpretation_report.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::cli {

namespace {

struct InterpretCliOptions {
  std::string series;
  std::string criterion = "max-deviator";
  std::string stress_range;
  double design_stress = std::nan("");
  double reference_pressure = 100.0;
  double csl_exponent = 0.7;
  std::string out;
  std::string material;
  std::string report;
  std::string site;
  std::vector<std::string> only;
  std::vector<std::string> leave_out;
  bool origin_line = false;
  bool cu_depth_trend = false;
};

/// --leave-out ID[@N]=REASON: a specimen (or its shear stage N, 1, 2, 3) left out with the reason.
LeftOut parse_leave_out(const std::string& text) {
  const auto eq = text.find('=');
  const std::string expected = " (expected ID=REASON or ID@STAGE=REASON, e.g. C-UU-2=\"disturbed sample\" or C-MS-1@3=\"membrane leak\")";
  if (eq == std::string::npos || eq == 0) throw InputError("--leave-out: '" + text + "'" + expected);
  LeftOut l;
  l.reason = text.substr(eq + 1);
  if (l.reason.find_first_not_of(" ") == std::string::npos)
    throw InputError("--leave-out: '" + text + "': the reason is empty; give one, the outputs repeat it" + expected);
  std::string id = text.substr(0, eq);
  const auto at = id.rfind('@');
  if (at != std::string::npos) {
    const std::string n = id.substr(at + 1);
    std::size_t used = 0;
    int stage = 0;
    try {
      stage = std::stoi(n, &used);
    } catch (const std::exception&) {
      used = 0;
    }
    if (used == 0 || used != n.size() || stage < 1) throw InputError("--leave-out: '" + text + "': stage '" + n + "' is not 1, 2, 3 ..." + expected);
    l.shear_stage = stage;
    id = id.substr(0, at);
  }
  if (id.empty()) throw InputError("--leave-out: '" + text + "': no specimen id" + expected);
  l.specimen = id;
  return l;
}

constexpr double kUnbounded = std::numeric_limits<double>::max();

/// "strain:EPS" with EPS a decimal axial strain in (0, 1); false for anything else.
bool read_limiting_strain(const std::string& criterion, double& strain) {
  return criterion.rfind("strain:", 0) == 0 && read_finite_number(criterion.substr(7), strain) && strain > 0.0 &&
         strain < 1.0;
}

std::string criterion_error(const std::string& c) {
  double strain = 0.0;
  if (c == "max-deviator" || c == "max-stress-ratio" || c == "end" || read_limiting_strain(c, strain)) return "";
  if (c.rfind("strain:", 0) == 0)
    return c + ": expected strain:EPS with EPS a decimal axial strain above 0 and below 1, e.g. strain:0.15";
  return c + ": expected max-deviator, max-stress-ratio, strain:EPS or end";
}

/// "LO:HI" with 0 <= LO < HI, finite (kPa).
bool read_stress_range(const std::string& text, double& low, double& high) {
  const auto colon = text.find(':');
  return colon != std::string::npos && read_finite_number(text.substr(0, colon), low) &&
         read_finite_number(text.substr(colon + 1), high) && low >= 0.0 && high > low;
}

std::string stress_range_error(const std::string& text) {
  double low = 0.0, high = 0.0;
  if (read_stress_range(text, low, high)) return "";
  return text + ": expected LO:HI, finite numbers with 0 <= LO < HI (kPa of s' at failure), e.g. 50:400";
}

/// The options were checked while parsing (the checks above); this only converts them.
InterpretOptions to_options(const InterpretCliOptions& c) {
  InterpretOptions o;
  if (c.criterion == "max-deviator") o.criterion = FailureCriterion::max_deviator;
  else if (c.criterion == "max-stress-ratio") o.criterion = FailureCriterion::max_stress_ratio;
  else if (c.criterion == "end") o.criterion = FailureCriterion::end_of_test;
  else if (read_limiting_strain(c.criterion, o.limiting_strain)) o.criterion = FailureCriterion::limiting_strain;
  else throw InputError("--criterion: " + criterion_error(c.criterion));
  if (!c.stress_range.empty() && !read_stress_range(c.stress_range, o.stress_low, o.stress_high))
    throw InputError("--stress-range: " + stress_range_error(c.stress_range));
  o.design_stress = c.design_stress;
  o.reference_pressure = c.reference_pressure;
  o.csl_exponent = c.csl_exponent;
  o.material = c.material;
  o.only = c.only;
  for (const std::string& l : c.leave_out) o.left_out.push_back(parse_leave_out(l));
  o.origin_regression = c.origin_line;
  o.cu_depth_trend = c.cu_depth_trend;
  o.validate();
  return o;
}

int run_interpret(const InterpretCliOptions& c) {
  const InterpretOptions options = to_options(c);
  const TestSeries series = read_test_series(c.series);
  if (options.material.empty()) {
    // Unlike soils are not pooled into one envelope: ask for one.
    std::vector<std::string> materials;
    for (const Specimen& sp : series.specimens)
      if (std::find(materials.begin(), materials.end(), sp.material) == materials.end()) materials.push_back(sp.material);
    if (materials.size() > 1) {
      std::string list;
      for (const std::string& m : materials) list += (list.empty() ? "'" : ", '") + m + "'";
      throw InputError(c.series + ": the specimens belong to " + std::to_string(materials.size()) + " materials (" + list +
                       "): choose one with --material");
    }
  }
  for (const SeriesWarning& w : series.warnings) std::fprintf(stderr, "triaxcal: warning: %s\n", w.message.c_str());
  const Interpretation result = interpret(series, options);
  std::printf("%s: %zu specimen(s), %zu shear stage(s)\n\n", c.series.c_str(), series.specimens.size(), result.stages.size());
  std::fputs(interpretation_text(result).c_str(), stdout);
  // Both outputs are made before either is written, and a failed second write removes the first:
  // the files of one run are written together or not at all (issue 13).
  const std::string json_text = c.out.empty() ? std::string() : interpretation_json(result);
  std::string html;
  if (!c.report.empty()) {
    report::InterpretationReportOptions ro;
    ro.site = c.site;
    html = report::render_interpretation_report(result, series, ro);
  }
  if (!c.out.empty()) write_file_atomically(c.out, json_text);
  if (!c.report.empty()) {
    try {
      write_file_atomically(c.report, html);
    } catch (...) {
      if (!c.out.empty()) {
        std::error_code ec;
        std::filesystem::remove(c.out, ec);
      }
      throw;
    }
  }
  if (!c.out.empty()) std::printf("\nresults written to %s\n", c.out.c_str());
  if (!c.report.empty()) std::printf("%sreport written to %s\n", c.out.empty() ? "\n" : "", c.report.c_str());
  std::printf("\n%s\n", kCaution);
  return exit_ok;
}

void add_interpret_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<InterpretCliOptions>();
  auto* cmd = app.add_subcommand("interpret",
                                 "Classical interpretation of a test series: failure points, c_u, c'/phi' envelopes with a design "
                                 "line, stiffness, dilatancy, critical state, Skempton A and B");
  cmd->add_option("series", o->series, "Test-series JSON (format triaxcal-test-series)")->required();
  cmd->add_option("--criterion", o->criterion, "Failure criterion: max-deviator (default), max-stress-ratio, strain:EPS (decimal) or end")
      ->check(CLI::Validator([](std::string& c) { return criterion_error(c); }, "", ""));
  cmd->add_option("--stress-range", o->stress_range, "Use failure points with s' in LO:HI (kPa) for the envelope")
      ->check(CLI::Validator([](std::string& t) { return stress_range_error(t); }, "", ""));
  cmd->add_option("--design-stress", o->design_stress,
                  "Largest normal effective stress of the design problem (kPa); tests whose failure plane carries more "
                  "(sigma'_nf = s' - t sin phi') are flagged, above it and above twice it")
      ->check(number_check(0.0, kUnbounded, true, "kPa"));
  cmd->add_option("--reference-pressure", o->reference_pressure, "p_ref of the stiffness law E = E_ref (s3'/p_ref)^m (kPa, default 100)")
      ->check(number_check(0.0, kUnbounded, true, "kPa"));
  cmd->add_option("--csl-exponent", o->csl_exponent,
                  "xi of the power-law critical-state line e_c = e_Gamma - lambda_c (p'/p_at)^xi used for the state parameter "
                  "(default 0.7, the value commonly used for sands)")
      ->check(number_check(0.0, 2.0, true));
  cmd->add_option("--material", o->material, "Interpret only the specimens of this material (the series' material labels); required when the series "
                  "holds several");
  cmd->add_option("--out", o->out, "JSON result file (written atomically; every number with its unit)");
  cmd->add_option("--report", o->report, "Self-contained HTML report of the interpretation (written atomically)");
  cmd->add_option("--site", o->site, "Site name for the report's running header (default: the series' name)");
  cmd->add_option("--only", o->only, "Use only these specimens (ids; repeat the option or separate by commas)")->delimiter(',');
  cmd->add_option("--leave-out", o->leave_out,
                  "Leave out a specimen, or one shear stage of it, with the reason the outputs repeat: ID=REASON or "
                  "ID@STAGE=REASON (stages 1, 2, 3); repeatable");
  cmd->add_flag("--origin-line", o->origin_line, "Also fit the envelope through the origin (c' = 0) by least squares");
  cmd->add_flag("--cu-depth-trend", o->cu_depth_trend, "Fit c_u = c_u0 + k z over the UU tests with a depth in metres");
  cmd->callback([&action, o] { action = [o] { return run_interpret(*o); }; });
}

const CommandRegistration registration{"interpret", 25, &add_interpret_command};

}  // namespace

}  // namespace triaxcal::cli
