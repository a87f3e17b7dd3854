// The verbs of the command line. Each verb declares its options once on its
// own sub-command and returns the function that runs it; main.cpp only wires
// them up and turns exceptions into messages and exit statuses.
#pragma once

#include <CLI/CLI.hpp>

#include <functional>

namespace sillstone::cli {

/// Runs a verb after parsing; returns the exit status.
using VerbRunner = std::function<int()>;

VerbRunner add_inspect(CLI::App& app);
VerbRunner add_crossval(CLI::App& app);
VerbRunner add_krige(CLI::App& app);
VerbRunner add_run(CLI::App& app);
VerbRunner add_variogram(CLI::App& app);
VerbRunner add_fit(CLI::App& app);

}  // namespace sillstone::cli
