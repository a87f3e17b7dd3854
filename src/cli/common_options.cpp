#include "cli/common_options.hpp"

#include <unistd.h>  // isatty: progress only on a terminal

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <iostream>
#include <memory>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/summary.hpp"

namespace sillstone::cli {

void add_sample_options(CLI::App& verb, SampleArgs& a, const std::string& input_help,
                        bool value_required) {
  SampleOptions& o = a.options;
  verb.add_option("SAMPLES", o.path,
                  input_help.empty()
                      ? "Samples: any OGR vector source (CSV, GeoPackage, Shapefile, GeoJSON, ...)"
                      : input_help)
      ->required();
  verb.add_option("--layer", o.layer, "Layer to read (default: the first)");
  verb.add_option("--value", o.values,
                  "Value column(s): repeat the option or separate names with commas")
      ->delimiter(',')
      ->required(value_required);
  verb.add_option("--x", o.x, "X (easting) column, for tables without point geometry");
  verb.add_option("--y", o.y, "Y (northing) column, for tables without point geometry");
  verb.add_option("--z", o.z, "Z (elevation) column: makes the analysis 3D");
  verb.add_option("--where", o.where, "Attribute filter (OGR SQL), e.g. \"depth = '0-15'\"");
  verb.add_option("--crs", o.crs, "CRS to assign when the source has none (EPSG:NNNN or WKT)");
  verb.add_option("--to-crs", o.to_crs, "Reproject to this CRS before analysis");
  verb.add_option("--below-detection", a.below_detection,
                  "Values written <DL become: half (DL/2), limit (DL), zero, drop")
      ->default_str("half");
  verb.add_option("--duplicates", a.duplicates, "Samples at one location: average, first, error")
      ->default_str("average");
}

std::vector<std::string> sample_option_names() {
  return {"--layer",  "--value",           "--x",         "--y", "--z", "--where", "--crs",
          "--to-crs", "--below-detection", "--duplicates"};
}

SampleOptions resolve(const SampleArgs& a) {
  SampleOptions o = a.options;
  o.below_detection = parse_name<BelowDetection>(a.below_detection, "--below-detection");
  o.duplicates = parse_name<DuplicatePolicy>(a.duplicates, "--duplicates");
  return o;
}

CLI::Validator positive_number() {
  return CLI::Validator(
      [](std::string& text) -> std::string {
        char* end = nullptr;
        const double v = std::strtod(text.c_str(), &end);
        if (end == text.c_str() || *end != '\0' || !(v > 0) || !std::isfinite(v))
          return "must be a positive number (got " + text +
                 "); leave the option out for its default";
        return {};
      },
      "POSITIVE");
}

void add_variogram_options(CLI::App& verb, VariogramArgs& args) {
  VariogramOptions& o = args.options;
  verb.add_option("--lag", o.lag, "Lag class width W (classes (iW, (i+1)W])")
      ->check(positive_number());
  verb.add_option("--lags", o.lags, "Number of lag classes N")->check(positive_number());
  verb.add_option("--max-distance", o.max_distance,
                  "Largest distance D; alone it gives W = D/" +
                      std::to_string(VariogramOptions::kDefaultLags) +
                      ". Without --lag and --max-distance the lags suggested by `inspect` are used")
      ->check(positive_number());
  verb.add_option("--azimuths", o.azimuths,
                  "Directions, degrees clockwise from north, e.g. 0,45,90,135 "
                  "(default: omnidirectional)")
      ->delimiter(',');
  verb.add_option("--angle-tolerance", o.angle_tolerance,
                  "Half-angle around each azimuth, degrees (inclusive)")
      ->default_str("22.5");
  verb.add_option("--bandwidth", o.bandwidth,
                  "Largest offset across a direction (a half-width; default: none)");
  verb.add_option("--dips", o.dips, "3D: dips, degrees down from horizontal (0..90; 90 = vertical)")
      ->delimiter(',');
  verb.add_option("--dip-tolerance", o.dip_tolerance, "Half-angle around each dip, degrees")
      ->default_str("22.5");
  verb.add_option("--vertical-bandwidth", o.vertical_bandwidth,
                  "3D: largest vertical offset from a direction (default: none)");
  verb.add_option("--estimator", args.estimator, "matheron or cressie-hawkins (robust)")
      ->default_str("matheron");
  verb.add_option("--transform", args.transform, "none, log or normal-score")->default_str("none");
  verb.add_option("--log-offset", o.log_offset, "C in log(value + C) for --transform log");
  verb.add_option("--threads", o.threads, "Threads (0: every core; results do not depend on it)")
      ->default_str("0");
}

std::vector<std::string> variogram_option_names() {
  return {
      "--lag",       "--lags",       "--max-distance",  "--azimuths",           "--angle-tolerance",
      "--bandwidth", "--dips",       "--dip-tolerance", "--vertical-bandwidth", "--estimator",
      "--transform", "--log-offset", "--threads"};
}

VariogramOptions resolve(const VariogramArgs& args) {
  VariogramOptions o = args.options;
  o.estimator = parse_name<VariogramEstimator>(args.estimator, "--estimator");
  o.transform = parse_name<Transform>(args.transform, "--transform");
  return o;
}

void check_variogram_options(const VariogramOptions& o) {
  VariogramOptions probe = o;
  if (probe.lag == 0 && probe.max_distance == 0) probe.max_distance = 1;  // lags come later
  probe.surface = false;  // its size is checked once the lags are known
  std::string why;
  if (!probe.is_valid(&why)) throw InputError("variogram", why);
}

void add_output_options(CLI::App& verb, OutputArgs& a) {
  verb.add_flag("--json", a.json, "Print the results as JSON");
  verb.add_flag("-q,--quiet", a.quiet, "No progress messages");
}

void add_neighbourhood_options(CLI::App& verb, NeighbourhoodOptions& o) {
  verb.add_option("--max-points", o.max_points, "Most samples in each kriging system")
      ->default_str(std::to_string(o.max_points));
  verb.add_option("--min-points", o.min_points,
                  "Fewest samples: with fewer found the node is left unestimated (nodata)")
      ->default_str(std::to_string(o.min_points));
  verb.add_option("--radius", o.radius,
                  "Search radius along the model's major axis (default: unlimited)")
      ->check(positive_number());
  verb.add_option("--sectors", o.sectors, "1 (none), 4 (2D quadrants) or 8 (3D octants)")
      ->default_str("1");
  verb.add_option("--max-per-sector", o.max_per_sector,
                  "Most samples from one sector (0: no limit)");
  verb.add_flag("--global", o.global, "Every sample in every system (small data sets)");
}

void add_kriging_options(CLI::App& verb, KrigingArgs& a) {
  KrigingOptions& o = a.options;
  verb.add_option("--model", a.model, "Covariance model: a model.json file or a SPEC string")
      ->required();
  verb.add_option("--method", a.method, "simple, ordinary or universal")->default_str("ordinary");
  verb.add_option("--mean", o.mean,
                  "Simple kriging mean (default: the declustered sample mean, stated)");
  verb.add_option("--drift", a.drift, "Universal kriging drift: linear (default) or quadratic");
  verb.add_option("--external-drift", o.external_drift,
                  "Raster whose value is a drift term (kriging with an external drift)");
  verb.add_option("--block", o.block, "Block size DX,DY[,DZ] (default: point kriging)")
      ->delimiter(',');
  verb.add_option("--discretise", o.discretise, "Block discretisation NX,NY[,NZ] (default 4 each)")
      ->delimiter(',');
  verb.add_option("--transform", a.transform,
                  "none or log; a model.json says its own transform, and this must agree "
                  "(default: the model's, or none for a SPEC)");
  verb.add_option("--threshold", o.threshold, "Also give the probability of exceeding this value");
  verb.add_option("--threads", o.threads, "Threads (0: every core)")->default_str("0");
}

KrigingOptions resolve(const KrigingArgs& a) {
  KrigingOptions o = a.options;
  o.method = parse_name<KrigingMethod>(a.method, "--method");
  o.drift = a.drift.empty() ? Drift::none : parse_name<Drift>(a.drift, "--drift");
  return o;
}

std::optional<Transform> asked_transform(const KrigingArgs& a) {
  if (a.transform.empty()) return std::nullopt;
  return parse_name<Transform>(a.transform, "--transform");
}

void print_log(const StageLog& log, bool quiet) {
  print_warnings(log.warnings);
  print_notes(log.notes, quiet);
}

void print_warnings(const std::vector<std::string>& warnings) {
  for (const auto& w : warnings) std::cerr << "warning: " << w << "\n";
}

void print_notes(const std::vector<std::string>& notes, bool quiet) {
  if (quiet) return;
  for (const auto& n : notes) std::cerr << "note: " << n << "\n";
}

std::function<void(double)> terminal_progress(bool quiet) {
  if (quiet || !isatty(STDERR_FILENO)) return {};
  auto printed = std::make_shared<int>(-1);  // ticks of 2.5% printed so far
  return [printed](double fraction) {
    const int ticks = std::min(40, static_cast<int>(fraction * 40 + 1e-9));
    while (*printed < ticks) {
      ++*printed;
      if (*printed % 4 == 0)
        std::cerr << *printed * 10 / 4;
      else
        std::cerr << ".";
      if (*printed == 40) std::cerr << " - done.\n";
    }
    std::cerr << std::flush;
  };
}

}  // namespace sillstone::cli
