// The derivative version of Modified Cam-Clay (Model::with_derivatives, sensitivity.hpp): the
// model's own arithmetic, CamClayCore (cam_clay_core_impl.hpp), on dual numbers.
#include <array>
#include <memory>
#include <string>

#include "modified_cam_clay/cam_clay_core_impl.hpp"
#include "modified_cam_clay/modified_cam_clay.hpp"
#include "seeded_parameters.hpp"
#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

namespace {

// The derivative version: the same arithmetic on dual numbers.
class ModifiedCamClayDerivatives final : public DualModel {
 public:
  explicit ModifiedCamClayDerivatives(const std::array<Dual, kCamClayParameters>& parameters) : core_(parameters) {}
  void initialise(const InitialConditions& conditions, DualState& state) const override {
    core_.initialise(conditions, state);
  }
  IntegrationResult integrate(const DualState& in, const DualVec6& strain_increment, DualState& out,
                              Mat6& tangent) const override {
    return core_.integrate(in, strain_increment, out, tangent);
  }

 private:
  CamClayCore<Dual> core_;
};

}  // namespace

std::unique_ptr<DualModel> ModifiedCamClay::with_derivatives(std::span<const double> seeds) const {
  return std::make_unique<ModifiedCamClayDerivatives>(seeded_parameters("modified_cam_clay", values_, seeds));
}

}  // namespace triaxcal
