#pragma once
// The parameter-set file: JSON of our own, format "triaxcal-parameters", version 1. A calibration
// writes it with values, units, status and intervals; simulate reads it back unchanged.

#include <map>
#include <string>

#include "triaxcal/core_export.hpp"
#include "triaxcal/model.hpp"

namespace triaxcal {

inline constexpr const char* kParameterFormat = "triaxcal-parameters";
inline constexpr int kParameterVersion = 1;

struct ParameterFile {
  std::string source;                    ///< file name for messages
  std::string model;                     ///< registry name
  std::map<std::string, double> values;  ///< by parameter name
  std::map<std::string, std::string> units;  ///< declared units, where given
  std::map<std::string, std::string> words;  ///< word parameters as written (ParameterInfo::words)
};

/// Each parameter is a number or an object {"value": v, "unit": "kPa", ...}. Unknown top-level
/// keys are rejected; a "provenance", "fit" or "caution" block is kept for the reader and ignored.
TRIAXCAL_CORE_EXPORT ParameterFile parse_parameter_file(const std::string& text, const std::string& source);
TRIAXCAL_CORE_EXPORT ParameterFile read_parameter_file(const std::string& path);

/// Values in metadata order, with defaults; a declared unit that differs from the model's throws.
TRIAXCAL_CORE_EXPORT ParameterValues resolve_parameter_file(const ModelInfo& info, const ParameterFile& file);

}  // namespace triaxcal
