// Whole-run outputs (issue 13): the files of one `fit` appear together or not at all, leftovers of
// killed runs are swept, a full disk is an error with a message (never a signal), and a failed
// `simulate` writes no curves file. The calibrations are quick fits of the invented demo series.

#include <sys/mount.h>
#include <sys/wait.h>

#include <catch2/catch.hpp>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <string>
#include <system_error>

#include "cli_run.hpp"

using namespace triaxcal::test;
namespace fs = std::filesystem;

namespace {

/// A fit of E' and phi' to two demo tests with a small local budget (about a second).
std::string calibration(int local_evaluations) {
  return R"({"format": "triaxcal-calibration", "version": 1, "description": "invented test case",
  "series": ")" + source_path("examples/calibrate/demo_series.json") + R"(", "model": "mohr_coulomb",
  "steps_per_shear_stage": 60,
  "tests": [{"specimen": "CD-50", "curves": ["deviator_stress"]}, {"specimen": "CD-200", "curves": ["deviator_stress"]}],
  "parameters": {"youngs_modulus": {"status": "free", "lower": 5000, "upper": 200000, "start": 24000, "scale": "log"},
    "poissons_ratio": 0.3, "cohesion": 4, "friction_angle": {"status": "free", "lower": 20, "upper": 45, "start": 34},
    "dilation_angle": 5, "tensile_strength": 0},
  "options": {"local": "bobyqa", "local_evaluations": )" + std::to_string(local_evaluations) + R"(, "threads": 1}})";
}

fs::path fresh(const std::string& tag) {
  const fs::path dir = fs::absolute("whole_run_" + tag);
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

void write(const fs::path& path, const std::string& text) { std::ofstream(path, std::ios::binary) << text; }

std::string q(const fs::path& p) { return "'" + p.string() + "'"; }

/// Every entry of `dir` (hidden ones included) with its content ("<dir>" for a folder).
std::map<std::string, std::string> listing(const fs::path& dir) {
  std::map<std::string, std::string> m;
  for (const auto& e : fs::directory_iterator(dir))
    m[e.path().filename().string()] = e.is_directory() ? "<dir>" : slurp(e.path().string());
  return m;
}

std::set<std::string> names(const fs::path& dir) {
  std::set<std::string> s;
  for (const auto& e : fs::directory_iterator(dir)) s.insert(e.path().filename().string());
  return s;
}

/// A tmpfs of `kib` KiB at `dir` (root only); false where it cannot be mounted.
bool mount_tmpfs(const fs::path& dir, int kib) {
  fs::create_directories(dir);
  const std::string size = "size=" + std::to_string(kib) + "k";
  return ::mount("tmpfs", dir.c_str(), "tmpfs", 0, size.c_str()) == 0;
}

struct Unmount {
  fs::path dir;
  ~Unmount() { ::umount(dir.c_str()); }
};

}  // namespace

TEST_CASE("a second fit into a folder replaces the whole set: no file of the first run is left beside the second's") {
  const fs::path dir = fresh("two_runs");
  write(dir / "fit_q.json", calibration(12));
  write(dir / "notes.txt", "the user's own file");
  const fs::path out = dir / "out";
  auto r = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out) + " --report", "whole_run_first");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(names(out) == std::set<std::string>{"fit_q.curves.csv", "fit_q.h5", "fit_q.parameters.json", "fit_q.report.html",
                                            "fit_q.report.json", "fit_q.report.txt"});
  // Without --report the second run writes no HTML page and no text report: the first run's are removed.
  r = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_second");
  REQUIRE(r.exit_code == 0);
  CHECK(names(out) ==
        std::set<std::string>{"fit_q.curves.csv", "fit_q.h5", "fit_q.parameters.json", "fit_q.report.json"});
  CHECK(slurp((dir / "notes.txt").string()) == "the user's own file");
}

TEST_CASE("a fit that fails before its files are complete leaves an earlier run's files untouched") {
  const fs::path dir = fresh("failing_second");
  write(dir / "fit_q.json", calibration(12));
  const fs::path out = dir / "out";
  REQUIRE(run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_keep_first").exit_code == 0);
  const auto before = listing(out);
  // The second run cannot read its series: it ends before any file is written.
  write(dir / "fit_q.json", calibration(12).replace(calibration(12).find("demo_series.json"), 16, "missing.json"));
  const auto r = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_fail_second");
  CHECK(r.exit_code == 2);
  CHECK(listing(out) == before);
}

TEST_CASE("a fit killed with SIGKILL leaves nothing the next run does not sweep: no .tmp entry stays in the folder") {
  const fs::path dir = fresh("sigkill");
  write(dir / "fit_q.json", calibration(400));
  const fs::path out = dir / "out";
  fs::create_directories(out);
  // Leftovers as a killed run leaves them (a temporary file, a staging folder), and entries that
  // are not ours and must stay.
  write(out / ".fit_q.h5.tmp123456", "half an archive");
  fs::create_directories(out / ".fit_q.tmp987654");
  write(out / ".fit_q.tmp987654" / "fit_q.parameters.json", "{}");
  write(out / ".other.csv.tmp42", "someone else's");
  write(out / ".fit_q.h5.tmpnotdigits", "not our pattern");
  // Killed at whatever point it has reached after half a second (the check below holds for any).
  const std::string cmd = std::string(TRIAXCAL_CLI) + " fit " + q(dir / "fit_q.json") + " --out " + q(out) +
                          " >/dev/null 2>&1 & pid=$!; sleep 0.5; kill -KILL $pid; wait $pid; true";
  REQUIRE(std::system(("sh -c \"" + cmd + "\"").c_str()) == 0);
  write(dir / "fit_q.json", calibration(12));
  const auto r = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_after_kill");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(names(out) == std::set<std::string>{".fit_q.h5.tmpnotdigits", ".other.csv.tmp42", "fit_q.curves.csv", "fit_q.h5",
                                            "fit_q.parameters.json", "fit_q.report.json"});
}

TEST_CASE("a full disk while the archive is written is exit 2 with the file named, no signal, and no file of the run") {
  const fs::path mnt = fs::absolute("whole_run_tmpfs");
  ::umount(mnt.c_str());  // left mounted by an interrupted earlier run of this test
  std::error_code ignored;
  fs::remove_all(mnt, ignored);
  // 256 KiB hold the report input, parameter set and curves of this fit (about 180 KiB) but not
  // also its archive (about 130 KiB).
  if (!mount_tmpfs(mnt, 256)) {
    WARN("skipped: cannot mount a tmpfs at " + mnt.string() + " (needs root); the full-disk case is not checked");
    return;
  }
  const Unmount unmount{mnt};
  const fs::path dir = fresh("full_disk");
  write(dir / "fit_q.json", calibration(12));
  const fs::path out = mnt / "out";
  const auto r = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_full_disk");
  INFO(r.out << r.err);
  CHECK(r.exit_code == 2);  // 139 was the segmentation fault in HDF5's shutdown after a failed close
  const std::string expected = "triaxcal: error: " + (out / "fit_q.h5").string() + ": write failed (disk full?); no file of this run was written\n";
  CHECK(r.err == expected);
  CHECK_FALSE(fs::exists(out));  // created by the run, removed with it: nothing of the run is left
  CHECK(fs::is_empty(mnt));
  // With an earlier complete set in the folder, the failing run leaves it as it was.
  ::umount(mnt.c_str());
  REQUIRE(mount_tmpfs(mnt, 448));
  REQUIRE(run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_full_first").exit_code == 0);
  const auto before = listing(out);
  const auto second = run_cli("fit " + q(dir / "fit_q.json") + " --out " + q(out), "whole_run_full_second");
  INFO(second.err);
  CHECK(second.exit_code == 2);
  CHECK(second.err.find("disk full?") != std::string::npos);
  CHECK(listing(out) == before);
}
