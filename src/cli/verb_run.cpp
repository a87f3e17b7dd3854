// `sillstone run`: a whole study from a study file into a run folder.
#include <unistd.h>  // isatty: stage lines only on a terminal

#include <iostream>
#include <memory>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/study.hpp"

namespace sillstone::cli {

VerbRunner add_run(CLI::App& app) {
  struct Args {
    std::string study;
    std::string output;
    bool overwrite = false;
    OutputArgs out;
  };
  auto a = std::make_shared<Args>();
  CLI::App* verb =
      app.add_subcommand("run", "The whole pipeline from a study file into a run folder");
  verb->add_option("STUDY", a->study, "Study file (TOML; see docs/run.md)")->required();
  verb->add_option("-o,--output", a->output, "Run folder (default: [output] dir of the study)");
  verb->add_flag("--overwrite", a->overwrite, "Replace outputs already in the run folder");
  verb->add_flag("-q,--quiet", a->out.quiet, "No progress messages");

  return [a, verb]() -> int {
    if (!verb->parsed()) return -1;
    const Study study = read_study(a->study);
    RunOptions ro;
    ro.output_dir = a->output;
    ro.overwrite = a->overwrite;
    // Stage lines are progress: on a terminal only (a refused run prints one line).
    if (!a->out.quiet && isatty(STDERR_FILENO))
      ro.on_stage = [](const std::string& stage) { std::cerr << "run: " << stage << "\n"; };
    const RunResult r = run_study(study, ro);
    print_warnings(r.warnings);
    print_notes(r.notes, a->out.quiet);
    std::cout << "Run folder " << r.folder << ":\n";
    for (const auto& f : r.files) std::cout << "  " << f << "\n";
    std::cout << "Report: " << r.report << "\n";
    return 0;
  };
}

}  // namespace sillstone::cli
