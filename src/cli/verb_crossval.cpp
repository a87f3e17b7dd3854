// `sillstone crossval`: leave-one-out or k-fold cross-validation.
#include <iostream>
#include <memory>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/crossval.hpp"
#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"

namespace sillstone::cli {

VerbRunner add_crossval(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    KrigingArgs kriging;
    NeighbourhoodOptions neighbourhood;
    CrossValidationOptions cv;
    std::string output;
    bool overwrite = false;
    OutputArgs out;
  };
  auto a = std::make_shared<Args>();
  CLI::App* verb = app.add_subcommand("crossval", "Leave-one-out or k-fold cross-validation");
  add_sample_options(*verb, a->samples);
  add_kriging_options(*verb, a->kriging);
  add_neighbourhood_options(*verb, a->neighbourhood);
  verb->add_option("--folds", a->cv.folds, "K folds (default: leave-one-out)");
  verb->add_option("-o,--output", a->output, "Per-sample table (CSV)");
  verb->add_flag("--overwrite", a->overwrite, "Replace an existing output");
  add_output_options(*verb, a->out);

  return [a, verb]() -> int {
    if (!verb->parsed()) return -1;
    if (!a->output.empty()) {
      check_output_extension(a->output, {".csv"}, "-o", "the per-sample table");
      check_output_path(a->output, a->overwrite);
    }
    const ModelFile model = load_model(a->kriging.model);
    StageLog log;
    const KrigingOptions options =
        kriging_stage_options(resolve(a->kriging), asked_transform(a->kriging), model, &log);
    const SampleSet samples = load_stage(resolve(a->samples), &log);
    const CrossValidationResult result =
        crossval_stage(samples, model.model, options, a->neighbourhood, a->cv, &log);
    // Warnings only once every check has passed: a refused run prints one line.
    print_log(log, a->out.quiet);
    if (!a->output.empty())
      write_text_output(a->output, crossval_csv(result, samples.dimension), a->overwrite);
    std::cout << (a->out.json ? crossval_summary_json(result) + "\n"
                              : crossval_summary_text(result));
    return 0;
  };
}

}  // namespace sillstone::cli
