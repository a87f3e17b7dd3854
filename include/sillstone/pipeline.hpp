// sillstone/pipeline.hpp -- the stages of a study, written once for the verbs and for `run`.
//
// Each verb fills a stage's options from its flags and calls the stage; the
// study runner fills the same options from the study file and calls the same
// stage. A setting therefore gets the same defaults, the same checks and the
// same meaning whichever way it is given. Each stage returns its result and
// adds its notes and warnings to a StageLog; nothing is printed here.
//
// Example (the verbs `variogram`, `fit`, `krige` in a few lines):
//   sillstone::StageLog log;
//   const sillstone::SampleSet s = sillstone::load_stage(sample_options, &log);
//   const sillstone::EmpiricalVariogram v = sillstone::variogram_stage(s, {}, {}, &log);
//   const sillstone::ModelFile m = sillstone::fitted_model_file(
//       sillstone::fit_auto(v, {}).front(), {});
//   const sillstone::KrigingOptions ko = sillstone::kriging_stage_options({}, {}, m, &log);
//   const sillstone::GridSpec grid = sillstone::plan_grid({{10.0}}, s, {}, &log);
//
// Thread safety: the stages share no state.
#pragma once

#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "sillstone/crossval.hpp"
#include "sillstone/fit.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/model.hpp"
#include "sillstone/neighbourhood.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/transform.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {

/// What the stages have to say, in order, each line once.
struct StageLog {
  std::vector<std::string> notes;     ///< facts worth saying
  std::vector<std::string> warnings;  ///< doubts about the data or the settings
  void note(const std::string& line);
  void warn(const std::string& line);
  void notes_from(const std::vector<std::string>& lines);
  void warnings_from(const std::vector<std::string>& lines);
};

/// Stage 1: the samples, with the loader's warnings in the log.
SampleSet load_stage(const SampleOptions& options, StageLog* log);

/// The lag classes when neither a lag width nor a maximum distance is given:
/// the suggested ones of `inspect`; a class count given alone (`--lags N`,
/// `lags = N`) keeps its N classes over the suggested reach. Says which in a
/// note. Throws InputError when no classes can be suggested.
void advise_lag_classes(const SampleSet& samples, VariogramOptions* options, StageLog* log);

/// Stage 3: the empirical variogram of the first value column, with advised
/// lag classes when none were given.
EmpiricalVariogram variogram_stage(const SampleSet& samples, VariogramOptions options,
                                   const Progress& progress, StageLog* log);

/// A variogram table read for fitting, its transform settled: a table that
/// records its transform (JSON, or a CSV with the transform columns) must
/// agree with `asked` when given; a CSV of an earlier version that does not
/// record it is refused unless `asked` says what it holds. Throws InputError.
EmpiricalVariogram read_variogram_stage(const std::string& path,
                                        const std::optional<ValueTransform>& asked, StageLog* log);

/// What the fit stage is asked: the standard candidates ranked by AIC
/// (`automatic`), or the structures and holds of `fit`.
struct FitStageOptions {
  FitOptions fit;
  bool automatic = false;
};

/// The fitted model: the best fit, the ranking of the candidates (automatic
/// fits only), the model file written from it and the fit table as text.
struct FitStageResult {
  FitResult best;
  std::vector<FitResult> ranking;
  ModelFile file;
  std::string table;
};

/// Stage 4: the covariance model fitted to `variogram`; its file records the
/// variogram's transform. The fit's warnings go to the log. Throws InputError
/// for structures or holds that cannot be fitted.
FitStageResult fit_stage(const EmpiricalVariogram& variogram, const FitStageOptions& options,
                         StageLog* log);

/// The kriging options with the model's transform: a model that records its
/// transform is kriged on it, and `asked` (from `--transform` or a study's
/// [kriging] transform) must name the same kind (InputError naming both
/// otherwise); a SPEC string or an older model.json is taken as `asked`, or
/// none. Says in a note which transform is used when it is not none.
KrigingOptions kriging_stage_options(KrigingOptions options, const std::optional<Transform>& asked,
                                     const ModelFile& model, StageLog* log);

/// The grid of a map: `options`, or around the samples when no extent or
/// template is given; the mask is checked against it. Throws InputError.
GridSpec plan_grid(const GridOptions& options, const SampleSet& samples, const std::string& mask,
                   StageLog* log);

/// The metadata written into every kriged raster (one set of keys).
std::vector<std::pair<std::string, std::string>> map_metadata(
    const SampleSet& samples, const ModelFile& model, const KrigingOptions& kriging,
    const NeighbourhoodOptions& neighbourhood);

/// Where a kriged map goes and what limits it. The names of the settings are
/// the ones the user gave them by (flags or study keys), for messages.
struct MapOptions {
  std::string path;        ///< the raster, or the block table
  bool table = false;      ///< a block table (3D samples, or a .csv/.gpkg path)
  std::string format;      ///< raster driver (empty: from the extension)
  bool overwrite = false;  ///< replace an existing output
  std::string mask;        ///< rasters: polygons outside which nodes are nodata
  std::string blocks;      ///< tables: the blocks to estimate (TableTarget::blocks)
  std::vector<std::pair<std::string, std::string>> metadata;  ///< raster metadata (map_metadata)
  std::string component = "krige";                            ///< names the refusals
  std::string origin;  ///< the file the settings come from (a study), named first in a refusal
  std::string mask_name = "--mask";
  std::string blocks_name = "--blocks";
  std::string table_when = "a .csv or .gpkg output, or 3D samples";  ///< when a table is written
};

/// Stage 7a: the grid of a map, with every refusal made before any long
/// work: a mask on a table, a block list on a raster, the grid itself
/// (plan_grid), and the room its output needs on disk and in memory
/// (`keep_in_memory`: the results are held in memory as well, e.g. for the
/// report). Throws InputError.
GridSpec plan_map(const GridOptions& grid, const SampleSet& samples, const MapOptions& map,
                  double threshold, bool keep_in_memory, StageLog* log);

/// Stage 7b: krigs every node of `grid` into the map's file (raster or
/// table), and into `also` as well when given (e.g. a MemorySink for the
/// report). The summary's warnings go to the log.
KrigingSummary map_stage(const KrigingEngine& engine, const GridSpec& grid, const MapOptions& map,
                         const Progress& progress, KrigingSink* also, StageLog* log);

/// Stage 6a: cross-validation at the samples' own support. Samples are
/// points, so block options (kept for the map) are dropped here, with a
/// note; the transform is the one of `kriging`.
CrossValidationResult crossval_stage(const SampleSet& samples, const CovarianceModel& model,
                                     KrigingOptions kriging,
                                     const NeighbourhoodOptions& neighbourhood,
                                     const CrossValidationOptions& options, StageLog* log);

}  // namespace sillstone
