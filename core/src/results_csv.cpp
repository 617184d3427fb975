#include "triaxcal/results_csv.hpp"

#include <cmath>
#include <cstdio>

#include "triaxcal/error.hpp"

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

std::string csv_field(const std::string& text) {
  if (text.find_first_of(",\"\r\n") == std::string::npos) return text;
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
  return out;
}

std::vector<CsvRecord> parse_csv(const std::string& text, const std::string& source) {
  std::vector<CsvRecord> records;
  CsvRecord record;
  std::string field;
  int line = 1;
  bool started = false;  // the record has a character or a separator
  bool closed = false;   // the current field was quoted and its closing quote read
  auto fail = [&](int at, const std::string& what) { throw InputError(source + ": line " + std::to_string(at) + ": " + what); };
  auto end_record = [&]() {
    if (started) {
      record.fields.push_back(field);
      records.push_back(record);
    }
    record = CsvRecord{};
    field.clear();
    started = closed = false;
  };
  std::size_t i = 0;
  const std::size_t n = text.size();
  while (i < n) {
    if (!started) record.line = line;
    const char c = text[i];
    if (c == '"') {
      if (!field.empty() || closed) fail(line, "a double quote inside an unquoted field");
      const int opened = line;
      started = true;
      for (++i;; ++i) {
        if (i >= n) fail(opened, "a quoted field is not closed");
        if (text[i] == '"') {
          if (i + 1 < n && text[i + 1] == '"') {
            field += '"';
            ++i;
            continue;
          }
          break;
        }
        if (text[i] == '\n') ++line;
        field += text[i];
      }
      ++i;
      closed = true;
    } else if (c == ',') {
      record.fields.push_back(field);
      field.clear();
      started = true;
      closed = false;
      ++i;
    } else if (c == '\n' || (c == '\r' && i + 1 < n && text[i + 1] == '\n')) {
      end_record();
      i += c == '\r' ? 2 : 1;
      ++line;
    } else {
      if (closed) fail(line, "text after the closing quote of a field");
      field += c;
      started = true;
      ++i;
    }
  }
  end_record();
  return records;
}

std::string format_results_csv(const std::vector<NamedResult>& results, const std::vector<std::string>& state_names) {
  std::string out =
      "test,stage,step,axial_strain[-],radial_strain[-],volumetric_strain[-],stage_axial_strain[-],"
      "stage_volumetric_strain[-],axial_stress[kPa],radial_stress[kPa],"
      "p[kPa],q[kPa],excess_pore_pressure[kPa],void_ratio[-],stress_ratio[-],cuts";
  for (const auto& s : state_names) out += "," + csv_field(s);
  out += "\n";
  for (const auto& named : results) {
    const std::string test = csv_field(named.test);
    for (const StepRecord& r : named.result->steps) {
      out += test + "," + std::to_string(r.stage) + "," + std::to_string(r.step);
      // Engineering strains (conventions.hpp): since the protocol start, then since the stage start.
      for (double v : {engineering_strain(r.axial_strain), engineering_strain(r.radial_strain),
                       engineering_strain(r.volumetric_strain), r.stage_axial_strain, r.stage_volumetric_strain,
                       r.axial_stress, r.radial_stress, r.p, r.q, r.excess_pore_pressure, r.void_ratio, r.stress_ratio})
        put(out, v);
      out += "," + std::to_string(r.cuts);
      for (std::size_t i = 0; i < state_names.size(); ++i) put(out, r.state[i]);
      out += "\n";
    }
  }
  return out;
}

}  // namespace triaxcal
