#include "cli/common_options.hpp"

#include <unistd.h>  // isatty: progress only on a terminal

#include <algorithm>
#include <iostream>
#include <memory>

#include "sillstone/names.hpp"

namespace sillstone::cli {

void add_sample_options(CLI::App& verb, SampleArgs& a) {
  SampleOptions& o = a.options;
  verb.add_option("SAMPLES", o.path,
                  "Samples: any OGR vector source (CSV, GeoPackage, Shapefile, GeoJSON, ...)")
      ->required();
  verb.add_option("--layer", o.layer, "Layer to read (default: the first)");
  verb.add_option("--value", o.values,
                  "Value column(s): repeat the option or separate names with commas")
      ->delimiter(',')
      ->required();
  verb.add_option("--x", o.x, "X (easting) column, for tables without point geometry");
  verb.add_option("--y", o.y, "Y (northing) column, for tables without point geometry");
  verb.add_option("--z", o.z, "Z (elevation) column: makes the analysis 3D");
  verb.add_option("--where", o.where, "Attribute filter (OGR SQL), e.g. \"depth = '0-15'\"");
  verb.add_option("--crs", o.crs, "CRS to assign when the source has none (EPSG:NNNN or WKT)");
  verb.add_option("--to-crs", o.to_crs, "Reproject to this CRS before analysis");
  verb.add_option("--below-detection", a.below_detection,
                  "Values written <DL become: half (DL/2), limit (DL), zero, drop")
      ->default_str("half");
  verb.add_option("--duplicates", a.duplicates,
                  "Samples at one location: average, first, error")
      ->default_str("average");
}

SampleOptions resolve(const SampleArgs& a) {
  SampleOptions o = a.options;
  o.below_detection = parse_name<BelowDetection>(a.below_detection, "--below-detection");
  o.duplicates = parse_name<DuplicatePolicy>(a.duplicates, "--duplicates");
  return o;
}

void add_output_options(CLI::App& verb, OutputArgs& a) {
  verb.add_flag("--json", a.json, "Print the results as JSON");
  verb.add_flag("-q,--quiet", a.quiet, "No progress messages");
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
