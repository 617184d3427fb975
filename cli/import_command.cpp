#include <cstdio>
#include <filesystem>
#include <memory>

#include "commands.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/atomic_file.hpp"
#include "triaxcal/error.hpp"

namespace triaxcal::cli {

namespace {

struct ImportCliOptions {
  std::string ags;
  std::string out;
  std::string materials;
  std::string name;
};

int run_import(const ImportCliOptions& o) {
  namespace fs = std::filesystem;
  if (fs::path(o.out).extension() != ".json")
    throw InputError("--out: '" + o.out + "' (expected the test-series file to write, ending in .json)");
  const std::vector<MaterialRule> rules = o.materials.empty() ? std::vector<MaterialRule>{} : read_material_map(o.materials);
  const Ags4File file = read_ags4(o.ags);
  const std::string name = o.name.empty() ? fs::path(o.ags).stem().string() : o.name;
  // Everything is read and checked before anything is written: a bad file writes nothing.
  const Ags4Import imported = import_ags4(file, name, rules);
  std::printf("%s: AGS4 file read\n", o.ags.c_str());
  for (const std::string& s : imported.summary) std::printf("  %s\n", s.c_str());
  std::printf("\n  %-18s %-6s %8s  %-9s %3s  %s\n", "specimen", "loc.", "depth[m]", "test", "n", "material");
  for (const std::string& s : imported.specimens) std::printf("%s\n", s.c_str());
  std::printf("  (n: stages by TESN, or oedometer increments; materials from %s: check them)\n",
              o.materials.empty() ? "no map (--materials), so none" : o.materials.c_str());
  if (!imported.checks.empty()) {
    std::printf("\n  oedometer m_v: reported (CONS_INMV) against recomputed from the void ratios, -de / ((1 + e_start) ds'),\n"
                "  the first increment from 0 kPa\n");
    std::printf("  %-18s %4s %9s %7s %9s %9s\n", "specimen", "inc", "s'[kPa]", "e_end", "m_v rep.", "m_v calc.");
    for (const std::string& c : imported.checks) std::printf("%s\n", c.c_str());
    std::printf("  (m2/MN)\n");
  }
  for (const std::string& w : imported.warnings) std::fprintf(stderr, "triaxcal: warning: %s\n", w.c_str());
  const fs::path folder = fs::path(o.out).parent_path();
  std::printf("\n");
  for (const auto& [rel, text] : imported.data_files) {
    write_file_atomically(folder / rel, text);
    std::printf("data file written: %s\n", (folder / rel).string().c_str());
  }
  write_file_atomically(o.out, imported.series_json);
  std::printf("test series written to %s\n", o.out.c_str());
  std::printf("triaxial tests are imported as the lab's values at failure (no curves): interpret gives c_u, Mohr circles, the s'-t "
              "envelope and A_f from them; the failure criterion the lab reported is kept, the other cannot be recomputed\n");
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
  cmd->add_option("--name", o->name, "Name of the series (default: the AGS4 file's name)");
  cmd->footer("Example: triaxcal import site.ags --out site_series.json --materials site_materials.json\n"
              "then: triaxcal check site_series.json; triaxcal interpret site_series.json --material \"clay A\"");
  cmd->callback([&action, o] { action = [o] { return run_import(*o); }; });
}

const CommandRegistration registration{"import", 15, &add_import_command};

}  // namespace

}  // namespace triaxcal::cli
