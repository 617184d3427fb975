#include "triaxcal/series.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>

#include "../json_checks.hpp"
#include "series_json.hpp"
#include "triaxcal/error.hpp"
#include "triaxcal/lab_csv.hpp"
#include "triaxcal/parameters.hpp"
#include "triaxcal/reduction.hpp"

namespace triaxcal {

using detail::kind_of;
using detail::parse_series_json;
using detail::ParsedSeries;
using detail::SpecimenJson;

std::string to_string(ShearType type) {
  switch (type) {
    case ShearType::cu: return "CU";
    case ShearType::cd: return "CD";
    case ShearType::uu: return "UU";
  }
  return "?";
}

std::string to_string(ConsolidationPath path) {
  switch (path) {
    case ConsolidationPath::isotropic: return "isotropic";
    case ConsolidationPath::k0: return "K0";
    case ConsolidationPath::anisotropic: return "anisotropic";
  }
  return "?";
}

std::vector<int> Specimen::shear_stages() const {
  std::vector<int> out;
  for (std::size_t i = 0; i < stages.size(); ++i)
    if (stages[i].type == SpecimenStageType::shear) out.push_back(static_cast<int>(i));
  return out;
}

std::vector<int> Specimen::oedometer_stages() const {
  std::vector<int> out;
  for (std::size_t i = 0; i < stages.size(); ++i)
    if (stages[i].type == SpecimenStageType::oedometer) out.push_back(static_cast<int>(i));
  return out;
}

std::pair<int, int> Specimen::stage_points(int stage_index) const {
  int first = -1, last = -2;
  for (std::size_t i = 0; i < curves.stage.size(); ++i)
    if (curves.stage[i] == stage_index) {
      if (first < 0) first = static_cast<int>(i);
      last = static_cast<int>(i);
    }
  if (first < 0) return {0, -1};
  return {first, last};
}

namespace {

bool given(double v) { return !std::isnan(v); }

/// Minimum points a stage with data needs for any interpretation.
constexpr int kMinPoints = 5;
/// Axial-strain decrease tolerated as rounding in a file (decimal strain).
constexpr double kStrainRoundOff = 1e-6;
/// Largest axial strain at the first row of a later stage when strains are relative to each
/// stage's start: seating and the first reading stay well below 0.5 % (common practice, no source).
constexpr double kStageStartStrain = 0.005;
/// Disagreement between the file's and the declared consolidation stress that is reported:
/// 5 % with a 2 kPa floor (common practice for cell-pressure control, no source).
constexpr double kConsolidationRel = 0.05;
constexpr double kConsolidationAbs = 2.0;
/// B-value below which a CU test is reported as not saturated enough (common practice, no source).
constexpr double kMinimumB = 0.95;

std::string fmt(double v) { return format_number(v); }

double stage_cell_pressure(const Specimen& s, int stage) {
  const SpecimenStage& st = s.stages[static_cast<std::size_t>(stage)];
  if (given(st.cell_pressure)) return st.cell_pressure;
  for (int j = stage; j >= 0; --j) {
    const SpecimenStage& c = s.stages[static_cast<std::size_t>(j)];
    if (c.type == SpecimenStageType::consolidation) return given(c.radial_stress) ? c.radial_stress + s.back_pressure : kNotGiven;
    if (c.type == SpecimenStageType::saturation && given(c.cell_pressure)) return c.cell_pressure;
  }
  return kNotGiven;
}

bool drained_stage(const SpecimenStage& st) {
  return st.type != SpecimenStageType::shear || st.shear == ShearType::cd;
}

/// Oedometer data: axial strain and effective axial stress (and optionally the void ratio), zero radial
/// strain so e_v = e_a. A largest stress in the file off the largest declared step by more than 5 %
/// (2 kPa floor, as for consolidation) is reported.
void read_oedometer_data(Specimen& s, const std::string& series_src, const detail::KeyPath& sp, std::vector<SeriesWarning>& warnings) {
  const DataFileSpec& spec = s.data;
  const std::string src = spec.path;
  const std::string cols_path = (sp / "data" / "columns").in(series_src);
  if (spec.raw)
    throw InputError((sp / "data" / "kind").in(series_src) + ": oedometer data must be \"reduced\" (axial strain and effective axial stress)");
  std::vector<CsvColumnRequest> req;
  std::map<std::string, int> col;
  for (const DataFileSpec::Column& c : spec.columns) {
    if (c.quantity != "stage" && c.quantity != "axial_strain" && c.quantity != "axial_stress" && c.quantity != "void_ratio")
      throw InputError(cols_path + "." + c.quantity + ": an oedometer specimen takes stage, axial_strain, axial_stress and void_ratio columns only");
    col[c.quantity] = static_cast<int>(req.size());
    req.push_back({c.quantity, c.header, unit_factor(kind_of(c.quantity), c.unit, series_src), c.unit});
  }
  if (!col.count("axial_strain")) throw InputError(cols_path + ": oedometer data need an axial_strain column");
  if (!col.count("axial_stress")) throw InputError(cols_path + ": oedometer data need an axial_stress column (effective axial stress)");
  CsvLayout layout{spec.delimiter, spec.decimal, spec.skip_rows, spec.skip_after_header};
  const CsvTable t = parse_lab_csv(detail::read_text_file(src), src, layout, req);
  const std::size_t n = t.line.size();
  const auto column = [&](const char* q) -> const std::vector<double>* {
    const auto it = col.find(q);
    return it == col.end() ? nullptr : &t.values[static_cast<std::size_t>(it->second)];
  };
  const int k = s.oedometer_stages().front();
  const SpecimenStage& st = s.stages[static_cast<std::size_t>(k)];
  if (const auto* sc = column("stage"))
    for (std::size_t i = 0; i < n; ++i)
      if ((*sc)[i] != static_cast<double>(st.data_stage))
        throw InputError(src + ": line " + std::to_string(t.line[i]) + " (stage): stage " + fmt((*sc)[i]) +
                         " matches no declared stage (data_stage values: " + std::to_string(st.data_stage) + ")");
  if (n < static_cast<std::size_t>(kMinPoints))
    throw InputError(src + ": specimen '" + s.id + "', stages[" + std::to_string(k) + "] (oedometer): " + std::to_string(n) +
                     " data points, at least " + std::to_string(kMinPoints) + " are needed");
  s.reference_height = s.height;
  s.reference_area = 0.25 * std::numbers::pi * s.diameter * s.diameter;
  s.reference_void_ratio = s.void_ratio;
  s.data_zero_stage = k;
  const auto& ea = *column("axial_strain");
  const auto& sa = *column("axial_stress");
  const auto* ecol = column("void_ratio");
  ReducedCurves& c = s.curves;
  c = ReducedCurves{};
  double largest = 0.0;
  for (std::size_t i = 0; i < n; ++i) {
    const std::string at = src + ": line " + std::to_string(t.line[i]);
    if (!(sa[i] > 0.0))
      throw InputError(at + " (axial_stress): " + fmt(sa[i]) + " kPa, the effective axial stress must be positive");
    if (ecol && !((*ecol)[i] > 0.0))
      throw InputError(at + " (void_ratio): " + fmt((*ecol)[i]) + ", the void ratio must be positive");
    largest = std::max(largest, sa[i]);
    c.stage.push_back(k);
    c.line.push_back(t.line[i]);
    c.axial_strain.push_back(ea[i]);
    c.volumetric_strain.push_back(ea[i]);  // zero radial strain
    c.deviator_stress.push_back(kNotGiven);
    c.excess_pore_pressure.push_back(kNotGiven);
    c.axial_stress.push_back(sa[i]);
    c.radial_stress.push_back(kNotGiven);
    c.mean_stress.push_back(kNotGiven);
    c.cell_pressure.push_back(kNotGiven);
    c.void_ratio.push_back(ecol ? (*ecol)[i] : (given(s.void_ratio) ? void_ratio_after(s.void_ratio, ea[i]) : kNotGiven));
  }
  const double declared = *std::max_element(st.stress_steps.begin(), st.stress_steps.end());
  if (std::abs(largest - declared) > std::max(kConsolidationAbs, kConsolidationRel * declared))
    warnings.push_back({s.id, src + ": the largest effective axial stress in the file is " + fmt(largest) +
                                  " kPa, the largest declared step " + fmt(declared) + " kPa (" + ((sp / "stages")[k] / "stress_steps").str() + ")"});
}

/// A triaxial specimen's data as read: the declared columns, their values and where they are.
struct TriaxialData {
  const Specimen& s;
  const DataFileSpec& spec;
  std::string src;       ///< the data file, for messages
  std::string series_src;
  detail::KeyPath sp;    ///< JSON path of the specimen
  std::map<std::string, int> col;  ///< quantity -> column request
  CsvTable t;
  std::size_t n = 0;
  bool any_cu = false, any_cd = false;
  bool continuous = false;  ///< strains from the data zero (data_start, raw)
  const std::vector<double>* column(const char* q) const {
    const auto it = col.find(q);
    return it == col.end() ? nullptr : &t.values[static_cast<std::size_t>(it->second)];
  }
};

/// Step 1: the columns a specimen's stages need, by kind of data and test; the column requests.
std::vector<CsvColumnRequest> required_columns(TriaxialData& d) {
  const Specimen& s = d.s;
  const DataFileSpec& spec = d.spec;
  const std::string& series_src = d.series_src;
  const detail::KeyPath& sp = d.sp;
  std::vector<CsvColumnRequest> req;
  std::map<std::string, int>& col = d.col;
  for (const DataFileSpec::Column& c : spec.columns) {
    col[c.quantity] = static_cast<int>(req.size());
    req.push_back({c.quantity, c.header, unit_factor(kind_of(c.quantity), c.unit, series_src), c.unit});
  }
  const auto has = [&](const char* q) { return col.count(q) > 0; };
  const std::string cols_path = (sp / "data" / "columns").in(series_src);
  const auto need = [&](bool ok, const std::string& what) {
    if (!ok) throw InputError(cols_path + ": " + what);
  };
  for (const char* q : {"axial_stress", "void_ratio"})
    if (has(q)) throw InputError(cols_path + "." + q + ": only for oedometer specimens (triaxial stresses and void ratios are reduced from the other columns)");
  bool any_cu = false, any_cd = false;
  for (const SpecimenStage& st : s.stages)
    if (st.type == SpecimenStageType::shear) {
      any_cu = any_cu || st.shear == ShearType::cu;
      any_cd = any_cd || st.shear == ShearType::cd;
    }
  d.any_cu = any_cu;
  d.any_cd = any_cd;
  if (spec.raw) {
    need(has("axial_load"), "raw data need an axial_load column (the deviator load, N or kN)");
    need(has("axial_displacement"), "raw data need an axial_displacement column (shortening positive, mm)");
    if (any_cu) need(has("pore_pressure"), "a CU test needs a pore_pressure column");
    if (any_cd) need(has("volume_gauge"), "a CD test needs a volume_gauge column (water out of the specimen positive)");
  } else {
    need(has("axial_strain"), "reduced data need an axial_strain column");
    need(has("deviator_stress"), "reduced data need a deviator_stress column");
    need(!(has("pore_pressure") && has("excess_pore_pressure")), "give pore_pressure or excess_pore_pressure, not both");
    need(!(has("volumetric_strain") && has("volume_change")), "give volumetric_strain or volume_change, not both");
    if (any_cu) need(has("pore_pressure") || has("excess_pore_pressure"), "a CU test needs a pore_pressure or excess_pore_pressure column");
    if (any_cd) need(has("volumetric_strain") || has("volume_change"), "a CD test needs a volumetric_strain or volume_change column");
  }
  const bool continuous = spec.strain_origin == StrainOrigin::data_start;  // raw data are continuous too
  if (s.shear_stages().size() > 1 && !has("stage") && !continuous)
    throw InputError((sp / "data").in(series_src) + ": several shear stages and no stage column: rows are assigned to stages by their continuous "
                     "axial strain, so declare \"strain_origin\": \"data_start\" (and each shear stage's strain_range), or add "
                     "a stage column");
  if (s.shear_stages().size() > 1 && !has("stage")) {
    for (int k : s.shear_stages())
      if (!given(s.stages[static_cast<std::size_t>(k)].strain_from))
        throw InputError((sp / "stages")[static_cast<std::size_t>(k)].in(series_src) + ": with several shear stages and no stage column, each shear stage needs its strain_range");
  }
  d.continuous = continuous;
  return req;
}

/// Step 2a: the stage of each row from the stage column (-1 without one); the rows of a stage are
/// together and the stages in their declared order, so a stage's first row is its start.
std::vector<int> stages_from_column(const TriaxialData& d) {
  const Specimen& s = d.s;
  const std::string& src = d.src;
  const detail::KeyPath& sp = d.sp;
  const std::size_t n = d.n;
  const CsvTable& t = d.t;
  std::vector<int> stage(n, -1);
  if (const auto* sc = d.column("stage")) {
    for (std::size_t i = 0; i < n; ++i) {
      const double v = (*sc)[i];
      for (std::size_t k = 0; k < s.stages.size(); ++k)
        if (s.stages[k].data_stage >= 0 && static_cast<double>(s.stages[k].data_stage) == v) stage[i] = static_cast<int>(k);
      if (stage[i] < 0) {
        std::string list;
        for (std::size_t k = 0; k < s.stages.size(); ++k)
          if (s.stages[k].data_stage >= 0) list += (list.empty() ? "" : ", ") + std::to_string(s.stages[k].data_stage);
        throw InputError(src + ": line " + std::to_string(t.line[i]) + " (stage): stage " + fmt(v) +
                         " matches no declared stage (data_stage values: " + list + ")");
      }
      if (i > 0 && stage[i] < stage[i - 1])
        throw InputError(src + ": line " + std::to_string(t.line[i]) + " (stage): stage " + fmt(v) + " after rows of stage " +
                         std::to_string(s.stages[static_cast<std::size_t>(stage[i - 1])].data_stage) +
                         " (the rows of each stage must be together, the stages in the order of " + (sp / "stages").str() + ")");
    }
  }
  return stage;
}

/// Step 2b: reference height, area and void ratio at the data zero, from the set-up dimensions and
/// the consolidation strains declared before the first stage with rows.
void set_reference_state(Specimen& s, int first_stage, const std::string& series_src, const detail::KeyPath& sp,
                         std::vector<SeriesWarning>& warnings) {
  const double a0 = 0.25 * std::numbers::pi * s.diameter * s.diameter;
  s.reference_height = s.height;
  s.reference_area = a0;
  s.reference_void_ratio = s.void_ratio;
  // Consolidation strains before the data zero set the reference dimensions and void ratio.
  {
    double ea_c = 0.0, ev_c = 0.0;
    bool have = false, unknown = false;
    for (int k = 0; k < first_stage; ++k) {
      const SpecimenStage& c = s.stages[static_cast<std::size_t>(k)];
      if (c.type != SpecimenStageType::consolidation) continue;
      if (given(c.end_volumetric_strain)) {
        ev_c = c.end_volumetric_strain;
        ea_c = given(c.end_axial_strain) ? c.end_axial_strain : ev_c / 3.0;
        have = true;
        unknown = false;
      } else {
        unknown = true;
      }
    }
    if (have) {
      s.reference_height = s.height * (1.0 - ea_c);
      s.reference_area = corrected_area(a0, ev_c, ea_c);
      if (given(s.void_ratio)) s.reference_void_ratio = void_ratio_after(s.void_ratio, ev_c);
    }
    if (unknown) {
      s.reference_void_ratio = kNotGiven;
      warnings.push_back({s.id, sp.in(series_src) +
                                    ": the consolidation before the data declares no end_volumetric_strain; the area "
                                    "correction uses the set-up dimensions and void ratios are not reported"});
    }
  }
}

/// Step 2c: shear stages by the declared strain ranges of a continuous file without a stage column.
void stages_from_strain_ranges(const TriaxialData& d, const std::vector<double>& ea_file, std::vector<int>& stage) {
  const Specimen& s = d.s;
  const std::string& src = d.src;
  const std::size_t n = d.n;
  const CsvTable& t = d.t;
  const std::vector<int> shear = s.shear_stages();
  if (shear.size() == 1) {
    std::fill(stage.begin(), stage.end(), shear.front());
  } else {
    std::size_t cur = 0;
    const double tol = kStrainRoundOff;
    for (std::size_t i = 0; i < n; ++i) {
      while (cur + 1 < shear.size() && ea_file[i] > s.stages[static_cast<std::size_t>(shear[cur])].strain_to + tol) ++cur;
      const SpecimenStage& st = s.stages[static_cast<std::size_t>(shear[cur])];
      if (ea_file[i] > st.strain_to + tol || ea_file[i] < st.strain_from - tol) {
        bool in_loop = false;
        for (const auto& l : st.loops) in_loop = in_loop || (ea_file[i] >= l.from_strain - tol && ea_file[i] <= l.to_strain + tol);
        if (!in_loop)
          throw InputError(src + ": line " + std::to_string(t.line[i]) + " (axial_strain): " + fmt(ea_file[i]) +
                           " is outside every declared strain_range (stages[" + std::to_string(shear[cur]) + "] has [" +
                           fmt(st.strain_from) + ", " + fmt(st.strain_to) + "])");
      }
      stage[i] = shear[cur];
    }
  }
}

/// Step 2d: with strains relative to each stage's start, a stage after the first with rows starts
/// near zero strain; a larger start means the file's strains run on.
void check_stage_starts(const TriaxialData& d, const std::vector<double>& ea_file, const std::vector<int>& stage) {
  const std::string& src = d.src;
  const detail::KeyPath& sp = d.sp;
  const std::size_t n = d.n;
  const CsvTable& t = d.t;
  if (!d.continuous)
    for (std::size_t i = 1; i < n; ++i)
      if (stage[i] != stage[i - 1] && std::abs(ea_file[i]) > kStageStartStrain)
        throw InputError(src + ": line " + std::to_string(t.line[i]) + " (axial_strain): stages[" + std::to_string(stage[i]) +
                         "] starts at axial strain " + fmt(ea_file[i]) + ", but with strains relative to each stage's start (" + (sp / "data" / "strain_origin").str() +
                         " \"stage_start\", the default) a stage starts within " + fmt(kStageStartStrain) +
                         " of zero; if the file's strains run on from the first stage with rows, declare \"strain_origin\": "
                         "\"data_start\"");
}

/// Strains of each row: ea, ev relative to the start of its stage (the lab convention, stored), ev_c
/// relative to the data zero (area correction and void ratio), and whether the volume since the data
/// zero is known.
struct RowStrains {
  std::vector<double> ea, ev, ev_c;
  std::vector<char> volume_known;
};

/// Step 3a: the stage strains of every row.
RowStrains stage_strains(const TriaxialData& d, const std::vector<double>& ea_file, const std::vector<int>& stage) {
  const Specimen& s = d.s;
  const DataFileSpec& spec = d.spec;
  const std::string& src = d.src;
  const std::size_t n = d.n;
  const CsvTable& t = d.t;
  const bool continuous = d.continuous;
  const double v_ref = s.reference_height * s.reference_area;
  // Strains of each row relative to the start of its stage (ea, ev: the lab convention, stored) and
  // the volumetric strain relative to the data zero (ev_c: area correction and void ratio).
  // Continuous files (data_start, raw): the first row of each later stage is its start, and a strain
  // eps from the data zero becomes (eps - eps_k0) / (1 - eps_k0) relative to the stage start k0
  // (dL / L_k0 with L_k0 = L_ref (1 - eps_k0); the same for volumes). Files relative to each stage's
  // start: the stage starts where the previous one with rows ended (its last row), unless a
  // consolidation without rows lies between them; then the volume since the data zero is unknown.
  const std::vector<double>* vcol = spec.raw ? d.column("volume_gauge") : (d.column("volumetric_strain") ? d.column("volumetric_strain") : d.column("volume_change"));
  const bool vol_is_strain = !spec.raw && d.column("volumetric_strain");
  RowStrains r{std::vector<double>(n), std::vector<double>(n, 0.0), std::vector<double>(n, 0.0), std::vector<char>(n, 1)};
  std::vector<double>& ea = r.ea;
  std::vector<double>& ev = r.ev;
  std::vector<double>& ev_c = r.ev_c;
  std::vector<char>& volume_known = r.volume_known;
  {
    double ea0 = 0.0, ev0 = 0.0;  // continuous strains at the start of the row's stage
    bool chain = true;            // (stage_start files) the volume since the data zero is known
    for (std::size_t i = 0; i < n; ++i) {
      const int k = stage[i];
      const SpecimenStage& st = s.stages[static_cast<std::size_t>(k)];
      const bool first_row = i == 0 || stage[i - 1] != k;
      const bool hold = !drained_stage(st) && !first_row;  // undrained: no volume change within the stage
      bool rows_between = false;  // a consolidation without rows between this stage and the previous rows
      if (first_row && i > 0)
        for (int j = stage[i - 1] + 1; j < k; ++j)
          rows_between = rows_between || s.stages[static_cast<std::size_t>(j)].type == SpecimenStageType::consolidation;
      if (continuous) {
        if (!vcol) ev_c[i] = 0.0;
        else if (hold) ev_c[i] = ev_c[i - 1];
        else ev_c[i] = vol_is_strain ? (*vcol)[i] : ((*vcol)[i] - (*vcol)[0]) / v_ref;
        if (first_row && i > 0) {
          ea0 = ea_file[i];
          ev0 = ev_c[i];
          if (!(ea0 < 1.0 && ev0 < 1.0))
            throw InputError(src + ": line " + std::to_string(t.line[i]) + ": stages[" + std::to_string(k) +
                             "] starts at axial strain " + fmt(ea0) + ", volumetric strain " + fmt(ev0) +
                             " from the data zero; a specimen's strains must stay below 1");
        }
        ea[i] = (ea_file[i] - ea0) / (1.0 - ea0);
        ev[i] = (ev_c[i] - ev0) / (1.0 - ev0);
        // Without a volume column the volume change of a consolidation without rows is not seen.
        if (rows_between && !vcol) chain = false;
      } else {
        if (first_row && i > 0) {
          ev0 = ev_c[i - 1];
          chain = chain && !rows_between;
        }
        ea[i] = ea_file[i];
        if (!vcol) {
          ev[i] = 0.0;
        } else if (hold) {
          ev[i] = ev[i - 1];
        } else if (vol_is_strain) {
          ev[i] = (*vcol)[i];
        } else {
          // volume_change since the stage start over the volume at the stage start.
          if (!chain)
            throw InputError(src + ": line " + std::to_string(t.line[i]) + " (volume_change): the volume at the start of stages[" +
                             std::to_string(k) + "] is unknown (a consolidation without rows comes before it and the " +
                             "volume changes are relative to each stage's start); give a volumetric_strain column or " +
                             "continuous volume changes with \"strain_origin\": \"data_start\"");
          ev[i] = (*vcol)[i] / (v_ref * (1.0 - ev0));
        }
        ev_c[i] = 1.0 - (1.0 - ev0) * (1.0 - ev[i]);
      }
      volume_known[i] = chain ? 1 : 0;
    }
  }
  return r;
}

/// Step 3b: loops declared in a continuous file's strains become stage strains like the curves.
void loops_to_stage_strains(Specimen& s, const TriaxialData& d, const std::vector<double>& ea_file, const std::vector<int>& stage) {
  const std::size_t n = d.n;
  if (d.continuous)
    for (std::size_t i = 1; i < n; ++i) {
      if (stage[i] == stage[i - 1]) continue;
      const double e0 = ea_file[i];
      for (UnloadReloadLoop& l : s.stages[static_cast<std::size_t>(stage[i])].loops) {
        l.from_strain = (l.from_strain - e0) / (1.0 - e0);
        l.to_strain = (l.to_strain - e0) / (1.0 - e0);
      }
    }
}

/// Step 4: each row reduced to the curves: deviator (raw: area and membrane corrections), cell and
/// pore pressure, effective stresses, void ratio.
void reduce_rows(Specimen& s, const TriaxialData& d, const std::vector<double>& ea_file, const std::vector<int>& stage,
                 const RowStrains& r) {
  const DataFileSpec& spec = d.spec;
  const std::string& series_src = d.series_src;
  const detail::KeyPath& sp = d.sp;
  const std::size_t n = d.n;
  const CsvTable& t = d.t;
  const std::string& src = d.src;
  const auto column = [&d](const char* q) { return d.column(q); };
  const std::vector<double>& ea = r.ea;
  const std::vector<double>& ev = r.ev;
  const std::vector<double>& ev_c = r.ev_c;
  const std::vector<char>& volume_known = r.volume_known;
  ReducedCurves& c = s.curves;
  c = ReducedCurves{};
  const bool membrane = given(spec.membrane_modulus) && given(spec.membrane_thickness);
  const double d_ref = std::sqrt(4.0 * s.reference_area / std::numbers::pi);
  for (std::size_t i = 0; i < n; ++i) {
    const int k = stage[i];
    const SpecimenStage& st = s.stages[static_cast<std::size_t>(k)];
    const std::string at = src + ": line " + std::to_string(t.line[i]);
    double q = 0.0;
    if (spec.raw) {
      // Area and membrane on the strains since the data zero (raw readings are continuous).
      const double area = corrected_area(s.reference_area, ev_c[i], ea_file[i]);
      if (!(area > 0.0)) throw InputError(at + ": the corrected area is not positive (axial strain " + fmt(ea_file[i]) + ")");
      q = deviator_from_load((*column("axial_load"))[i], area);
      if (membrane) q -= membrane_correction(spec.membrane_modulus, spec.membrane_thickness, ea_file[i], d_ref);
    } else {
      q = (*column("deviator_stress"))[i];
    }
    const double cell = column("cell_pressure") ? (*column("cell_pressure"))[i] : stage_cell_pressure(s, k);
    double u = kNotGiven;
    if (column("pore_pressure") && !(spec.raw && drained_stage(st) && column("back_pressure")))
      u = (*column("pore_pressure"))[i];
    else if (column("excess_pore_pressure"))
      u = s.back_pressure + (*column("excess_pore_pressure"))[i];
    else if (spec.raw && column("back_pressure") && drained_stage(st))
      u = (*column("back_pressure"))[i];
    else if (drained_stage(st))
      u = s.back_pressure;
    double sr = kNotGiven;
    if (given(u) && given(cell)) sr = cell - u;
    if (given(u) && !given(cell) && st.shear != ShearType::uu)
      throw InputError((sp / "stages")[static_cast<std::size_t>(k)].in(series_src) + ": the cell pressure is unknown (give a cell_pressure column or the consolidation radial_stress)");
    const double sa = given(sr) ? sr + q : kNotGiven;
    if (given(sr) && (sr < 0.0 || sa < 0.0))
      throw InputError(at + ": negative effective stress (s_r' = " + fmt(sr) + " kPa, s_a' = " + fmt(sa) +
                       " kPa from cell pressure " + fmt(cell) + " kPa, pore pressure " + fmt(u) + " kPa, q " + fmt(q) + " kPa)");
    c.stage.push_back(k);
    c.line.push_back(t.line[i]);
    c.axial_strain.push_back(ea[i]);
    c.volumetric_strain.push_back(ev[i]);
    c.deviator_stress.push_back(q);
    c.excess_pore_pressure.push_back(given(u) ? u - s.back_pressure : kNotGiven);
    c.radial_stress.push_back(sr);
    c.axial_stress.push_back(sa);
    c.mean_stress.push_back(given(sr) ? sr + q / 3.0 : kNotGiven);
    c.cell_pressure.push_back(cell);
    c.void_ratio.push_back(given(s.reference_void_ratio) && volume_known[i] ? void_ratio_after(s.reference_void_ratio, ev_c[i]) : kNotGiven);
  }
}

/// Step 5: per-stage checks (points, strain going back outside a loop, consolidation stress
/// against the declared one) and the B-value of CU tests.
void check_stages(const Specimen& s, const TriaxialData& d, std::vector<SeriesWarning>& warnings) {
  const std::string& src = d.src;
  const std::string& series_src = d.series_src;
  const detail::KeyPath& sp = d.sp;
  const auto column = [&d](const char* q) { return d.column(q); };
  const ReducedCurves& c = s.curves;
  const bool any_cu = d.any_cu;
  // Per-stage checks.
  for (std::size_t k = 0; k < s.stages.size(); ++k) {
    const SpecimenStage& st = s.stages[k];
    const auto [first, last] = s.stage_points(static_cast<int>(k));
    const int count = last - first + 1;
    if (st.type == SpecimenStageType::shear && count < kMinPoints)
      throw InputError(src + ": specimen '" + s.id + "', stages[" + std::to_string(k) + "] (shear): " + std::to_string(std::max(count, 0)) +
                       " data points, at least " + std::to_string(kMinPoints) + " are needed");
    if (st.type != SpecimenStageType::shear || count <= 0) continue;
    const double dir = st.direction == ShearDirection::compression ? 1.0 : -1.0;
    for (int i = first + 1; i <= last; ++i) {
      const double prev = c.axial_strain[static_cast<std::size_t>(i - 1)], now = c.axial_strain[static_cast<std::size_t>(i)];
      if (dir * (now - prev) >= -kStrainRoundOff) continue;
      bool in_loop = false;
      for (const auto& l : st.loops)
        in_loop = in_loop || (std::min(now, prev) >= l.from_strain - kStrainRoundOff && std::max(now, prev) <= l.to_strain + kStrainRoundOff);
      if (!in_loop)
        throw InputError(src + ": line " + std::to_string(c.line[static_cast<std::size_t>(i)]) + " (axial_strain): the axial strain goes back from " +
                         fmt(prev) + " to " + fmt(now) + " outside a declared unload-reload loop (declare it in " + ((sp / "stages")[k] / "unload_reload").str() + ")");
    }
    // Consolidation stress in the file against the declared one.
    const bool measured = column("cell_pressure") || column("pore_pressure") || column("excess_pore_pressure");
    if (measured && st.shear != ShearType::uu) {
      for (int j = static_cast<int>(k) - 1; j >= 0; --j) {
        const SpecimenStage& cs = s.stages[static_cast<std::size_t>(j)];
        if (cs.type == SpecimenStageType::shear) break;
        if (cs.type != SpecimenStageType::consolidation) continue;
        const double found = c.radial_stress[static_cast<std::size_t>(first)];
        if (given(cs.radial_stress) && given(found) &&
            std::abs(found - cs.radial_stress) > std::max(kConsolidationAbs, kConsolidationRel * cs.radial_stress))
          warnings.push_back({s.id, src + ": line " + std::to_string(c.line[static_cast<std::size_t>(first)]) +
                                        ": effective radial stress at the start of shear is " + fmt(found) +
                                        " kPa in the file, declared consolidation radial stress " + fmt(cs.radial_stress) +
                                        " kPa (" + (sp / "stages")[static_cast<std::size_t>(j)].str() + ")"});
        break;
      }
    }
  }
  if (any_cu) {
    if (!given(s.b_value))
      warnings.push_back({s.id, sp.in(series_src) + ": CU test without a declared B-value (saturation stage b_value)"});
    else if (s.b_value < kMinimumB)
      warnings.push_back({s.id, sp.in(series_src) + ": B-value " + fmt(s.b_value) + " is below " + fmt(kMinimumB) +
                                    " for a CU test; pore pressures may be underestimated"});
  }
}

/// A triaxial specimen's data file: read, assigned to stages, reduced and checked, as named steps.
void read_data(Specimen& s, const std::string& series_src, const detail::KeyPath& sp, std::vector<SeriesWarning>& warnings) {
  if (s.failure_values_only()) return;  // known by its reported failure values only
  if (s.is_oedometer()) {
    read_oedometer_data(s, series_src, sp, warnings);
    return;
  }
  TriaxialData d{s, s.data, s.data.path, series_src, sp, {}, {}, 0, false, false, false};
  const std::vector<CsvColumnRequest> req = required_columns(d);
  const DataFileSpec& spec = s.data;
  CsvLayout layout{spec.delimiter, spec.decimal, spec.skip_rows, spec.skip_after_header};
  d.t = parse_lab_csv(detail::read_text_file(d.src), d.src, layout, req);
  d.n = d.t.line.size();
  std::vector<int> stage = stages_from_column(d);
  if (d.n == 0) throw InputError(d.src + ": no data rows after the header (at least " + std::to_string(kMinPoints) + " are needed)");
  // Without a stage column the data start with the first shear stage.
  set_reference_state(s, stage[0] >= 0 ? stage[0] : s.shear_stages().front(), series_src, sp, warnings);
  // Axial strain first (needed to assign stages by strain range), as the file gives it.
  std::vector<double> ea_file(d.n);
  if (spec.raw) {
    const auto& disp = *d.column("axial_displacement");
    for (std::size_t i = 0; i < d.n; ++i) ea_file[i] = axial_strain_from_displacement(disp[i], disp[0], s.reference_height);
  } else {
    ea_file = *d.column("axial_strain");
  }
  if (!d.column("stage")) stages_from_strain_ranges(d, ea_file, stage);
  s.data_zero_stage = stage[0];
  check_stage_starts(d, ea_file, stage);
  const RowStrains strains = stage_strains(d, ea_file, stage);
  loops_to_stage_strains(s, d, ea_file, stage);
  reduce_rows(s, d, ea_file, stage, strains);
  check_stages(s, d, warnings);
}

}  // namespace

SeriesCheck check_test_series(const std::string& path) {
  SeriesCheck check;
  ParsedSeries parsed;
  try {
    parsed = parse_series_json(path);
  } catch (const InputError& e) {
    check.errors.push_back(e.what());
    return check;
  }
  check.series = parsed.series;
  for (SpecimenJson& sj : parsed.specimens) {
    try {
      read_data(sj.specimen, path, sj.path, check.series.warnings);
      check.series.specimens.push_back(sj.specimen);
    } catch (const InputError& e) {
      check.errors.push_back(e.what());
    }
  }
  return check;
}

TestSeries read_test_series(const std::string& path) {
  ParsedSeries parsed = parse_series_json(path);
  TestSeries series = parsed.series;
  for (SpecimenJson& sj : parsed.specimens) {
    read_data(sj.specimen, path, sj.path, series.warnings);
    series.specimens.push_back(sj.specimen);
  }
  return series;
}

}  // namespace triaxcal
