// Cross-validation: every sample estimated without itself (or its fold).
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <iomanip>
#include <numeric>
#include <random>
#include <sstream>

#include <nlohmann/json.hpp>

#include "sillstone/crossval.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"

namespace sillstone {
namespace {

// The samples of `column` that have a value, as a compact SampleSet whose
// indices the kriging engine shares.
SampleSet with_values(const SampleSet& s, std::size_t column,
                      const std::vector<std::size_t>& keep) {
  SampleSet out;
  out.source = s.source;
  out.layer = s.layer;
  out.dimension = s.dimension;
  out.value_names = {s.value_names[column]};
  out.values.assign(1, {});
  out.censored.assign(1, {});
  out.crs_wkt = s.crs_wkt;
  out.crs_name = s.crs_name;
  for (std::size_t i : keep) {
    out.points.push_back(s.points[i]);
    out.ids.push_back(s.ids[i]);
    out.row_numbers.push_back(s.row_numbers[i]);
    out.values[0].push_back(s.values[column][i]);
    out.censored[0].push_back(s.censored[column][i]);
  }
  return out;
}

std::string num(double v) { return format_for_file(v); }

}  // namespace

bool CrossValidationOptions::is_valid(std::size_t samples, std::string* why) const {
  if (folds == 1 || folds < 0 || (folds > 0 && static_cast<std::size_t>(folds) > samples)) {
    if (why) *why = "--folds must be 0 (leave-one-out) or between 2 and the number of samples";
    return false;
  }
  return true;
}

CrossValidationResult cross_validate(const SampleSet& samples, const CovarianceModel& model,
                                     const KrigingOptions& kriging,
                                     const NeighbourhoodOptions& neighbourhood,
                                     const CrossValidationOptions& options, std::size_t column) {
  const auto start = std::chrono::steady_clock::now();
  std::vector<std::size_t> keep;
  for (std::size_t i = 0; i < samples.size(); ++i)
    if (!std::isnan(samples.values[column][i])) keep.push_back(i);
  std::string why;
  if (!options.is_valid(keep.size(), &why)) throw InputError("crossval", why);
  const SampleSet all = with_values(samples, column, keep);
  const std::size_t n = all.size();

  CrossValidationResult result;
  result.rows.resize(n);
  const int threads = kriging.threads > 0 ? kriging.threads : std::max(1, omp_get_max_threads());
  std::vector<NodeEstimate> estimates(n);

  // Fold of each sample: a Fisher-Yates shuffle driven by a fixed-seed
  // mt19937_64 (whose output sequence the C++ standard fixes), so folds
  // are the same on every platform.
  std::vector<int> fold(n, 0);
  if (options.folds >= 2) {
    std::vector<std::size_t> order(n);
    std::iota(order.begin(), order.end(), 0);
    std::mt19937_64 rng(options.seed);
    for (std::size_t i = n; i > 1; --i) std::swap(order[i - 1], order[rng() % i]);
    for (std::size_t k = 0; k < n; ++k)
      fold[order[k]] = static_cast<int>(k % static_cast<std::size_t>(options.folds));
  }

  // Targets are visited in a spatial order (Z-order of their cell in a
  // 2^16 grid over the bounding box), so that consecutive targets share
  // most neighbours: the neighbour cache and the updated factorisation
  // (Workspace::incremental) then serve them, as along a grid row. Chunks of
  // that order start afresh, so results do not depend on the threads.
  auto spatial_order = [&](std::vector<std::size_t>& order) {
    double lo[3] = {0, 0, 0}, hi[3] = {0, 0, 0};
    for (std::size_t i = 0; i < order.size(); ++i) {
      const Point& p = all.points[order[i]];
      const double c[3] = {p.x, p.y, p.z};
      for (int d = 0; d < 3; ++d) {
        lo[d] = i == 0 ? c[d] : std::min(lo[d], c[d]);
        hi[d] = i == 0 ? c[d] : std::max(hi[d], c[d]);
      }
    }
    auto key = [&](std::size_t i) {
      const Point& p = all.points[i];
      const double c[3] = {p.x, p.y, p.z};
      std::uint64_t cell[3];
      for (int d = 0; d < 3; ++d)
        cell[d] = hi[d] > lo[d]
                      ? static_cast<std::uint64_t>((c[d] - lo[d]) / (hi[d] - lo[d]) * 65535.0)
                      : 0;
      std::uint64_t k = 0;
      for (int b = 15; b >= 0; --b)
        for (int d = 0; d < 3; ++d) k = (k << 1) | ((cell[d] >> b) & 1);
      return k;
    };
    std::vector<std::pair<std::uint64_t, std::size_t>> keyed;
    for (std::size_t i : order) keyed.push_back({key(i), i});
    std::sort(keyed.begin(), keyed.end());
    for (std::size_t i = 0; i < order.size(); ++i) order[i] = keyed[i].second;
  };

  auto run = [&](const KrigingEngine& engine, std::vector<std::size_t> targets,
                 bool leave_one_out) {
    spatial_order(targets);
    std::vector<std::unique_ptr<KrigingEngine::Workspace>> ws;
    for (int t = 0; t < threads; ++t) ws.push_back(engine.make_workspace());
    const bool external = !kriging.external_drift.empty();
    constexpr std::size_t kChunk = 64;
    const std::size_t chunks = (targets.size() + kChunk - 1) / kChunk;
#pragma omp parallel for num_threads(threads) schedule(dynamic, 1)
    for (std::size_t c = 0; c < chunks; ++c) {
      KrigingEngine::Workspace& w = *ws[static_cast<std::size_t>(omp_get_thread_num())];
      w.incremental = true;
      w.restart();
      for (std::size_t k = c * kChunk; k < std::min(targets.size(), (c + 1) * kChunk); ++k) {
        const Point& p = all.points[targets[k]];
        const std::int64_t exclude = leave_one_out ? static_cast<std::int64_t>(targets[k]) : -1;
        estimates[targets[k]] =
            engine.estimate(p, w, exclude, external ? engine.external_at(p) : 0.0);
      }
    }
  };

  std::vector<double> kriged(n);  // the kriged-scale value of each sample
  if (options.folds < 2) {
    const KrigingEngine engine(all, model, kriging, neighbourhood);
    std::vector<std::size_t> targets(n);
    std::iota(targets.begin(), targets.end(), 0);
    run(engine, targets, true);
    for (std::size_t i = 0; i < n; ++i) kriged[i] = engine.value(i);
  } else {
    for (int f = 0; f < options.folds; ++f) {
      std::vector<std::size_t> train, targets;
      for (std::size_t i = 0; i < n; ++i) (fold[i] == f ? targets : train).push_back(i);
      const SampleSet training = with_values(all, 0, train);
      const KrigingEngine engine(training, model, kriging, neighbourhood);
      run(engine, targets, false);
    }
    for (std::size_t i = 0; i < n; ++i) kriged[i] = kriging.transform.forward(all.values[0][i]);
  }

  // Rows and summary, in sample order (independent of threads).
  const KrigingEngine finisher(all, model, kriging, neighbourhood);
  CrossValidationSummary& s = result.summary;
  s.samples = n;
  s.folds = options.folds;
  double se = 0, sae = 0, sse = 0, sz = 0, szz = 0;
  std::size_t standardised = 0;  // rows with a standardised error
  std::vector<double> obs, est;
  for (std::size_t i = 0; i < n; ++i) {
    CrossValidationRow& r = result.rows[i];
    const NodeEstimate& e = estimates[i];
    r.id = all.ids[i];
    r.point = all.points[i];
    r.observed = all.values[0][i];
    r.neighbours = e.neighbours;
    r.status = e.status;
    s.counts.count(e.status);
    r.ok = e.ok();
    if (!r.ok) {
      r.estimate = r.variance = r.error = r.standardised_error = std::nan("");
      continue;
    }
    const NodeOutput o = finisher.finish(e);
    if (!std::isfinite(o.estimate)) {  // e.g. a back-transform that overflows
      ++s.counts.non_finite;
      --s.counts.estimated;
      r.ok = false;
      r.estimate = r.variance = r.error = r.standardised_error = std::nan("");
      continue;
    }
    r.estimate = o.estimate;
    r.variance = e.variance;
    r.error = r.estimate - r.observed;
    r.standardised_error =
        e.variance > 0 ? (e.estimate - kriged[i]) / std::sqrt(e.variance) : std::nan("");
    ++s.estimated;
    se += r.error;
    sae += std::abs(r.error);
    sse += r.error * r.error;
    if (std::isfinite(r.standardised_error)) {
      ++standardised;
      sz += r.standardised_error;
      szz += r.standardised_error * r.standardised_error;
    } else {
      ++s.zero_variance;
    }
    obs.push_back(r.observed);
    est.push_back(r.estimate);
  }
  if (s.estimated > 0) {
    const double m = static_cast<double>(s.estimated);
    s.mean_error = se / m;
    s.mean_absolute_error = sae / m;
    s.rmse = std::sqrt(sse / m);
    const double ms = static_cast<double>(standardised);
    s.mean_standardised_error = standardised ? sz / ms : std::nan("");
    s.mean_squared_standardised_error = standardised ? szz / ms : std::nan("");
    const double mo = std::accumulate(obs.begin(), obs.end(), 0.0) / m;
    const double me = std::accumulate(est.begin(), est.end(), 0.0) / m;
    double soo = 0, see = 0, soe = 0;
    for (std::size_t k = 0; k < obs.size(); ++k) {
      soo += (obs[k] - mo) * (obs[k] - mo);
      see += (est[k] - me) * (est[k] - me);
      soe += (obs[k] - mo) * (est[k] - me);
    }
    s.correlation = soo > 0 && see > 0 ? soe / std::sqrt(soo * see) : std::nan("");
  } else {
    s.mean_error = s.mean_absolute_error = s.rmse = std::nan("");
    s.mean_standardised_error = s.mean_squared_standardised_error = s.correlation = std::nan("");
  }
  s.counts.threads = threads;
  s.counts.seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  s.counts.warnings = finisher.warnings();
  // Blank cells and undefined figures are said, never left to be found.
  for (const auto& line : describe(s.counts, "sample")) s.counts.warnings.push_back(line);
  if (s.zero_variance > 0)
    s.counts.warnings.push_back(std::to_string(s.zero_variance) +
                                " sample(s) have a kriging variance of 0 (a sample at the same "
                                "place is left in, or the model has no nugget and a neighbour "
                                "coincides), so their standardised_error is empty and left out of "
                                "the standardised means");
  if (s.estimated > 0 && !std::isfinite(s.correlation))
    s.counts.warnings.push_back(
        "the correlation of observed and estimated values is undefined: "
        "one of them does not vary");
  return result;
}

std::string crossval_csv(const CrossValidationResult& r, int dimension) {
  std::ostringstream out;
  out << "id,x,y,z,observed,estimate,variance,error,standardised_error,neighbours\n";
  for (const auto& row : r.rows) {
    // The id is the row number alone ("14" for "line 14", "7" for "feature 7").
    const std::string id = row.id.substr(row.id.find(' ') + 1);
    out << id << "," << num(row.point.x) << "," << num(row.point.y) << ","
        << (dimension == 3 ? num(row.point.z) : "") << "," << num(row.observed) << ","
        << num(row.estimate) << "," << num(row.variance) << "," << num(row.error) << ","
        << num(row.standardised_error) << "," << row.neighbours << "\n";
  }
  return out.str();
}

std::string crossval_summary_json(const CrossValidationResult& r) {
  const auto& s = r.summary;
  auto n = [](double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(); };
  nlohmann::json j = {{"samples", s.samples},
                      {"estimated", s.estimated},
                      {"method", s.folds >= 2 ? "k-fold" : "leave-one-out"},
                      {"folds", s.folds},
                      {"mean_error", n(s.mean_error)},
                      {"mean_absolute_error", n(s.mean_absolute_error)},
                      {"rmse", n(s.rmse)},
                      {"mean_standardised_error", n(s.mean_standardised_error)},
                      {"mean_squared_standardised_error", n(s.mean_squared_standardised_error)},
                      {"correlation", n(s.correlation)},
                      {"warnings", s.counts.warnings}};
  return j.dump(2);
}

std::string crossval_summary_text(const CrossValidationResult& r) {
  const auto& s = r.summary;
  std::ostringstream out;
  out << "Cross-validation ("
      << (s.folds >= 2 ? std::to_string(s.folds) + "-fold" : "leave-one-out")
      << "): " << s.estimated << " of " << s.samples << " samples estimated\n";
  auto line = [&out](const char* label, double v, const char* ideal) {
    // An undefined figure is kMissingForPeople; a warning says why.
    out << "  " << std::left << std::setw(36) << label << std::right << std::setw(14)
        << format_for_people(v, 6);
    out << "   " << ideal << "\n";
  };
  line("mean error (ME)", s.mean_error, "ideally 0");
  line("mean absolute error (MAE)", s.mean_absolute_error, "");
  line("root mean squared error (RMSE)", s.rmse, "");
  line("mean standardised error", s.mean_standardised_error, "ideally 0");
  line("mean squared standardised error", s.mean_squared_standardised_error, "ideally 1");
  line("correlation observed-estimated", s.correlation, "");
  return out.str();
}

}  // namespace sillstone
