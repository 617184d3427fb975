// The test-series reader with its lab CSV data: the input is the series JSON, then a line
// "--csv--", then the content of data.csv (the file a seed's specimens name). Without the
// separator the whole input is the series and data.csv is left as the last input wrote it.
#include <cstring>

#include "fuzz_support.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/series.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace triaxcal::fuzz;
  const std::string input = text_of(data, size);
  const std::string separator = "\n--csv--\n";
  const std::size_t cut = input.find(separator);
  const auto series = scratch() / "series.json";
  if (cut == std::string::npos) {
    write_file(series, input.data(), input.size());
  } else {
    write_file(series, input.data(), cut);
    const std::size_t csv = cut + separator.size();
    write_file(scratch() / "data.csv", input.data() + csv, input.size() - csv);
  }
  const triaxcal::SeriesCheck check = triaxcal::check_test_series(series.string());  // collects InputErrors
  (void)check;
  try {
    (void)triaxcal::read_test_series(series.string());
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
