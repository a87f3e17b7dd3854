#include "sillstone/neighbourhood.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/point_index.hpp"

namespace sillstone {

bool NeighbourhoodOptions::is_valid(int dimension, std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  if (global) return true;
  if (max_points < 1) return fail("--max-points must be at least 1");
  if (min_points < 1) return fail("--min-points must be at least 1");
  if (min_points > max_points) return fail("--min-points exceeds --max-points");
  if (!(radius >= 0) || !std::isfinite(radius)) return fail("--radius must be positive (0: unlimited)");
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
  out.clear();
  const std::size_t n = shaped_.size();
  if (options_.global) {
    for (std::uint32_t i = 0; i < n; ++i)
      if (static_cast<std::int64_t>(i) != exclude) out.push_back(i);
    return out.size();
  }
  const Point q = to_search_space(target);
  const double qv[3] = {q.x, q.y, q.z};
  const double radius = options_.radius > 0 ? options_.radius : std::numeric_limits<double>::infinity();
  const auto want = static_cast<std::size_t>(options_.max_points);
  const bool sectored = options_.sectors > 1 && options_.max_per_sector > 0;
  // Without sectors the k nearest are the answer; with sectors some may be
  // skipped, so ask for more and widen until enough are kept or all are seen.
  std::size_t k = std::min(n, want + (exclude >= 0 ? 1 : 0));
  if (sectored) k = std::min(n, std::max(k, 4 * want));
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
      if (sectored) {
        int& c = per_sector[sector_of(q, shaped_[j])];
        if (c >= options_.max_per_sector) continue;
        ++c;
      }
      out.push_back(j);
    }
    if (out.size() >= want || beyond_radius || found < k || k >= n) break;
    k = std::min(n, 2 * k);
  }
  return out.size();
}

}  // namespace sillstone
