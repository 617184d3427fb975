// The calibration file, and the problem it builds on the demo series (examples/calibrate, read
// once): tests, curves, parameters and constraints checked against a real series and model.
#include "fuzz_support.hpp"
#include "triaxcal/calibration_file.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/series.hpp"

#ifndef TRIAXCAL_SOURCE_DIR
#error "TRIAXCAL_SOURCE_DIR is needed for the demo series"
#endif

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  static const triaxcal::TestSeries series =
      triaxcal::read_test_series(std::string(TRIAXCAL_SOURCE_DIR) + "/examples/calibrate/demo_series.json");
  try {
    triaxcal::CalibrationFile file =
        triaxcal::parse_calibration_file(triaxcal::fuzz::text_of(data, size), "fuzz/fit.json");
    const triaxcal::ModelEntry& entry = triaxcal::find_model(file.model);
    (void)triaxcal::build_calibration_problem(
        file, series, entry.info(),
        [&entry](const triaxcal::ParameterValues& values) { return entry.create(values, "fuzz/fit.json"); });
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
