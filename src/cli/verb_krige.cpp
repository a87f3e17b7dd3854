// `sillstone krige`: kriging onto a grid (raster) or a block model (table).
#include <cctype>
#include <cmath>
#include <filesystem>
#include <iostream>
#include <memory>
#include <sstream>

#include <nlohmann/json.hpp>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/error.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/raster.hpp"
#include "sillstone/version.hpp"

namespace sillstone::cli {
namespace {

bool is_table(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  for (char& c : ext) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return ext == ".csv" || ext == ".gpkg";
}

}  // namespace

VerbRunner add_krige(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    KrigingArgs kriging;
    NeighbourhoodOptions neighbourhood;
    GridOptions grid;
    std::string mask, blocks, output, format;
    bool overwrite = false;
    OutputArgs out;
  };
  auto a = std::make_shared<Args>();
  CLI::App* verb = app.add_subcommand("krige", "Kriging onto a grid or block model");
  add_sample_options(*verb, a->samples);
  add_kriging_options(*verb, a->kriging);
  add_neighbourhood_options(*verb, a->neighbourhood);
  verb->add_option("--cell", a->grid.cell, "Cell size DX[,DY[,DZ]]")->delimiter(',');
  verb->add_option("--extent", a->grid.extent,
                   "Outer edges xmin,ymin,xmax,ymax[,zmin,zmax] (default: the samples')")
      ->delimiter(',');
  verb->add_option("--like", a->grid.like, "Template raster giving size, cells and CRS");
  verb->add_flag("--large-grid", a->grid.large_grid,
                 "Allow a grid of more than 100 million nodes (refused otherwise)");
  verb->add_option("--mask", a->mask, "Polygons: nodes outside them are nodata");
  verb->add_option("--blocks", a->blocks,
                   "Block models: estimate only the cells holding a point of this list (x,y,z)");
  verb->add_option("-o,--output", a->output,
                   "Output raster (.tif, .tiff: GeoTIFF), or .csv/.gpkg for a block table")
      ->required();
  verb->add_option("--format", a->format,
                   "Raster format: GTiff, the only one written (default: from the extension)");
  verb->add_flag("--overwrite", a->overwrite, "Replace an existing output");
  add_output_options(*verb, a->out);

  return [a, verb]() -> int {
    if (!verb->parsed()) return -1;
    check_output_path(a->output, a->overwrite);
    check_output_extension(a->output, {".tif", ".tiff", ".csv", ".gpkg"}, "-o",
                           "a kriged grid (raster) or block table");
    if (!is_table(a->output)) raster_driver_for(a->output, a->format);
    std::string why;
    if (!a->grid.is_valid(&why)) throw InputError("krige", why);
    const ModelFile model = load_model(a->kriging.model);
    StageLog log;
    const KrigingOptions options =
        kriging_stage_options(resolve(a->kriging), asked_transform(a->kriging), model, &log);
    const SampleSet samples = load_stage(resolve(a->samples), &log);
    if (samples.value_names.size() > 1)
      log.note("kriging the first value column, '" + samples.value_names.front() + "'");
    MapOptions map;
    map.path = a->output;
    map.table = samples.dimension == 3 || is_table(a->output);
    map.format = a->format;
    map.overwrite = a->overwrite;
    map.mask = a->mask;
    map.blocks = a->blocks;
    const GridSpec grid = plan_map(a->grid, samples, map, options.threshold, false, &log);

    const KrigingEngine engine(samples, model.model, options, a->neighbourhood);
    // Warnings only once every check has passed: a refused run prints one line.
    log.warnings_from(engine.warnings());
    log.notes_from(engine.notes());
    print_log(log, a->out.quiet);

    if (!map.table) map.metadata = map_metadata(samples, model, options, a->neighbourhood);
    StageLog after;
    const KrigingSummary summary =
        map_stage(engine, grid, map, terminal_progress(a->out.quiet), nullptr, &after);
    print_warnings(after.warnings);
    if (a->out.json) {
      nlohmann::json j = {{"output", a->output},
                          {"nodes", summary.targets},
                          {"estimated", summary.estimated},
                          {"masked", summary.masked},
                          {"too_few_neighbours", summary.too_few_neighbours},
                          {"singular", summary.singular},
                          {"drift_unresolved", summary.drift_unresolved},
                          {"outside_drift", summary.outside_drift},
                          {"threads", summary.threads},
                          {"seconds", summary.seconds},
                          {"columns", grid.nx},
                          {"rows", grid.ny},
                          {"layers", grid.nz},
                          {"model", to_spec(model.model)},
                          {"method", name_of(options.method)}};
      std::cout << j.dump(2) << "\n";
    } else {
      std::cout << "Wrote " << a->output << ": " << grid.nx << " x " << grid.ny
                << (grid.dimension == 3 ? " x " + std::to_string(grid.nz) : "") << " nodes, "
                << summary.estimated << " estimated, " << summary.targets - summary.estimated
                << " nodata (" << summary.seconds << " s, " << summary.threads << " thread(s))\n";
    }
    return 0;
  };
}

}  // namespace sillstone::cli
