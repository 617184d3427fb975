#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <memory>
#include <optional>

#include "commands.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/series.hpp"
#include "triaxcal/staged_outputs.hpp"

namespace triaxcal::cli {

namespace {

struct ImportCliOptions {
  std::string ags;
  std::string out;
  std::string materials;
  std::string name;
  std::string curves;
};

/// Appends printf-formatted text to `out`.
template <typename... A>
void add(std::string& out, const char* format, A... args) {
  char line[1024];
  std::snprintf(line, sizeof line, format, args...);
  out += line;
}

int run_import(const ImportCliOptions& o) {
  namespace fs = std::filesystem;
  if (fs::path(o.out).extension() != ".json")
    throw InputError("--out: '" + o.out + "' (expected the test-series file to write, ending in .json)");
  const std::vector<MaterialRule> rules = o.materials.empty() ? std::vector<MaterialRule>{} : read_material_map(o.materials);
  const std::optional<CurveMap> curves = o.curves.empty() ? std::nullopt : std::optional<CurveMap>(read_curve_map(o.curves));
  const Ags4File file = read_ags4(o.ags);
  const std::string name = o.name.empty() ? fs::path(o.ags).stem().string() : o.name;
  // Everything is read and checked before anything is written: a bad file writes nothing.
  const Ags4Import imported = import_ags4(file, name, rules, curves ? &*curves : nullptr);

  // The series and its data files are one run's files (DEVELOPERS.md, Conventions): written into a
  // hidden staging folder, read back from there as `check` reads them, and moved into place together.
  const fs::path out_path(o.out);
  const fs::path folder = out_path.parent_path().empty() ? fs::path(".") : out_path.parent_path();
  const std::string series_name = out_path.filename().string();
  std::vector<std::string> names{series_name};
  for (const auto& d : imported.data_files) {
    if (d.first == series_name)
      throw InputError("--out: '" + o.out + "': the series would have the name of one of its data files (" + d.first + ")");
    names.push_back(d.first);
  }
  if (!std::filesystem::is_directory(folder))
    throw InputError("--out: '" + o.out + "': the folder " + folder.string() + " does not exist (create it first)");
  StagedOutputs staged(folder, out_path.stem().string(), names);
  // Messages name the files' places beside the series, and the lab's file a copy came from.
  const auto in_place = [&](const std::string& message) {
    std::string m = staged.in_place(message);
    for (const Ags4Import::CurveSource& c : imported.curve_sources)
      if (m.find(c.copy) != std::string::npos || m.find("specimens[" + std::to_string(c.index) + "]") != std::string::npos)
        m += " (specimen " + c.specimen + ": its curves are " + c.copy + ", the import's copy of " + c.source + ")";
    return m;
  };
  std::vector<ReportedFailureCheck> checks;
  std::vector<std::string> series_warnings;
  try {
    for (const auto& [rel, text] : imported.data_files) write_file_atomically(staged.path(rel), text);
    write_file_atomically(staged.path(series_name), imported.series_json);
    const TestSeries series = read_test_series(staged.path(series_name).string());
    for (const SeriesWarning& w : series.warnings) series_warnings.push_back(in_place(w.message));
    checks = check_reported_failures(series);
  } catch (const InputError& e) {
    throw InputError(in_place(e.what()) + "; nothing was written");
  }

  std::string text;
  add(text, "%s: AGS4 file read\n", o.ags.c_str());
  for (const std::string& s : imported.summary) add(text, "  %s\n", s.c_str());
  add(text, "\n  %-*s %-6s %8s  %-9s %3s  %s\n", imported.id_width, "specimen", "loc.", "depth[m]", "test", "n", "material");
  for (const std::string& s : imported.specimens) add(text, "%s\n", s.c_str());
  add(text, "  (n: stages by TESN, or oedometer increments; materials from %s: check them)\n",
      o.materials.empty() ? "no map (--materials), so none" : o.materials.c_str());
  if (!imported.checks.empty()) {
    add(text, "\n  oedometer m_v: reported (CONS_INMV) against recomputed from the void ratios, -de / ((1 + e_start) ds'),\n"
              "  the first increment from 0 kPa\n");
    add(text, "  %-*s %4s %9s %7s %9s %9s\n", imported.id_width, "specimen", "inc", "s'[kPa]", "e_end", "m_v rep.", "m_v calc.");
    for (const std::string& c : imported.checks) add(text, "%s\n", c.c_str());
    add(text, "  (m2/MN)\n");
  }
  if (curves) {
    add(text, "\n  curve files (%s): %zu attached\n", o.curves.c_str(), imported.curves.size());
    for (const std::string& c : imported.curves) add(text, "  %s\n", c.c_str());
    if (!checks.empty()) text += "\n" + reported_failure_table(checks);
  }

  staged.commit();
  std::fputs(text.c_str(), stdout);
  std::vector<std::string> warnings = imported.warnings;
  warnings.insert(warnings.end(), series_warnings.begin(), series_warnings.end());
  for (const ReportedFailureCheck& c : checks) warnings.insert(warnings.end(), c.warnings.begin(), c.warnings.end());
  for (const std::string& m : warnings) std::fprintf(stderr, "triaxcal: warning: %s\n", m.c_str());
  std::printf("\n");
  for (const auto& d : imported.data_files) std::printf("data file written: %s\n", (folder / d.first).string().c_str());
  std::printf("test series written to %s\n", o.out.c_str());
  std::printf("triaxial tests are imported as the lab's values at failure%s: interpret gives c_u, Mohr circles, the s'-t "
              "envelope and A_f from them; the failure criterion the lab reported is kept, the other cannot be recomputed%s\n",
              imported.curves.empty() ? " (no curves)" : " (with curves where a curve file is attached)",
              imported.curves.empty() ? "" : " for the specimens without curves");
  std::printf("\n%s\n", kCaution);
  return exit_ok;
}

void add_import_command(CLI::App& app, Action& action) {
  auto o = std::make_shared<ImportCliOptions>();
  auto* cmd = app.add_subcommand(
      "import",
      "Read an AGS4 file (the lab's deliverable: TRIG/TRIT UU tests, TREG/TRET CU and CD tests, CONG/CONS oedometer tests) and "
      "write a test series: triaxial tests as failure values, oedometer increments as data files beside the series. Prints the "
      "locations, specimens, tests, stages and depth range found, and the material of each specimen");
  cmd->add_option("ags", o->ags, "AGS4 file (.ags; CR LF or LF, UTF-8 or Latin-1)")->required();
  cmd->add_option("--out", o->out, "Test-series JSON to write (oedometer data files go into the same folder)")->required();
  cmd->add_option("--materials", o->materials,
                  "Material map JSON (format triaxcal-material-map): material by location and depth range [from, to) m; "
                  "the first rule that holds a specimen gives its material");
  cmd->add_option("--curves", o->curves,
                  "Curve map JSON (format triaxcal-curve-map): the lab's curve files (CSV) of the triaxial specimens, by specimen id or "
                  "by a file-name pattern of AGS4 keys; each is copied beside the series and its failure point compared with the "
                  "reported one");
  cmd->add_option("--name", o->name, "Name of the series (default: the AGS4 file's name)");
  cmd->footer("Example: triaxcal import site.ags --out site_series.json --materials site_materials.json\n"
              "then: triaxcal check site_series.json; triaxcal interpret site_series.json --material \"clay A\"");
  cmd->callback([&action, o] { action = [o] { return run_import(*o); }; });
}

const CommandRegistration registration{"import", 15, &add_import_command};

}  // namespace

}  // namespace triaxcal::cli
