// The parameter-set file, and its values resolved against the model it names.
#include "fuzz_support.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/models/registry.hpp"
#include "triaxcal/parameter_file.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    const triaxcal::ParameterFile file = triaxcal::parse_parameter_file(triaxcal::fuzz::text_of(data, size), "fuzz.json");
    const triaxcal::ModelEntry& entry = triaxcal::find_model(file.model);
    const triaxcal::ParameterValues values = triaxcal::resolve_parameter_file(entry.info(), file);
    (void)entry.create(values, "fuzz.json");
  } catch (const triaxcal::InputError&) {
  }
  return 0;
}
