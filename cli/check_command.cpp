#include <algorithm>
#include <cstdio>
#include <memory>

#include "commands.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::cli {

namespace {

std::string num(double v, int decimals) {
  if (std::isnan(v)) return "-";
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  return buf;
}

/// "1 error", "2 errors".
std::string count(std::size_t n, const char* noun) {
  return std::to_string(n) + " " + noun + (n == 1 ? "" : "s");
}

int run_check(const std::string& path) {
  const SeriesCheck check = check_test_series(path);
  const TestSeries& s = check.series;
  if (!s.specimens.empty()) {
    std::printf("%s%s%s: %zu specimen(s) read\n", path.c_str(), s.name.empty() ? "" : " - ", s.name.c_str(), s.specimens.size());
    // The id columns widen for long ids (AGS-style LOCA_ID/SAMP_TOP/SAMP_REF/SPEC_REF), 10 at least.
    int id_width = 10;
    for (const Specimen& sp : s.specimens) id_width = std::max(id_width, static_cast<int>(sp.id.size()));
    std::printf("  %-*s %-5s %-4s %-4s %6s %10s %10s %10s %10s %10s %8s\n", id_width, "specimen", "stage", "test", "dir", "points",
                "eps_a[-]", "p'[kPa]", "q[kPa]", "du[kPa]", "e_v[-]", "e[-]");
    for (const Specimen& sp : s.specimens) {
      int number = 0;  // the specimen's shear stages 1, 2, 3 (as interpret numbers them)
      for (int k : sp.shear_stages()) {
        ++number;
        const auto [first, last] = sp.stage_points(k);
        const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
        if (first > last) continue;
        const std::size_t e = static_cast<std::size_t>(last);
        const ReducedCurves& c = sp.curves;
        std::printf("  %-*s %-5d %-4s %-4s %6d %10s %10s %10s %10s %10s %8s\n", id_width, sp.id.c_str(), number, to_string(st.shear).c_str(),
                    st.direction == ShearDirection::compression ? "comp" : "ext", last - first + 1,
                    num(c.axial_strain[e], 4).c_str(), num(c.mean_stress[e], 1).c_str(), num(c.deviator_stress[e], 1).c_str(),
                    num(c.excess_pore_pressure[e], 1).c_str(), num(c.volumetric_strain[e], 4).c_str(),
                    num(c.void_ratio[e], 3).c_str());
      }
    }
    std::printf("  (end state of each shear stage; stage: the specimen's shear stages 1, 2, 3; strains from the data zero;\n"
                "   compression positive)\n");
    bool oedometer_header = false;
    for (const Specimen& sp : s.specimens) {
      int number = 0;  // the specimen's oedometer stages 1, 2
      for (int k : sp.oedometer_stages()) {
        ++number;
        const auto [first, last] = sp.stage_points(k);
        if (first > last) continue;
        if (!oedometer_header) {
          std::printf("\n  %-*s %-5s %6s %10s %10s %10s %8s\n", id_width, "oedometer", "stage", "points", "eps_a[-]", "s_a'[kPa]",
                      "max s_a'", "e[-]");
          oedometer_header = true;
        }
        const ReducedCurves& c = sp.curves;
        const std::size_t e = static_cast<std::size_t>(last);
        double largest = 0.0;
        for (int i = first; i <= last; ++i) largest = std::max(largest, c.axial_stress[static_cast<std::size_t>(i)]);
        std::printf("  %-*s %-5d %6d %10s %10s %10s %8s\n", id_width, sp.id.c_str(), number, last - first + 1,
                    num(c.axial_strain[e], 4).c_str(), num(c.axial_stress[e], 1).c_str(), num(largest, 1).c_str(),
                    num(c.void_ratio[e], 3).c_str());
      }
    }
    if (oedometer_header) std::printf("  (end state of each oedometer stage: effective axial stress, largest reached)\n");
    bool failure_header = false;
    for (const Specimen& sp : s.specimens) {
      int number = 0;
      for (int k : sp.shear_stages()) {
        ++number;
        const SpecimenStage& st = sp.stages[static_cast<std::size_t>(k)];
        if (!st.failure.given()) continue;
        if (!failure_header) {
          std::printf("\n  %-*s %-5s %-4s %-6s %10s %10s %10s %10s %10s  %s\n", id_width, "reported", "stage", "test", "curves", "cell[kPa]",
                      "q_f[kPa]", "u_f[kPa]", "eps_a,f", "s3'_f", "criterion");
          failure_header = true;
        }
        const ReportedFailure& f = st.failure;
        std::printf("  %-*s %-5d %-4s %-6s %10s %10s %10s %10s %10s  %s\n", id_width, sp.id.c_str(), number, to_string(st.shear).c_str(),
                    sp.failure_values_only() ? "no" : "yes", num(st.cell_pressure, 1).c_str(), num(f.deviator_stress, 1).c_str(),
                    num(f.pore_pressure, 1).c_str(), num(f.axial_strain, 4).c_str(),
                    num(st.cell_pressure - f.pore_pressure, 1).c_str(), f.criterion.empty() ? "-" : f.criterion.c_str());
      }
    }
    if (failure_header) std::printf("  (values at failure as the lab reported them; s3'_f = cell - u_f)\n");
  }
  // The lab's reported failure values against its curves, where a specimen has both.
  std::vector<std::string> warnings;
  for (const SeriesWarning& w : s.warnings) warnings.push_back(w.message);
  if (check.errors.empty()) {
    const std::vector<ReportedFailureCheck> reported = check_reported_failures(s);
    if (!reported.empty()) std::printf("\n%s", reported_failure_table(reported).c_str());
    for (const ReportedFailureCheck& c : reported) warnings.insert(warnings.end(), c.warnings.begin(), c.warnings.end());
  }
  if (!warnings.empty()) {
    std::printf("\n%s:\n", count(warnings.size(), "warning").c_str());
    for (const std::string& w : warnings) std::printf("  warning: %s\n", w.c_str());
  }
  if (!check.errors.empty()) {
    std::fprintf(stderr, "%s:\n", count(check.errors.size(), "error").c_str());
    for (const std::string& e : check.errors) std::fprintf(stderr, "triaxcal: error: %s\n", e.c_str());
    return exit_bad_input;
  }
  std::printf("\nno errors\n");
  return exit_ok;
}

void add_check_command(CLI::App& app, Action& action) {
  auto path = std::make_shared<std::string>();
  auto* cmd = app.add_subcommand("check",
                                 "Read a test-series file and its data files, reduce the data and report errors "
                                 "(exit 2) and warnings; print the reduced end state of every shear stage");
  cmd->add_option("series", *path, "Test-series JSON (format triaxcal-test-series)")->required();
  cmd->callback([&action, path] { action = [path] { return run_check(*path); }; });
}

const CommandRegistration registration{"check", 20, &add_check_command};

}  // namespace

}  // namespace triaxcal::cli
