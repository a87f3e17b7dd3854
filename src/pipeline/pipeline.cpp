// The stages shared by the verbs (src/cli) and the study runner (src/study).
#include "sillstone/pipeline.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <memory>
#include <sstream>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/summary.hpp"
#include "sillstone/version.hpp"

namespace sillstone {
namespace {

void add_once(std::vector<std::string>* to, const std::string& line) {
  if (std::find(to->begin(), to->end(), line) == to->end()) to->push_back(line);
}

std::vector<double> sample_extent(const SampleSet& s) {
  if (s.points.empty()) return {};
  Point lo = s.points.front(), hi = lo;
  for (const auto& p : s.points) {
    lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  std::vector<double> e = {lo.x, lo.y, hi.x, hi.y};
  if (s.dimension == 3) e.insert(e.end(), {lo.z, hi.z});
  return e;
}

std::string neighbourhood_text(const NeighbourhoodOptions& n) {
  if (n.global) return "global (every sample)";
  return "max_points=" + std::to_string(n.max_points) +
         " min_points=" + std::to_string(n.min_points) +
         " radius=" + (n.radius > 0 ? format_for_file(n.radius) : std::string("unlimited")) +
         " sectors=" + std::to_string(n.sectors) +
         " max_per_sector=" + std::to_string(n.max_per_sector);
}

}  // namespace

void StageLog::note(const std::string& line) { add_once(&notes, line); }
void StageLog::warn(const std::string& line) { add_once(&warnings, line); }
void StageLog::notes_from(const std::vector<std::string>& lines) {
  for (const auto& line : lines) note(line);
}
void StageLog::warnings_from(const std::vector<std::string>& lines) {
  for (const auto& line : lines) warn(line);
}

SampleSet load_stage(const SampleOptions& options, StageLog* log) {
  SampleSet samples = load_samples(options);
  log->warnings_from(samples.summary.warnings);
  return samples;
}

void advise_lag_classes(const SampleSet& samples, VariogramOptions* o, StageLog* log) {
  if (o->lag != 0 || o->max_distance != 0) return;
  std::vector<Point> located;
  for (std::size_t i = 0; i < samples.size(); ++i)
    if (!std::isnan(samples.values.front()[i])) located.push_back(samples.points[i]);
  const SpacingStats spacing = nearest_neighbour_spacing(located, samples.dimension);
  const LagAdvice advice = suggest_lags(located, samples.dimension, spacing.median);
  if (advice.lags < 1)
    throw InputError("variogram", samples.source +
                                      ": no lag classes can be suggested for these "
                                      "samples; give the lag width and the number of lags");
  if (o->lags > 0) {  // a class count alone: the suggested reach, cut into that many classes
    o->max_distance = advice.max_distance;
    log->note("no lag width or maximum distance given; using the suggested maximum distance " +
              format_for_people(advice.max_distance, 6) + " in " + std::to_string(o->lags) +
              " classes (" + advice.rule + ")");
    return;
  }
  o->lag = advice.lag;
  o->lags = advice.lags;
  log->note("no lag width or maximum distance given; using the suggested lag " +
            format_for_people(advice.lag, 6) + " and " + std::to_string(advice.lags) + " lags (" +
            advice.rule + ")");
}

EmpiricalVariogram variogram_stage(const SampleSet& samples, VariogramOptions o,
                                   const Progress& progress, StageLog* log) {
  if (samples.value_names.empty())
    throw InputError("variogram", samples.source + ": no value column was read");
  std::vector<std::string> own_warnings;
  if (samples.value_names.size() > 1)
    own_warnings.push_back("several value columns were given; the variogram uses the first, '" +
                           samples.value_names.front() + "'");
  o.value = samples.value_names.front();
  advise_lag_classes(samples, &o, log);
  EmpiricalVariogram v = compute_variogram(samples, o, progress);
  log->warnings_from(v.summary.warnings);
  log->warnings_from(own_warnings);
  log->notes_from(v.summary.notes);
  return v;
}

EmpiricalVariogram read_variogram_stage(const std::string& path,
                                        const std::optional<ValueTransform>& asked, StageLog* log) {
  EmpiricalVariogram v = read_variogram(path);
  v.source = path;
  if (!v.transform_recorded) {
    if (!asked)
      throw InputError("fit", path +
                                  ": this variogram table does not record the transform of its "
                                  "values (written by an earlier version); give --transform none, "
                                  "log or normal-score (and --log-offset) to say what it holds, or "
                                  "compute the variogram again");
    v.options.transform = asked->kind;
    v.options.log_offset = asked->log_offset;
    log->note(path + ": the table is taken as a variogram of " + asked->describe() +
              " (--transform)");
    return v;
  }
  const ValueTransform recorded = transform_of(v);
  if (asked && (asked->kind != recorded.kind ||
                (asked->kind == Transform::log && asked->log_offset != recorded.log_offset)))
    throw InputError("fit", path + " is a variogram of " + recorded.describe() + ", not of " +
                                asked->describe() + " as asked");
  return v;
}

FitStageResult fit_stage(const EmpiricalVariogram& variogram, const FitStageOptions& options,
                         StageLog* log) {
  FitStageResult out;
  if (options.automatic) {
    out.ranking = fit_auto(variogram, options.fit);
    if (out.ranking.empty()) throw InputError("fit", "no candidate model could be fitted");
    out.best = out.ranking.front();
  } else {
    std::string why;
    if (!options.fit.is_valid(&why)) throw InputError("fit", why);
    out.best = fit_model(variogram, options.fit);
  }
  log->warnings_from(out.best.summary.warnings);
  out.file = fitted_model_file(out.best, out.ranking);
  std::ostringstream table;
  write_fit_text(table, out.best, out.ranking);
  out.table = table.str();
  return out;
}

KrigingOptions kriging_stage_options(KrigingOptions options, const std::optional<Transform>& asked,
                                     const ModelFile& model, StageLog* log) {
  log->notes_from(model.notes);
  if (model.transform_recorded) {
    if (asked && *asked != model.transform.kind)
      throw InputError("kriging", "the model describes " + model.transform.describe() +
                                      " but the transform asked for is " +
                                      std::string(name_of(*asked)) +
                                      " (a model is used on the scale it was fitted on: leave "
                                      "out the transform, or fit a model of " +
                                      std::string(name_of(*asked)) + ")");
    options.transform = model.transform;
  } else {
    options.transform = ValueTransform{};
    options.transform.kind = asked.value_or(Transform::none);
  }
  if (options.transform.kind == Transform::log)
    log->note("kriging " + options.transform.describe() +
              (model.transform_recorded ? ", the model's transform" : "") +
              "; estimates are taken back to the data's units (docs/kriging.md)");
  return options;
}

GridSpec plan_grid(const GridOptions& options, const SampleSet& samples, const std::string& mask,
                   StageLog* log) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError("grid", why);
  GridSpec grid = make_grid(options, samples.dimension, sample_extent(samples), samples.crs_wkt);
  log->notes_from(grid.notes);
  log->warnings_from(grid.warnings);
  if (!mask.empty()) check_mask(mask, grid);
  return grid;
}

std::vector<std::pair<std::string, std::string>> map_metadata(
    const SampleSet& samples, const ModelFile& model, const KrigingOptions& kriging,
    const NeighbourhoodOptions& neighbourhood) {
  std::vector<std::pair<std::string, std::string>> m = {
      {"SILLSTONE_VERSION", version()},
      {"SILLSTONE_SAMPLES", samples.source},
      {"SILLSTONE_VALUE", samples.value_names.empty() ? "" : samples.value_names.front()},
      {"SILLSTONE_MODEL", to_spec(model.model)},
      {"SILLSTONE_METHOD", std::string(name_of(kriging.method))},
      {"SILLSTONE_TRANSFORM", kriging.transform.describe()},
      {"SILLSTONE_NEIGHBOURHOOD", neighbourhood_text(neighbourhood)}};
  if (!kriging.block.empty()) {
    std::string b;
    for (std::size_t i = 0; i < kriging.block.size(); ++i)
      b += (i ? "," : "") + format_for_file(kriging.block[i]);
    m.push_back({"SILLSTONE_BLOCK", b});
  }
  return m;
}

GridSpec plan_map(const GridOptions& grid_options, const SampleSet& samples, const MapOptions& map,
                  double threshold, bool keep_in_memory, StageLog* log) {
  const std::string from = map.origin.empty() ? "" : map.origin + ": ";
  if (!map.blocks.empty() && !map.table)
    throw InputError(map.component, from + map.blocks_name + " applies to block tables (" +
                                        map.table_when + "), not to the raster " + map.path +
                                        "; limit a raster with " + map.mask_name);
  if (!map.mask.empty() && map.table)
    throw InputError(map.component, from + map.mask_name +
                                        " applies to rasters; a block table is limited with " +
                                        map.blocks_name + " (a list of the blocks to estimate)");
  const GridSpec grid = plan_grid(grid_options, samples, map.mask, log);
  const bool probability = !std::isnan(threshold);
  const std::size_t values = (map.table ? 5 : 2) + (probability ? 1 : 0);
  check_output_size(grid, values, map.table, map.path,
                    keep_in_memory ? KrigedGrid::bytes(grid, probability) : 0.0);
  return grid;
}

KrigingSummary map_stage(const KrigingEngine& engine, const GridSpec& grid, const MapOptions& map,
                         const Progress& progress, KrigingSink* also, StageLog* log) {
  GridKrigingOptions options;
  std::unique_ptr<KrigingSink> file;
  if (map.table) {
    TableTarget target;
    target.path = map.path;
    target.overwrite = map.overwrite;
    target.blocks = map.blocks;
    file = std::make_unique<TableFileSink>(target);
    options.table_order = true;
    options.blocks = map.blocks;
  } else {
    RasterTarget target;
    target.path = map.path;
    target.format = map.format;
    target.overwrite = map.overwrite;
    target.mask = map.mask;
    target.metadata = map.metadata;
    file = std::make_unique<RasterFileSink>(target, engine.options().threads);
    options.mask = map.mask;
  }
  KrigingSummary summary;
  if (also) {
    TeeSink both({file.get(), also});
    summary = krige_grid(engine, grid, options, both, progress);
  } else {
    summary = krige_grid(engine, grid, options, *file, progress);
  }
  log->warnings_from(summary.warnings);
  return summary;
}

CrossValidationResult crossval_stage(const SampleSet& samples, const CovarianceModel& model,
                                     KrigingOptions kriging,
                                     const NeighbourhoodOptions& neighbourhood,
                                     const CrossValidationOptions& options, StageLog* log) {
  if (!kriging.block.empty()) {
    log->note(
        "cross-validation estimates each sample at its own support (points); the blocks of the "
        "map are not used there");
    kriging.block.clear();
    kriging.discretise.clear();
  }
  CrossValidationResult cv = cross_validate(samples, model, kriging, neighbourhood, options);
  log->warnings_from(cv.summary.counts.warnings);
  return cv;
}

}  // namespace sillstone
