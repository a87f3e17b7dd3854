// `sillstone inspect`: data checks and summary statistics.
#include <iostream>
#include <memory>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/summary.hpp"

namespace sillstone::cli {

VerbRunner add_inspect(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    OutputArgs output;
    SummaryOptions summary;
  };
  auto args = std::make_shared<Args>();
  CLI::App* verb =
      app.add_subcommand("inspect", "Data checks and summary statistics of the samples");
  add_sample_options(*verb, args->samples);
  verb->add_option("--decluster-cell", args->summary.declustering.cell,
                   "Cell size for the declustered mean (default: scan sizes and choose)");
  add_output_options(*verb, args->output);

  return [args, verb]() -> int {
    if (!verb->parsed()) return -1;
    const SampleSet samples = load_samples(resolve(args->samples));
    const DataSummary summary = summarise(samples, args->summary);
    print_warnings(summary.warnings);
    if (args->output.json)
      std::cout << summary_to_json(summary) << "\n";
    else
      write_summary_text(std::cout, summary);
    return 0;
  };
}

}  // namespace sillstone::cli
