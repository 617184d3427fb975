// An AGS4 file into a test series (docs/ags4-import.md). Groups and headings: AGS4 data format 4.1,
// as summarised in issue 16 (PROJ, LOCA, SAMP, TRIG/TRIT, TREG/TRET, CONG/CONS; specimen keys LOCA_ID,
// SAMP_TOP, SAMP_REF, SAMP_TYPE, SAMP_ID, SPEC_REF, SPEC_DPTH; stages by *_TESN).
#include <nlohmann/json.hpp>

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
#include <set>

#include "../json_checks.hpp"
#include "triaxcal/ags4.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/series.hpp"

namespace triaxcal {

namespace {

using nlohmann::json;

bool given(double v) { return !std::isnan(v); }
std::string fmt(double v) { return format_number(v); }

constexpr const char* kSampleKeys[] = {"LOCA_ID", "SAMP_TOP", "SAMP_REF", "SAMP_TYPE", "SAMP_ID"};
constexpr const char* kSpecimenKeys[] = {"LOCA_ID", "SAMP_TOP", "SAMP_REF", "SAMP_TYPE", "SAMP_ID", "SPEC_REF", "SPEC_DPTH"};

/// Key fields compare as text, depths (SAMP_TOP, SPEC_DPTH) as numbers: "5.0" and "5.00" are one depth.
bool same_key_value(const std::string& heading, const std::string& a, const std::string& b) {
  if (heading == "SAMP_TOP" || heading == "SPEC_DPTH") {
    if (a.empty() || b.empty()) return a == b;
    char* ea = nullptr;
    char* eb = nullptr;
    const double x = std::strtod(a.c_str(), &ea), y = std::strtod(b.c_str(), &eb);
    if (*ea != '\0' || *eb != '\0') return a == b;
    return std::abs(x - y) <= 1e-9 * std::max(1.0, std::abs(x));
  }
  return a == b;
}

std::string field(const Ags4Group& g, const Ags4Group::Row& r, const std::string& heading) {
  const int c = g.column(heading);
  return c < 0 ? std::string() : r.text[static_cast<std::size_t>(c)];
}

/// The parent row of `row` (by the key headings both groups have), or an InputError naming the first
/// key heading from which no parent row matches.
template <std::size_t N>
const Ags4Group::Row& resolve(const Ags4File& f, const Ags4Group& child, const Ags4Group::Row& row, const Ags4Group& parent,
                              const char* const (&keys)[N]) {
  std::vector<const Ags4Group::Row*> candidates;
  for (const auto& p : parent.rows) candidates.push_back(&p);
  std::string shown;
  for (const char* k : keys) {
    if (child.column(k) < 0 || parent.column(k) < 0) continue;
    const std::string v = field(child, row, k);
    shown += (shown.empty() ? "" : ", ") + std::string(k) + " '" + v + "'";
    std::vector<const Ags4Group::Row*> kept;
    for (const auto* p : candidates)
      if (same_key_value(k, field(parent, *p, k), v)) kept.push_back(p);
    if (kept.empty())
      throw InputError(ags4_where(f, child, row.line, k) + ": the key (" + shown + ") does not resolve: no " + parent.name +
                       " row has it");
    candidates = std::move(kept);
  }
  if (shown.empty())
    throw InputError(ags4_where(f, child, row.line, "") + ": no key heading shared with group " + parent.name + " (" + keys[0] + ", ...)");
  return *candidates.front();
}

const Ags4Group& require_group(const Ags4File& f, const std::string& name, const std::string& why) {
  const Ags4Group* g = f.group(name);
  if (!g) throw InputError(f.source + ": group " + name + " is missing (" + why + ")");
  return *g;
}

void require_heading(const Ags4File& f, const Ags4Group& g, const std::string& heading) {
  if (g.column(heading) < 0)
    throw InputError(ags4_where(f, g, g.line + 1, heading) + ": the heading is missing (it is required to import the group)");
}

/// The depth of a specimen (m): SPEC_DPTH, else SAMP_TOP.
double specimen_depth(const Ags4File& f, const Ags4Group& g, const Ags4Group::Row& r) {
  double z = g.column("SPEC_DPTH") >= 0 ? ags4_number(f, g, r, "SPEC_DPTH", Ags4Dimension::length, false) : std::nan("");
  if (!given(z)) z = ags4_number(f, g, r, "SAMP_TOP", Ags4Dimension::length, true);
  return z;
}

std::string specimen_id(const Ags4Group& g, const Ags4Group::Row& r) {
  std::string id = field(g, r, "LOCA_ID") + "/" + field(g, r, "SAMP_TOP") + "/" + field(g, r, "SAMP_REF");
  const std::string spec = field(g, r, "SPEC_REF");
  return spec.empty() ? id : id + "/" + spec;
}

std::string file_name_of(const std::string& id) {
  std::string out;
  for (char c : id) out.push_back((std::isalnum(static_cast<unsigned char>(c)) || c == '.' || c == '-') ? c : '_');
  return out;
}

/// One specimen of the file: its parent row (TRIG, TREG or CONG) and its test rows (TRIT, TRET, CONS) by stage.
struct Found {
  const Ags4Group* parent = nullptr;
  const Ags4Group::Row* row = nullptr;
  std::string id;
  std::string location;
  double depth = 0.0;
  std::string test;  // UU, CU, CD, OED
  std::vector<const Ags4Group::Row*> rows;
  std::string material;
  const Ags4Group::Row* stratum = nullptr;  ///< the GEOL row that holds it (when the material map uses GEOL)
};

std::string depth_text(const Found& s);

/// Groups the child rows by the specimen they resolve to, in file order of the parents.
std::vector<Found> collect(const Ags4File& f, const Ags4Group& parent, const Ags4Group& child, const char* stage_heading) {
  std::vector<Found> out;
  std::map<const Ags4Group::Row*, std::size_t> index;
  for (const auto& p : parent.rows) {
    Found s;
    s.parent = &parent;
    s.row = &p;
    s.id = specimen_id(parent, p);
    s.location = field(parent, p, "LOCA_ID");
    s.depth = specimen_depth(f, parent, p);
    index[&p] = out.size();
    out.push_back(std::move(s));
  }
  for (const auto& r : child.rows) {
    const Ags4Group::Row& p = resolve(f, child, r, parent, kSpecimenKeys);
    out[index.at(&p)].rows.push_back(&r);
  }
  // Stages in the order of their number.
  for (Found& s : out) {
    std::map<double, int> seen;
    for (const auto* r : s.rows) {
      const double n = ags4_number(f, child, *r, stage_heading, Ags4Dimension::none, true);
      if (const auto it = seen.find(n); it != seen.end())
        throw InputError(ags4_where(f, child, r->line, stage_heading) + ": stage " + fmt(n) + " of specimen " + s.id +
                         " appears twice (also line " + std::to_string(it->second) + ")");
      seen[n] = r->line;
    }
    std::stable_sort(s.rows.begin(), s.rows.end(), [&](const auto* a, const auto* b) {
      return ags4_number(f, child, *a, stage_heading, Ags4Dimension::none, true) <
             ags4_number(f, child, *b, stage_heading, Ags4Dimension::none, true);
    });
  }
  return out;
}

double number(const Ags4File& f, const Ags4Group& g, const Ags4Group::Row& r, const char* h, Ags4Dimension d, bool required) {
  return ags4_number(f, g, r, h, d, required);
}

/// mm from the internal m of a length.
double mm(double metres) { return std::round(metres * 1e12) / 1e9; }  // to 1e-9 mm: 0.038 m is 38 mm, not 38.000000000000007

void positive_or_throw(const Ags4File& f, const Ags4Group& g, const Ags4Group::Row& r, const char* h, double v, const char* unit) {
  if (given(v) && !(v > 0.0))
    throw InputError(ags4_where(f, g, r.line, h) + ": " + fmt(v) + " " + unit + " must be positive");
}

json uu_specimen(const Ags4File& f, const Ags4Group& trit, const Found& s) {
  json stages = json::array();
  const Ags4Group::Row& first = *s.rows.front();
  const double dia = number(f, trit, first, "TRIT_SDIA", Ags4Dimension::length, true);
  const double len = number(f, trit, first, "TRIT_SLEN", Ags4Dimension::length, true);
  positive_or_throw(f, trit, first, "TRIT_SDIA", dia, "m");
  positive_or_throw(f, trit, first, "TRIT_SLEN", len, "m");
  for (const auto* r : s.rows) {
    const double cell = number(f, trit, *r, "TRIT_CELL", Ags4Dimension::stress, true);
    const double q = number(f, trit, *r, "TRIT_DEVF", Ags4Dimension::stress, true);
    positive_or_throw(f, trit, *r, "TRIT_DEVF", q, "kPa");
    json fail = {{"deviator_stress", q}};
    const double e = trit.column("TRIT_STRN") >= 0 ? number(f, trit, *r, "TRIT_STRN", Ags4Dimension::fraction, false) : std::nan("");
    if (given(e)) fail["axial_strain"] = e;
    stages.push_back({{"type", "shear"}, {"test", "UU"}, {"cell_pressure", cell}, {"failure", fail},
                      {"label", "TRIT_TESN " + field(trit, *r, "TRIT_TESN") + " (line " + std::to_string(r->line) + ")"}});
  }
  return {{"id", s.id}, {"borehole", s.location}, {"depth", depth_text(s)}, {"material", s.material},
          {"height", mm(len)}, {"diameter", mm(dia)},
          {"description", "AGS4 TRIG line " + std::to_string(s.row->line) + ", failure values from TRIT"}, {"stages", stages}};
}

json effective_specimen(const Ags4File& f, const Ags4Group& treg, const Ags4Group& tret, const Found& s) {
  const Ags4Group::Row& first = *s.rows.front();
  const double dia = number(f, tret, first, "TRET_SDIA", Ags4Dimension::length, true);
  const double len = number(f, tret, first, "TRET_LEN", Ags4Dimension::length, true);
  positive_or_throw(f, tret, first, "TRET_SDIA", dia, "m");
  positive_or_throw(f, tret, first, "TRET_LEN", len, "m");
  const std::string criterion = field(treg, *s.row, "TREG_FCR");
  const bool drained = s.test == "CD";
  json stages = json::array();
  double back = tret.column("TRET_BACK") >= 0 ? number(f, tret, first, "TRET_BACK", Ags4Dimension::stress, false) : std::nan("");
  const double b = tret.column("TRET_BVAL") >= 0 ? number(f, tret, first, "TRET_BVAL", Ags4Dimension::none, false) : std::nan("");
  if (given(b) && !(b >= 0.0 && b <= 1.05))
    throw InputError(ags4_where(f, tret, first.line, "TRET_BVAL") + ": " + fmt(b) + " is not a B value in [0, 1.05]");
  if (given(back) || given(b)) {
    json sat = {{"type", "saturation"}};
    if (given(back)) sat["back_pressure"] = back;
    if (given(b)) sat["b_value"] = b;
    stages.push_back(sat);
  }
  for (const auto* r : s.rows) {
    const std::string tesn = field(tret, *r, "TRET_TESN");
    const double conp = number(f, tret, *r, "TRET_CONP", Ags4Dimension::stress, true);
    const double cell = number(f, tret, *r, "TRET_CELL", Ags4Dimension::stress, true);
    const double q = number(f, tret, *r, "TRET_DEVF", Ags4Dimension::stress, true);
    positive_or_throw(f, tret, *r, "TRET_CONP", conp, "kPa");
    positive_or_throw(f, tret, *r, "TRET_DEVF", q, "kPa");
    double ui = tret.column("TRET_PWPI") >= 0 ? number(f, tret, *r, "TRET_PWPI", Ags4Dimension::stress, false) : std::nan("");
    double uf = tret.column("TRET_PWPF") >= 0 ? number(f, tret, *r, "TRET_PWPF", Ags4Dimension::stress, false) : std::nan("");
    const double rb = tret.column("TRET_BACK") >= 0 ? number(f, tret, *r, "TRET_BACK", Ags4Dimension::stress, false) : std::nan("");
    if (drained && !given(uf)) uf = given(rb) ? rb : ui;  // drained: the pore pressure stays at the back pressure
    if (!given(uf))
      throw InputError(ags4_where(f, tret, r->line, "TRET_PWPF") + ": empty (the pore pressure at failure is required for " + s.test +
                       (drained ? ", or TRET_BACK or TRET_PWPI" : "") + ")");
    if (!(cell - uf > 0.0))
      throw InputError(ags4_where(f, tret, r->line, "TRET_PWPF") + ": " + fmt(uf) + " kPa is not below the cell pressure TRET_CELL " +
                       fmt(cell) + " kPa (s3' = cell - u_f must be positive)");
    if (!given(back)) back = rb;
    json fail = {{"deviator_stress", q}, {"pore_pressure", uf}};
    if (given(ui)) fail["pore_pressure_start"] = ui;
    const double e = tret.column("TRET_STRN") >= 0 ? number(f, tret, *r, "TRET_STRN", Ags4Dimension::fraction, false) : std::nan("");
    if (given(e)) fail["axial_strain"] = e;
    if (drained && tret.column("TRET_STV") >= 0) {
      const double ev = number(f, tret, *r, "TRET_STV", Ags4Dimension::fraction, false);
      if (given(ev)) fail["volumetric_strain"] = ev;
    }
    if (!criterion.empty()) fail["criterion"] = criterion;
    stages.push_back({{"type", "consolidation"}, {"path", "isotropic"}, {"effective_stress", conp},
                      {"label", "TRET_TESN " + tesn + " TRET_CONP"}});
    stages.push_back({{"type", "shear"}, {"test", s.test}, {"cell_pressure", cell}, {"failure", fail},
                      {"label", "TRET_TESN " + tesn + " (line " + std::to_string(r->line) + ")"}});
  }
  json sp = {{"id", s.id}, {"borehole", s.location}, {"depth", depth_text(s)}, {"material", s.material},
             {"height", mm(len)}, {"diameter", mm(dia)},
             {"description", "AGS4 TREG line " + std::to_string(s.row->line) + ", failure values from TRET"}, {"stages", stages}};
  const double e0 = tret.column("TRET_IVR") >= 0 ? number(f, tret, first, "TRET_IVR", Ags4Dimension::none, false) : std::nan("");
  if (given(e0) && e0 > 0.0) sp["void_ratio"] = e0;
  return sp;
}

/// An oedometer specimen and its data file (one row an increment end: e_a = (e0 - e) / (1 + e0)
/// from the specimen's initial void ratio CONG_IVR, exact for a laterally confined specimen).
json oedometer_specimen(const Ags4File& f, const Ags4Group& cong, const Ags4Group& cons, const Found& s, Ags4Import& out) {
  const Ags4Group::Row& g = *s.row;
  const double dia = number(f, cong, g, "CONG_SDIA", Ags4Dimension::length, true);
  const double h = number(f, cong, g, "CONG_HIGT", Ags4Dimension::length, true);
  const double e0 = number(f, cong, g, "CONG_IVR", Ags4Dimension::none, true);
  positive_or_throw(f, cong, g, "CONG_SDIA", dia, "m");
  positive_or_throw(f, cong, g, "CONG_HIGT", h, "m");
  positive_or_throw(f, cong, g, "CONG_IVR", e0, "(void ratio)");
  if (s.rows.size() < 5)
    throw InputError(ags4_where(f, cong, g.line, "") + ": specimen " + s.id + " has " + std::to_string(s.rows.size()) +
                     " CONS increment(s); an oedometer specimen needs 5 or more");
  json steps = json::array();
  std::string csv = "axial_strain,axial_stress,void_ratio\n";
  double previous_stress = 0.0, previous_e = e0;
  for (std::size_t i = 0; i < s.rows.size(); ++i) {
    const Ags4Group::Row& r = *s.rows[i];
    const double sa = number(f, cons, r, "CONS_INCF", Ags4Dimension::stress, true);
    const double e = number(f, cons, r, "CONS_INCE", Ags4Dimension::none, true);
    positive_or_throw(f, cons, r, "CONS_INCF", sa, "kPa");
    positive_or_throw(f, cons, r, "CONS_INCE", e, "(void ratio)");
    if (i > 0 && sa == previous_stress)
      throw InputError(ags4_where(f, cons, r.line, "CONS_INCF") + ": " + fmt(sa) +
                       " kPa equals the stress of the increment before (each increment changes the stress)");
    const double e_start = cons.column("CONS_IVR") >= 0 ? number(f, cons, r, "CONS_IVR", Ags4Dimension::none, false) : std::nan("");
    if (given(e_start) && std::abs(e_start - previous_e) > 0.0015)
      out.warnings.push_back(ags4_where(f, cons, r.line, "CONS_IVR") + ": the void ratio at the start of the increment, " + fmt(e_start) +
                             ", differs from the end of the one before, " + fmt(previous_e) + " (tolerance 0.0015)");
    const double es = given(e_start) ? e_start : previous_e;
    // m_v = -de / ((1 + e_start) ds') (1/kPa), times 1000 for m2/MN; from 0 kPa for the first increment.
    const double mv = (es - e) / ((1.0 + es) * (sa - previous_stress)) * 1000.0;
    const double reported = cons.column("CONS_INMV") >= 0 ? number(f, cons, r, "CONS_INMV", Ags4Dimension::compressibility, false)
                                                          : std::nan("");
    char line[1024];
    std::snprintf(line, sizeof line, "  %-*s %4s %9.1f %7.3f %9s %9.4f", out.id_width, s.id.c_str(), field(cons, r, "CONS_INCN").c_str(), sa, e,
                  given(reported) ? fmt(reported).c_str() : "-", mv);
    out.checks.push_back(line);
    // Our rule, no source: m_v reported to 3 decimals may differ by rounding; 5 % and 0.005 m2/MN both exceeded is a warning.
    if (given(reported) && std::abs(reported - mv) > std::max(0.005, 0.05 * std::abs(mv)))
      out.warnings.push_back(ags4_where(f, cons, r.line, "CONS_INMV") + ": the lab reports m_v " + fmt(reported) +
                             " m2/MN, the void ratios give " + fmt(mv) + " m2/MN (tolerance 5 %, 0.005 m2/MN floor)");
    steps.push_back(sa);
    const double ea = (e0 - e) / (1.0 + e0);
    char row[128];
    std::snprintf(row, sizeof row, "%.12g,%.12g,%.12g\n", ea, sa, e);  // 12 digits: no rounding that a hand check would see
    csv += row;
    previous_stress = sa;
    previous_e = e;
  }
  const std::string file = file_name_of(s.id) + ".csv";
  out.data_files.push_back({file, csv});
  json columns = {{"axial_strain", {{"header", "axial_strain"}, {"unit", "decimal"}}},
                  {"axial_stress", {{"header", "axial_stress"}, {"unit", "kPa"}}},
                  {"void_ratio", {{"header", "void_ratio"}, {"unit", "-"}}}};
  return {{"id", s.id}, {"borehole", s.location}, {"depth", depth_text(s)}, {"material", s.material},
          {"height", mm(h)}, {"diameter", mm(dia)}, {"void_ratio", e0},
          {"description", "AGS4 CONG line " + std::to_string(g.line) + ", increments from CONS"},
          {"stages", json::array({{{"type", "oedometer"}, {"stress_steps", steps}}})},
          {"data", {{"file", file}, {"kind", "reduced"}, {"delimiter", "comma"}, {"columns", columns}}}};
}

/// The depth as the file writes it: SPEC_DPTH, else SAMP_TOP, with its unit.
std::string depth_text(const Found& s) {
  const std::string d = field(*s.parent, *s.row, "SPEC_DPTH");
  const int c = s.parent->column(d.empty() ? "SAMP_TOP" : "SPEC_DPTH");
  return (d.empty() ? field(*s.parent, *s.row, "SAMP_TOP") : d) + " " + s.parent->units[static_cast<std::size_t>(c)];
}

/// A key's text as it may enter a file name: letters, digits, '.', '-' kept, anything else '_'; "." and ".." are "_".
std::string file_part(const std::string& text) {
  const std::string out = file_name_of(text);
  return out == "." || out == ".." ? "_" : out;
}

/// The curve map's pattern with the specimen's keys (and `tesn`, a stage's TESN as written) put in.
std::string pattern_file(const CurveMap& m, const Found& s, const std::string& tesn) {
  std::string out;
  for (std::size_t i = 0; i < m.pattern.size(); ++i) {
    if (m.pattern[i] != '{') {
      out.push_back(m.pattern[i]);
      continue;
    }
    const std::size_t close = m.pattern.find('}', i);
    const std::string key = m.pattern.substr(i + 1, close - i - 1);
    out += file_part(key == "TESN" ? tesn : field(*s.parent, *s.row, key));
    i = close;
  }
  return out;
}

/// A layout's non-negative integer (0 when absent).
int layout_count(const json& layout, const char* key, const std::string& where) {
  if (!layout.contains(key)) return 0;
  const json& v = layout.at(key);
  if (!v.is_number_integer() || v.get<long long>() < 0 || v.get<long long>() > 1000)
    throw InputError(where + "." + key + ": expected a whole number from 0 to 1000, found " + v.dump());
  return static_cast<int>(v.get<long long>());
}

/// Files of one stage each merged into one text with a stage column (`numbers`, 1, 2, 3, appended
/// to each data row): the first file's lines before the data, then every file's data rows. The
/// layout gains the column `stage`; its delimiter must be given (not detected).
std::string merge_stage_files(const std::vector<std::pair<int, std::string>>& files, json& layout, const std::string& where) {
  const std::string d = layout.contains("delimiter") && layout.at("delimiter").is_string() ? layout.at("delimiter").get<std::string>() : "";
  const std::string sep = d == "comma" ? "," : d == "semicolon" ? ";" : d == "tab" ? "\t" : "";
  if (sep.empty())
    throw InputError(where + ": files of one stage each are merged with a stage column: the layout must give its delimiter "
                     "(comma, semicolon or tab), found " + (layout.contains("delimiter") ? layout.at("delimiter").dump() : std::string("none")));
  if (layout.contains("columns") && layout.at("columns").is_object() && layout.at("columns").contains("stage"))
    throw InputError(where + ": files of one stage each get their stage column from the import: the layout must not declare one");
  if (layout.contains("strain_origin") && layout.at("strain_origin") != "stage_start")
    throw InputError(where + ": files of one stage each hold strains from their stage's start: strain_origin must be stage_start");
  const int head = layout_count(layout, "skip_rows", where) + 1 + layout_count(layout, "skip_after_header", where);
  std::string out;
  for (std::size_t k = 0; k < files.size(); ++k) {
    std::string text = files[k].second;
    if (text.rfind("\xEF\xBB\xBF", 0) == 0) text.erase(0, 3);  // a UTF-8 byte-order mark
    std::size_t at = 0;
    for (int line = 0; at < text.size(); ++line) {
      std::size_t end = text.find('\n', at);
      if (end == std::string::npos) end = text.size();
      std::string row = text.substr(at, end - at);
      at = end + 1;
      if (!row.empty() && row.back() == '\r') row.pop_back();
      if (line < head) {
        if (k == 0) out += row + (line == head - 1 - layout_count(layout, "skip_after_header", where) ? sep + "stage" : "") + "\n";
        continue;
      }
      if (row.empty()) continue;
      out += row + sep + std::to_string(files[k].first) + "\n";
    }
  }
  if (layout.contains("columns") && layout.at("columns").is_object()) layout["columns"]["stage"] = {{"header", "stage"}, {"unit", "-"}};
  return out;
}

/// Attaches the curve files of `m` to the triaxial specimens of `all`/`specimens` (same order):
/// `data` is the map's layout with the copy's name; the copies go into `out.data_files`.
void attach_curves(const Ags4File& f, const CurveMap& m, const std::vector<Found>& all, json& specimens, Ags4Import& out) {
  namespace fs = std::filesystem;
  std::map<std::string, std::size_t> by_id;
  for (std::size_t i = 0; i < all.size(); ++i) by_id[all[i].id] = i;
  std::map<std::size_t, std::vector<const CurveMap::Entry*>> chosen;
  auto stage_name = [](int n) { return n == 0 ? std::string("the whole specimen") : "stage " + std::to_string(n); };
  for (const CurveMap::Entry& e : m.entries) {
    const auto it = by_id.find(e.specimen);
    if (it == by_id.end()) {
      std::string list;
      for (const Found& s : all)
        if (s.test != "OED") list += (list.empty() ? "" : ", ") + s.id;
      throw InputError(m.source + ": " + e.where + ".specimen: '" + e.specimen + "' is not a specimen of the AGS4 file (triaxial specimens: " +
                       list + ")");
    }
    const Found& s = all[it->second];
    if (s.test == "OED")
      throw InputError(m.source + ": " + e.where + ".specimen: '" + e.specimen +
                       "' is an oedometer specimen (its data come from CONS); curve files attach to triaxial specimens");
    auto& list = chosen[it->second];
    for (const CurveMap::Entry* other : list)
      if (other->stage == e.stage || other->stage == 0 || e.stage == 0)
        throw InputError(m.source + ": " + e.where + ": " + stage_name(e.stage) + " of '" + e.specimen + "' already has a file (" +
                         other->where + ", " + stage_name(other->stage) + ")");
    if (e.stage != 0) {
      const char* tesn = s.test == "UU" ? "TRIT_TESN" : "TRET_TESN";
      const Ags4Group& child = *f.group(s.test == "UU" ? "TRIT" : "TRET");
      bool found = false;
      for (const auto* r : s.rows) found = found || ags4_number(f, child, *r, tesn, Ags4Dimension::none, true) == e.stage;
      if (!found) {
        std::string stages;
        for (const auto* r : s.rows) stages += (stages.empty() ? "" : ", ") + field(child, *r, tesn);
        throw InputError(m.source + ": " + e.where + ".stage: " + std::to_string(e.stage) + " is not a " + tesn + " of '" + e.specimen +
                         "' (found: " + stages + ")");
      }
    }
    list.push_back(&e);
  }
  std::set<std::string> names;
  for (const auto& d : out.data_files) names.insert(d.first);
  for (std::size_t i = 0; i < all.size(); ++i) {
    const Found& s = all[i];
    if (s.test == "OED") continue;
    const char* tesn_heading = s.test == "UU" ? "TRIT_TESN" : "TRET_TESN";
    const Ags4Group* child = f.group(s.test == "UU" ? "TRIT" : "TRET");
    // (stage number 1, 2, 3 in TESN order or 0 for the whole specimen, file, where) and the layout.
    struct Part {
      int stage;
      std::string file, where;
    };
    std::vector<Part> parts;
    std::string layout;
    if (const auto it = chosen.find(i); it != chosen.end()) {
      layout = it->second.front()->layout;
      for (const CurveMap::Entry* e : it->second) {
        int number = 0;
        for (std::size_t k = 0; k < s.rows.size() && e->stage != 0; ++k)
          if (ags4_number(f, *child, *s.rows[k], tesn_heading, Ags4Dimension::none, true) == e->stage) number = static_cast<int>(k) + 1;
        parts.push_back({number, e->file, e->where + ".file"});
        if (e->layout != layout)
          throw InputError(m.source + ": " + e->where + ".layout: the files of one specimen are merged: they need one layout (as " +
                           it->second.front()->where + ")");
      }
      std::sort(parts.begin(), parts.end(), [](const Part& a, const Part& b) { return a.stage < b.stage; });
    } else if (!m.pattern.empty()) {
      layout = m.layout;
      if (m.pattern.find("{TESN}") == std::string::npos) {
        const std::string file = pattern_file(m, s, "");
        if (fs::is_regular_file(fs::path(m.folder) / file)) parts.push_back({0, file, "pattern '" + m.pattern + "'"});
      } else {
        for (std::size_t k = 0; k < s.rows.size(); ++k) {
          const std::string file = pattern_file(m, s, field(*child, *s.rows[k], tesn_heading));
          if (fs::is_regular_file(fs::path(m.folder) / file)) parts.push_back({static_cast<int>(k) + 1, file, "pattern '" + m.pattern + "'"});
        }
      }
    }
    if (parts.empty()) continue;
    if (parts.front().stage > 0 && parts.size() != s.rows.size()) {
      // The series needs the curves of every shear stage of a specimen with data.
      std::string missing;
      for (std::size_t k = 0; k < s.rows.size(); ++k) {
        bool has = false;
        for (const Part& part : parts) has = has || part.stage == static_cast<int>(k) + 1;
        if (!has) missing += (missing.empty() ? "" : ", ") + field(*child, *s.rows[k], tesn_heading);
      }
      throw InputError(m.source + ": " + parts.front().where + " (specimen " + s.id + "): files of one stage each need a file for every stage: " +
                       tesn_heading + " " + missing + (missing.find(',') == std::string::npos ? " has none" : " have none"));
    }
    std::vector<std::pair<int, std::string>> texts;
    std::string sources;
    for (const Part& part : parts) {
      const std::string path = (fs::path(m.folder) / part.file).string();
      try {
        texts.emplace_back(part.stage, detail::read_text_file(path));
      } catch (const InputError& e) {
        throw InputError(m.source + ": " + part.where + " (specimen " + s.id + "): " + e.what());
      }
      sources += (sources.empty() ? "" : ", ") + path + (part.stage > 0 ? " (stage " + std::to_string(part.stage) + ")" : "");
    }
    const std::string copy = file_name_of(s.id) + ".curves.csv";
    if (!names.insert(copy).second)
      throw InputError(m.source + ": specimen " + s.id + ": its copy " + copy + " would overwrite another file of the import");
    json data = json::parse(layout);
    std::string text = texts.front().second;
    if (parts.front().stage > 0) text = merge_stage_files(texts, data, m.source + ": " + parts.front().where + " (specimen " + s.id + ")");
    data["file"] = copy;
    specimens[i]["data"] = data;
    specimens[i]["description"] = specimens[i]["description"].get<std::string>() + "; curves from " + sources;
    out.data_files.push_back({copy, text});
    out.curve_sources.push_back({copy, sources, s.id, static_cast<int>(i)});
    out.curves.push_back(s.id + "  " + sources + "  ->  " + copy + (parts.front().stage > 0 ? " (merged, stage column added)" : ""));
  }
}

/// GEOL strata for the material map: checked rows (LOCA_ID, GEOL_TOP < GEOL_BASE in m) and the
/// headings the rules name.
struct Strata {
  const Ags4Group* geol = nullptr;
  struct Row {
    const Ags4Group::Row* row;
    std::string location;
    double top, base;
  };
  std::vector<Row> rows;
};

Strata read_strata(const Ags4File& f, const std::vector<MaterialRule>& rules) {
  Strata st;
  const MaterialRule* user = nullptr;
  for (const MaterialRule& m : rules)
    if (!user && m.uses_geol()) user = &m;
  if (!user) return st;
  st.geol = f.group("GEOL");
  if (!st.geol)
    throw InputError(user->source + ": " + user->where + ": the rule uses GEOL strata, but " + f.source + " has no GEOL group");
  for (const char* h : {"LOCA_ID", "GEOL_TOP", "GEOL_BASE"}) require_heading(f, *st.geol, h);
  for (const MaterialRule& m : rules) {
    std::vector<std::string> named;
    for (const auto& [h, v] : m.geol) named.push_back(h);
    if (!m.material_from_geol.empty()) named.push_back(m.material_from_geol);
    for (const std::string& h : named)
      if (st.geol->column(h) < 0)
        throw InputError(m.source + ": " + m.where + ": heading " + h + " is not in the GEOL group of " + f.source + " (line " +
                         std::to_string(st.geol->line) + ")");
  }
  for (const auto& r : st.geol->rows) {
    const double top = ags4_number(f, *st.geol, r, "GEOL_TOP", Ags4Dimension::length, true);
    const double base = ags4_number(f, *st.geol, r, "GEOL_BASE", Ags4Dimension::length, true);
    if (!(base > top))
      throw InputError(ags4_where(f, *st.geol, r.line, "GEOL_BASE") + ": " + fmt(base) + " m is not below GEOL_TOP " + fmt(top) + " m");
    st.rows.push_back({&r, field(*st.geol, r, "LOCA_ID"), top, base});
  }
  return st;
}

/// The stratum that holds a specimen (GEOL_TOP <= depth < GEOL_BASE at its location), or nullptr;
/// two strata that both hold it are an error.
const Ags4Group::Row* stratum_of(const Ags4File& f, const Strata& st, const Found& s) {
  const Strata::Row* found = nullptr;
  for (const Strata::Row& r : st.rows) {
    if (r.location != s.location || !(s.depth >= r.top && s.depth < r.base)) continue;
    if (found)
      throw InputError(ags4_where(f, *st.geol, r.row->line, "GEOL_TOP") + ": specimen " + s.id + " at " + fmt(s.depth) +
                       " m lies in two strata (also line " + std::to_string(found->row->line) + ")");
    found = &r;
  }
  return found ? found->row : nullptr;
}

std::string material_of(const std::vector<MaterialRule>& rules, const Strata& st, const Found& s) {
  for (const MaterialRule& m : rules) {
    if (!m.location.empty() && m.location != s.location) continue;
    if (m.depth_range && !(s.depth >= m.from && s.depth < m.to)) continue;
    if (m.uses_geol() && !s.stratum) continue;
    bool held = true;
    for (const auto& [h, v] : m.geol) held = held && field(*st.geol, *s.stratum, h) == v;
    if (!held) continue;
    if (!m.material_from_geol.empty()) {
      const std::string name = field(*st.geol, *s.stratum, m.material_from_geol);
      if (!name.empty()) return name;
      continue;  // an empty GEOL value names no material: the next rule may
    }
    return m.material;
  }
  return {};
}

}  // namespace

std::vector<MaterialRule> read_material_map(const std::string& path) {
  const detail::json root = detail::parse_json(detail::read_text_file(path), path);
  detail::check_format(root, "triaxcal-material-map", 1, path);
  detail::check_keys(root, {"format", "version", "description", "materials"}, path, "");
  if (!root.contains("materials") || !root.at("materials").is_array() || root.at("materials").empty())
    throw InputError(path + ": materials: expected a non-empty list of {\"material\", \"location\", \"from\", \"to\", \"geol\"}");
  std::vector<MaterialRule> out;
  const detail::json& list = root.at("materials");
  for (std::size_t i = 0; i < list.size(); ++i) {
    const std::string p = "materials[" + std::to_string(i) + "]";
    detail::require_object(list[i], path, p);
    detail::check_keys(list[i], {"material", "material_from_geol", "location", "from", "to", "geol"}, path, p);
    MaterialRule m;
    m.where = p;
    m.source = path;
    if (list[i].contains("material") == list[i].contains("material_from_geol"))
      throw InputError(path + ": " + p + ": expected one of material (a name) or material_from_geol (a GEOL heading that names it)");
    if (list[i].contains("material")) {
      m.material = detail::get_string(list[i], "material", path, p);
      if (m.material.empty()) throw InputError(path + ": " + p + ".material: must not be empty");
    } else {
      m.material_from_geol = detail::get_string(list[i], "material_from_geol", path, p);
      if (m.material_from_geol.rfind("GEOL_", 0) != 0)
        throw InputError(path + ": " + p + ".material_from_geol: '" + m.material_from_geol + "' is not a GEOL heading (e.g. GEOL_GEOL, GEOL_DESC)");
    }
    m.location = detail::get_string_or(list[i], "location", "", path, p);
    if (list[i].contains("from") != list[i].contains("to"))
      throw InputError(path + ": " + p + ": from and to go together (a depth range [from, to) m), or neither (any depth)");
    m.depth_range = list[i].contains("from");
    if (m.depth_range) {
      m.from = detail::get_number(list[i], "from", path, p);
      m.to = detail::get_number(list[i], "to", path, p);
      if (!(m.to > m.from))
        throw InputError(path + ": " + p + ": the depth range [" + fmt(m.from) + ", " + fmt(m.to) + ") m is empty (expected from < to)");
    }
    if (list[i].contains("geol")) {
      const detail::json& g = list[i].at("geol");
      if (!g.is_object() || g.empty())
        throw InputError(path + ": " + p + ".geol: expected GEOL headings and their values, e.g. {\"GEOL_GEOL\": \"ALV\"}");
      for (const auto& [h, v] : g.items()) {
        if (h.rfind("GEOL_", 0) != 0) throw InputError(path + ": " + p + ".geol: '" + h + "' is not a GEOL heading (e.g. GEOL_GEOL)");
        if (!v.is_string()) throw InputError(path + ": " + p + ".geol." + h + ": expected the value as text, found " + v.dump());
        m.geol.emplace_back(h, v.get<std::string>());
      }
    }
    out.push_back(m);
  }
  return out;
}

CurveMap read_curve_map(const std::string& path) {
  const detail::json root = detail::parse_json(detail::read_text_file(path), path);
  detail::check_format(root, "triaxcal-curve-map", 1, path);
  detail::check_keys(root, {"format", "version", "description", "layout", "curves", "pattern"}, path, "");
  CurveMap m;
  m.source = path;
  m.folder = std::filesystem::path(path).parent_path().string();
  if (m.folder.empty()) m.folder = ".";
  auto layout_of = [&](const detail::json& j, const std::string& where) {
    if (!j.is_object() || j.empty())
      throw InputError(path + ": " + where + ": expected the test series' data object without \"file\" (kind, delimiter, columns, ...), found " +
                       std::string(j.type_name()));
    if (j.contains("file"))
      throw InputError(path + ": " + where + ".file: not allowed here (the file comes from curves[].file or pattern)");
    return j.dump();
  };
  if (root.contains("layout")) m.layout = layout_of(root.at("layout"), "layout");
  if (root.contains("pattern")) {
    m.pattern = detail::get_string(root, "pattern", path, "");
    const std::string expected = " (expected a file name with keys in braces, e.g. \"{LOCA_ID}_{SPEC_DPTH}.csv\"; keys: LOCA_ID, SAMP_TOP, "
                                 "SAMP_REF, SAMP_TYPE, SAMP_ID, SPEC_REF, SPEC_DPTH; TESN for one file a stage)";
    if (m.pattern.find('{') == std::string::npos) throw InputError(path + ": pattern: '" + m.pattern + "' names no key" + expected);
    for (std::size_t i = 0; i < m.pattern.size(); ++i) {
      if (m.pattern[i] == '}') throw InputError(path + ": pattern: '" + m.pattern + "': a '}' without its '{'" + expected);
      if (m.pattern[i] != '{') continue;
      const std::size_t close = m.pattern.find('}', i);
      if (close == std::string::npos) throw InputError(path + ": pattern: '" + m.pattern + "': a '{' without its '}'" + expected);
      const std::string key = m.pattern.substr(i + 1, close - i - 1);
      bool known = false;
      for (const char* k : kSpecimenKeys) known = known || key == k;
      if (!known && key != "TESN") throw InputError(path + ": pattern: '{" + key + "}' is not a specimen key" + expected);
      i = close;
    }
    if (m.layout.empty()) throw InputError(path + ": layout: required with a pattern (the columns of the curve files)");
  }
  if (root.contains("curves")) {
    const detail::json& list = root.at("curves");
    if (!list.is_array()) throw InputError(path + ": curves: expected a list of {\"specimen\", \"file\"}");
    for (std::size_t i = 0; i < list.size(); ++i) {
      const std::string p = "curves[" + std::to_string(i) + "]";
      detail::require_object(list[i], path, p);
      detail::check_keys(list[i], {"specimen", "stage", "file", "layout"}, path, p);
      CurveMap::Entry e;
      e.where = p;
      e.specimen = detail::get_string(list[i], "specimen", path, p);
      if (list[i].contains("stage")) e.stage = static_cast<int>(detail::get_integer_in(list[i].at("stage"), 1, 1000, path, p + ".stage"));
      e.file = detail::get_string(list[i], "file", path, p);
      if (e.file.empty()) throw InputError(path + ": " + p + ".file: must not be empty");
      e.layout = list[i].contains("layout") ? layout_of(list[i].at("layout"), p + ".layout") : m.layout;
      if (e.layout.empty()) throw InputError(path + ": " + p + ": no layout (give the map's layout or the entry's own)");
      m.entries.push_back(e);
    }
  }
  if (m.entries.empty() && m.pattern.empty())
    throw InputError(path + ": expected curves (a list of {\"specimen\", \"file\"}), a pattern, or both");
  return m;
}

Ags4Import import_ags4(const Ags4File& f, const std::string& series_name, const std::vector<MaterialRule>& rules,
                       const CurveMap* curves) {
  Ags4Import out;
  // Keys: every SAMP row's location is in LOCA, every specimen's sample in SAMP.
  const Ags4Group& samp = require_group(f, "SAMP", "the specimens' keys resolve through it");
  for (const char* k : {"LOCA_ID", "SAMP_TOP"}) require_heading(f, samp, k);
  if (const Ags4Group* loca = f.group("LOCA")) {
    require_heading(f, *loca, "LOCA_ID");
    for (const auto& r : samp.rows) resolve(f, samp, r, *loca, kSampleKeys);
  }
  std::vector<Found> all;
  std::map<std::string, int> stage_counts;
  const Strata strata = read_strata(f, rules);
  auto assign = [&](Found& s) {
    if (strata.geol) s.stratum = stratum_of(f, strata, s);
    s.material = material_of(rules, strata, s);
  };
  // The id column fits the widest id of the specimens' parent rows (AGS-style ids are long).
  for (const char* g : {"TRIG", "TREG", "CONG"})
    if (const Ags4Group* pg = f.group(g))
      for (const auto& r : pg->rows) out.id_width = std::max(out.id_width, static_cast<int>(specimen_id(*pg, r).size()));
  const Ags4Group* trig = f.group("TRIG");
  const Ags4Group* trit = f.group("TRIT");
  const Ags4Group* treg = f.group("TREG");
  const Ags4Group* tret = f.group("TRET");
  const Ags4Group* cong = f.group("CONG");
  const Ags4Group* cons = f.group("CONS");
  auto pair_of = [&](const Ags4Group* parent, const Ags4Group* child, const char* pname, const char* cname) {
    if ((parent == nullptr) != (child == nullptr))
      throw InputError(f.source + ": group " + (parent ? std::string(cname) : std::string(pname)) + " is missing (group " +
                       (parent ? pname : cname) + " needs it)");
  };
  pair_of(trig, trit, "TRIG", "TRIT");
  pair_of(treg, tret, "TREG", "TRET");
  pair_of(cong, cons, "CONG", "CONS");
  auto parents = [&](const Ags4Group& parent) {
    for (const char* k : {"LOCA_ID", "SAMP_TOP"}) require_heading(f, parent, k);
    for (const auto& r : parent.rows) resolve(f, parent, r, samp, kSampleKeys);
  };
  json specimens = json::array();
  std::set<std::string> ids;
  auto add = [&](Found& s, const json& j) {
    if (!ids.insert(s.id).second)
      throw InputError(ags4_where(f, *s.parent, s.row->line, "SPEC_REF") + ": specimen " + s.id + " appears twice");
    specimens.push_back(j);
    all.push_back(s);
  };
  if (trig) {
    parents(*trig);
    for (const char* h : {"TRIT_TESN", "TRIT_CELL", "TRIT_DEVF"}) require_heading(f, *trit, h);
    for (Found& s : collect(f, *trig, *trit, "TRIT_TESN")) {
      if (s.rows.empty()) {
        out.warnings.push_back(ags4_where(f, *trig, s.row->line, "") + ": specimen " + s.id + " has no TRIT row (not imported)");
        continue;
      }
      s.test = "UU";
      assign(s);
      stage_counts["UU"] += static_cast<int>(s.rows.size());
      add(s, uu_specimen(f, *trit, s));
    }
  }
  if (treg) {
    parents(*treg);
    require_heading(f, *treg, "TREG_TYPE");
    for (const char* h : {"TRET_TESN", "TRET_CONP", "TRET_CELL", "TRET_DEVF"}) require_heading(f, *tret, h);
    for (Found& s : collect(f, *treg, *tret, "TRET_TESN")) {
      if (s.rows.empty()) {
        out.warnings.push_back(ags4_where(f, *treg, s.row->line, "") + ": specimen " + s.id + " has no TRET row (not imported)");
        continue;
      }
      const std::string type = field(*treg, *s.row, "TREG_TYPE");
      if (type != "CU" && type != "CD")
        throw InputError(ags4_where(f, *treg, s.row->line, "TREG_TYPE") + ": '" + type + "' is not a test type read here (expected CU or CD)");
      s.test = type;
      assign(s);
      stage_counts[type] += static_cast<int>(s.rows.size());
      add(s, effective_specimen(f, *treg, *tret, s));
    }
  }
  if (cong) {
    parents(*cong);
    for (const char* h : {"CONS_INCN", "CONS_INCF", "CONS_INCE"}) require_heading(f, *cons, h);
    for (Found& s : collect(f, *cong, *cons, "CONS_INCN")) {
      if (s.rows.empty()) {
        out.warnings.push_back(ags4_where(f, *cong, s.row->line, "") + ": specimen " + s.id + " has no CONS row (not imported)");
        continue;
      }
      s.test = "OED";
      assign(s);
      stage_counts["OED"] += static_cast<int>(s.rows.size());
      add(s, oedometer_specimen(f, *cong, *cons, s, out));
    }
  }
  if (curves) attach_curves(f, *curves, all, specimens, out);
  if (specimens.empty())
    throw InputError(f.source + ": no test to import (groups TRIG/TRIT, TREG/TRET or CONG/CONS with DATA rows are read)");
  // What was found.
  std::string project;
  if (const Ags4Group* proj = f.group("PROJ"); proj && !proj->rows.empty()) {
    const std::string id = field(*proj, proj->rows[0], "PROJ_ID"), name = field(*proj, proj->rows[0], "PROJ_NAME");
    project = id + (name.empty() ? "" : " - " + name);
  }
  std::set<std::string> locations;
  std::map<std::string, int> per_test;
  double zmin = all.front().depth, zmax = all.front().depth;
  for (const Found& s : all) {
    locations.insert(s.location);
    ++per_test[s.test];
    zmin = std::min(zmin, s.depth);
    zmax = std::max(zmax, s.depth);
  }
  std::string locs;
  for (const auto& l : locations) locs += (locs.empty() ? "" : ", ") + l;
  if (!project.empty()) out.summary.push_back("project: " + project);
  if (f.latin1) out.summary.push_back("text: not UTF-8, read as Latin-1 and converted to UTF-8");
  out.summary.push_back("locations: " + std::to_string(locations.size()) + " (" + locs + ")");
  std::string tests;
  for (const char* t : {"UU", "CU", "CD", "OED"})
    if (per_test.count(t))
      tests += (tests.empty() ? "" : ", ") + std::string(t == std::string("OED") ? "oedometer" : t) + " " + std::to_string(per_test[t]) +
               " (" + std::to_string(stage_counts[t]) + (t == std::string("OED") ? " increments" : " stages") + ")";
  out.summary.push_back("specimens: " + std::to_string(all.size()) + ": " + tests);
  out.summary.push_back("depth range: " + fmt(zmin) + " to " + fmt(zmax) + " m");
  std::vector<std::string> geol_headings;  // the GEOL headings the rules name, in order
  for (const MaterialRule& m : rules) {
    std::vector<std::string> named;
    for (const auto& [h, v] : m.geol) named.push_back(h);
    if (!m.material_from_geol.empty()) named.push_back(m.material_from_geol);
    for (const std::string& h : named)
      if (std::find(geol_headings.begin(), geol_headings.end(), h) == geol_headings.end()) geol_headings.push_back(h);
  }
  if (strata.geol) {
    std::set<std::string> at;
    for (const Strata::Row& r : strata.rows) at.insert(r.location);
    out.summary.push_back("strata (GEOL, for the material map): " + std::to_string(strata.rows.size()) + " at " + std::to_string(at.size()) +
                          " location(s)");
  }
  int unassigned = 0;
  for (const Found& s : all) {
    char line[1024];
    std::snprintf(line, sizeof line, "  %-*s %-6s %8.2f  %-9s %3d  %s", out.id_width, s.id.c_str(), s.location.c_str(), s.depth,
                  s.test == "OED" ? "oedometer" : s.test.c_str(), static_cast<int>(s.rows.size()),
                  s.material.empty() ? "(none)" : s.material.c_str());
    std::string text = line;
    if (strata.geol) {
      // The stratum that gave the material, so that the user can check it.
      if (!s.stratum) {
        text += "  (in no GEOL stratum of " + s.location + ")";
      } else {
        text += "  (GEOL line " + std::to_string(s.stratum->line) + ": " + field(*strata.geol, *s.stratum, "GEOL_TOP") + " to " +
                field(*strata.geol, *s.stratum, "GEOL_BASE") + " m";
        for (const std::string& h : geol_headings) text += ", " + h + " '" + field(*strata.geol, *s.stratum, h) + "'";
        text += ")";
      }
    }
    out.specimens.push_back(text);
    if (s.material.empty()) ++unassigned;
  }
  if (!rules.empty() && unassigned > 0)
    out.warnings.push_back(std::to_string(unassigned) + " specimen(s) match no rule of the material map (material empty)");
  json root = {{"format", kTestSeriesFormat},
               {"version", kTestSeriesVersion},
               {"name", series_name},
               {"description", "imported from the AGS4 file " + f.source + (project.empty() ? "" : " (project " + project + ")") +
                                   "; triaxial tests as the lab's values at failure, oedometer increments as data files"},
               {"specimens", specimens}};
  out.series_json = root.dump(2) + "\n";
  return out;
}

}  // namespace triaxcal
