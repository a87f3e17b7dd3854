#include "sillstone/normal_score.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace sillstone {

double normal_quantile(double p) {
  if (!(p > 0 && p < 1)) return std::numeric_limits<double>::quiet_NaN();
  if (p == 0.5) return 0;  // exactly, where the iteration would stop a rounding error short
  // Work in the lower tail, where Phi(x) = erfc(-x / sqrt 2) / 2 keeps full
  // relative precision, and mirror for p > 1/2.
  const double q = std::min(p, 1 - p);
  // Starting value: the rational approximation of Abramowitz & Stegun (1964)
  // 26.2.23, |error| < 4.5e-4 (coefficients from memory; the result is
  // checked against scipy.stats.norm.ppf at test time).
  const double t = std::sqrt(-2 * std::log(q));
  double x = -(t - (2.515517 + t * (0.802853 + t * 0.010328)) /
                       (1 + t * (1.432788 + t * (0.189269 + t * 0.001308))));
  // Halley's method on Phi(x) - q; from 4.5e-4 three steps reach the
  // rounding floor (cubic convergence).
  const double sqrt2 = std::sqrt(2.0), sqrt2pi = std::sqrt(2 * std::acos(-1.0));
  for (int step = 0; step < 3; ++step) {
    const double e = 0.5 * std::erfc(-x / sqrt2) - q;
    const double u = e * sqrt2pi * std::exp(x * x / 2);
    x -= u / (1 + x * u / 2);
  }
  return p <= 0.5 ? x : -x;
}

double NormalScoreTable::back_transform(double score) const {
  if (values.empty()) return std::numeric_limits<double>::quiet_NaN();
  if (!(score > scores.front())) return values.front();
  if (!(score < scores.back())) return values.back();
  const auto hi = static_cast<std::size_t>(std::upper_bound(scores.begin(), scores.end(), score) -
                                           scores.begin());
  const std::size_t lo = hi - 1;
  const double f = (score - scores[lo]) / (scores[hi] - scores[lo]);
  return values[lo] + f * (values[hi] - values[lo]);
}

NormalScores normal_scores(const std::vector<double>& values) {
  NormalScores out;
  out.scores.assign(values.size(), std::numeric_limits<double>::quiet_NaN());
  std::vector<std::size_t> order;
  for (std::size_t i = 0; i < values.size(); ++i)
    if (!std::isnan(values[i])) order.push_back(i);
  std::stable_sort(order.begin(), order.end(),
                   [&values](std::size_t a, std::size_t b) { return values[a] < values[b]; });
  const double n = static_cast<double>(order.size());
  for (std::size_t k = 0; k < order.size();) {
    std::size_t end = k + 1;  // tied values: ranks k+1 .. end share their mid-rank
    while (end < order.size() && values[order[end]] == values[order[k]]) ++end;
    const double mid_rank = (static_cast<double>(k + 1) + static_cast<double>(end)) / 2;
    const double score = normal_quantile((mid_rank - 0.5) / n);
    for (std::size_t m = k; m < end; ++m) out.scores[order[m]] = score;
    out.table.values.push_back(values[order[k]]);
    out.table.scores.push_back(score);
    k = end;
  }
  return out;
}

}  // namespace sillstone
