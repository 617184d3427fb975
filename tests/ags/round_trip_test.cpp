// The failure values of the bundled invented Kestrel Bay series (examples/kestrel_bay), written as an AGS4
// file by this test and imported again, give the same interpretation as the series (issue 16).
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>

#include "triaxcal/ags4.hpp"
#include "triaxcal/interpret.hpp"
#include "triaxcal/series.hpp"

using namespace triaxcal;
namespace fs = std::filesystem;

namespace {

std::string q(const std::string& s) { return "\"" + s + "\""; }

std::string row(std::initializer_list<std::string> fields) {
  std::string out;
  for (const std::string& f : fields) out += (out.empty() ? "" : ",") + q(f);
  return out + "\r\n";
}

std::string num(double v, int decimals) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", decimals, v);
  return buf;
}

/// The AGS4 text of the series' failure points by the largest deviator stress: one location a material,
/// one sample a specimen, TRIG/TRIT for UU and TREG/TRET (stages by TESN) for CU and CD. Values with
/// 6 decimals (6DP): the import reads them back to within 5e-7 kPa.
std::string write_ags4(const TestSeries& s, const Interpretation& r) {
  std::string samp, trig, trit, treg, tret;
  const std::string keys = "\"LOCA_ID\",\"SAMP_TOP\",\"SAMP_REF\",\"SAMP_TYPE\",\"SAMP_ID\",\"SPEC_REF\",\"SPEC_DPTH\"";
  for (std::size_t i = 0; i < s.specimens.size(); ++i) {
    const Specimen& sp = s.specimens[i];
    if (sp.is_oedometer()) continue;
    const std::string loc = sp.material == "sand S" ? "KB-S" : "KB-C";
    const std::string top = num(1.0 + static_cast<double>(i), 2), dpth = num(1.1 + static_cast<double>(i), 2);
    const std::string key = q(loc) + "," + q(top) + "," + q(std::to_string(i + 1)) + ",\"U\"," + q(sp.id) + ",\"1\"," + q(dpth);
    samp += row({"DATA", loc, top, std::to_string(i + 1), "U", sp.id});
    int tesn = 0;
    bool effective = false;
    for (const StageInterpretation& st : r.stages) {
      if (st.specimen != sp.id) continue;
      const FailurePoint& f = st.by_max_deviator;
      REQUIRE(f.index >= 0);
      ++tesn;
      if (st.test == ShearType::uu) {
        trit += "\"DATA\"," + key + "," + row({std::to_string(tesn), num(sp.diameter, 2), num(sp.height, 2), num(f.cell_pressure, 6),
                                         num(f.q, 6), num(100.0 * f.axial_strain, 6)});
        continue;
      }
      effective = true;
      // u_f = excess + back pressure; the cell pressure at failure s3' + u_f (the reduction's s_r' = cell - u).
      const double uf = f.excess_pore_pressure + sp.back_pressure;
      const double cell = f.s3 + uf;
      const double u0 = cell - st.consolidation_radial;
      tret += "\"DATA\"," + key + "," + row({std::to_string(tesn), num(sp.diameter, 2), num(sp.height, 2), num(st.consolidation_radial, 6),
                                       num(cell, 6), num(u0, 6), num(100.0 * f.axial_strain, 6), num(f.q, 6), num(uf, 6),
                                       num(sp.back_pressure, 6)});
    }
    const std::string type = sp.stages[static_cast<std::size_t>(sp.shear_stages().front())].shear == ShearType::cd ? "CD" : "CU";
    if (effective) treg += "\"DATA\"," + key + "," + row({type, "Maximum deviator stress"});
    else trig += "\"DATA\"," + key + "," + row({"UU"});
  }
  std::string t;
  t += row({"GROUP", "PROJ"}) + row({"HEADING", "PROJ_ID", "PROJ_NAME"}) + row({"UNIT", "", ""}) + row({"TYPE", "ID", "X"}) +
       row({"DATA", "KB-RT", "Kestrel Bay (invented), failure values written by tests/ags/round_trip_test.cpp"}) + "\r\n";
  t += row({"GROUP", "LOCA"}) + row({"HEADING", "LOCA_ID"}) + row({"UNIT", ""}) + row({"TYPE", "ID"}) + row({"DATA", "KB-S"}) +
       row({"DATA", "KB-C"}) + "\r\n";
  t += row({"GROUP", "SAMP"}) + row({"HEADING", "LOCA_ID", "SAMP_TOP", "SAMP_REF", "SAMP_TYPE", "SAMP_ID"}) +
       row({"UNIT", "", "m", "", "", ""}) + row({"TYPE", "ID", "2DP", "X", "PA", "ID"}) + samp + "\r\n";
  const std::string key_units = "\"\",\"m\",\"\",\"\",\"\",\"\",\"m\"", key_types = "\"ID\",\"2DP\",\"X\",\"PA\",\"ID\",\"X\",\"2DP\"";
  t += row({"GROUP", "TRIG"}) + "\"HEADING\"," + keys + ",\"TRIG_TYPE\"\r\n" + "\"UNIT\"," + key_units + ",\"\"\r\n" + "\"TYPE\"," +
       key_types + ",\"PA\"\r\n" + trig + "\r\n";
  t += row({"GROUP", "TRIT"}) + "\"HEADING\"," + keys + ",\"TRIT_TESN\",\"TRIT_SDIA\",\"TRIT_SLEN\",\"TRIT_CELL\",\"TRIT_DEVF\",\"TRIT_STRN\"\r\n" +
       "\"UNIT\"," + key_units + ",\"\",\"mm\",\"mm\",\"kPa\",\"kPa\",\"%\"\r\n" + "\"TYPE\"," + key_types +
       ",\"X\",\"2DP\",\"2DP\",\"6DP\",\"6DP\",\"6DP\"\r\n" + trit + "\r\n";
  t += row({"GROUP", "TREG"}) + "\"HEADING\"," + keys + ",\"TREG_TYPE\",\"TREG_FCR\"\r\n" + "\"UNIT\"," + key_units + ",\"\",\"\"\r\n" +
       "\"TYPE\"," + key_types + ",\"PA\",\"X\"\r\n" + treg + "\r\n";
  t += row({"GROUP", "TRET"}) + "\"HEADING\"," + keys +
       ",\"TRET_TESN\",\"TRET_SDIA\",\"TRET_LEN\",\"TRET_CONP\",\"TRET_CELL\",\"TRET_PWPI\",\"TRET_STRN\",\"TRET_DEVF\",\"TRET_PWPF\","
       "\"TRET_BACK\"\r\n" +
       "\"UNIT\"," + key_units + ",\"\",\"mm\",\"mm\",\"kPa\",\"kPa\",\"kPa\",\"%\",\"kPa\",\"kPa\",\"kPa\"\r\n" + "\"TYPE\"," + key_types +
       ",\"X\",\"2DP\",\"2DP\",\"6DP\",\"6DP\",\"6DP\",\"6DP\",\"6DP\",\"6DP\",\"6DP\"\r\n" + tret;
  return t;
}

}  // namespace

TEST_CASE("the Kestrel Bay series' failure values written as AGS4 and imported again give the same interpretation") {
  const TestSeries series = read_test_series(std::string(TRIAXCAL_SOURCE_DIR) + "/examples/kestrel_bay/kestrel_bay_series.json");
  const Interpretation from_curves = interpret(series, InterpretOptions{});
  const std::string text = write_ags4(series, from_curves);
  const fs::path dir = fs::temp_directory_path() / "triaxcal_ags_round_trip";
  fs::create_directories(dir);
  {
    std::ofstream out(dir / "kestrel_bay.ags", std::ios::binary);
    out << text;
  }
  const Ags4File file = read_ags4((dir / "kestrel_bay.ags").string());
  std::vector<MaterialRule> rules(2);
  for (std::size_t i = 0; i < 2; ++i) {
    rules[i].material = i == 0 ? "sand S" : "clay C";
    rules[i].location = i == 0 ? "KB-S" : "KB-C";
    rules[i].from = 0.0;
    rules[i].to = 100.0;
  }
  const Ags4Import imported = import_ags4(file, "kestrel bay again", rules);
  {
    std::ofstream out(dir / "series.json", std::ios::binary);
    out << imported.series_json;
  }
  const TestSeries again = read_test_series((dir / "series.json").string());
  for (const std::string material : {"sand S", "clay C"}) {
    INFO(material);
    InterpretOptions o;
    o.material = material;
    const Interpretation a = interpret(series, o), b = interpret(again, o);
    const StrengthEnvelope& ea = a.envelopes.front();
    const StrengthEnvelope& eb = b.envelopes.front();
    REQUIRE(ea.criterion == FailureCriterion::max_deviator);
    CHECK(ea.st.n == eb.st.n);
    CHECK(ea.st.n >= 3);
    // Values travel with 6 decimals (kPa): the fits agree far inside 1e-6.
    CHECK(eb.phi == Approx(ea.phi).epsilon(1e-7));
    CHECK(eb.cohesion == Approx(ea.cohesion).epsilon(1e-6).margin(1e-6));
    CHECK(eb.phi_pq == Approx(ea.phi_pq).epsilon(1e-7));
    CHECK(eb.design_phi == Approx(ea.design_phi).epsilon(1e-7));
    CHECK(eb.design_cohesion == Approx(ea.design_cohesion).epsilon(1e-6).margin(1e-6));
    CHECK(a.uu_count == b.uu_count);
    if (a.uu_count > 0) {
      CHECK(b.cu_mean == Approx(a.cu_mean).epsilon(1e-9));
      CHECK(b.cu_min == Approx(a.cu_min).epsilon(1e-9));
      CHECK(b.cu_max == Approx(a.cu_max).epsilon(1e-9));
    }
  }
}
