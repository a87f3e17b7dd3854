// `sillstone variogram`: the empirical variogram, its table and its surface.
#include <iostream>
#include <memory>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone::cli {

VerbRunner add_variogram(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    OutputArgs output;
    VariogramArgs variogram;
    std::string statistic = "semivariance";
    std::string output_path, surface_path;
    bool overwrite = false;
  };
  auto args = std::make_shared<Args>();
  VariogramOptions& o = args->variogram.options;
  CLI::App* verb = app.add_subcommand(
      "variogram", "Empirical semivariogram, covariance function or correlogram of the samples");
  add_sample_options(*verb, args->samples);
  add_variogram_options(*verb, args->variogram);
  verb->add_option("--statistic", args->statistic, "semivariance, covariance or correlogram")
      ->default_str("semivariance");
  verb->add_option("--surface", args->surface_path,
                   "Also write the 2D variogram surface (GeoTIFF)");
  verb->add_option("--surface-cell", o.surface_cell, "Surface cell size (default: the lag width)")
      ->check(positive_number());
  verb->add_option("-o,--output", args->output_path,
                   "Write the table to OUT.csv or OUT.json (default: a table on stdout)");
  verb->add_flag("--overwrite", args->overwrite, "Replace existing output files");
  add_output_options(*verb, args->output);

  return [args, verb]() -> int {
    if (!verb->parsed()) return -1;
    Args& a = *args;
    VariogramOptions o = resolve(a.variogram);
    o.statistic = parse_name<VariogramStatistic>(a.statistic, "--statistic");
    o.surface = !a.surface_path.empty();
    // Check everything that can be checked before the samples are read.
    check_variogram_options(o);
    if (!a.output_path.empty()) {
      check_output_extension(a.output_path, {".csv", ".json"}, "-o", "the variogram table");
      check_output_path(a.output_path, a.overwrite);
    }
    if (!a.surface_path.empty()) {
      check_output_extension(a.surface_path, {".tif", ".tiff"}, "--surface",
                             "the variogram surface (a GeoTIFF raster)");
      check_output_path(a.surface_path, a.overwrite);
    }

    StageLog log;
    const SampleSet samples = load_stage(resolve(a.samples), &log);
    const EmpiricalVariogram v =
        variogram_stage(samples, o, terminal_progress(a.output.quiet), &log);
    print_log(log, a.output.quiet);

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
