// The sillstone command line: one binary, one verb per pipeline stage.
//
// Exit status: 0 success, 2 bad arguments or bad input (InputError, parse
// errors), 1 anything else. Errors are one line on stderr starting "error:".
#include <CLI/CLI.hpp>

#include <iostream>
#include <string>
#include <vector>

#include "cli/verbs.hpp"
#include "sillstone/error.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/version.hpp"

int main(int argc, char** argv) {
  using namespace sillstone;
  install_interrupt_cleanup();
  CLI::App app{"sillstone " + version() +
               ": geostatistics from point samples (variograms, covariance models, kriging)"};
  app.set_version_flag("--version", "sillstone " + version());
  app.require_subcommand(1);
  app.fallthrough(false);

  std::vector<cli::VerbRunner> verbs;  // in pipeline order, as --help lists them
  verbs.push_back(cli::add_inspect(app));
  verbs.push_back(cli::add_variogram(app));
  verbs.push_back(cli::add_fit(app));
  verbs.push_back(cli::add_crossval(app));
  verbs.push_back(cli::add_krige(app));
  verbs.push_back(cli::add_run(app));

  // A first word that is neither an option nor a verb is a mistyped verb;
  // CLI11 would only say that a sub-command is required.
  if (argc > 1 && argv[1][0] != '-') {
    bool known = false;
    std::string names;
    for (const CLI::App* sub : app.get_subcommands({})) {
      known = known || sub->check_name(argv[1]);
      names += (names.empty() ? "" : ", ") + sub->get_name();
    }
    if (!known) {
      std::cerr << "error: unknown verb '" << argv[1] << "' (verbs: " << names << "; see --help)\n";
      return 2;
    }
  }
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
    std::string where;
    for (const CLI::App* sub : app.get_subcommands()) where = sub->get_name() + ": ";
    std::cerr << "error: " << where << e.what() << " (see --help)\n";
    return 2;
  }
  try {
    for (auto& run : verbs) {
      const int status = run();
      if (status >= 0) return status;
    }
    return 1;
  } catch (const InputError& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 2;
  } catch (const std::exception& e) {
    std::cerr << "error: " << e.what() << "\n";
    return 1;
  }
}
