#pragma once
// Reading AGS4 files strictly (AGS4 data format 4.1, as summarised in issue 16): groups, each a
// "GROUP" row, then "HEADING", "UNIT" and "TYPE" rows and "DATA" rows; every field double-quoted,
// a quote inside a field doubled; lines end in CR LF (LF alone is accepted); groups separated by a
// blank line. Text that is not valid UTF-8 is read as Latin-1 and converted to UTF-8 (the standard
// allows it). Numbers are converted once, from the UNIT row, to our internal units (Ags4Dimension);
// an unknown unit is an error. Every error names the file, the line, the group and the heading.

#include <string>
#include <utility>
#include <vector>

#include "triaxcal/core_export.hpp"

namespace triaxcal {

/// What a unit measures, and the internal unit its values are converted to.
enum class Ags4Dimension {
  none,             ///< text, or a number without unit ("" or "-")
  stress,           ///< kPa (from kPa, MPa, Pa)
  fraction,         ///< decimal (from %)
  length,           ///< m (from m, cm, mm)
  compressibility,  ///< m2/MN (from m2/MN, m2/kN)
  consolidation,    ///< m2/yr (from m2/yr)
  density,          ///< Mg/m3 (from Mg/m3, kg/m3)
  angle,            ///< degrees (from deg)
  date,             ///< a DT value; the unit is its pattern, e.g. yyyy-mm-dd
};

struct Ags4Group {
  std::string name;
  int line = 0;                       ///< line of the GROUP row (1-based)
  std::vector<std::string> headings;  ///< HEADING row, without the leading "HEADING"
  std::vector<std::string> units;     ///< as written
  std::vector<std::string> types;     ///< as written, e.g. 2DP, X, ID
  std::vector<Ags4Dimension> dimensions;
  std::vector<double> factors;        ///< multiply a value to get the internal unit
  struct Row {
    int line = 0;
    std::vector<std::string> text;    ///< fields as written (UTF-8)
  };
  std::vector<Row> rows;

  /// Column of `heading`, or -1.
  int column(const std::string& heading) const;
};

struct Ags4File {
  std::string source;
  bool latin1 = false;  ///< the text was read as Latin-1 and converted
  std::vector<Ags4Group> groups;

  /// The group, or nullptr.
  const Ags4Group* group(const std::string& name) const;
};

/// Parses `text` (the contents of `source`). Throws InputError, e.g.
///  "<source>: line 14, group TRIT: the DATA row has 9 fields, the HEADING row has 10",
///  "<source>: line 12, group TRIT: expected the UNIT row after HEADING, found \"TYPE\"",
///  "<source>: line 15, group TRIT, heading TRIT_CELL: '12.5' is not a 2DP value (a number with 2 decimal places)",
///  "<source>: line 13, group TRIT, heading TRIT_CELL: unit 'psf' is not known (expected one of: ...)".
TRIAXCAL_CORE_EXPORT Ags4File parse_ags4(const std::string& text, const std::string& source);

/// Reads the file under the common input limits (regular file, at most 256 MiB) and parses it.
TRIAXCAL_CORE_EXPORT Ags4File read_ags4(const std::string& path);

/// A numeric field of a row in the internal unit of its column (NaN when the field is empty).
/// Throws InputError naming line, group and heading when the column's unit is not of `dimension`
/// or the heading is missing and `required`.
TRIAXCAL_CORE_EXPORT double ags4_number(const Ags4File& file, const Ags4Group& group, const Ags4Group::Row& row,
                                        const std::string& heading, Ags4Dimension dimension, bool required);

/// "line L, group G, heading H" prefixed with the source: the place every message names.
TRIAXCAL_CORE_EXPORT std::string ags4_where(const Ags4File& file, const Ags4Group& group, int line, const std::string& heading);

TRIAXCAL_CORE_EXPORT std::string to_string(Ags4Dimension d);

}  // namespace triaxcal

namespace triaxcal {

/// Which material a specimen belongs to: the first rule that holds it (docs/ags4-import.md "Material map").
/// A rule holds a specimen when its location (empty: any) is the specimen's LOCA_ID, its depth range
/// [from, to) (m below ground, the specimen's SPEC_DPTH, else its SAMP_TOP; absent: any depth) holds
/// the depth, and the GEOL stratum that holds the specimen (same LOCA_ID, GEOL_TOP <= depth < GEOL_BASE)
/// has every heading value of `geol`. The material is `material`, or the stratum's value of the GEOL
/// heading `material_from_geol`. A material-map file (format "triaxcal-material-map", version 1) lists them.
struct MaterialRule {
  std::string material;            ///< empty when `material_from_geol` names it
  std::string location;            ///< LOCA_ID, empty for any
  double from = 0.0;               ///< m
  double to = 0.0;                 ///< m
  std::string material_from_geol;  ///< a GEOL heading, e.g. GEOL_GEOL
  bool depth_range = true;         ///< from/to given
  std::vector<std::pair<std::string, std::string>> geol;  ///< GEOL heading, value as written
  std::string where;               ///< "materials[i]" of its file
  std::string source;              ///< the map file
  /// Whether it needs the GEOL group.
  bool uses_geol() const { return !geol.empty() || !material_from_geol.empty(); }
};

/// Reads a material-map file; throws InputError naming file and key.
TRIAXCAL_CORE_EXPORT std::vector<MaterialRule> read_material_map(const std::string& path);

/// Which curve file (the lab's CSV export of a triaxial test) belongs to which imported specimen
/// (format "triaxcal-curve-map", version 1, docs/ags4-import.md): `entries` name a specimen by the
/// import's id (LOCA_ID/SAMP_TOP/SAMP_REF/SPEC_REF) and a file; `pattern` (optional) names a file by
/// the specimen's AGS4 keys, "{LOCA_ID}_{SPEC_DPTH}.csv", used for the specimens no entry names and
/// whose file exists; with "{TESN}" in it, one file a stage. Files of one stage each (entries with
/// `stage`, or a pattern with {TESN}) are merged into one file with a stage column (1, 2, 3: the
/// specimen's shear stages in TESN order). Files are relative to the map's folder; `layout` is the test series' `data`
/// object without `file` (columns, units, delimiter, kind...), one for all files unless an entry has its own.
struct CurveMap {
  std::string source;  ///< the map file
  std::string folder;  ///< where its files are looked up
  std::string layout;  ///< JSON object text
  std::string pattern;
  struct Entry {
    std::string specimen;
    int stage = 0;       ///< the stage's TESN for a file of one stage (merged with the specimen's others), 0 for a whole specimen
    std::string file;    ///< as written
    std::string layout;  ///< JSON object text: the entry's own, else the map's
    std::string where;   ///< "curves[i]"
  };
  std::vector<Entry> entries;
};

/// Reads a curve map; throws InputError naming file and key.
TRIAXCAL_CORE_EXPORT CurveMap read_curve_map(const std::string& path);

/// A test series made from an AGS4 file (docs/ags4-import.md): failure-value specimens from TRIG/TRIT
/// (UU) and TREG/TRET (CU, CD; stages by TESN), oedometer specimens from CONG/CONS with a data file each.
struct Ags4Import {
  std::string series_json;  ///< the test-series JSON (format triaxcal-test-series)
  /// Data files the series names (oedometer increments), relative to the series file's folder, and their text.
  std::vector<std::pair<std::string, std::string>> data_files;
  std::vector<std::string> summary;   ///< what was found, one line each
  std::vector<std::string> specimens; ///< one line a specimen: id, location, depth, test, stages, material
  int id_width = 18;                  ///< width of the id column of `specimens` and `checks` (the widest id, 18 at least)
  std::vector<std::string> checks;    ///< the lab's reported m_v against the one recomputed from the void ratios
  /// Curve files attached (one line a specimen: id, the lab's file, its copy beside the series).
  std::vector<std::string> curves;
  struct CurveSource {
    std::string copy;      ///< the copy's name beside the series
    std::string source;    ///< the lab's file
    std::string specimen;  ///< its id
    int index = -1;        ///< its place in the series' specimens
  };
  std::vector<CurveSource> curve_sources;
  std::vector<std::string> warnings;
};

/// Builds the series. `series_name` names the series; `rules` assign materials (none: every specimen's
/// material is empty); `curves` (optional) attaches the lab's curve files to triaxial specimens: the
/// specimen keeps its reported failure values and gains `data` (a copy of the file, written beside the
/// series as `data_files`), and `interpret` compares the two. Throws InputError naming line, group and heading for a key that does not resolve
/// (a TRIT row without its TRIG specimen, a SAMP row whose LOCA_ID is not in LOCA, ...), a missing
/// required group or heading, or a value out of range.
TRIAXCAL_CORE_EXPORT Ags4Import import_ags4(const Ags4File& file, const std::string& series_name,
                                            const std::vector<MaterialRule>& rules, const CurveMap* curves = nullptr);

}  // namespace triaxcal
