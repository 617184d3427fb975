// The AGS4 reader and its import into a test series (issue 16): the input is the AGS4 text, imported
// with a depth rule and with GEOL-strata rules (the stratum's code as a condition and as the name).
#include "fuzz_support.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/error.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  using namespace triaxcal::fuzz;
  triaxcal::Ags4File file;
  try {
    file = triaxcal::parse_ags4(text_of(data, size), "fuzz.ags");
  } catch (const triaxcal::InputError&) {
    return 0;
  }
  std::vector<triaxcal::MaterialRule> by_depth(1), by_strata(2);
  by_depth[0].material = "clay";
  by_depth[0].to = 10.0;
  by_strata[0].material = "clay";
  by_strata[0].depth_range = false;
  by_strata[0].geol = {{"GEOL_GEOL", "HMC"}};
  by_strata[1].material_from_geol = "GEOL_GEOL";
  by_strata[1].depth_range = false;
  for (const auto* rules : {&by_depth, &by_strata}) {
    try {
      const triaxcal::Ags4Import imported = triaxcal::import_ags4(file, "fuzz", *rules);
      (void)imported;
    } catch (const triaxcal::InputError&) {
    }
  }
  return 0;
}
