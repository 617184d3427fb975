#include "triaxcal/models/registry.hpp"

#include "hyperbolic_hardening/hyperbolic_hardening.hpp"
#include "modified_cam_clay/modified_cam_clay.hpp"
#include "mohr_coulomb/mohr_coulomb.hpp"
#include "sand_state_bounding/sand_state_bounding.hpp"
#include "triaxcal/error.hpp"
#include "undrained_tresca/undrained_tresca.hpp"

namespace triaxcal {

const std::vector<ModelEntry>& model_registry() {
  static const std::vector<ModelEntry> entries = {
      {&MohrCoulomb::model_info, &MohrCoulomb::create},
      {&ModifiedCamClay::model_info, &ModifiedCamClay::create},
      {&HyperbolicHardening::model_info, &HyperbolicHardening::create},
      {&UndrainedTresca::model_info, &UndrainedTresca::create},
      {&SandStateBounding::model_info, &SandStateBounding::create},
  };
  return entries;
}

const ModelEntry& find_model(const std::string& name) {
  std::string known;
  for (const ModelEntry& e : model_registry()) {
    if (e.info().name == name) return e;
    known += (known.empty() ? "" : ", ") + e.info().name;
  }
  throw InputError("unknown model '" + name + "' (known: " + known + ")");
}

}  // namespace triaxcal
