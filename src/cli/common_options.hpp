// Options shared by the verbs that read samples, declared once.
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "sillstone/kriging.hpp"
#include "sillstone/neighbourhood.hpp"
#include "sillstone/pipeline.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone::cli {

/// The common sample options of every verb that reads samples, bound to
/// strings first so that enumerations are checked by names.cpp (one spelling).
struct SampleArgs {
  SampleOptions options;
  std::string below_detection = "half";
  std::string duplicates = "average";
};

/// Declares SAMPLES, --layer, --value, --x/--y/--z, --where, --crs, --to-crs,
/// --below-detection and --duplicates on `verb`. `input_help` replaces the
/// help of SAMPLES when not empty; `value_required` false leaves --value
/// optional (for verbs whose input need not be samples).
void add_sample_options(CLI::App& verb, SampleArgs& args, const std::string& input_help = "",
                        bool value_required = true);
/// The options add_sample_options declares, but SAMPLES.
std::vector<std::string> sample_option_names();

/// The SampleOptions after the enumerations were parsed (throws InputError).
SampleOptions resolve(const SampleArgs& args);

/// The options of the empirical variogram shared by `variogram` and `fit`:
/// lag classes, directions, estimator, transform, log offset, threads.
/// Enumerations are bound to strings first and checked by names.cpp.
struct VariogramArgs {
  VariogramOptions options;
  std::string estimator = "matheron";
  std::string transform = "none";
};
void add_variogram_options(CLI::App& verb, VariogramArgs& args);
/// The options add_variogram_options declares.
std::vector<std::string> variogram_option_names();
/// The VariogramOptions after the enumerations were parsed (throws InputError).
VariogramOptions resolve(const VariogramArgs& args);
/// Refuses (InputError) what can be refused before the samples are read.
/// The lag classes may still be missing (they are then advised, see below).
void check_variogram_options(const VariogramOptions& options);
/// Output switches shared by the verbs that print results.
struct OutputArgs {
  bool json = false;
  bool quiet = false;
};
void add_output_options(CLI::App& verb, OutputArgs& args);

/// The neighbourhood options shared by `krige` and `crossval`.
void add_neighbourhood_options(CLI::App& verb, NeighbourhoodOptions& options);

/// The kriging options shared by `krige` and `crossval` (method, mean,
/// drift, external drift, block, transform, threshold, threads), with the
/// model, bound to strings first so enumerations are checked by names.cpp.
struct KrigingArgs {
  std::string model;
  KrigingOptions options;
  std::string method = "ordinary";
  std::string drift;
  std::string transform;  // empty: the model's own
};
void add_kriging_options(CLI::App& verb, KrigingArgs& args);
/// The KrigingOptions after the enumerations were parsed (throws InputError);
/// the transform is settled with the model by kriging_stage_options.
KrigingOptions resolve(const KrigingArgs& args);

/// `--transform` of krige and crossval, when given.
std::optional<Transform> asked_transform(const KrigingArgs& args);

/// Prints the log's warnings, then its notes (unless `quiet`).
void print_log(const StageLog& log, bool quiet);

/// A check for options whose absence means "unlimited" or "suggested": the
/// value must be a positive finite number, so that 0, a negative number or
/// nan is refused (naming the option) instead of being taken as "not given".
CLI::Validator positive_number();

/// Prints each warning as one "warning: ..." line on stderr.
void print_warnings(const std::vector<std::string>& warnings);

/// Prints each note as one "note: ..." line on stderr, unless `quiet`.
void print_notes(const std::vector<std::string>& notes, bool quiet);

/// A progress meter in GDAL's style ("0...10...20...") on stderr when stderr
/// is a terminal and not `quiet`; otherwise an empty function.
std::function<void(double)> terminal_progress(bool quiet);

}  // namespace sillstone::cli
