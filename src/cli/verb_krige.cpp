// `sillstone krige`: kriging onto a grid (raster) or a block model (table).
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

std::string neighbourhood_text(const NeighbourhoodOptions& n) {
  if (n.global) return "global (every sample)";
  std::ostringstream s;
  s << "max_points=" << n.max_points << " min_points=" << n.min_points
    << " radius=" << (n.radius > 0 ? std::to_string(n.radius) : "unlimited")
    << " sectors=" << n.sectors << " max_per_sector=" << n.max_per_sector;
  return s.str();
}

bool is_table(const std::string& path) {
  const std::string ext = std::filesystem::path(path).extension().string();
  return ext == ".csv" || ext == ".CSV" || ext == ".gpkg" || ext == ".GPKG";
}

}  // namespace

// Resolves the transform: an explicit --transform wins; otherwise the model
// file's own transform is used (a model fitted to logs krigs logs).
KrigingOptions resolve_with_model(const KrigingArgs& args, const ModelFile& model,
                                  std::vector<std::string>* notes) {
  KrigingArgs a = args;
  if (a.transform.empty()) {
    a.transform = std::string(name_of(model.transform));
    if (model.transform != Transform::none)
      notes->push_back("--transform " + a.transform + " taken from the model file");
  }
  return resolve(a);
}

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
  a->kriging.transform.clear();
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
                   "Output raster (.tif, any GDAL format), or .csv/.gpkg for a block table")
      ->required();
  verb->add_option("--format", a->format, "GDAL raster format (default: from the extension)");
  verb->add_flag("--overwrite", a->overwrite, "Replace an existing output");
  add_output_options(*verb, a->out);

  return [a, verb]() -> int {
    if (!verb->parsed()) return -1;
    check_output_path(a->output, a->overwrite);
    std::string why;
    if (!a->grid.is_valid(&why)) throw InputError("krige", why);
    const ModelFile model = load_model(a->kriging.model);
    std::vector<std::string> notes;
    const KrigingOptions options = resolve_with_model(a->kriging, model, &notes);
    const SampleSet samples = load_samples(resolve(a->samples));
    if (samples.value_names.size() > 1)
      notes.push_back("kriging the first value column, '" + samples.value_names.front() + "'");

    std::vector<double> extent;
    if (!samples.points.empty()) {
      Point lo = samples.points.front(), hi = lo;
      for (const auto& p : samples.points) {
        lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
        hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
      }
      extent = {lo.x, lo.y, hi.x, hi.y};
      if (samples.dimension == 3) extent.insert(extent.end(), {lo.z, hi.z});
    }
    const GridSpec grid = make_grid(a->grid, samples.dimension, extent, samples.crs_wkt);
    for (const auto& n : grid.notes) notes.push_back(n);
    const bool table = samples.dimension == 3 || is_table(a->output);
    if (!a->blocks.empty() && !table)
      throw InputError("krige",
                       "--blocks applies to block tables (a .csv or .gpkg output, or 3D "
                       "samples), not to the raster " +
                           a->output + "; limit a raster with --mask");
    const std::size_t extra = std::isnan(options.threshold) ? 0 : 1;
    check_output_size(grid, table ? 5 + extra : 2 + extra, table, a->output);
    if (!a->mask.empty()) {
      if (table)
        throw InputError("krige", "--mask applies to rasters; a block table is limited with "
                                  "--blocks (a list of the blocks to estimate)");
      check_mask(a->mask, grid);
    }

    const KrigingEngine engine(samples, model.model, options, a->neighbourhood);
    // Warnings only once every check has passed: a refused run prints one line.
    print_warnings(samples.summary.warnings);
    print_warnings(grid.warnings);
    print_warnings(engine.warnings());
    for (const auto& n : engine.notes()) notes.push_back(n);
    print_notes(notes, a->out.quiet);

    const Progress progress = terminal_progress(a->out.quiet);
    KrigingSummary summary;
    if (table) {
      TableTarget t;
      t.path = a->output;
      t.overwrite = a->overwrite;
      t.blocks = a->blocks;
      summary = krige_table(engine, grid, t, progress);
    } else {
      RasterTarget target;
      target.path = a->output;
      target.format = a->format;
      target.overwrite = a->overwrite;
      target.mask = a->mask;
      target.metadata = {{"SILLSTONE_VERSION", version()},
                         {"SILLSTONE_SAMPLES", samples.source},
                         {"SILLSTONE_VALUE", samples.value_names.front()},
                         {"SILLSTONE_MODEL", to_spec(model.model)},
                         {"SILLSTONE_METHOD", std::string(name_of(options.method))},
                         {"SILLSTONE_TRANSFORM", std::string(name_of(options.transform))},
                         {"SILLSTONE_NEIGHBOURHOOD", neighbourhood_text(a->neighbourhood)}};
      if (!options.block.empty()) {
        std::ostringstream b;
        for (std::size_t i = 0; i < options.block.size(); ++i) b << (i ? "," : "") << options.block[i];
        target.metadata.push_back({"SILLSTONE_BLOCK", b.str()});
      }
      summary = krige_raster(engine, grid, target, progress);
    }
    print_warnings(summary.warnings);
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
