// What `fit` shows and writes: the fit table, its JSON form, and the
// model.json contents with their "fit" object (docs/fitting.md).
#include <cmath>
#include <iomanip>
#include <ostream>
#include <string>

#include <nlohmann/json.hpp>  // ordered_json: keys in the documented order

#include "sillstone/fit.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/version.hpp"

namespace sillstone {
namespace {

using Json = nlohmann::ordered_json;

Json number(double x) { return std::isfinite(x) ? Json(x) : Json(); }

std::string num(double x, int digits = 6) { return format_for_people(x, digits); }

std::string families(const FitResult& r) {
  std::string out;
  for (Family f : r.structures) out += (out.empty() ? "" : "+") + std::string(name_of(f));
  return out;
}

// The practical ranges of a structure along its axes: major, minor
// (horizontal, 2D and 3D) and the third axis (3D models only).
struct Ranges {
  double major = NAN, minor = NAN, third = NAN;
};

Ranges ranges_of(const Structure& s, int dimension) {
  Ranges r;
  if (s.range <= 0) return r;
  r.major = s.range;
  r.minor = s.range * s.anisotropy.ratio;
  if (dimension == 3) r.third = s.range * s.anisotropy.ratio2;
  return r;
}

int dimension_of(const FitResult& r) { return r.model.dimension() == 3 ? 3 : 2; }

Json ranking_json(const std::vector<FitResult>& ranking) {
  Json list = Json::array();
  for (std::size_t i = 0; i < ranking.size(); ++i) {
    const FitResult& r = ranking[i];
    list.push_back({{"rank", i + 1},
                    {"structures", families(r)},
                    {"model", to_spec(r.model)},
                    {"objective", number(r.objective)},
                    {"aic", number(r.aic)},
                    {"parameters", r.parameters},
                    {"converged", r.summary.converged},
                    {"warnings", r.summary.warnings.size()}});
  }
  return list;
}

std::string dependence_text(const FitResult& r) {
  if (r.dependence == SpatialDependence::undefined) return "not defined (no sill)";
  return std::string(name_of(r.dependence)) + " spatial dependence";
}

}  // namespace

ModelFile fitted_model_file(const FitResult& best, const std::vector<FitResult>& ranking) {
  ModelFile file;
  file.model = best.model;
  file.transform = best.transform;
  file.transform_recorded = true;
  Json fit;
  fit["weights"] = std::string(name_of(best.weights));
  fit["objective"] = number(best.objective);
  fit["aic"] = number(best.aic);
  fit["lags_used"] = best.lags_used;
  fit["parameters"] = best.parameters;
  fit["converged"] = best.summary.converged;
  fit["iterations"] = best.summary.iterations;
  fit["termination"] = std::string(name_of(best.summary.termination));
  fit["weight_rounds"] = best.summary.weight_rounds;
  fit["fixed"] = best.fixed;
  fit["source"] = best.source;
  fit["value"] = best.value;
  if (!ranking.empty()) {
    fit["criterion"] = "aic";
    fit["ranking"] = ranking_json(ranking);
  }
  fit["sillstone"] = version();
  file.fit = fit.dump();
  return file;
}

std::string fit_to_json(const FitResult& best, const std::vector<FitResult>& ranking) {
  Json j;
  j["sillstone"] = version();
  j["source"] = best.source;
  j["value"] = best.value;
  j["transform"] = best.transform.describe();
  j["model"] = to_spec(best.model);
  ModelFile file;
  file.model = best.model;
  Json structures = Json::parse(model_to_json(file))["structures"];
  const int dimension = dimension_of(best);
  for (std::size_t i = 0; i < structures.size(); ++i) {
    const Ranges r = ranges_of(best.model.structures()[i], dimension);
    if (std::isfinite(r.major)) {
      Json p{{"major", r.major}, {"minor", r.minor}};
      if (dimension == 3) p["third"] = r.third;
      structures[i]["practical_ranges"] = p;
    }
  }
  j["structures"] = structures;
  j["weights"] = std::string(name_of(best.weights));
  j["objective"] = number(best.objective);
  j["aic"] = number(best.aic);
  j["lags_used"] = best.lags_used;
  j["parameters"] = best.parameters;
  j["largest_lag"] = number(best.largest_lag);
  j["samples"] = best.samples > 0 ? Json(best.samples) : Json();
  j["sample_variance"] = number(best.sample_variance);
  j["total_sill"] = number(best.model.total_sill());
  j["nugget_ratio"] = number(best.nugget_ratio);
  j["spatial_dependence"] = std::string(name_of(best.dependence));
  j["converged"] = best.summary.converged;
  j["termination"] = std::string(name_of(best.summary.termination));
  j["iterations"] = best.summary.iterations;
  j["weight_rounds"] = best.summary.weight_rounds;
  j["starts"] = best.summary.starts;
  j["fixed"] = best.fixed;
  Json rows = Json::array();
  for (const FitRow& r : best.rows)
    rows.push_back({{"azimuth", number(r.azimuth)},
                    {"dip", number(r.dip)},
                    {"distance", r.distance},
                    {"pairs", r.pairs},
                    {"empirical", r.empirical},
                    {"model", r.model},
                    {"weight", r.weight}});
  j["rows"] = rows;
  if (!ranking.empty()) {
    j["criterion"] = "aic";
    j["ranking"] = ranking_json(ranking);
  }
  j["notes"] = best.summary.notes;
  j["warnings"] = best.summary.warnings;
  return j.dump(2);
}

void write_fit_text(std::ostream& out, const FitResult& best,
                    const std::vector<FitResult>& ranking) {
  if (best.value.empty())
    out << "Fit of the variogram" << (best.source.empty() ? "" : " in " + best.source);
  else
    out << "Fit of '" << best.value << "'" << (best.source.empty() ? "" : " (" + best.source + ")");
  out << "; transform " << best.transform.describe() << "\n";
  out << "Weights      " << name_of(best.weights);
  switch (best.weights) {
    case FitWeights::cressie:
      out << ": N(h) / gamma(h)^2 with the model's gamma (Cressie 1985), "
          << best.summary.weight_rounds << " re-weighted fit(s)";
      break;
    case FitWeights::pairs:
      out << ": N(h), the pairs of each class";
      break;
    case FitWeights::equal:
      out << ": 1 for every class";
      break;
  }
  out << "\n";
  out << "Classes      " << best.lags_used << " used (pairs > 0), largest lag "
      << num(best.largest_lag);
  if (best.samples > 0) out << "; " << best.samples << " samples";
  out << "\n";
  out << "Model        " << to_spec_for_people(best.model) << "\n\n";

  const int dimension = dimension_of(best);
  const bool anisotropic = !best.model.is_isotropic();
  out << std::left << std::setw(4) << "  #" << std::setw(13) << "structure" << std::right
      << std::setw(13) << "sill" << std::setw(13) << "range";
  if (anisotropic) {
    out << std::setw(13) << "minor range";
    if (dimension == 3) out << std::setw(13) << "third range";
    out << std::setw(10) << "azimuth" << std::setw(8) << "ratio";
    if (dimension == 3) out << std::setw(8) << "dip" << std::setw(8) << "ratio2";
  }
  out << "  other\n";
  const auto& structures = best.model.structures();
  for (std::size_t i = 0; i < structures.size(); ++i) {
    const Structure& s = structures[i];
    const Ranges r = ranges_of(s, dimension);
    // A structure without a range (nugget, power) shows "-": not applicable.
    const auto range = [](double x) { return std::isnan(x) ? std::string("-") : num(x); };
    out << std::right << std::setw(3) << i + 1 << " " << std::left << std::setw(13)
        << name_of(s.family) << std::right << std::setw(13) << num(s.sill) << std::setw(13)
        << range(r.major);
    const bool shaped = s.family != Family::nugget;
    if (anisotropic) {
      out << std::setw(13) << range(r.minor);
      if (dimension == 3) out << std::setw(13) << range(r.third);
      out << std::setw(10) << (shaped ? num(s.anisotropy.azimuth) : "-") << std::setw(8)
          << (shaped ? num(s.anisotropy.ratio, 4) : "-");
      if (dimension == 3)
        out << std::setw(8) << (shaped ? num(s.anisotropy.dip) : "-") << std::setw(8)
            << (shaped ? num(s.anisotropy.ratio2, 4) : "-");
    }
    out << "  ";
    if (s.family == Family::matern) out << "nu " << num(s.nu);
    if (s.family == Family::power) out << "exponent " << num(s.exponent) << " (sill: slope)";
    out << "\n";
  }
  out << "\n";
  out << "Total sill   " << num(best.model.total_sill());
  if (std::isfinite(best.sample_variance))
    out << " (sample variance " << num(best.sample_variance) << ")";
  out << "\n";
  out << "Nugget/sill  ";
  if (std::isfinite(best.nugget_ratio)) out << num(100 * best.nugget_ratio, 3) << " %: ";
  out << dependence_text(best)
      << " (Cambardella et al. 1994: < 25 % strong, 25-75 % moderate, > 75 % weak)\n";
  out << "Objective    " << num(best.objective) << " (weighted sum of squares); AIC "
      << num(best.aic) << " with " << best.parameters << " parameter(s) fitted\n";
  if (!best.fixed.empty()) {
    out << "Held        ";
    for (const auto& f : best.fixed) out << " " << f;
    out << "\n";
  }
  out << "Converged    " << (best.summary.converged ? "yes" : "NO") << ": "
      << name_of(best.summary.termination) << " after " << best.summary.iterations
      << " iteration(s), best of " << best.summary.starts << " start(s)\n";

  if (!ranking.empty()) {
    out << "\nRanking (--auto) by AIC = n ln(S/n) + 2p, lowest first\n";
    out << std::right << std::setw(5) << "rank"
        << "  " << std::left << std::setw(30) << "structures" << std::right << std::setw(14)
        << "objective" << std::setw(12) << "AIC" << std::setw(4) << "p"
        << "  converged  warnings\n";
    for (std::size_t i = 0; i < ranking.size(); ++i) {
      const FitResult& r = ranking[i];
      out << std::right << std::setw(5) << i + 1 << "  " << std::left << std::setw(30)
          << families(r) << std::right << std::setw(14) << num(r.objective) << std::setw(12)
          << num(r.aic) << std::setw(4) << r.parameters << "  " << std::left << std::setw(11)
          << (r.summary.converged ? "yes" : "no") << std::right << std::setw(8)
          << r.summary.warnings.size() << "\n";
    }
  }
  if (!best.summary.notes.empty()) {
    out << "\nNotes\n";
    for (const auto& n : best.summary.notes) out << "  - " << n << "\n";
  }
  if (!best.summary.warnings.empty()) {
    out << "\nWarnings\n";
    for (const auto& w : best.summary.warnings) out << "  - " << w << "\n";
  }
}

}  // namespace sillstone
