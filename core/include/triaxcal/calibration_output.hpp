#pragma once
// What a calibration writes: the parameter-set JSON (format "triaxcal-parameters", version 1, which
// `triaxcal simulate --params` reads back unchanged), CSV of simulated beside measured curves, and
// an HDF5 archive (layout in docs/calibration-format.md). Every file is written atomically.

#include <filesystem>
#include <string>
#include <utility>
#include <vector>

#include "triaxcal/calibrate.hpp"
#include "triaxcal/core_export.hpp"

namespace triaxcal {

struct CalibrationProvenance {
  std::vector<std::pair<std::string, std::string>> inputs;  ///< (path, SHA-256 hex) of every input file
  std::string software_version;
  std::string created;       ///< UTC, ISO 8601
  std::string caution;       ///< the caution text every result carries
  std::string description;   ///< of the calibration
  std::vector<std::string> tests;  ///< test ids
};

/// SHA-256 of a byte string, lower-case hex (FIPS 180-4).
TRIAXCAL_CORE_EXPORT std::string sha256_hex(const std::string& data);
/// SHA-256 of a file's bytes; throws InputError "<path>: cannot open the file".
TRIAXCAL_CORE_EXPORT std::string sha256_file(const std::string& path);
/// Now, UTC, "YYYY-MM-DDThh:mm:ssZ".
TRIAXCAL_CORE_EXPORT std::string utc_now();

/// The parameter-set JSON text: every parameter with value, unit, status, interval; provenance,
/// fit quality and the caution in blocks that the reader keeps aside.
TRIAXCAL_CORE_EXPORT std::string format_parameter_set(const CalibrationSummary& summary, const ModelInfo& model,
                                                      const CalibrationProvenance& provenance);

/// One row a compared point: test,stage,quantity,stage_axial_strain[-],measured,simulated,unit (stage
/// numbered 1, 2, 3 for people; the strain since the start of that stage, engineering).
TRIAXCAL_CORE_EXPORT std::string format_fit_csv(const CalibrationSummary& summary);

/// HDF5 archive written to a temporary name beside `path`, then renamed. Throws InputError when the
/// file cannot be written.
TRIAXCAL_CORE_EXPORT void write_calibration_archive(const std::filesystem::path& path, const CalibrationSummary& summary,
                                                    const ModelInfo& model, const CalibrationProvenance& provenance,
                                                    const std::string& parameter_set_json);

}  // namespace triaxcal
