// The model of a study: fitted to the study's variogram ([model] fit) or
// chosen among the standard families ([model] auto), as the fit stage's
// options.
#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/study.hpp"

namespace sillstone {

FitStageOptions fit_options_of(const ModelChoice& choice) {
  FitStageOptions options;
  options.fit.weights = parse_name<FitWeights>(choice.weights, "[model] weights");
  options.automatic = choice.kind != ModelChoice::Kind::fit;
  if (!options.automatic) {
    options.fit.structures.clear();
    for (const auto& name : choice.structures)
      options.fit.structures.push_back(parse_name<Family>(name, "[model] fit.structures"));
    for (const auto& text : choice.fix)
      for (const auto& hold : parse_fixes(text)) options.fit.fixed.push_back(hold);
    std::string why;
    if (!options.fit.is_valid(&why)) throw InputError("study", "[model] fit: " + why);
  }
  return options;
}

}  // namespace sillstone
