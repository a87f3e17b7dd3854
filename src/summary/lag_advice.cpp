// Nearest-neighbour spacing and suggested lag classes.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <sstream>

#include "samples/point_index.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {
namespace {

// The smallest round number (1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 times a
// power of ten) >= x.
double nice_at_least(double x) {
  const double p = std::pow(10.0, std::floor(std::log10(x)));
  for (double m : {1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0})
    if (m * p >= x * (1 - 1e-12)) return m * p;
  return 10 * p;
}

double distance(const Point& a, const Point& b, int dimension) {
  const double dx = a.x - b.x, dy = a.y - b.y, dz = dimension == 3 ? a.z - b.z : 0.0;
  return std::sqrt(dx * dx + dy * dy + dz * dz);
}

}  // namespace

SpacingStats nearest_neighbour_spacing(const std::vector<Point>& points, int dimension) {
  SpacingStats s;
  if (points.size() < 2) return s;
  detail::PointIndex index(points, dimension);
  std::vector<double> nn(points.size());
  std::vector<std::uint32_t> partner(points.size(), 0);
  for (std::size_t i = 0; i < points.size(); ++i) {
    const double q[3] = {points[i].x, points[i].y, points[i].z};
    std::uint32_t idx[2];
    double d[2];
    const std::size_t found = index.nearest(q, 2, idx, d);
    // The query point itself is among the two; the other one is the neighbour.
    nn[i] = found < 2 ? 0.0 : (idx[0] == i ? d[1] : d[0]);
    partner[i] = found < 2 ? 0 : (idx[0] == i ? idx[1] : idx[0]);
  }
  std::vector<double> sorted = nn;
  std::sort(sorted.begin(), sorted.end());
  s.count = nn.size();
  s.min = sorted.front();
  s.max = sorted.back();
  s.median = quantile_sorted(sorted, 0.5);
  double sum = 0;
  for (double d : nn) sum += d;
  s.mean = sum / static_cast<double>(nn.size());
  const double limit = SpacingStats::kNearFraction * s.median;
  for (std::size_t i = 0; i < nn.size(); ++i) {
    if (!(nn[i] > 0 && nn[i] < limit)) continue;
    if (s.near++ == 0 || nn[i] < s.closest) {
      s.closest = nn[i];
      s.closest_a = std::min<std::size_t>(i, partner[i]);
      s.closest_b = std::max<std::size_t>(i, partner[i]);
    }
  }
  return s;
}

LagAdvice suggest_lags(const std::vector<Point>& points, int dimension, double typical_spacing) {
  constexpr std::size_t kMinPairs = 30;  // common practice (Journel & Huijbregts 1978, from memory)
  constexpr int kMaxLags = 25;
  constexpr int kMinLags = 5;
  constexpr std::size_t kMaxCounted = 2000;  // above this, pairs are counted on a subsample
  LagAdvice a;
  if (points.size() < 2) return a;
  Point lo = points.front(), hi = lo;
  for (const auto& p : points) {
    lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  double span = std::max(hi.x - lo.x, hi.y - lo.y);
  if (dimension == 3) span = std::max(span, hi.z - lo.z);
  if (!(span > 0)) return a;
  const double reach = span / 2;  // half the largest extent (common practice)

  // Pair distances on the data or on an evenly strided subsample.
  std::vector<Point> sub;
  const std::size_t stride = (points.size() + kMaxCounted - 1) / kMaxCounted;
  for (std::size_t i = 0; i < points.size(); i += stride) sub.push_back(points[i]);
  a.pairs_estimated = stride > 1;
  const double n = static_cast<double>(points.size()), m = static_cast<double>(sub.size());
  const double scale = (n * (n - 1)) / (m * (m - 1));
  std::vector<double> d;
  for (std::size_t i = 0; i < sub.size(); ++i)
    for (std::size_t j = i + 1; j < sub.size(); ++j) {
      const double h = distance(sub[i], sub[j], dimension);
      if (h > 0 && h <= reach) d.push_back(h);
    }
  std::sort(d.begin(), d.end());
  auto pairs_in = [&d, scale](double from, double to) {  // classes (from, to]
    const auto lo_it = std::upper_bound(d.begin(), d.end(), from);
    const auto hi_it = std::upper_bound(d.begin(), d.end(), to);
    return static_cast<std::size_t>(std::llround(static_cast<double>(hi_it - lo_it) * scale));
  };

  const double start = typical_spacing > 0 ? typical_spacing : reach / 10;
  double w = nice_at_least(std::clamp(start, reach / kMaxLags, reach / kMinLags));
  for (;;) {
    const int lags = static_cast<int>(std::floor(reach / w + 1e-9));
    std::size_t fewest = SIZE_MAX;
    for (int i = 0; i < lags; ++i) fewest = std::min(fewest, pairs_in(i * w, (i + 1) * w));
    a.lag = w;
    a.lags = lags;
    a.max_distance = lags * w;
    a.min_pairs = lags > 0 ? fewest : 0;
    if (lags <= kMinLags || fewest >= kMinPairs) break;
    w = nice_at_least(w * 1.0001);  // the next nice width up
  }
  std::ostringstream rule;
  rule << "maximum distance about half the largest extent; lag width from the median "
          "nearest-neighbour spacing rounded up to a round number, at most "
       << kMaxLags << " classes, widened until every class holds at least " << kMinPairs
       << " pairs (common practice)";
  if (a.pairs_estimated) rule << "; pair counts estimated from a subsample of " << sub.size();
  a.rule = rule.str();
  return a;
}

}  // namespace sillstone
