// The model of a study: fitted to the study's variogram ([model] fit) or
// chosen among the standard families ([model] auto).
#include <sstream>

#include "sillstone/error.hpp"
#include "sillstone/fit.hpp"
#include "sillstone/names.hpp"
#include "sillstone/study.hpp"

namespace sillstone {

FittedModel fit_for_study(const ModelChoice& choice, const EmpiricalVariogram& variogram) {
  FitOptions options;
  options.weights = parse_name<FitWeights>(choice.weights, "[model] weights");
  std::vector<FitResult> ranking;
  FitResult best;
  if (choice.kind == ModelChoice::Kind::fit) {
    options.structures.clear();
    for (const auto& name : choice.structures)
      options.structures.push_back(parse_name<Family>(name, "[model] fit.structures"));
    for (const auto& text : choice.fix)
      for (const auto& hold : parse_fixes(text)) options.fixed.push_back(hold);
    std::string why;
    if (!options.is_valid(&why)) throw InputError("study", "[model] fit: " + why);
    best = fit_model(variogram, options);
  } else {
    ranking = fit_auto(variogram, options);
    if (ranking.empty()) throw InputError("study", "[model] auto: no family could be fitted");
    best = ranking.front();
  }
  FittedModel out;
  out.file = fitted_model_file(best, ranking);
  std::ostringstream table;
  write_fit_text(table, best, ranking);
  out.table = table.str();
  out.warnings = best.summary.warnings;
  return out;
}

}  // namespace sillstone
