#pragma once
// Test-series files built in a scratch folder: a valid CU specimen to start from, edited per test.

#include <nlohmann/json.hpp>

#include <filesystem>
#include <fstream>
#include <string>
#include <system_error>
#include <vector>

#include <unistd.h>

namespace triaxcal::test {

/// The scratch folders this process made, removed when it exits normally.
inline std::vector<std::filesystem::path>& scratch_dirs_made() {
  static struct Made {
    std::vector<std::filesystem::path> dirs;
    ~Made() {
      for (const auto& d : dirs) {
        std::error_code ec;
        std::filesystem::remove_all(d, ec);
      }
    }
  } made;
  return made.dirs;
}

/// The scratch folder of `tag` in this process (per process: two builds testing at once on one
/// machine must not share a folder).
inline std::filesystem::path scratch_path(const std::string& tag) {
  return std::filesystem::temp_directory_path() /
         ("triaxcal_series_" + tag + "_" + std::to_string(static_cast<long>(::getpid())));
}

/// The scratch folder of `tag`, made empty.
inline std::filesystem::path scratch_dir(const std::string& tag) {
  const auto dir = scratch_path(tag);
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  scratch_dirs_made().push_back(dir);
  return dir;
}

inline void write_text(const std::filesystem::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
}

/// A CU specimen consolidated isotropically to 100 kPa (back pressure 300 kPa, cell 400 kPa).
inline nlohmann::json cu_specimen(const std::string& id, const std::string& file) {
  using nlohmann::json;
  return json{{"id", id},
              {"height", 76.0},
              {"diameter", 38.0},
              {"void_ratio", 0.9},
              {"stages",
               json::array({json{{"type", "saturation"}, {"b_value", 0.97}, {"cell_pressure", 310}, {"back_pressure", 300}},
                            json{{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", 100}},
                            json{{"type", "shear"}, {"test", "CU"}}})},
              {"data",
               json{{"file", file},
                    {"kind", "reduced"},
                    {"columns",
                     json{{"axial_strain", {{"header", "ea"}, {"unit", "decimal"}}},
                          {"deviator_stress", {{"header", "q"}, {"unit", "kPa"}}},
                          {"pore_pressure", {{"header", "u"}, {"unit", "kPa"}}},
                          {"cell_pressure", {{"header", "cell"}, {"unit", "kPa"}}}}}}}};
}

/// Ten rows of a CU test: e_a = 0.01 i, q = 20 i, u = 300 + 5 i, cell 400 (kPa).
inline std::string cu_csv() {
  std::string s = "ea,q,u,cell\n";
  for (int i = 0; i < 10; ++i)
    s += std::to_string(0.01 * i) + "," + std::to_string(20 * i) + "," + std::to_string(300 + 5 * i) + ",400\n";
  return s;
}

inline nlohmann::json series_of(const nlohmann::json& specimens) {
  return nlohmann::json{{"format", "triaxcal-test-series"}, {"version", 1}, {"name", "invented test series"}, {"specimens", specimens}};
}

/// Writes series.json (and the CSV as data.csv) into `dir`; returns the series path.
inline std::string write_series(const std::filesystem::path& dir, const nlohmann::json& series, const std::string& csv,
                                const std::string& csv_name = "data.csv") {
  write_text(dir / csv_name, csv);
  const auto path = dir / "series.json";
  write_text(path, series.dump(2));
  return path.string();
}

}  // namespace triaxcal::test
