#include "triaxcal/sensitivity.hpp"

namespace triaxcal {

std::unique_ptr<DualModel> Model::with_derivatives(std::span<const double> /*seeds*/) const { return nullptr; }

}  // namespace triaxcal
