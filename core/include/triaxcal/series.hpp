#pragma once
// A test series: specimens, their stages and their measured curves, read from a test-series JSON
// (format "triaxcal-test-series", version 1, docs/test-series-format.md) and the CSV data files it
// points to. Units are converted once, where the files are read: inside, stresses are kPa, strains
// decimals (compression positive), lengths mm, forces N, volumes mm^3 (conventions.hpp).
//
// Strains of the curves (the lab convention, docs/test-series-format.md "Strains"): every point's
// axial and volumetric strain is an engineering strain relative to the specimen at the start of the
// point's own stage (dL / L_stage_start, dV / V_stage_start), whatever the data file's convention
// (DataFileSpec::strain_origin); the reader converts exactly. The reference height and area of the
// reduction are those at the *data zero*, the start of the first stage that has data points, and
// void ratios follow the volume change from there. specimen_protocol() starts at the state after
// saturation; a shear stage's curves are compared with the simulation from that stage's start.

#include <string>
#include <utility>
#include <vector>

#include "triaxcal/core_export.hpp"
#include "triaxcal/model.hpp"
#include "triaxcal/protocol.hpp"

namespace triaxcal {

inline constexpr const char* kTestSeriesFormat = "triaxcal-test-series";
inline constexpr int kTestSeriesVersion = 1;

/// oedometer: a one-dimensional compression test (zero radial strain) in load steps; a specimen with an
/// oedometer stage has no other stage.
enum class SpecimenStageType { saturation, consolidation, shear, oedometer };
enum class ConsolidationPath { isotropic, k0, anisotropic };
/// CU: consolidated undrained, CD: consolidated drained, UU: unconsolidated undrained.
enum class ShearType { cu, cd, uu };
enum class ShearDirection { compression, extension };

/// An axial-strain range in which a shear stage unloads and reloads; the axial strain may go
/// backwards only inside a declared loop. Declared in the data file's strain convention; after
/// reading, engineering strains relative to the stage's start like the curves.
struct UnloadReloadLoop {
  double from_strain = kNotGiven;  ///< axial strain where unloading starts
  double to_strain = kNotGiven;    ///< axial strain where the reload has passed the start again
};

/// Values at failure as the laboratory reported them (e.g. an AGS4 file's TRIT / TRET rows): a shear
/// stage known only by them (a failure-value stage, its specimen without a data file), or given beside
/// the stage's curves (then compared with the failure point recomputed from the curves).
struct ReportedFailure {
  double deviator_stress = kNotGiven;      ///< q_f (kPa), positive in the shear direction
  double pore_pressure = kNotGiven;        ///< u_f, absolute (kPa); CU and CD (drained: the back pressure)
  double pore_pressure_start = kNotGiven;  ///< u at the start of shear (kPa), for Skempton's A_f
  double axial_strain = kNotGiven;         ///< at failure, from the stage start (decimal)
  double volumetric_strain = kNotGiven;    ///< at failure, drained (decimal, as reported)
  std::string criterion;                   ///< the lab's failure criterion, as reported (free text)

  bool given() const { return deviator_stress == deviator_stress; }  ///< not NaN
};

/// One stage of a specimen's history, as the lab declared it. Fields not of its type stay NaN.
struct SpecimenStage {
  SpecimenStageType type = SpecimenStageType::shear;
  std::string label;  ///< free text

  // saturation
  double b_value = kNotGiven;        ///< Skempton's B = du / d(sigma_cell) measured at the end (-)
  double cell_pressure = kNotGiven;  ///< total cell pressure (kPa): end of saturation, or during a shear stage (UU)
  double back_pressure = kNotGiven;  ///< back pressure (kPa)

  // consolidation (targets are effective stresses)
  ConsolidationPath path = ConsolidationPath::isotropic;
  double axial_stress = kNotGiven;   ///< target s_a' (kPa); equals radial_stress when isotropic
  double radial_stress = kNotGiven;  ///< target s_r' (kPa); NaN for K0 until measured
  double end_axial_strain = kNotGiven;       ///< measured at the end, from the saturated state (decimal)
  double end_volumetric_strain = kNotGiven;  ///< measured at the end, from the saturated state (decimal)

  // shear
  ShearType shear = ShearType::cu;
  ShearDirection direction = ShearDirection::compression;
  std::vector<UnloadReloadLoop> loops;
  ReportedFailure failure;  ///< values at failure as reported (key "failure"), if any

  // oedometer: the effective axial stress (kPa) at the end of each load step, in order; a change of
  // direction starts an unloading or reloading branch.
  std::vector<double> stress_steps;

  // which data points belong to the stage
  int data_stage = -1;                 ///< value of the stage column that marks its points, or -1
  double strain_from = kNotGiven;      ///< declared axial-strain range when there is no stage column
  double strain_to = kNotGiven;        ///< (the file's own strains, continuous from the data zero)
};

/// Reduced measured curves of one specimen, one entry a data row (struct of arrays, equal sizes).
struct ReducedCurves {
  std::vector<int> stage;                     ///< index into Specimen::stages
  std::vector<int> line;                      ///< 1-based line in the data file
  std::vector<double> axial_strain;           ///< dL / L at the start of the point's stage (decimal)
  std::vector<double> volumetric_strain;      ///< dV / V at the start of the point's stage (decimal; constant when undrained)
  std::vector<double> deviator_stress;        ///< q = s_a - s_r (kPa, signed), corrected; NaN in an oedometer
                                              ///< (s_r' is not measured), as are radial_stress, mean_stress, cell_pressure
  std::vector<double> excess_pore_pressure;   ///< u - back pressure (kPa)
  std::vector<double> axial_stress;           ///< s_a' (kPa)
  std::vector<double> radial_stress;          ///< s_r' (kPa)
  std::vector<double> mean_stress;            ///< p' (kPa)
  std::vector<double> cell_pressure;          ///< total radial stress (kPa), for total-stress (UU) results
  std::vector<double> void_ratio;             ///< NaN when the void ratio is not known (oedometer: column or e0 - (1 + e0) e_a);
                                              ///< from the volume change since the data zero

  std::size_t size() const { return axial_strain.size(); }
};

/// What the axial_strain and volumetric_strain (or volume_change) columns of a data file are
/// relative to (key data.strain_origin).
enum class StrainOrigin {
  stage_start,  ///< "stage_start" (default): the specimen at the start of each row's own stage (lab convention)
  data_start,   ///< "data_start": the specimen at the start of the first stage with rows, continuous over later stages
};

/// How a data file is laid out and what its columns hold (docs/test-series-format.md).
struct DataFileSpec {
  std::string path;         ///< resolved against the series file's folder
  bool raw = false;         ///< raw readings (load, displacement, gauges) rather than reduced values
  char delimiter = 0;       ///< ',', ';', '\t', or 0 = detect from the header row
  char decimal = '.';       ///< '.' or ','
  int skip_rows = 0;        ///< lines before the header row
  int skip_after_header = 0;  ///< lines between the header row and the data (e.g. a units row)
  /// Reduced data: what the strain columns are relative to. Raw readings are continuous by nature
  /// (data_start, the key is an error there).
  StrainOrigin strain_origin = StrainOrigin::stage_start;
  struct Column {
    std::string quantity;   ///< our quantity key, e.g. "axial_strain", "axial_load"
    std::string header;     ///< the column's name in the header row
    std::string unit;       ///< as declared, e.g. "%", "kN", "MPa"
  };
  std::vector<Column> columns;
  double membrane_thickness = kNotGiven;  ///< mm; with membrane_modulus enables the correction
  double membrane_modulus = kNotGiven;    ///< kPa
};

struct Specimen {
  std::string id;
  std::string depth;     ///< free text, as in the lab report
  std::string borehole;  ///< free text
  std::string description;
  std::string material;  ///< soil unit label (free text); interpretation groups by it
  double height = kNotGiven;    ///< initial height after set-up (mm)
  double diameter = kNotGiven;  ///< initial diameter after set-up (mm)
  double void_ratio = kNotGiven;        ///< e0 after set-up (given, or w Gs / Sr)
  double water_content = kNotGiven;     ///< decimal
  double specific_gravity = kNotGiven;  ///< Gs (-)
  double degree_of_saturation = kNotGiven;  ///< Sr (decimal)
  double relative_density = kNotGiven;  ///< I_D (decimal), sands
  double initial_effective_stress = kNotGiven;  ///< p' after set-up and saturation (kPa), if known
  std::vector<SpecimenStage> stages;
  DataFileSpec data;
  ReducedCurves curves;

  // Derived when read.
  double back_pressure = 0.0;          ///< from the saturation stage (kPa)
  double b_value = kNotGiven;          ///< from the saturation stage
  int data_zero_stage = -1;            ///< index of the first stage with data points
  double reference_height = kNotGiven; ///< mm, at the data zero
  double reference_area = kNotGiven;   ///< mm^2, at the data zero
  double reference_void_ratio = kNotGiven;  ///< at the data zero, NaN when e0 is unknown

  /// Indices of the shear stages, in order.
  std::vector<int> shear_stages() const;
  /// Indices of the oedometer stages (at most one, the specimen's only stage).
  std::vector<int> oedometer_stages() const;
  bool is_oedometer() const { return !oedometer_stages().empty(); }
  /// A specimen known by its reported failure values only: no data file, every shear stage has `failure`.
  bool failure_values_only() const { return data.path.empty(); }
  /// Point indices [first, last] of one stage's points; empty range (first > last) when none.
  std::pair<int, int> stage_points(int stage) const;
};

/// A finding that does not stop the run.
struct SeriesWarning {
  std::string specimen;  ///< id, or empty for the whole series
  std::string message;   ///< names the file or key, the value found and what was expected
};

struct TestSeries {
  std::string source;       ///< path of the series file
  std::string name;
  std::string description;
  std::vector<Specimen> specimens;
  std::vector<SeriesWarning> warnings;
};

/// Reads the series file and every data file, reduces raw data and checks it. Throws InputError on
/// the first error (file, line and column or JSON path, value found, what was expected). Warnings
/// are collected in TestSeries::warnings.
TRIAXCAL_CORE_EXPORT TestSeries read_test_series(const std::string& path);

/// What `triaxcal check` reports: every error found (one per specimen data file at most, since a
/// bad file stops its own reading), and the warnings.
struct SeriesCheck {
  TestSeries series;                 ///< the specimens that could be read
  std::vector<std::string> errors;   ///< messages, each naming file and line/column or JSON path
};

/// Like read_test_series, but collects data-file errors per specimen instead of stopping at the
/// first. A malformed series JSON still gives a single error.
TRIAXCAL_CORE_EXPORT SeriesCheck check_test_series(const std::string& path);

/// The simulation protocol of a specimen's history (initial state, consolidation, shear stages, unload-reload
/// loops, multi-stage sequences) so that a model can be run on it and compared at the measured points;
/// the protocol starts after saturation (docs/test-series-format.md "Simulation protocol of a specimen").
/// - Each shear stage runs from its start to the stage strain of its last row (Stage::axial_strain,
///   engineering), split into shear / unload_reload / shear around each declared loop.
/// - Multi-stage: the last consolidation before each later shear stage (stage 2, 3, ...) is a drained
///   anisotropic reconsolidation from wherever the simulation of the stage before ended to the
///   effective stresses s_a', s_r' measured in that shear stage's first row (its declared target when
///   the row has no effective stresses); the first shear stage follows the declared consolidation.
/// - steps_per_shear_stage: increments of each shear stage (shared between the segments around loops)
///   with DriverOptions::fixed_steps, else the record density where no measured points place the
///   records (Stage::record_at).
TRIAXCAL_CORE_EXPORT TestProtocol specimen_protocol(const Specimen& specimen, int steps_per_shear_stage /* e.g. 300 */);

/// An oedometer specimen gives one drained oedometer stage per loading / unloading branch of its
/// stress_steps (target = the branch's last step), starting isotropic at initial_effective_stress or
/// else at the axial stress of the first data row; its steps_per_shear_stage increments are shared
/// between the branches in proportion to |ln(s_a' end / s_a' start)| (at least 5 each).
/// specimen_protocol with the map back to the specimen's stages.
struct SpecimenProtocol {
  TestProtocol protocol;
  std::vector<int> origin;   ///< for each protocol stage, the index of the specimen stage it comes from
  int data_zero_stage = -1;  ///< protocol stage at whose start the first specimen stage with rows begins

  /// First and last protocol stage made from specimen stage `specimen_stage` ({0, -1} when none).
  std::pair<int, int> stages_of(int specimen_stage) const {
    int first = -1, last = -1;
    for (std::size_t k = 0; k < origin.size(); ++k)
      if (origin[k] == specimen_stage) {
        if (first < 0) first = static_cast<int>(k);
        last = static_cast<int>(k);
      }
    return first < 0 ? std::pair<int, int>{0, -1} : std::pair<int, int>{first, last};
  }
};
TRIAXCAL_CORE_EXPORT SpecimenProtocol specimen_protocol_with_map(const Specimen& specimen, int steps_per_shear_stage);

TRIAXCAL_CORE_EXPORT std::string to_string(ShearType type);       ///< "CU", "CD", "UU"
TRIAXCAL_CORE_EXPORT std::string to_string(ConsolidationPath path);  ///< "isotropic", "K0", "anisotropic"

}  // namespace triaxcal
