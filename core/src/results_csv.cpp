#include "triaxcal/results_csv.hpp"

#include <cmath>
#include <cstdio>

namespace triaxcal {

namespace {
void put(std::string& out, double v) {
  char buf[32];
  if (std::isnan(v)) {
    out += ",";
    return;
  }
  std::snprintf(buf, sizeof buf, ",%.10g", v);
  out += buf;
}
}  // namespace

std::string format_results_csv(const std::vector<NamedResult>& results, const std::vector<std::string>& state_names) {
  std::string out =
      "test,stage,step,axial_strain[-],radial_strain[-],volumetric_strain[-],axial_stress[kPa],radial_stress[kPa],"
      "p[kPa],q[kPa],excess_pore_pressure[kPa],void_ratio[-],stress_ratio[-],cuts";
  for (const auto& s : state_names) out += "," + s;
  out += "\n";
  for (const auto& named : results) {
    for (const StepRecord& r : named.result->steps) {
      out += named.test + "," + std::to_string(r.stage) + "," + std::to_string(r.step);
      for (double v : {r.axial_strain, r.radial_strain, r.volumetric_strain, r.axial_stress, r.radial_stress, r.p, r.q,
                       r.excess_pore_pressure, r.void_ratio, r.stress_ratio})
        put(out, v);
      out += "," + std::to_string(r.cuts);
      for (std::size_t i = 0; i < state_names.size(); ++i) put(out, r.state[i]);
      out += "\n";
    }
  }
  return out;
}

}  // namespace triaxcal
