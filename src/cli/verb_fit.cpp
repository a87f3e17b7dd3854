// `sillstone fit`: a covariance model fitted to an empirical variogram, read
// from a table written by `variogram` or computed from the samples.
#include <filesystem>
#include <iostream>
#include <memory>

#include "cli/common_options.hpp"
#include "cli/verbs.hpp"
#include "sillstone/error.hpp"
#include "sillstone/fit.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone::cli {
namespace {

std::string joined(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + item;
  return out;
}

std::vector<Family> parse_structures(const std::string& text) {
  std::vector<Family> out;
  std::string item;
  for (std::size_t i = 0; i <= text.size(); ++i) {
    if (i < text.size() && text[i] != ',') {
      item += text[i];
      continue;
    }
    const auto a = item.find_first_not_of(" \t");
    const std::string name =
        a == std::string::npos ? "" : item.substr(a, item.find_last_not_of(" \t") - a + 1);
    if (name.empty())
      throw InputError("fit", "--structures '" + text + "': an empty item (families: " +
                                  joined(names_of<Family>()) + ")");
    out.push_back(parse_name<Family>(name, "--structures"));
    item.clear();
  }
  return out;
}

}  // namespace

VerbRunner add_fit(CLI::App& app) {
  struct Args {
    SampleArgs samples;
    VariogramArgs variogram;
    OutputArgs output;
    std::string structures = "nugget,spherical";
    std::string weights = "cressie";
    std::vector<std::string> fixes;
    bool automatic = false, fit_nu = false, overwrite = false;
    std::string output_path;
  };
  auto args = std::make_shared<Args>();
  CLI::App* verb = app.add_subcommand(
      "fit", "Fit a covariance model to an empirical variogram (a variogram table or samples)");
  add_sample_options(*verb, args->samples,
                     "A variogram table written by `variogram` (CSV or JSON), or samples (any "
                     "OGR vector source; then the variogram is computed with the options below)",
                     false);
  add_variogram_options(*verb, args->variogram);
  verb->add_option("--structures", args->structures,
                   "Structures of the model, e.g. nugget,spherical or nugget,spherical,exponential "
                   "(families: " +
                       joined(names_of<Family>()) + ")")
      ->default_str("nugget,spherical");
  verb->add_option("--weights", args->weights,
                   "cressie (N/gamma^2, Cressie 1985), pairs (N) or equal")
      ->default_str("cressie");
  verb->add_flag("--auto", args->automatic,
                 "Fit the standard candidates and keep the best by AIC (docs/fitting.md)");
  verb->add_option("--fix", args->fixes,
                   "Hold parameters: [N.]KEY=VALUE[,...], e.g. range=450, nugget=0.1, 2.range=300, "
                   "azimuth=longest (N: position in --structures)")
      ->allow_extra_args(false);
  verb->add_flag("--fit-nu", args->fit_nu,
                 "Fit the matern nu (within [0.1, 10]); otherwise it is held at 1.5 or at "
                 "--fix nu=V");
  verb->add_option("-o,--output", args->output_path, "Write the model to MODEL.json");
  verb->add_flag("--overwrite", args->overwrite, "Replace an existing output file");
  add_output_options(*verb, args->output);

  return [args, verb]() -> int {
    if (!verb->parsed()) return -1;
    Args& a = *args;
    const std::string& input = a.samples.options.path;

    FitOptions options;
    options.weights = parse_name<FitWeights>(a.weights, "--weights");
    options.fit_nu = a.fit_nu;
    for (const auto& text : a.fixes) {
      const auto fixes = parse_fixes(text);
      options.fixed.insert(options.fixed.end(), fixes.begin(), fixes.end());
    }
    if (a.automatic) {
      if (verb->count("--structures") > 0)
        throw InputError("fit", "--auto chooses the structures; leave out --structures");
    } else {
      options.structures = parse_structures(a.structures);
      std::string why;
      if (!options.is_valid(&why)) throw InputError("fit", why);
    }
    VariogramOptions vo = resolve(a.variogram);
    check_variogram_options(vo);
    if (!a.output_path.empty()) {
      check_output_extension(a.output_path, {".json"}, "-o", "the model file");
      check_output_path(a.output_path, a.overwrite);
    }

    StageLog log;
    EmpiricalVariogram v;
    if (is_variogram_table(input)) {
      for (const auto& names : {sample_option_names(), variogram_option_names()})
        for (const auto& name : names)
          if (name != "--transform" && name != "--log-offset" && verb->count(name) > 0)
            throw InputError("fit", input + " is a variogram table; " + name +
                                        " applies only when the input holds samples");
      if (verb->count("--log-offset") > 0 && verb->count("--transform") == 0)
        throw InputError("fit", "--log-offset needs --transform log");
      std::optional<ValueTransform> asked;
      if (verb->count("--transform") > 0) asked = ValueTransform{vo.transform, vo.log_offset, {}};
      v = read_variogram_stage(input, asked, &log);
    } else {
      if (a.samples.options.values.empty())
        throw InputError("fit", input +
                                    " is not a variogram table, so it is read as samples: give "
                                    "--value");
      const SampleSet samples = load_stage(resolve(a.samples), &log);
      require_variation(samples, 0, "fit");
      v = variogram_stage(samples, vo, terminal_progress(a.output.quiet), &log);
    }

    const FitStageResult fitted = fit_stage(v, {options, a.automatic}, &log);
    print_log(log, a.output.quiet);

    if (!a.output_path.empty())
      write_text_output(a.output_path, model_to_json(fitted.file), a.overwrite);
    if (a.output.json)
      std::cout << fit_to_json(fitted.best, fitted.ranking) << "\n";
    else
      std::cout << fitted.table;
    return 0;
  };
}

}  // namespace sillstone::cli
