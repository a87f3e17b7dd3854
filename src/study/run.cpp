// `sillstone run`: the whole pipeline of a study into one run folder.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <ctime>
#include <filesystem>
#include <fstream>
#include <memory>
#include <sstream>

#include <nlohmann/json.hpp>

#include "core/sha256.hpp"
#include "sillstone/crossval.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/model.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/pipeline.hpp"
#include "sillstone/raster.hpp"
#include "sillstone/report.hpp"
#include "sillstone/study.hpp"
#include "sillstone/summary.hpp"
#include "sillstone/variogram.hpp"
#include "sillstone/version.hpp"

namespace sillstone {
namespace {

namespace fs = std::filesystem;

std::string utc_now() {
  const std::time_t t = std::time(nullptr);
  std::tm tm{};
  gmtime_r(&t, &tm);
  char buf[32];
  std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%SZ", &tm);
  return buf;
}

nlohmann::json cross_validation_json(
    const CrossValidationResult& cv,
    const std::vector<std::pair<std::string, CrossValidationSummary>>& alternatives, bool enabled) {
  using nlohmann::json;
  if (!enabled) return json();
  auto one = [](const CrossValidationSummary& s) {
    auto n = [](double v) { return std::isfinite(v) ? json(v) : json(); };
    return json{{"samples", s.samples},
                {"estimated", s.estimated},
                {"mean_error", n(s.mean_error)},
                {"mean_absolute_error", n(s.mean_absolute_error)},
                {"rmse", n(s.rmse)},
                {"mean_standardised_error", n(s.mean_standardised_error)},
                {"mean_squared_standardised_error", n(s.mean_squared_standardised_error)},
                {"correlation", n(s.correlation)}};
  };
  json j = {{"study", one(cv.summary)}, {"also", json::array()}};
  for (const auto& [label, s] : alternatives)
    j["also"].push_back({{"label", label}, {"summary", one(s)}});
  return j;
}

}  // namespace

namespace {

void write_file(const std::string& path, const std::string& text) {
  std::ofstream f(path, std::ios::binary | std::ios::trunc);
  if (!f) throw std::runtime_error("cannot write " + path);
  f << text;
  f.close();
  if (!f) throw std::runtime_error("writing " + path + " failed");
}

}  // namespace

RunResult run_study(const Study& st, const RunOptions& ro) {
  const auto stage = [&ro](const char* name) {
    if (ro.on_stage) ro.on_stage(name);
  };
  const bool overwrite = ro.overwrite || st.overwrite;
  RunResult result;

  // Everything that can be refused is refused before any long work and
  // before anything is written: the samples, the outputs' paths, the grid
  // and its size, the model when given, the mask and the external drift.
  stage("samples");
  StageLog log;
  const SampleSet samples = load_stage(st.samples, &log);
  if (st.model.kind != ModelChoice::Kind::spec) require_variation(samples, 0, "run");
  const bool three_d = samples.dimension == 3;
  const std::string dir = ro.output_dir.empty() ? st.output_dir : ro.output_dir;
  std::vector<std::string> names = {"summary.json",
                                    "variogram.csv",
                                    "model.json",
                                    "crossval.csv",
                                    three_d ? "blocks.csv" : "estimate.tif",
                                    "report.html",
                                    "run.json"};
  if (!three_d) names.push_back("variogram_surface.tif");
  RunFolder folder(dir, names, overwrite);  // checks every output name, refuses "/"
  result.folder = folder.path();
  const auto out = [&result](const char* name) {
    return (fs::path(result.folder) / name).string();
  };
  if (!three_d) raster_driver_for(out("estimate.tif"), st.format, "-o", "[output] format");

  if (three_d && !st.mask.empty())
    throw InputError("study", st.path +
                                  ": [grid] mask applies to 2D rasters; a 3D block "
                                  "model is limited with [grid] blocks");
  const GridSpec grid = plan_grid(st.grid, samples, st.mask, &log);
  const std::size_t extra = std::isnan(st.kriging.threshold) ? 0 : 1;
  check_output_size(grid, three_d ? 5 + extra : 2 + extra, three_d,
                    out(three_d ? "blocks.csv" : "estimate.tif"), KrigedGrid::bytes(grid, extra));
  if (!st.kriging.external_drift.empty()) check_external_drift(st.kriging.external_drift, samples);
  for (const auto& alt : st.crossval_also)
    if (!alt.options.external_drift.empty())
      check_external_drift(alt.options.external_drift, samples);
  ModelFile model;
  if (st.model.kind == ModelChoice::Kind::spec) model = load_model(st.model.spec);

  // Outputs are written under temporary names and renamed together at the
  // end: a run that fails or is interrupted leaves the folder as it was.
  std::vector<std::unique_ptr<PendingOutput>> staged;
  std::vector<std::string> final_paths;
  auto stage_output = [&](const char* name) -> std::string {
    staged.push_back(std::make_unique<PendingOutput>(out(name), overwrite));
    final_paths.push_back(out(name));
    return staged.back()->temp_path();
  };

  const DataSummary summary = summarise(samples, {});
  log.warnings_from(summary.warnings);
  write_file(stage_output("summary.json"), summary_to_json(summary) + "\n");

  // Variogram: the study's classes, or the suggested ones (as the verb).
  stage("variogram");
  VariogramOptions vo = st.variogram;
  vo.surface = !three_d;
  vo.threads = st.kriging.threads;
  const EmpiricalVariogram variogram = variogram_stage(samples, vo, {}, &log);
  write_variogram(stage_output("variogram.csv"), variogram, false);
  if (variogram.surface)
    write_variogram_surface(stage_output("variogram_surface.tif"), variogram, false);

  // Model: given, fitted or chosen; it describes the variogram's transform.
  stage("model");
  std::string fit_table;
  const ValueTransform measured = transform_of(variogram);
  if (st.model.kind == ModelChoice::Kind::spec) {
    if (!model.transform_recorded) {  // a SPEC describes the variogram it was written for
      model.transform = measured;
      model.transform_recorded = true;
      model.notes.clear();
    } else if (!model.transform.same_as(measured)) {
      throw InputError("study", st.model.spec + " describes " + model.transform.describe() +
                                    " but the study's variogram is of " + measured.describe() +
                                    ": set [variogram] transform (and log_offset) to match");
    }
  } else {
    const FittedModel fitted = fit_for_study(st.model, variogram);
    model = fitted.file;
    fit_table = fitted.table;
    log.warnings_from(fitted.warnings);
  }
  write_file(stage_output("model.json"), model_to_json(model) + "\n");

  const KrigingOptions ko = kriging_stage_options(st.kriging, st.kriging_transform, model, &log);
  // Built before cross-validation: it refuses options that do not fit the
  // data or the model, and says what it finds doubtful in them.
  const KrigingEngine engine(samples, model.model, ko, st.neighbourhood);
  log.notes_from(engine.notes());
  log.warnings_from(engine.warnings());

  CrossValidationResult cv;
  std::vector<std::pair<std::string, CrossValidationSummary>> alternatives;
  if (st.crossval_enabled) {
    stage("crossval");
    cv = crossval_stage(samples, model.model, ko, st.neighbourhood, st.crossval, &log);
    write_file(stage_output("crossval.csv"), crossval_csv(cv, samples.dimension));
    for (const auto& alt : st.crossval_also) {
      StageLog quiet;  // an alternative's notes repeat the study's
      const KrigingOptions o = kriging_stage_options(alt.options, alt.transform, model, &quiet);
      const CrossValidationResult other =
          crossval_stage(samples, model.model, o, st.neighbourhood, st.crossval, &quiet);
      alternatives.push_back({alt.label, other.summary});
    }
  }

  stage("kriging");
  // The files are written and the result kept in memory for the report in one pass.
  KrigingSummary ks;
  MemorySink kept;
  GridKrigingOptions gko;
  std::unique_ptr<KrigingSink> file;
  if (three_d) {
    TableTarget table;
    table.path = stage_output("blocks.csv");
    file = std::make_unique<TableFileSink>(table);
    gko.table_order = true;
    gko.blocks = st.blocks;
  } else {
    RasterTarget target;
    target.path = stage_output("estimate.tif");
    target.format = st.format;
    target.metadata = map_metadata(samples, model, ko, st.neighbourhood);
    file = std::make_unique<RasterFileSink>(target, ko.threads);
    gko.mask = st.mask;
  }
  TeeSink both({file.get(), &kept});
  ks = krige_grid(engine, grid, gko, both);
  const KrigedGrid kriged = kept.take();
  log.warnings_from(ks.warnings);
  result.notes = log.notes;
  result.warnings = log.warnings;

  // run.json: inputs with checksums, every setting, the version, the time.
  std::vector<std::pair<std::string, std::string>> inputs;  // (role: path, sha256)
  auto input = [&inputs](const std::string& role, const std::string& path) {
    std::error_code ec;
    if (!path.empty() && fs::is_regular_file(path, ec))
      inputs.push_back({role + ": " + path, detail::sha256_file(path)});
  };
  input("study", st.path);
  input("samples", st.samples.path);
  input("external drift", st.kriging.external_drift);
  input("mask", st.mask);
  input("grid template", st.grid.like);
  input("block list", st.blocks);
  if (st.model.kind == ModelChoice::Kind::spec) input("model", st.model.spec);

  stage("report");
  ReportInput report;
  report.options = st.report;
  report.study_path = st.path;
  report.block_list = st.blocks;
  report.neighbourhood = st.neighbourhood;
  report.samples = &samples;
  report.summary = &summary;
  report.variogram = &variogram;
  report.model = &model;
  report.fit_table = fit_table;
  report.crossval = st.crossval_enabled ? &cv : nullptr;
  report.alternatives = alternatives;
  report.kriging = &ko;
  report.grid = &grid;
  report.kriging_summary = &ks;
  report.result = &kriged;
  report.inputs = inputs;
  report.warnings = result.warnings;
  report.notes = result.notes;
  report.version = version();
  write_file(stage_output("report.html"), render_report(report));

  using nlohmann::json;
  json input_list = json::array();
  for (const auto& [what, sha] : inputs) {
    const auto colon = what.find(": ");
    input_list.push_back(
        {{"role", what.substr(0, colon)}, {"path", what.substr(colon + 2)}, {"sha256", sha}});
  }
  json outputs = json::array();
  for (std::size_t i = 0; i < staged.size(); ++i)
    outputs.push_back({{"path", fs::path(final_paths[i]).filename().string()},
                       {"sha256", detail::sha256_file(staged[i]->temp_path())}});
  json run = {{"sillstone_version", version()},
              {"time_utc", utc_now()},
              {"inputs", input_list},
              {"settings", json::parse(study_settings_json(st))},
              {"resolved",
               {{"variogram_lag", variogram.options.lag},
                {"variogram_lags", variogram.options.lags},
                {"variogram_max_distance", variogram.options.max_distance},
                {"model", to_spec(model.model)},
                {"model_transform", model.transform.describe()},
                {"kriging_transform", ko.transform.describe()},
                {"crossval_support", "points"},
                {"grid",
                 {{"xmin", grid.xmin},
                  {"ymax", grid.ymax},
                  {"zmin", grid.zmin},
                  {"dx", grid.dx},
                  {"dy", grid.dy},
                  {"dz", grid.dz},
                  {"nx", grid.nx},
                  {"ny", grid.ny},
                  {"nz", grid.nz}}}}},
              {"outputs", outputs},
              {"crossval", cross_validation_json(cv, alternatives, st.crossval_enabled)},
              {"notes", result.notes},
              {"warnings", result.warnings}};
  write_file(stage_output("run.json"), run.dump(2) + "\n");

  // Every output is complete: rename them all into place.
  for (std::size_t i = 0; i < staged.size(); ++i) {
    staged[i]->commit();
    result.files.push_back(final_paths[i]);
  }
  folder.keep();
  result.report = out("report.html");
  return result;
}

}  // namespace sillstone
