// The report input (<name>.report.json) that `triaxcal report` reads.
#include "fuzz_support.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/report_input.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)triaxcal::report::parse_report_input(triaxcal::fuzz::text_of(data, size), "fuzz.report.json");
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
