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

void write_file(const std::string& path, const std::string& text) {
  std::ofstream f(path, std::ios::binary | std::ios::trunc);
  if (!f) throw std::runtime_error("cannot write " + path);
  f << text;
  f.close();
  if (!f) throw std::runtime_error("writing " + path + " failed");
}

// One run of a study: the stages in order, each a method, sharing what the
// earlier ones produced. Outputs are written under temporary names and
// renamed together at the end: a run that fails or is interrupted leaves
// the folder as it was.
class StudyRun {
 public:
  StudyRun(const Study& st, const RunOptions& ro)
      : st_(st), ro_(ro), overwrite_(ro.overwrite || st.overwrite) {}

  RunResult run() {
    prepare();
    summarise_data();
    compute_variogram();
    choose_model();
    build_engine();
    cross_validate_model();
    krige_map();
    report();
    record();
    // Every output is complete: rename them all into place.
    for (std::size_t i = 0; i < staged_.size(); ++i) {
      staged_[i]->commit();
      result_.files.push_back(final_paths_[i]);
    }
    folder_->keep();
    result_.report = out("report.html");
    return result_;
  }

 private:
  const Study& st_;
  const RunOptions& ro_;
  const bool overwrite_;
  RunResult result_;
  StageLog log_;
  SampleSet samples_;
  bool three_d_ = false;
  std::unique_ptr<RunFolder> folder_;
  MapOptions map_;
  GridSpec grid_;
  ModelFile model_;
  FitStageOptions fit_options_;
  std::string fit_table_;
  DataSummary summary_;
  EmpiricalVariogram variogram_;
  KrigingOptions kriging_;
  std::unique_ptr<KrigingEngine> engine_;
  CrossValidationResult cv_;
  std::vector<std::pair<std::string, CrossValidationSummary>> alternatives_;
  KrigingSummary kriging_summary_;
  KrigedGrid kriged_;
  std::vector<std::pair<std::string, std::string>> inputs_;  // (role: path, sha256)
  std::vector<std::unique_ptr<PendingOutput>> staged_;
  std::vector<std::string> final_paths_;

  void stage(const char* name) const {
    if (ro_.on_stage) ro_.on_stage(name);
  }
  std::string out(const char* name) const { return (fs::path(result_.folder) / name).string(); }
  std::string stage_output(const char* name) {
    staged_.push_back(std::make_unique<PendingOutput>(out(name), overwrite_));
    final_paths_.push_back(out(name));
    return staged_.back()->temp_path();
  }

  // Everything that can be refused is refused before any long work and
  // before anything is written: the samples, the outputs' paths, the grid
  // and its size, the model when given, the mask and the external drift.
  void prepare() {
    stage("samples");
    samples_ = load_stage(st_.samples, &log_);
    if (st_.model.kind != ModelChoice::Kind::spec) require_variation(samples_, 0, "run");
    three_d_ = samples_.dimension == 3;
    const std::string dir = ro_.output_dir.empty() ? st_.output_dir : ro_.output_dir;
    std::vector<std::string> names = {"summary.json",
                                      "variogram.csv",
                                      "model.json",
                                      "crossval.csv",
                                      three_d_ ? "blocks.csv" : "estimate.tif",
                                      "report.html",
                                      "run.json"};
    if (!three_d_) names.push_back("variogram_surface.tif");
    // Checks every output name, refuses "/".
    folder_ = std::make_unique<RunFolder>(dir, names, overwrite_);
    result_.folder = folder_->path();
    if (!three_d_) raster_driver_for(out("estimate.tif"), st_.format, "-o", "[output] format");

    map_.path = out(three_d_ ? "blocks.csv" : "estimate.tif");
    map_.table = three_d_;
    map_.format = st_.format;
    map_.overwrite = overwrite_;
    map_.mask = st_.mask;
    map_.blocks = st_.blocks;
    map_.component = "study";
    map_.origin = st_.path;
    map_.mask_name = "[grid] mask";
    map_.blocks_name = "[grid] blocks";
    map_.table_when = "3D samples";
    grid_ = plan_map(st_.grid, samples_, map_, st_.kriging.threshold, true, &log_);
    if (!st_.kriging.external_drift.empty())
      check_external_drift(st_.kriging.external_drift, samples_);
    for (const auto& alt : st_.crossval_also)
      if (!alt.options.external_drift.empty())
        check_external_drift(alt.options.external_drift, samples_);
    if (st_.model.kind == ModelChoice::Kind::spec)
      model_ = load_model(st_.model.spec);
    else
      fit_options_ = fit_options_of(st_.model);
  }

  void summarise_data() {
    summary_ = summarise(samples_, {});
    log_.warnings_from(summary_.warnings);
    write_file(stage_output("summary.json"), summary_to_json(summary_) + "\n");
  }

  // The study's classes, or the suggested ones (as the verb).
  void compute_variogram() {
    stage("variogram");
    VariogramOptions vo = st_.variogram;
    vo.surface = !three_d_;
    vo.threads = st_.kriging.threads;
    variogram_ = variogram_stage(samples_, vo, {}, &log_);
    write_variogram(stage_output("variogram.csv"), variogram_, false);
    if (variogram_.surface)
      write_variogram_surface(stage_output("variogram_surface.tif"), variogram_, false);
  }

  // Given, fitted or chosen; the model describes the variogram's transform.
  void choose_model() {
    stage("model");
    const ValueTransform measured = transform_of(variogram_);
    if (st_.model.kind == ModelChoice::Kind::spec) {
      if (!model_.transform_recorded) {  // a SPEC describes the variogram it was written for
        model_.transform = measured;
        model_.transform_recorded = true;
        model_.notes.clear();
      } else if (!model_.transform.same_as(measured)) {
        throw InputError("study", st_.model.spec + " describes " + model_.transform.describe() +
                                      " but the study's variogram is of " + measured.describe() +
                                      ": set [variogram] transform (and log_offset) to match");
      }
    } else {
      const FitStageResult fitted = fit_stage(variogram_, fit_options_, &log_);
      model_ = fitted.file;
      fit_table_ = fitted.table;
    }
    write_file(stage_output("model.json"), model_to_json(model_) + "\n");
  }

  // Built before cross-validation: it refuses options that do not fit the
  // data or the model, and says what it finds doubtful in them.
  void build_engine() {
    kriging_ = kriging_stage_options(st_.kriging, st_.kriging_transform, model_, &log_);
    engine_ = std::make_unique<KrigingEngine>(samples_, model_.model, kriging_, st_.neighbourhood);
    log_.notes_from(engine_->notes());
    log_.warnings_from(engine_->warnings());
  }

  void cross_validate_model() {
    if (!st_.crossval_enabled) return;
    stage("crossval");
    cv_ = crossval_stage(samples_, model_.model, kriging_, st_.neighbourhood, st_.crossval, &log_);
    write_file(stage_output("crossval.csv"), crossval_csv(cv_, samples_.dimension));
    for (const auto& alt : st_.crossval_also) {
      StageLog quiet;  // an alternative's notes repeat the study's
      const KrigingOptions o = kriging_stage_options(alt.options, alt.transform, model_, &quiet);
      const CrossValidationResult other =
          crossval_stage(samples_, model_.model, o, st_.neighbourhood, st_.crossval, &quiet);
      alternatives_.push_back({alt.label, other.summary});
    }
  }

  // The file is written and the result kept in memory for the report in one pass.
  void krige_map() {
    stage("kriging");
    MemorySink kept;
    map_.path = stage_output(three_d_ ? "blocks.csv" : "estimate.tif");
    if (!three_d_) map_.metadata = map_metadata(samples_, model_, kriging_, st_.neighbourhood);
    kriging_summary_ = map_stage(*engine_, grid_, map_, {}, &kept, &log_);
    kriged_ = kept.take();
    result_.notes = log_.notes;
    result_.warnings = log_.warnings;
  }

  void report() {
    auto input = [this](const std::string& role, const std::string& path) {
      std::error_code ec;
      if (!path.empty() && fs::is_regular_file(path, ec))
        inputs_.push_back({role + ": " + path, detail::sha256_file(path)});
    };
    input("study", st_.path);
    input("samples", st_.samples.path);
    input("external drift", st_.kriging.external_drift);
    input("mask", st_.mask);
    input("grid template", st_.grid.like);
    input("block list", st_.blocks);
    if (st_.model.kind == ModelChoice::Kind::spec) input("model", st_.model.spec);

    stage("report");
    ReportInput r;
    r.options = st_.report;
    r.study_path = st_.path;
    r.block_list = st_.blocks;
    r.neighbourhood = st_.neighbourhood;
    r.samples = &samples_;
    r.summary = &summary_;
    r.variogram = &variogram_;
    r.model = &model_;
    r.fit_table = fit_table_;
    r.crossval = st_.crossval_enabled ? &cv_ : nullptr;
    r.alternatives = alternatives_;
    r.kriging = &kriging_;
    r.grid = &grid_;
    r.kriging_summary = &kriging_summary_;
    r.result = &kriged_;
    r.inputs = inputs_;
    r.warnings = result_.warnings;
    r.notes = result_.notes;
    r.version = version();
    write_file(stage_output("report.html"), render_report(r));
  }

  // run.json: inputs with checksums, every setting, the version, the time.
  void record() {
    using nlohmann::json;
    json input_list = json::array();
    for (const auto& [what, sha] : inputs_) {
      const auto colon = what.find(": ");
      input_list.push_back(
          {{"role", what.substr(0, colon)}, {"path", what.substr(colon + 2)}, {"sha256", sha}});
    }
    json outputs = json::array();
    for (std::size_t i = 0; i < staged_.size(); ++i)
      outputs.push_back({{"path", fs::path(final_paths_[i]).filename().string()},
                         {"sha256", detail::sha256_file(staged_[i]->temp_path())}});
    const GridSpec& g = grid_;
    json run = {{"sillstone_version", version()},
                {"time_utc", utc_now()},
                {"inputs", input_list},
                {"settings", json::parse(study_settings_json(st_))},
                {"resolved",
                 {{"variogram_lag", variogram_.options.lag},
                  {"variogram_lags", variogram_.options.lags},
                  {"variogram_max_distance", variogram_.options.max_distance},
                  {"model", to_spec(model_.model)},
                  {"model_transform", model_.transform.describe()},
                  {"kriging_transform", kriging_.transform.describe()},
                  {"crossval_support", "points"},
                  {"grid",
                   {{"xmin", g.xmin},
                    {"ymax", g.ymax},
                    {"zmin", g.zmin},
                    {"dx", g.dx},
                    {"dy", g.dy},
                    {"dz", g.dz},
                    {"nx", g.nx},
                    {"ny", g.ny},
                    {"nz", g.nz}}}}},
                {"outputs", outputs},
                {"crossval", cross_validation_json(cv_, alternatives_, st_.crossval_enabled)},
                {"notes", result_.notes},
                {"warnings", result_.warnings}};
    write_file(stage_output("run.json"), run.dump(2) + "\n");
  }
};

}  // namespace

RunResult run_study(const Study& st, const RunOptions& ro) { return StudyRun(st, ro).run(); }

}  // namespace sillstone
