// sillstone/study.hpp -- whole studies from a study file (`sillstone run`).
//
// A study file (TOML) holds every verb's options in its section, with the
// verbs' long option names, dashes turned into underscores (docs/run.md):
//
//   [samples]      path, layer, value, x, y, z, where, crs, to_crs,
//                  below_detection, duplicates
//   [variogram]    lag, lags, max_distance, statistic, azimuths, angle_tolerance,
//                  bandwidth, dips, dip_tolerance, vertical_bandwidth, estimator,
//                  transform, log_offset, surface_cell
//   [model]        spec = "..." | fit = { structures = [...], weights = "...", fix = [...] }
//                  | auto = true
//   [crossval]     folds, skip, also = [{ label, method, drift, external_drift, transform }]
//   [neighbourhood] max_points, min_points, radius, sectors, max_per_sector, global
//   [grid]         cell, extent, like, mask, blocks
//   [kriging]      method, mean, drift, external_drift, block, discretise,
//                  transform, threshold, threads
//   [output]       dir, format, overwrite
//   [report]       title, units, density, cutoffs
//
// Unknown keys and wrong types are errors naming the key and its line.
// Relative paths resolve against the study file's folder.
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "sillstone/crossval.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/model.hpp"
#include "sillstone/neighbourhood.hpp"
#include "sillstone/pipeline.hpp"  // FitStageOptions
#include "sillstone/report.hpp"    // ReportOptions, the [report] section
#include "sillstone/samples.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {

/// How the study gets its model.
struct ModelChoice {
  enum class Kind { spec, fit, automatic } kind = Kind::automatic;
  std::string spec;                     ///< Kind::spec: a SPEC string or a model.json path
  std::vector<std::string> structures;  ///< Kind::fit: families, e.g. {"nugget", "spherical"}
  std::string weights = "cressie";      ///< Kind::fit and automatic
  std::vector<std::string> fix;         ///< Kind::fit: holds such as "range=450"
};

/// Another kriging set-up to compare by cross-validation ([crossval] also):
/// the verbs' defaults with only the keys it names (method, drift,
/// external_drift, transform), as `crossval` with those options would run.
struct KrigingAlternative {
  std::string label;
  KrigingOptions options;
  std::optional<Transform> transform;  ///< asked for; must agree with the model's
};

struct Study {
  std::string path;    ///< the study file
  std::string folder;  ///< its folder; relative paths were resolved against it
  SampleOptions samples;
  VariogramOptions variogram;
  ModelChoice model;
  CrossValidationOptions crossval;
  bool crossval_enabled = true;
  std::vector<KrigingAlternative> crossval_also;  ///< compared in the report
  NeighbourhoodOptions neighbourhood;
  GridOptions grid;
  std::string mask;
  std::string blocks;  ///< [grid] blocks: a block list for block models (kriging.hpp TableTarget)
  KrigingOptions kriging;
  std::optional<Transform> kriging_transform;  ///< [kriging] transform; else the model's
  std::string output_dir;
  std::string format;
  bool overwrite = false;
  ReportOptions report;  ///< [report] (report.hpp)
};

/// Where a run goes and how it talks.
struct RunOptions {
  std::string output_dir;  ///< overrides [output] dir when not empty
  bool overwrite = false;  ///< or [output] overwrite
  /// Called when a stage starts ("samples", "variogram", ...), for progress.
  std::function<void(const std::string& stage)> on_stage;
};

/// What a run wrote.
struct RunResult {
  std::string folder;
  std::vector<std::string> files;     ///< paths written, in order
  std::vector<std::string> notes;     ///< facts worth saying
  std::vector<std::string> warnings;  ///< every stage's warnings
  std::string report;                 ///< path of report.html
};

/// Runs the whole pipeline of a study into a run folder: summary.json,
/// variogram.csv (and variogram_surface.tif for 2D data), model.json,
/// crossval.csv, estimate.tif (2D) or blocks.csv (3D), report.html and
/// run.json (inputs with SHA-256, every setting, the version, the time).
/// The folder is created when its parent exists; outputs already in it are
/// replaced only with `overwrite`. Numeric outputs are identical from run to
/// run; only run.json carries the time.
RunResult run_study(const Study& study, const RunOptions& options);

/// The fit stage's options of the study's [model] fit or auto. Throws
/// InputError naming the key of a bad structure, hold or weighting.
FitStageOptions fit_options_of(const ModelChoice& choice);

/// Reads and checks a study file. Throws InputError("study", ...) naming the
/// file, the line and the key of any fault.
Study read_study(const std::string& path);

/// Reads and checks a study from its text, as read_study does for a file;
/// `path` names it in messages and is the base of its relative paths. Reads
/// no file (the samples and other inputs are opened by run_study).
Study parse_study(const std::string& text, const std::string& path);

/// Every setting after defaults were applied, as a JSON object (for run.json).
std::string study_settings_json(const Study& study);

}  // namespace sillstone
