#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <ctime>
#include <sstream>

#include <nlohmann/json.hpp>

#include "../json_checks.hpp"
#include "triaxcal/calibration_output.hpp"
#include "triaxcal/parameter_file.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/results_csv.hpp"

namespace triaxcal {

// SHA-256 after FIPS 180-4 (2015), "Secure Hash Standard", sections 4.1.2, 4.2.2 and 6.2.
std::string sha256_hex(const std::string& data) {
  static constexpr std::array<std::uint32_t, 64> k = {
      0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5, 0xd807aa98,
      0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174, 0xe49b69c1, 0xefbe4786,
      0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da, 0x983e5152, 0xa831c66d, 0xb00327c8,
      0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967, 0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13,
      0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85, 0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819,
      0xd6990624, 0xf40e3585, 0x106aa070, 0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a,
      0x5b9cca4f, 0x682e6ff3, 0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7,
      0xc67178f2};
  std::array<std::uint32_t, 8> h = {0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a,
                                    0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19};
  std::string m = data;
  const std::uint64_t bits = static_cast<std::uint64_t>(data.size()) * 8u;
  m.push_back(static_cast<char>(0x80));
  while (m.size() % 64 != 56) m.push_back('\0');
  for (int i = 7; i >= 0; --i) m.push_back(static_cast<char>((bits >> (8 * i)) & 0xffu));
  auto rotr = [](std::uint32_t x, int n) { return (x >> n) | (x << (32 - n)); };
  for (std::size_t block = 0; block < m.size(); block += 64) {
    std::array<std::uint32_t, 64> w{};
    for (int t = 0; t < 16; ++t) {
      const auto* p = reinterpret_cast<const unsigned char*>(m.data() + block + 4 * static_cast<std::size_t>(t));
      w[static_cast<std::size_t>(t)] = (std::uint32_t{p[0]} << 24) | (std::uint32_t{p[1]} << 16) | (std::uint32_t{p[2]} << 8) | p[3];
    }
    for (std::size_t t = 16; t < 64; ++t) {
      const std::uint32_t s0 = rotr(w[t - 15], 7) ^ rotr(w[t - 15], 18) ^ (w[t - 15] >> 3);
      const std::uint32_t s1 = rotr(w[t - 2], 17) ^ rotr(w[t - 2], 19) ^ (w[t - 2] >> 10);
      w[t] = w[t - 16] + s0 + w[t - 7] + s1;
    }
    std::uint32_t a = h[0], b = h[1], c = h[2], d = h[3], e = h[4], f = h[5], g = h[6], hh = h[7];
    for (std::size_t t = 0; t < 64; ++t) {
      const std::uint32_t t1 = hh + (rotr(e, 6) ^ rotr(e, 11) ^ rotr(e, 25)) + ((e & f) ^ (~e & g)) + k[t] + w[t];
      const std::uint32_t t2 = (rotr(a, 2) ^ rotr(a, 13) ^ rotr(a, 22)) + ((a & b) ^ (a & c) ^ (b & c));
      hh = g;
      g = f;
      f = e;
      e = d + t1;
      d = c;
      c = b;
      b = a;
      a = t1 + t2;
    }
    h[0] += a; h[1] += b; h[2] += c; h[3] += d; h[4] += e; h[5] += f; h[6] += g; h[7] += hh;
  }
  std::string out;
  char buf[9];
  for (std::uint32_t v : h) {
    std::snprintf(buf, sizeof buf, "%08x", v);
    out += buf;
  }
  return out;
}

std::string sha256_file(const std::string& path) { return sha256_hex(detail::read_text_file(path)); }

std::string utc_now() {
  const std::time_t t = std::time(nullptr);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

namespace {
using nlohmann::ordered_json;

ordered_json number_or_null(double v) { return std::isfinite(v) ? ordered_json(v) : ordered_json(nullptr); }
}  // namespace

std::string format_parameter_set(const CalibrationSummary& s, const ModelInfo& model, const CalibrationProvenance& prov) {
  ordered_json root;
  root["format"] = kParameterFormat;
  root["version"] = kParameterVersion;
  root["model"] = model.name;
  root["description"] = "Fitted by triaxcal fit" + (prov.description.empty() ? std::string() : ": " + prov.description);
  ordered_json params = ordered_json::object();
  for (const FittedParameter& p : s.parameters) {
    ordered_json o;
    const int index = parameter_index(model, p.name);
    if (index >= 0 && !model.parameters[static_cast<std::size_t>(index)].words.empty())
      o["value"] = word_of(model.parameters[static_cast<std::size_t>(index)], p.value);  // a word parameter
    else
      o["value"] = p.value;
    o["unit"] = p.unit;
    o["status"] = to_string(p.status);
    if (p.status == ParameterStatus::free) {
      o["standard_error"] = number_or_null(p.standard_error);
      o["interval_95"] = ordered_json::array({number_or_null(p.interval_low), number_or_null(p.interval_high)});
      o["lower_bound"] = p.lower;
      o["upper_bound"] = p.upper;
    } else if (p.status == ParameterStatus::tied) {
      o["tied_to"] = p.expression;
    }
    params[p.name] = o;
  }
  root["parameters"] = params;
  ordered_json fit;
  fit["outcome"] = to_string(s.outcome);
  fit["outcome_reason"] = s.outcome_reason;
  fit["termination"] = to_string(s.termination);
  fit["message"] = s.message;
  fit["objective"] = number_or_null(s.objective);
  fit["evaluations"] = s.evaluations;
  fit["failed_simulations"] = s.failed_simulations;
  fit["work_limited_simulations"] = s.work_limited_simulations;
  fit["jacobian_evaluations"] = s.jacobian_evaluations;
  fit["exact_jacobians"] = s.exact_jacobians;
  fit["difference_jacobians"] = s.difference_jacobians;
  fit["local_runs"] = s.local_runs;
  fit["local_runs_at_best"] = s.starts_at_best;
  fit["failed_starts"] = s.failed_starts;
  fit["wall_time_s"] = s.wall_time;
  fit["threads"] = s.threads;
  fit["global_algorithm"] = s.global_algorithm;
  fit["local_algorithm"] = s.local_algorithm;
  fit["loss"] = s.loss;
  ordered_json options = ordered_json::object();
  std::istringstream lines(s.options_text);
  for (std::string line; std::getline(lines, line);) {
    const auto eq = line.find(" = ");
    if (eq != std::string::npos) options[line.substr(0, eq)] = line.substr(eq + 3);
  }
  fit["options"] = options;
  if (!s.fit_stages.empty()) {
    // A staged fit: each stage's own outcome; the outcome above is the worst honest one of them.
    ordered_json stages = ordered_json::array();
    for (const FitStageSummary& f : s.fit_stages) {
      ordered_json sj;
      sj["free"] = f.free;
      if (!f.note.empty()) sj["note"] = f.note;
      sj["run"] = f.run;
      sj["outcome"] = f.run ? ordered_json(to_string(f.outcome)) : ordered_json(nullptr);
      sj["outcome_reason"] = f.outcome_reason;
      sj["termination"] = to_string(f.termination);
      sj["objective"] = number_or_null(f.objective);
      sj["start_objective"] = number_or_null(f.start_objective);
      sj["evaluations"] = f.evaluations;
      sj["local_runs"] = f.local_runs;
      sj["local_runs_at_best"] = f.starts_at_best;
      stages.push_back(sj);
    }
    fit["stages"] = stages;
  }
  if (!s.uncertainty_basis.empty()) fit["intervals_from"] = s.uncertainty_basis;
  ordered_json tests = ordered_json::array();
  for (const TestFit& t : s.tests) {
    ordered_json tj;
    tj["id"] = t.id;
    tj["simulated"] = t.simulated;
    ordered_json curves = ordered_json::array();
    for (const CurveFit& c : t.curves)
      curves.push_back({{"quantity", to_string(c.y)},
                        {"stage", std::max(1, c.shear_stage)},
                        {"unit", unit_of(c.y)},
                        {"points", c.points},
                        {"rmse", number_or_null(c.rmse)},
                        {"r_squared", number_or_null(c.r_squared)},
                        {"used", c.used},
                        {"poor_fit", c.poor}});
    tj["curves"] = curves;
    tests.push_back(tj);
  }
  fit["tests"] = tests;
  fit["warnings"] = s.warnings;
  root["fit"] = fit;
  ordered_json provenance;
  provenance["software"] = "triaxcal " + prov.software_version;
  provenance["created"] = prov.created;
  ordered_json inputs = ordered_json::array();
  for (const auto& [path, hash] : prov.inputs) inputs.push_back({{"path", path}, {"sha256", hash}});
  provenance["inputs"] = inputs;
  root["provenance"] = provenance;
  root["caution"] = prov.caution;
  return root.dump(2) + "\n";
}

std::string format_fit_csv(const CalibrationSummary& s) {
  // One row a compared point. stage: the shear stage of the specimen, numbered 1, 2, 3 for people
  // (1 for a specimen with one shear stage and for an oedometer test); stage_axial_strain: the
  // engineering axial strain since the start of that stage (dL / L at the stage start), as compared.
  std::string out = "test,stage,quantity,stage_axial_strain[-],measured,simulated,unit\n";
  char buf[96];
  for (const TestFit& t : s.tests)
    for (const CurveFit& c : t.curves)
      for (std::size_t i = 0; i < c.xs.size(); ++i) {
        out += csv_field(t.id) + "," + std::to_string(std::max(1, c.shear_stage)) + "," + to_string(c.y);
        const double sim = i < c.simulated.size() ? c.simulated[i] : kNotGiven;
        if (std::isnan(sim))
          std::snprintf(buf, sizeof buf, ",%.10g,%.10g,", c.xs[i], c.measured[i]);
        else
          std::snprintf(buf, sizeof buf, ",%.10g,%.10g,%.10g", c.xs[i], c.measured[i], sim);
        out += buf;
        out += "," + unit_of(c.y) + "\n";
      }
  return out;
}

}  // namespace triaxcal
