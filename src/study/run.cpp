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

#include "core/format.hpp"
#include "core/sha256.hpp"
#include "sillstone/crossval.hpp"
#include "sillstone/error.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/model.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
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

// The folder of the run: created when its parent exists.
std::string prepare_folder(const std::string& dir) {
  if (dir.empty())
    throw InputError("run", "no run folder: give -o DIR or [output] dir = \"...\" in the study");
  fs::path p = fs::path(dir).lexically_normal();
  if (!p.has_filename() && p.has_parent_path()) p = p.parent_path();  // "runs/site/"
  std::error_code ec;
  if (fs::exists(p, ec) && !fs::is_directory(p, ec))
    throw InputError("output", dir + ": exists and is not a folder");
  const fs::path parent = p.has_parent_path() ? p.parent_path() : fs::path(".");
  if (!fs::is_directory(parent, ec))
    throw InputError("output", dir + ": the folder " + parent.string() + " does not exist");
  fs::create_directory(p, ec);
  if (ec) throw std::runtime_error("cannot create " + dir + ": " + ec.message());
  return p.string();
}

std::vector<double> sample_extent(const SampleSet& s) {
  Point lo = s.points.front(), hi = lo;
  for (const auto& p : s.points) {
    lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  std::vector<double> e = {lo.x, lo.y, hi.x, hi.y};
  if (s.dimension == 3) e.insert(e.end(), {lo.z, hi.z});
  return e;
}

// Adds the lines of `from` not yet in `to` (stages repeat the loader's warnings).
void append(std::vector<std::string>& to, const std::vector<std::string>& from) {
  for (const auto& line : from)
    if (std::find(to.begin(), to.end(), line) == to.end()) to.push_back(line);
}

nlohmann::json cross_validation_json(
    const CrossValidationResult& cv,
    const std::vector<std::pair<std::string, CrossValidationSummary>>& alternatives, bool enabled) {
  using nlohmann::json;
  if (!enabled) return json();
  auto one = [](const CrossValidationSummary& s) {
    auto n = [](double v) { return std::isfinite(v) ? json(v) : json(); };
    return json{{"samples", s.samples}, {"estimated", s.estimated}, {"mean_error", n(s.mean_error)},
                {"mean_absolute_error", n(s.mean_absolute_error)}, {"rmse", n(s.rmse)},
                {"mean_standardised_error", n(s.mean_standardised_error)},
                {"mean_squared_standardised_error", n(s.mean_squared_standardised_error)},
                {"correlation", n(s.correlation)}};
  };
  json j = {{"study", one(cv.summary)}, {"also", json::array()}};
  for (const auto& [label, s] : alternatives) j["also"].push_back({{"label", label}, {"summary", one(s)}});
  return j;
}

}  // namespace

namespace {

// The run folder while a run is under way: removed again when the run fails
// and this run created it (only when empty: nothing else is ever removed).
class FolderGuard {
 public:
  explicit FolderGuard(const std::string& dir) : path_(dir) {
    std::error_code ec;
    created_ = !fs::exists(path_, ec);
  }
  ~FolderGuard() {
    if (!created_ || kept_) return;
    std::error_code ec;
    fs::remove(path_, ec);  // fails harmlessly unless empty
  }
  FolderGuard(const FolderGuard&) = delete;
  FolderGuard& operator=(const FolderGuard&) = delete;
  void keep() { kept_ = true; }

 private:
  fs::path path_;
  bool created_ = false, kept_ = false;
};

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
  const SampleSet samples = load_samples(st.samples);
  append(result.warnings, samples.summary.warnings);
  if (st.model.kind != ModelChoice::Kind::spec) require_variation(samples, 0, "run");
  const bool three_d = samples.dimension == 3;
  const std::string dir = ro.output_dir.empty() ? st.output_dir : ro.output_dir;
  FolderGuard guard(dir);
  result.folder = prepare_folder(dir);
  const auto out = [&result](const char* name) { return (fs::path(result.folder) / name).string(); };
  std::vector<std::string> names = {"summary.json", "variogram.csv", "model.json", "crossval.csv",
                                    three_d ? "blocks.csv" : "estimate.tif", "report.html",
                                    "run.json"};
  if (!three_d) names.push_back("variogram_surface.tif");
  for (const auto& n : names) check_output_path(out(n.c_str()), overwrite);

  const GridSpec grid = make_grid(st.grid, samples.dimension, sample_extent(samples), samples.crs_wkt);
  const std::size_t extra = std::isnan(st.kriging.threshold) ? 0 : 1;
  check_output_size(grid, three_d ? 5 + extra : 2 + extra, three_d,
                    out(three_d ? "blocks.csv" : "estimate.tif"));
  if (!st.mask.empty()) {
    if (three_d)
      throw InputError("study", st.path + ": [grid] mask applies to 2D rasters; a 3D block "
                                          "model is limited with [grid] blocks");
    check_mask(st.mask, grid);
  }
  if (!st.kriging.external_drift.empty()) check_external_drift(st.kriging.external_drift, samples);
  for (const auto& alt : st.crossval_also)
    if (!alt.options.external_drift.empty()) check_external_drift(alt.options.external_drift, samples);
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
  append(result.warnings, summary.warnings);
  write_file(stage_output("summary.json"), summary_to_json(summary) + "\n");

  // Variogram: the study's classes, or the suggested ones.
  stage("variogram");
  VariogramOptions vo = st.variogram;
  if (vo.lag == 0 && vo.lags == 0 && vo.max_distance == 0) {
    vo.lag = summary.lags.lag;
    vo.lags = summary.lags.lags;
    result.notes.push_back("variogram classes from the suggested lags: " + std::to_string(vo.lags) +
                           " of " + detail::shortest(vo.lag));
  }
  vo.surface = !three_d;
  vo.threads = st.kriging.threads;
  const EmpiricalVariogram variogram = compute_variogram(samples, vo);
  append(result.warnings, variogram.summary.warnings);
  write_variogram(stage_output("variogram.csv"), variogram, false);
  if (variogram.surface) write_variogram_surface(stage_output("variogram_surface.tif"), variogram, false);

  // Model: given, fitted or chosen.
  stage("model");
  std::string fit_table;
  if (st.model.kind == ModelChoice::Kind::spec) {
    if (model.fit.empty() && st.model.spec.find(".json") == std::string::npos)
      model.transform = vo.transform;  // a SPEC describes the variogram it was written for
  } else {
    const FittedModel fitted = fit_for_study(st.model, variogram);
    model = fitted.file;
    fit_table = fitted.table;
    append(result.warnings, fitted.warnings);
  }
  write_file(stage_output("model.json"), model_to_json(model) + "\n");

  KrigingOptions ko = st.kriging;
  if (!st.kriging_transform_given) ko.transform = model.transform;
  if (ko.transform == Transform::normal_score)
    throw InputError("run", "kriging with the normal-score transform is not offered; use "
                            "transform = \"log\" or \"none\" in [kriging]");
  // Built before cross-validation: it refuses options that do not fit the
  // data or the model, and says what it finds doubtful in them.
  const KrigingEngine engine(samples, model.model, ko, st.neighbourhood);
  append(result.notes, engine.notes());
  append(result.warnings, engine.warnings());

  CrossValidationResult cv;
  std::vector<std::pair<std::string, CrossValidationSummary>> alternatives;
  if (st.crossval_enabled) {
    stage("crossval");
    cv = cross_validate(samples, model.model, ko, st.neighbourhood, st.crossval);
    append(result.warnings, cv.summary.counts.warnings);
    write_file(stage_output("crossval.csv"), crossval_csv(cv, samples.dimension));
    for (const auto& alt : st.crossval_also) {
      KrigingOptions o = alt.options;
      if (!st.kriging_transform_given) o.transform = ko.transform;
      const CrossValidationResult other = cross_validate(samples, model.model, o, st.neighbourhood, st.crossval);
      alternatives.push_back({alt.label, other.summary});
    }
  }

  stage("kriging");
  append(result.notes, grid.notes);
  append(result.warnings, grid.warnings);
  KrigingSummary ks;
  std::string map_path;
  if (three_d) {
    map_path = stage_output("blocks.csv");
    TableTarget table;
    table.path = map_path;
    table.blocks = st.blocks;
    ks = krige_table(engine, grid, table);
  } else {
    map_path = stage_output("estimate.tif");
    RasterTarget target;
    target.path = map_path;
    target.format = st.format;
    target.mask = st.mask;
    target.metadata = {{"SILLSTONE_VERSION", version()},
                       {"SILLSTONE_MODEL", to_spec(model.model)},
                       {"SILLSTONE_METHOD", std::string(name_of(ko.method))},
                       {"SILLSTONE_TRANSFORM", std::string(name_of(ko.transform))}};
    ks = krige_raster(engine, grid, target);
  }
  append(result.warnings, ks.warnings);

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
  report.study = &st;
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
  report.map_path = map_path;
  report.inputs = inputs;
  report.warnings = result.warnings;
  report.notes = result.notes;
  report.version = version();
  write_file(stage_output("report.html"), render_report(report));

  using nlohmann::json;
  json input_list = json::array();
  for (const auto& [what, sha] : inputs) {
    const auto colon = what.find(": ");
    input_list.push_back({{"role", what.substr(0, colon)}, {"path", what.substr(colon + 2)}, {"sha256", sha}});
  }
  json outputs = json::array();
  for (std::size_t i = 0; i < staged.size(); ++i)
    outputs.push_back({{"path", fs::path(final_paths[i]).filename().string()},
                       {"sha256", detail::sha256_file(staged[i]->temp_path())}});
  json run = {{"sillstone_version", version()},
              {"time_utc", utc_now()},
              {"inputs", input_list},
              {"settings", json::parse(study_settings_json(st))},
              {"resolved", {{"variogram_lag", vo.lag},
                            {"variogram_lags", vo.lags},
                            {"variogram_max_distance", variogram.options.max_distance},
                            {"model", to_spec(model.model)},
                            {"model_transform", name_of(model.transform)},
                            {"kriging_transform", name_of(ko.transform)},
                            {"grid", {{"xmin", grid.xmin}, {"ymax", grid.ymax}, {"zmin", grid.zmin},
                                      {"dx", grid.dx}, {"dy", grid.dy}, {"dz", grid.dz},
                                      {"nx", grid.nx}, {"ny", grid.ny}, {"nz", grid.nz}}}}},
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
  guard.keep();
  result.report = out("report.html");
  return result;
}

}  // namespace sillstone
