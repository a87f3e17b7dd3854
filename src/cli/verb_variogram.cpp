// `sillstone variogram`: the empirical variogram, its table and its surface.
#include <cmath>
#include <filesystem>
#include <iostream>
#include <memory>
#include <sstream>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/summary.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone::cli {
namespace {

std::string format(double x) {
  std::ostringstream s;
  s << x;
  return s.str();
}

// Lag classes from the advice of `inspect` when none were given. Returns the note.
std::string advise_lags(const SampleSet& samples, VariogramOptions* o) {
  std::vector<Point> located;
  for (std::size_t i = 0; i < samples.size(); ++i)
    if (!std::isnan(samples.values.front()[i])) located.push_back(samples.points[i]);
  const SpacingStats spacing = nearest_neighbour_spacing(located, samples.dimension);
  const LagAdvice advice = suggest_lags(located, samples.dimension, spacing.median);
  if (advice.lags < 1)
    throw InputError("variogram", samples.source +
                                      ": no lag classes can be suggested for these "
                                      "samples; give --lag and --lags");
  if (o->lags > 0) {  // --lags N alone: the suggested reach, cut into N classes
    o->max_distance = advice.max_distance;
    return "no --lag or --max-distance given; using the suggested maximum distance " +
           format(advice.max_distance) + " in " + std::to_string(o->lags) + " classes (" +
           advice.rule + ")";
  }
  o->lag = advice.lag;
  o->lags = advice.lags;
  return "no --lag or --max-distance given; using the suggested --lag " + format(advice.lag) +
         " --lags " + std::to_string(advice.lags) + " (" + advice.rule + ")";
}

}  // namespace

VerbRunner add_variogram(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    OutputArgs output;
    VariogramOptions options;
    std::string statistic = "semivariance", estimator = "matheron", transform = "none";
    std::string output_path, surface_path;
    bool overwrite = false;
  };
  auto args = std::make_shared<Args>();
  VariogramOptions& o = args->options;
  CLI::App* verb = app.add_subcommand(
      "variogram", "Empirical semivariogram, covariance function or correlogram of the samples");
  add_sample_options(*verb, args->samples);
  verb->add_option("--lag", o.lag, "Lag class width W (classes (iW, (i+1)W])");
  verb->add_option("--lags", o.lags, "Number of lag classes N");
  verb->add_option(
      "--max-distance", o.max_distance,
      "Largest distance D; alone it gives W = D/" + std::to_string(VariogramOptions::kDefaultLags) +
          ". Without --lag and --max-distance the lags suggested by `inspect` are used");
  verb->add_option("--statistic", args->statistic, "semivariance, covariance or correlogram")
      ->default_str("semivariance");
  verb->add_option("--azimuths", o.azimuths,
                   "Directions, degrees clockwise from north, e.g. 0,45,90,135 "
                   "(default: omnidirectional)")
      ->delimiter(',');
  verb->add_option("--angle-tolerance", o.angle_tolerance,
                   "Half-angle around each azimuth, degrees (inclusive)")
      ->default_str("22.5");
  verb->add_option("--bandwidth", o.bandwidth,
                   "Largest offset across a direction (a half-width; default: none)");
  verb->add_option("--dips", o.dips,
                   "3D: dips, degrees down from horizontal (0..90; 90 = vertical)")
      ->delimiter(',');
  verb->add_option("--dip-tolerance", o.dip_tolerance, "Half-angle around each dip, degrees")
      ->default_str("22.5");
  verb->add_option("--vertical-bandwidth", o.vertical_bandwidth,
                   "3D: largest vertical offset from a direction (default: none)");
  verb->add_option("--estimator", args->estimator, "matheron or cressie-hawkins (robust)")
      ->default_str("matheron");
  verb->add_option("--transform", args->transform, "none, log or normal-score")
      ->default_str("none");
  verb->add_option("--log-offset", o.log_offset, "C in log(value + C) for --transform log");
  verb->add_option("--surface", args->surface_path,
                   "Also write the 2D variogram surface (GeoTIFF)");
  verb->add_option("--surface-cell", o.surface_cell, "Surface cell size (default: the lag width)");
  verb->add_option("-o,--output", args->output_path,
                   "Write the table to OUT.csv or OUT.json (default: a table on stdout)");
  verb->add_flag("--overwrite", args->overwrite, "Replace existing output files");
  verb->add_option("--threads", o.threads, "Threads (0: every core; results do not depend on it)")
      ->default_str("0");
  add_output_options(*verb, args->output);

  return [args, verb]() -> int {
    if (!verb->parsed()) return -1;
    Args& a = *args;
    VariogramOptions& o = a.options;
    o.statistic = parse_name<VariogramStatistic>(a.statistic, "--statistic");
    o.estimator = parse_name<VariogramEstimator>(a.estimator, "--estimator");
    o.transform = parse_name<Transform>(a.transform, "--transform");
    o.surface = !a.surface_path.empty();
    // Check everything that can be checked before the samples are read.
    VariogramOptions probe = o;
    if (probe.lag == 0 && probe.max_distance == 0) probe.max_distance = 1;  // lags come later
    probe.surface = false;  // its size is checked once the lags are known
    std::string why;
    if (!probe.is_valid(&why)) throw InputError("variogram", why);
    if (!a.output_path.empty()) {
      const std::string ext = std::filesystem::path(a.output_path).extension().string();
      if (ext != ".csv" && ext != ".json")
        throw InputError("variogram", a.output_path + ": -o writes .csv or .json");
      check_output_path(a.output_path, a.overwrite);
    }
    if (!a.surface_path.empty()) check_output_path(a.surface_path, a.overwrite);

    const SampleSet samples = load_samples(resolve(a.samples));
    std::vector<std::string> notes;
    std::vector<std::string> warnings;
    if (samples.value_names.size() > 1)
      warnings.push_back("several --value columns were given; the variogram uses the first, '" +
                         samples.value_names.front() + "'");
    o.value = samples.value_names.front();
    if (o.lag == 0 && o.max_distance == 0) notes.push_back(advise_lags(samples, &o));

    const EmpiricalVariogram v = compute_variogram(samples, o, terminal_progress(a.output.quiet));
    warnings.insert(warnings.begin(), v.summary.warnings.begin(), v.summary.warnings.end());
    notes.insert(notes.end(), v.summary.notes.begin(), v.summary.notes.end());
    print_warnings(warnings);
    print_notes(notes, a.output.quiet);

    if (!a.output_path.empty()) write_variogram(a.output_path, v, a.overwrite);
    if (!a.surface_path.empty()) write_variogram_surface(a.surface_path, v, a.overwrite);
    if (a.output.json)
      std::cout << variogram_to_json(v) << "\n";
    else if (a.output_path.empty())
      write_variogram_text(std::cout, v);
    return 0;
  };
}

}  // namespace sillstone::cli
