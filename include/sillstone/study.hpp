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
//   [crossval]     folds, skip
//   [neighbourhood] max_points, min_points, radius, sectors, max_per_sector, global
//   [grid]         cell, extent, like, mask
//   [kriging]      method, mean, drift, external_drift, block, discretise,
//                  transform, threshold, threads
//   [output]       dir, format, overwrite
//   [report]       title, units, density, cutoffs
//
// Unknown keys and wrong types are errors naming the key and its line.
// Relative paths resolve against the study file's folder.
#pragma once

#include <string>
#include <vector>

#include "sillstone/crossval.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/neighbourhood.hpp"
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

/// Settings of the report that are not the verbs'.
struct ReportOptions {
  std::string title;                 ///< default: from the samples' file name
  std::string units;                 ///< units of the value, e.g. "mg/kg"
  double density = 0;                ///< t/m3 for grade-tonnage tables; 0: none
  std::vector<double> cutoffs;       ///< grade-tonnage cut-offs; empty: chosen from the data
};

struct Study {
  std::string path;    ///< the study file
  std::string folder;  ///< its folder; relative paths were resolved against it
  SampleOptions samples;
  VariogramOptions variogram;
  ModelChoice model;
  CrossValidationOptions crossval;
  bool crossval_enabled = true;
  NeighbourhoodOptions neighbourhood;
  GridOptions grid;
  std::string mask;
  KrigingOptions kriging;
  bool kriging_transform_given = false;  ///< else the model's transform is used
  std::string output_dir;
  std::string format;
  bool overwrite = false;
  ReportOptions report;
};

/// Reads and checks a study file. Throws InputError("study", ...) naming the
/// file, the line and the key of any fault.
Study read_study(const std::string& path);

/// Every setting after defaults were applied, as a JSON object (for run.json).
std::string study_settings_json(const Study& study);

}  // namespace sillstone
