// sillstone/report.hpp -- the self-contained HTML report of a study.
//
// One file, no network, no external files: plots are inline SVG, maps are
// PNG data inside them (plots.hpp). It carries the data summary, the
// variograms with the fitted model, the fit table, the cross-validation, the
// maps with legends, scale and north arrow, exceedance areas or a
// grade-tonnage table, the settings and the inputs' checksums, and the
// caution every report must carry. docs/report.md describes each section.
#pragma once

#include <string>
#include <vector>

#include "sillstone/crossval.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/model.hpp"
#include "sillstone/neighbourhood.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/summary.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {

/// Settings of the report that are not the verbs' ([report] of a study file).
struct ReportOptions {
  std::string title;            ///< default: from the samples' file name
  std::string units;            ///< units of the value, e.g. "mg/kg"
  double density = 0;           ///< t/m3 for grade-tonnage tables; 0: none
  std::vector<double> cutoffs;  ///< grade-tonnage cut-offs; empty: chosen from the data
};

/// Everything the report shows; pointers are to the run's objects (not owned).
/// Filled by whoever ran the stages (the study runner, or a program of its own).
struct ReportInput {
  ReportOptions options;
  std::string study_path;              ///< shown in the settings; empty: none
  std::string block_list;              ///< the block list of a 3D block model; empty: none
  NeighbourhoodOptions neighbourhood;  ///< as used by the kriging
  const SampleSet* samples = nullptr;
  const DataSummary* summary = nullptr;
  const EmpiricalVariogram* variogram = nullptr;
  const ModelFile* model = nullptr;
  std::string fit_table;                            ///< the fit's table as text; empty when given
  const CrossValidationResult* crossval = nullptr;  ///< null when skipped
  /// Other kriging set-ups compared by cross-validation: (label, summary).
  std::vector<std::pair<std::string, CrossValidationSummary>> alternatives;
  const KrigingOptions* kriging = nullptr;
  const GridSpec* grid = nullptr;
  const KrigingSummary* kriging_summary = nullptr;
  /// The kriged grid (2D) or block model (3D), kept in memory by the run:
  /// the report never opens an output file.
  const KrigedGrid* result = nullptr;
  std::vector<std::pair<std::string, std::string>> inputs;  ///< (path, sha256)
  std::vector<std::string> warnings, notes;
  std::string version;
};

/// The caution paragraph that README and every report carry (plain text).
std::string caution_text();

/// The length unit of a CRS, as OSR names it.
struct MapUnits {
  /// "metre", "foot", "US survey foot", ... (OSR's linear unit name);
  /// "degree" for a geographic CRS; "map units" without a CRS.
  std::string name = "map units";
  std::string symbol = "map units";  ///< for axes: "m", "ft", "US ft", "°", or the name
  double metres = 0;                 ///< metres per unit; 0 when unknown (no CRS, geographic)
  bool geographic = false;           ///< degrees: distances and areas are not lengths on the ground
};
/// Units of `crs_wkt` (any WKT or user input OSR reads); throws InputError
/// for a CRS that OSR cannot read.
MapUnits map_units(const std::string& crs_wkt);

/// Areas (2D) where the exceedance probability is above each level: cells
/// above the level times the cell area.
struct ExceedanceArea {
  double level = 0;
  std::int64_t cells = 0;
  double area = 0;  ///< CRS units squared
};
/// Throws std::invalid_argument when `grid` is not 2D or holds no probability.
std::vector<ExceedanceArea> exceedance_areas(const KrigedGrid& grid,
                                             const std::vector<double>& levels);

/// Tonnage and mean grade above cut-offs from block estimates.
struct GradeTonnageRow {
  double cutoff = 0;
  std::int64_t blocks = 0;
  double tonnage = 0;     ///< blocks x block volume x density
  double mean_grade = 0;  ///< NaN when no block is above the cut-off
};
std::vector<GradeTonnageRow> grade_tonnage(const std::vector<double>& block_grades,
                                           double block_volume, double density,
                                           const std::vector<double>& cutoffs);

/// Where the kriged curve gives more or less tonnage than a reference curve
/// (e.g. from the declustered samples) at the same cut-offs, as sentences
/// built from the numbers: cut-offs are grouped into runs where the kriged
/// tonnage is above, below or within 2% of the reference. `unit` follows
/// each cut-off range (may be empty). Throws std::invalid_argument when the
/// two curves have different cut-offs.
std::string grade_tonnage_comparison(const std::vector<GradeTonnageRow>& kriged,
                                     const std::vector<GradeTonnageRow>& reference,
                                     const std::string& unit);

/// The whole report as one HTML document. Throws (std::invalid_argument,
/// InputError) with a message saying what is missing or inconsistent.
std::string render_report(const ReportInput& input);

/// Renders the report and writes it to `path` under a temporary name,
/// renamed when complete: a failure leaves `path` as it was.
void write_report(const std::string& path, const ReportInput& input, bool overwrite);

}  // namespace sillstone
