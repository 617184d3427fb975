// The AGS4 reader and its import into a test series (issue 16): the input is the AGS4 text.
#include "fuzz_support.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/error.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace triaxcal::fuzz;
  try {
    const triaxcal::Ags4File file = triaxcal::parse_ags4(text_of(data, size), "fuzz.ags");
    const triaxcal::Ags4Import imported = triaxcal::import_ags4(file, "fuzz", {{"clay", "", 0.0, 10.0}});
    (void)imported;
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
