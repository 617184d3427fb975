#pragma once
// The Gmsh project file (*.txproj): JSON of our own, format "triaxcal-gmsh-project", version 1
// (plugin/gmsh/README.md). Soil units are keyed by physical group *name*: names survive re-meshing,
// renumbering and .geo_unrolled, tags do not. An empty file is a new project.

#include <nlohmann/json.hpp>

#include <filesystem>
#include <map>
#include <string>

namespace triaxcal::gmsh {

using nlohmann::json;

inline constexpr const char* kProjectFormat = "triaxcal-gmsh-project";
inline constexpr int kProjectVersion = 1;
inline constexpr const char* kExportFormat = "triaxcal-soil-units";

/// Where a soil unit's parameters come from.
enum class Source { none, parameter_set, calibration };
std::string to_string(Source source);  ///< "none", "parameter_set", "calibration"
std::string label_of(Source source);   ///< as the Gmsh tree shows it: "none", "parameter set", "calibration"
/// From a key or a label; throws InputError "<where>: expected one of: none, parameter_set, calibration, found \"x\"".
Source parse_source(const std::string& text, const std::string& where);

/// The settings a user makes for one soil unit (the inputs of its subtree).
struct UnitSettings {
  Source source = Source::none;
  std::string parameter_set;  ///< parameter-set JSON, relative to the project file's folder or absolute
  std::string calibration;    ///< calibration JSON (triaxcal fit's input), same
  // The check test drawn for a parameter set: a triaxial compression from an isotropic state.
  double check_p = 100.0;          ///< p' at the start (kPa)
  std::string check_drainage = "drained";  ///< "drained" or "undrained"
  double check_void_ratio = 0.7;   ///< e0 (models that need it)
  double check_ocr = 1.0;          ///< OCR (models that need it)
  double check_axial_strain = 0.15;  ///< to this axial strain (decimal)

  bool operator==(const UnitSettings&) const = default;
};

struct ProjectUnit {
  int dimension = 0;       ///< of the physical group, as last seen
  int tag = 0;             ///< physical tag as last seen (information only: never used as a key)
  UnitSettings settings;
  json result;             ///< what the last compute found (null: never computed); see README.md
};

struct Project {
  std::filesystem::path path;          ///< the project file
  std::string description;
  std::string export_file;             ///< relative to the project's folder; "" = <stem>.soil-units.json
  std::map<std::string, ProjectUnit> units;  ///< by physical group name

  std::filesystem::path folder() const { return path.parent_path(); }
  /// `file` against the project's folder unless absolute.
  std::filesystem::path resolve(const std::string& file) const;
  std::filesystem::path export_path() const;
};

/// Strict: unknown keys, wrong types and bad values throw InputError "<path>: <key path>: ...".
Project parse_project(const std::string& text, const std::filesystem::path& path);
Project read_project(const std::filesystem::path& path);
json project_json(const Project& project);
/// Atomic (temporary file, then rename).
void write_project(const Project& project);

}  // namespace triaxcal::gmsh
