#pragma once
// Internal to core/src/series: the test-series JSON (specimens, stages, data-file declarations) as
// read by series_json.cpp; series.cpp reads and reduces the data files it declares.

#include <string>
#include <vector>

#include "triaxcal/lab_csv.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal::detail {

struct SpecimenJson {
  Specimen specimen;
  std::string path;  // JSON path, e.g. specimens[2]
};

struct ParsedSeries {
  TestSeries series;
  std::vector<SpecimenJson> specimens;
};

/// The series file and every specimen's stages and data declaration (no data file read yet).
/// Throws InputError naming the file and the key path.
ParsedSeries parse_series_json(const std::string& path);

/// The kind of a declared column quantity (for its unit).
QuantityKind kind_of(const std::string& quantity);

}  // namespace triaxcal::detail
