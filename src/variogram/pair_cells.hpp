// Every pair of samples closer than a reach, visited once, in contiguous runs
// of memory.
//
// The samples are sorted into cells of side h = reach / S across y and z (one
// row of cells in 2D; S = 4 in 2D, 2 in 3D), and by x within a cell. The
// partners of sample i closer than the reach lie in its own cell after it, or
// in a cell "ahead" of its cell: (dy, dz) steps with dy > 0, or dy = 0 and
// dz > 0, each at most S. Within such a cell they lie in one run of positions
// whose x is within w = sqrt(reach^2 - g^2) of x_i, g being the gap between
// sample i and the cell across y and z; the runs thus hug the circle (sphere)
// of the reach. A pair's two cells are either the same or one is ahead of
// the other, never both, so every pair closer than the reach is visited
// exactly once. A run may also hold samples farther than the reach; the
// caller tests the distance. The candidates of a sample are bounded by the
// samples in a box of 2 x reach a side around it, however the samples are
// laid out (a line, a cluster, drill holes).
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numeric>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone::detail {

class PairCells {
 public:
  /// Sorts `points` (in `dimension` 2 or 3) into cells for pairs up to
  /// `reach` (> 0) apart.
  PairCells(const std::vector<Point>& points, int dimension, double reach)
      : split_(dimension == 3 ? 2 : 4) {
    const std::size_t n = points.size();
    double scale = 0;
    if (n > 0) {
      ylo_ = points.front().y;
      zlo_ = points.front().z;
      for (const auto& p : points) {
        ylo_ = std::min(ylo_, p.y);
        zlo_ = std::min(zlo_, p.z);
        scale = std::max({scale, std::abs(p.x), std::abs(p.y), std::abs(p.z)});
      }
    }
    // Windows are a little wider than the reach and gaps a little narrower
    // than computed, so that rounding in the offsets and bounds below can
    // never lose a pair at the reach itself.
    slack_ = 1e-9 * reach + 1e-12 * scale;
    reach_ = reach + slack_;
    side_ = reach_ / split_;
    // Cell numbers are capped so that their products stay exact; past the
    // cap a cell is merely wider, which costs candidates, never pairs.
    auto cell = [this](double offset) {
      return static_cast<std::int64_t>(
          std::min(static_cast<double>(kLastCell), std::floor(offset / side_)));
    };
    std::vector<std::int64_t> cy(n), cz(n, 0);
    std::int64_t z_cells = 1;
    for (std::size_t i = 0; i < n; ++i) {
      cy[i] = cell(points[i].y - ylo_);
      if (dimension == 3) cz[i] = cell(points[i].z - zlo_);
      z_cells = std::max(z_cells, cz[i] + 1);
    }
    std::vector<std::int64_t> key(n);
    for (std::size_t i = 0; i < n; ++i) key[i] = cy[i] * z_cells + cz[i];
    order_.resize(n);
    std::iota(order_.begin(), order_.end(), 0u);
    std::sort(order_.begin(), order_.end(), [&](std::uint32_t a, std::uint32_t b) {
      if (key[a] != key[b]) return key[a] < key[b];
      if (points[a].x != points[b].x) return points[a].x < points[b].x;
      return a < b;
    });
    x_.resize(n);
    cell_of_.resize(n);
    for (std::size_t s = 0; s < n; ++s) {
      const std::uint32_t i = order_[s];
      x_[s] = points[i].x;
      if (s == 0 || key[i] != keys_.back()) {
        keys_.push_back(key[i]);
        cells_.push_back({cy[i], cz[i], static_cast<std::uint32_t>(s)});
      }
      cell_of_[s] = static_cast<std::uint32_t>(keys_.size() - 1);
    }
    cells_.push_back({0, 0, static_cast<std::uint32_t>(n)});
    // The steps to the cells ahead, and for each cell the cells found there.
    for (std::int64_t dy = 0; dy <= split_; ++dy)
      for (std::int64_t dz = dimension == 3 ? -split_ : 0; dz <= (dimension == 3 ? split_ : 0);
           ++dz)
        if (dy > 0 || dz > 0) steps_.push_back({dy, dz});
    ahead_.assign(keys_.size() * steps_.size(), kNone);
    for (std::size_t c = 0; c < keys_.size(); ++c)
      for (std::size_t a = 0; a < steps_.size(); ++a) {
        const std::int64_t y = cells_[c].y + steps_[a].y, z = cells_[c].z + steps_[a].z;
        if (z < 0 || z >= z_cells) continue;  // keys must not wrap into the next row
        const std::int64_t wanted = y * z_cells + z;
        const auto it = std::lower_bound(keys_.begin(), keys_.end(), wanted);
        if (it != keys_.end() && *it == wanted)
          ahead_[c * steps_.size() + a] = static_cast<std::uint32_t>(it - keys_.begin());
      }
  }

  /// Sample (input index) at sorted position s; positions run 0 .. size-1.
  const std::vector<std::uint32_t>& order() const { return order_; }

  /// Calls run(begin, end) for each run [begin, end) of sorted positions that
  /// may hold partners j of the sample at position s, at (x, y, z), each pair
  /// {s, j} being offered from exactly one of its two samples. Runs come in a
  /// fixed order.
  template <class Run>
  void for_each_run(std::size_t s, double y, double z, Run&& run) const {
    const double x = x_[s];
    const std::uint32_t c = cell_of_[s];
    {
      const auto first = x_.begin() + static_cast<std::ptrdiff_t>(s) + 1;
      const auto last = x_.begin() + cells_[c + 1].begin;
      const auto end = std::upper_bound(first, last, x + reach_);
      if (end > first) run(s + 1, static_cast<std::size_t>(end - x_.begin()));
    }
    const std::size_t nsteps = steps_.size();
    for (std::size_t a = 0; a < nsteps; ++a) {
      const std::uint32_t d = ahead_[c * nsteps + a];
      if (d == kNone) continue;
      // The gap from the sample to cell d across y and z.
      const double gy = gap(y - ylo_, cells_[d].y), gz = gap(z - zlo_, cells_[d].z);
      const double g2 = gy * gy + gz * gz;
      if (g2 >= reach_ * reach_) continue;
      const double w = std::sqrt(reach_ * reach_ - g2) + slack_;
      const auto first = x_.begin() + cells_[d].begin;
      const auto last = x_.begin() + cells_[d + 1].begin;
      const auto from = std::lower_bound(first, last, x - w);
      const auto to = std::upper_bound(from, last, x + w);
      if (to > from)
        run(static_cast<std::size_t>(from - x_.begin()), static_cast<std::size_t>(to - x_.begin()));
    }
  }

 private:
  struct Cell {
    std::int64_t y, z;
    std::uint32_t begin;  // first sorted position
  };
  struct Step {
    std::int64_t y, z;
  };
  static constexpr std::uint32_t kNone = 0xffffffffu;
  static constexpr std::int64_t kLastCell = std::int64_t{1} << 30;

  // The distance from offset v to cell k's interval [k h, (k + 1) h) along one
  // axis (the last cell has no upper end), less the slack; 0 inside.
  double gap(double v, std::int64_t k) const {
    const double lo = static_cast<double>(k) * side_;
    const double hi = k >= kLastCell ? HUGE_VAL : lo + side_;
    const double g = v < lo ? lo - v : (v > hi ? v - hi : 0.0);
    return std::max(0.0, g - slack_);
  }

  std::int64_t split_;
  double ylo_ = 0, zlo_ = 0, slack_ = 0, reach_ = 0, side_ = 0;
  std::vector<std::uint32_t> order_;    // sorted position -> input index
  std::vector<double> x_;               // x by sorted position
  std::vector<std::uint32_t> cell_of_;  // sorted position -> cell
  std::vector<std::int64_t> keys_;      // cell keys, ascending
  std::vector<Cell> cells_;             // by key, and one past the last
  std::vector<Step> steps_;             // to the cells ahead
  std::vector<std::uint32_t> ahead_;    // steps_.size() cells per cell, or kNone
};

}  // namespace sillstone::detail
