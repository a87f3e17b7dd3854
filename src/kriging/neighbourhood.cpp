#include "sillstone/neighbourhood.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "samples/point_index.hpp"

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace sillstone {
namespace {

// The largest d2[i] with chosen[i] = 1 (-1 if none) and the smallest d2[i]
// + far chosen[i] (the smallest unchosen distance, or at least `far`).
// Arithmetic instead of selects: chosen is 1 or 0 and distances are finite
// and >= 0. Four running extremes held in registers (the compiler's own
// vectorised reduction kept its two in memory, a store and a reload per
// pass that cost more than the arithmetic); a maximum or minimum is exact,
// so the order of the comparisons does not change the result.
inline void boundary(const double* d2, const double* chosen, std::size_t m, double far,
                     double& max_in, double& min_out) {
  std::size_t i = 0;
#if defined(__SSE2__)
  const __m128d one = _mm_set1_pd(1.0), far2 = _mm_set1_pd(far);
  __m128d hi0 = _mm_set1_pd(-1.0), hi1 = hi0;
  __m128d lo0 = _mm_set1_pd(std::numeric_limits<double>::infinity()), lo1 = lo0;
  for (; i + 4 <= m; i += 4) {
    const __m128d d0 = _mm_loadu_pd(d2 + i), c0 = _mm_loadu_pd(chosen + i);
    const __m128d d1 = _mm_loadu_pd(d2 + i + 2), c1 = _mm_loadu_pd(chosen + i + 2);
    hi0 = _mm_max_pd(hi0, _mm_sub_pd(_mm_mul_pd(d0, c0), _mm_sub_pd(one, c0)));
    hi1 = _mm_max_pd(hi1, _mm_sub_pd(_mm_mul_pd(d1, c1), _mm_sub_pd(one, c1)));
    lo0 = _mm_min_pd(lo0, _mm_add_pd(d0, _mm_mul_pd(c0, far2)));
    lo1 = _mm_min_pd(lo1, _mm_add_pd(d1, _mm_mul_pd(c1, far2)));
  }
  const __m128d hi = _mm_max_pd(hi0, hi1), lo = _mm_min_pd(lo0, lo1);
  double h[2], l[2];
  _mm_storeu_pd(h, hi);
  _mm_storeu_pd(l, lo);
  max_in = std::max(h[0], h[1]);
  min_out = std::min(l[0], l[1]);
#else
  max_in = -1;
  min_out = std::numeric_limits<double>::infinity();
#endif
  for (; i < m; ++i) {
    const double d = d2[i], c = chosen[i];
    max_in = std::max(max_in, d * c - (1 - c));
    min_out = std::min(min_out, d + c * far);
  }
}

}  // namespace

bool NeighbourhoodOptions::is_valid(int dimension, std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  if (global) return true;
  if (max_points < 1) return fail("--max-points must be at least 1");
  if (min_points < 1) return fail("--min-points must be at least 1");
  if (min_points > max_points) return fail("--min-points exceeds --max-points");
  if (!(radius >= 0) || !std::isfinite(radius))
    return fail("--radius must be positive (0: unlimited)");
  const int full = dimension == 3 ? 8 : 4;
  if (sectors != 1 && sectors != full)
    return fail("--sectors must be 1 or " + std::to_string(full) + " for " +
                std::to_string(dimension) + "D data");
  if (max_per_sector < 0) return fail("--max-per-sector must be >= 0");
  return true;
}

NeighbourSearch::NeighbourSearch(const std::vector<Point>& points, int dimension,
                                 const NeighbourhoodOptions& options, const Eigen::Matrix3d& shape)
    : dimension_(dimension), options_(options), shape_(shape) {
  shaped_.reserve(points.size());
  for (const auto& p : points) shaped_.push_back(to_search_space(p));
  index_ = std::make_unique<detail::PointIndex>(shaped_, dimension);
}

NeighbourSearch::~NeighbourSearch() = default;

Point NeighbourSearch::to_search_space(const Point& p) const {
  const Eigen::Vector3d v = shape_ * Eigen::Vector3d(p.x, p.y, dimension_ == 3 ? p.z : 0.0);
  return {v.x(), v.y(), dimension_ == 3 ? v.z() : 0.0};
}

int NeighbourSearch::sector_of(const Point& from, const Point& to) const {
  // Half-open sign tests give every direction exactly one sector.
  int s = (to.x - from.x >= 0 ? 0 : 1) | (to.y - from.y >= 0 ? 0 : 2);
  if (dimension_ == 3) s |= (to.z - from.z >= 0 ? 0 : 4);
  return s;
}

std::size_t NeighbourSearch::find(const Point& target, std::vector<std::uint32_t>& out,
                                  Workspace& ws, std::int64_t exclude) const {
  if (options_.global) return find_set(target, out, ws, exclude);
  const Point q = to_search_space(target);
  if (options_.sectors > 1 && options_.max_per_sector > 0)
    return find_sectored(q, out, ws, exclude);
  const std::size_t n = find_nearest(q, out, ws, exclude);
  // Closest first, ties by index (find_nearest gives ascending indices).
  std::vector<std::pair<double, std::uint32_t>> order;
  for (std::uint32_t i : out) {
    const Point& p = shaped_[i];
    const double dx = q.x - p.x, dy = q.y - p.y, dz = q.z - p.z;
    order.push_back({dx * dx + dy * dy + (dimension_ == 3 ? dz * dz : 0.0), i});
  }
  std::sort(order.begin(), order.end());
  for (std::size_t i = 0; i < n; ++i) out[i] = order[i].second;
  return n;
}

std::size_t NeighbourSearch::find_set(const Point& target, std::vector<std::uint32_t>& out,
                                      Workspace& ws, std::int64_t exclude) const {
  out.clear();
  if (options_.global) {
    const std::size_t n = shaped_.size();
    for (std::uint32_t i = 0; i < n; ++i)
      if (static_cast<std::int64_t>(i) != exclude) out.push_back(i);
    return out.size();
  }
  const Point q = to_search_space(target);
  if (options_.sectors > 1 && options_.max_per_sector > 0) {
    find_sectored(q, out, ws, exclude);
    std::sort(out.begin(), out.end());
    return out.size();
  }
  return find_nearest(q, out, ws, exclude);
}

// The candidates around `centre` (search metric), in ascending index order,
// and their `reach`: no other sample is closer than that to the centre.
// With radius > 0, every sample closer than the radius (the tree's radius
// search, which is cheaper than its k-nearest search for many points),
// falling back to the nearest when that gives fewer than `count` / 2;
// otherwise the `count` samples closest (reach: the farthest of them, or
// +infinity when every sample is a candidate).
void NeighbourSearch::fill_cache(const Point& centre, std::size_t count, double radius,
                                 Workspace& ws) const {
  const std::size_t n = shaped_.size();
  count = std::min(count, n);
  const double qv[3] = {centre.x, centre.y, centre.z};
  std::size_t found = 0;
  if (radius > 0 && count < n) {
    found = index_->within(qv, radius, ws.pairs, ws.candidates);
    ws.reach = radius;
  }
  if (found < count / 2 || found > 4 * count) {  // no radius, or a poor guess
    ws.index.resize(count);
    ws.distance.resize(count);
    found = index_->nearest(qv, count, ws.index.data(), ws.distance.data());
    ws.candidates.assign(ws.index.begin(), ws.index.begin() + static_cast<std::ptrdiff_t>(found));
    ws.reach = found >= n ? std::numeric_limits<double>::infinity()
                          : (found > 0 ? ws.distance[found - 1] : 0.0);
  }
  std::sort(ws.candidates.begin(), ws.candidates.end());
  ws.cx.resize(found);
  ws.cy.resize(found);
  ws.cz.resize(found);
  for (std::size_t i = 0; i < found; ++i) {
    const Point& p = shaped_[ws.candidates[i]];
    ws.cx[i] = p.x;
    ws.cy[i] = p.y;
    ws.cz[i] = p.z;
  }
  ws.chosen.clear();  // positions changed: the next choice starts afresh
  ws.centre = centre;
}

// The k nearest samples within the radius, ties by index, in ascending
// index order. They are chosen among the cached candidates, which is exact
// when the k-th chosen (or the radius, if smaller) lies strictly closer to
// the target than any non-candidate can: every non-candidate is at least
// reach - s away, s being the target's distance from the cache's centre
// (triangle inequality). Otherwise the cache is refilled around the target
// (a little ahead of it along the direction the targets move, so that it
// serves the next nodes of a grid row too) and the choice is made again.
std::size_t NeighbourSearch::find_nearest(const Point& q, std::vector<std::uint32_t>& out,
                                          Workspace& ws, std::int64_t exclude) const {
  const std::size_t n = shaped_.size();
  const auto want = static_cast<std::size_t>(options_.max_points);
  const double radius =
      options_.radius > 0 ? options_.radius : std::numeric_limits<double>::infinity();
  const bool three = dimension_ == 3;
  // Candidates: three times the neighbours. Any count above want + 1 gives
  // the same answers; 2.5 to 4 times were equally fast on dense data
  // (50,000 samples, 10 m cells), 6 times slower.
  std::size_t size = std::min(n, std::max<std::size_t>(3 * want, want + 16));
  // A target close to the last certified one has the same neighbours: when
  // the k-th nearest was at d and every other sample at least d + gap, a
  // move by delta changes every distance by at most delta (triangle
  // inequality), so for 2 delta < gap the order across the boundary stays.
  // (Only without a radius or an exclusion, which the certificate ignores.)
  const bool certify = exclude < 0 && !std::isfinite(radius);
  if (certify && ws.gap > 0) {
    const double dx = q.x - ws.certified.x, dy = q.y - ws.certified.y, dz = q.z - ws.certified.z;
    if (2 * std::sqrt(dx * dx + dy * dy + dz * dz) < ws.gap) {
      out.assign(ws.certified_set.begin(), ws.certified_set.end());
      ws.last = q;
      return out.size();
    }
  }
  ws.gap = -1;
  out.clear();
  int refills = 0;  // in this call
  for (int attempt = 0;; ++attempt) {
    if (attempt > 0 || ws.reach < 0) {
      // The first refill looks ahead along the targets' path and guesses
      // the radius; any further one (rare) is centred on the target, by
      // count, growing when ties reach past the cache.
      const bool first = refills++ == 0;
      Point centre = q;
      const double vx = q.x - ws.last.x, vy = q.y - ws.last.y, vz = q.z - ws.last.z;
      const double step = std::sqrt(vx * vx + vy * vy + vz * vz);
      if (first && step > 0 && step < 0.5 * ws.last_kth) {
        const double ahead = 0.6 * ws.last_kth / step;
        centre = {q.x + ahead * vx, q.y + ahead * vy, q.z + ahead * vz};
      }
      if (refills >= 3) size = refills >= 7 ? n : std::min(n, 2 * size);  // ties past the cache
      // Along a row, the last target's k-th distance tells the radius that
      // holds about `size` samples (area or volume scales as r^dimension).
      const double guess =
          first && ws.last_kth > 0
              ? ws.last_kth * std::pow(static_cast<double>(size) / static_cast<double>(want),
                                       1.0 / dimension_)
              : 0.0;
      fill_cache(centre, size, guess, ws);
    }
    const std::size_t m = ws.candidates.size();
    const double sx = q.x - ws.centre.x, sy = q.y - ws.centre.y, sz = q.z - ws.centre.z;
    const double s = std::sqrt(sx * sx + sy * sy + sz * sz);
    if (m < n && !(s < ws.reach)) continue;  // outside the cache's ball
    ws.d2.resize(m);
    std::size_t eligible = m;
    {
      const double* cx = ws.cx.data();
      const double* cy = ws.cy.data();
      const double* cz = ws.cz.data();
      double* d2 = ws.d2.data();
      // Two loops, not one with a conditional load of z, which kept GCC
      // from vectorising it. (In 2D, adding dz * dz = 0 changed nothing.)
      if (three) {
#pragma omp simd
        for (std::size_t i = 0; i < m; ++i) {
          const double dx = q.x - cx[i], dy = q.y - cy[i], dz = q.z - cz[i];
          d2[i] = dx * dx + dy * dy + dz * dz;
        }
      } else {
#pragma omp simd
        for (std::size_t i = 0; i < m; ++i) {
          const double dx = q.x - cx[i], dy = q.y - cy[i];
          d2[i] = dx * dx + dy * dy;
        }
      }
    }
    if (exclude >= 0) {
      const auto it = std::lower_bound(ws.candidates.begin(), ws.candidates.end(),
                                       static_cast<std::uint64_t>(exclude));
      if (it != ws.candidates.end() && *it == static_cast<std::uint64_t>(exclude)) {
        // The largest finite double, not +inf: the repair pass below
        // multiplies by 0, and inf * 0 would be NaN.
        ws.d2[static_cast<std::size_t>(it - ws.candidates.begin())] =
            std::numeric_limits<double>::max();
        --eligible;
      }
    }
    // Choose the k nearest: ws.chosen[i] marks candidate i. Nearby targets
    // mostly share them, so the last choice is repaired first (swap the
    // farthest chosen with the closest unchosen while the former is
    // farther); a full selection only when that does not settle it.
    const std::size_t k = std::min(want, eligible);
    double kth2 = 0;
    double next2 = -1;  // the closest unchosen candidate's squared distance, when known
    bool settled = false;
    if (ws.chosen.size() == m && ws.chosen_count == k && k > 0 && k < m) {
      for (int swaps = 0; swaps < 4; ++swaps) {
        double max_in, min_out;
        const double* d2 = ws.d2.data();
        const double* chosen = ws.chosen.data();
        constexpr double kFar = 1e300;
        boundary(d2, chosen, m, kFar, max_in, min_out);
        if (!(min_out < kFar)) min_out = std::numeric_limits<double>::infinity();
        if (max_in < min_out) {  // strictly: no tie at the boundary
          kth2 = max_in;
          next2 = min_out;
          settled = true;
          break;
        }
        if (max_in == min_out) break;  // a tie: the full selection breaks it by index
        // Both exist: they gave max_in and min_out. Two plain scans are
        // cheaper than one with four conditions.
        std::size_t in_at = 0, out_at = 0;
        while (!(d2[in_at] == max_in && chosen[in_at] != 0.0)) ++in_at;
        while (!(d2[out_at] == min_out && chosen[out_at] == 0.0)) ++out_at;
        ws.chosen[in_at] = 0;
        ws.chosen[out_at] = 1;
      }
    }
    if (!settled) {
      // The k-th smallest squared distance; then all below it, and of those
      // exactly as far, the lowest indices.
      if (k > 0) {
        ws.keys.assign(ws.d2.begin(), ws.d2.end());
        std::nth_element(ws.keys.begin(), ws.keys.begin() + static_cast<std::ptrdiff_t>(k - 1),
                         ws.keys.end());
        kth2 = ws.keys[k - 1];
      }
      std::size_t closer = 0;
      for (std::size_t i = 0; i < m; ++i) closer += ws.d2[i] < kth2 ? 1 : 0;
      std::size_t level = k - std::min(k, closer);  // how many at exactly kth2
      ws.chosen.assign(m, 0);
      for (std::size_t i = 0; i < m && k > 0; ++i) {
        const double d = ws.d2[i];
        if (d < kth2 || (d == kth2 && level > 0)) {
          if (!(d < kth2)) --level;
          ws.chosen[i] = 1;
        }
      }
    }
    ws.chosen_count = k;
    // Exact when every non-candidate is strictly farther than the k-th
    // chosen or the radius (a relative margin covers rounding).
    const double bound = std::min(std::sqrt(kth2), radius);
    if (m < n && !(k == want && bound < (ws.reach - s) * (1 - 1e-12))) continue;
    if (std::isfinite(radius)) {
      for (std::size_t i = 0; i < m; ++i)
        if (ws.chosen[i] != 0.0 && std::sqrt(ws.d2[i]) <= radius) out.push_back(ws.candidates[i]);
    } else {  // branch-free compaction of the chosen candidates
      out.resize(m);
      std::size_t j = 0;
      for (std::size_t i = 0; i < m; ++i) {
        out[j] = ws.candidates[i];
        j += ws.chosen[i] != 0.0 ? 1 : 0;
      }
      out.resize(j);
    }
    ws.last = q;
    ws.last_kth = std::sqrt(kth2);
    if (certify && k == want) {
      if (next2 < 0) {
        next2 = std::numeric_limits<double>::infinity();
        for (std::size_t i = 0; i < m; ++i)
          if (ws.chosen[i] == 0.0) next2 = std::min(next2, ws.d2[i]);
      }
      // The (k+1)-th is no closer than the closest unchosen candidate, nor
      // than reach - s for the samples outside the cache; a relative margin
      // covers rounding.
      const double outside = m < n ? ws.reach - s : std::numeric_limits<double>::infinity();
      const double next = std::min(std::sqrt(next2), outside);
      const double gap = (next - ws.last_kth) - 1e-9 * (next + ws.last_kth);
      if (gap > 0 && std::isfinite(gap)) {
        ws.gap = gap;
        ws.certified = q;
        ws.certified_set.assign(out.begin(), out.end());
      }
    }
    return out.size();
  }
}

// With sectors: samples in order of distance, skipping those whose sector
// is full; ask the tree for more and widen until enough are kept.
std::size_t NeighbourSearch::find_sectored(const Point& q, std::vector<std::uint32_t>& out,
                                           Workspace& ws, std::int64_t exclude) const {
  const std::size_t n = shaped_.size();
  const double qv[3] = {q.x, q.y, q.z};
  const double radius =
      options_.radius > 0 ? options_.radius : std::numeric_limits<double>::infinity();
  const auto want = static_cast<std::size_t>(options_.max_points);
  std::size_t k = std::min(n, std::max(want + (exclude >= 0 ? 1 : 0), 4 * want));
  int per_sector[8];
  for (;;) {
    ws.index.resize(k);
    ws.distance.resize(k);
    const std::size_t found = index_->nearest(qv, k, ws.index.data(), ws.distance.data());
    out.clear();
    std::fill(std::begin(per_sector), std::end(per_sector), 0);
    bool beyond_radius = false;
    for (std::size_t i = 0; i < found && out.size() < want; ++i) {
      if (ws.distance[i] > radius) {
        beyond_radius = true;
        break;
      }
      const std::uint32_t j = ws.index[i];
      if (static_cast<std::int64_t>(j) == exclude) continue;
      int& c = per_sector[sector_of(q, shaped_[j])];
      if (c >= options_.max_per_sector) continue;
      ++c;
      out.push_back(j);
    }
    if (out.size() >= want || beyond_radius || found < k || k >= n) break;
    k = std::min(n, 2 * k);
  }
  return out.size();
}

}  // namespace sillstone
