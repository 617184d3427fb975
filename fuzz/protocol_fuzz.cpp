// The protocol file (parsed and validated; not simulated: the work of a simulation is bounded by
// its own limits, not by the reader).
#include "fuzz_support.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/protocol_json.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    (void)triaxcal::parse_protocol(triaxcal::fuzz::text_of(data, size), "fuzz.json");
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
