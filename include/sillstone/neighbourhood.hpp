// sillstone/neighbourhood.hpp -- which samples enter each kriging system.
//
// A search neighbourhood takes up to `max_points` samples closest to the
// target inside a search ellipse (ellipsoid in 3D) that follows the
// anisotropy of the model: distances are measured after the same rotation
// and scaling that makes the model isotropic, so "closest" means "most
// correlated" for a one-structure model. Optional sectors (4 quadrants in
// 2D, 8 octants in 3D, taken in the anisotropy axes) with `max_per_sector`
// keep the samples from crowding on one side. Rules and references:
// docs/kriging.md.
//
// Thread safety: find() is const and may run concurrently with one
// Workspace per thread.
#pragma once

#include <Eigen/Core>

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone {

struct NeighbourhoodOptions {
  int max_points = 24;  ///< most samples per system (--max-points)
  int min_points = 3;   ///< fewer found: the node is left unestimated and counted (--min-points)
  double radius = 0;    ///< search radius along the major axis, CRS units; 0 = unlimited (--radius)
  int sectors = 1;      ///< 1 (none), 4 (2D quadrants) or 8 (3D octants) (--sectors)
  int max_per_sector = 0;  ///< most samples from one sector; 0 = no limit (--max-per-sector)
  bool global = false;     ///< every sample in every system (small data sets only)
  /// Checks the options for data of `dimension` (2 or 3).
  bool is_valid(int dimension, std::string* why) const;
};

namespace detail {
class PointIndex;
}

class NeighbourSearch {
 public:
  /// Indexes `points` (coordinates as used by the kriging systems, e.g.
  /// centred). `shape` maps a lag vector to the space where the search
  /// ellipse is a sphere of radius `radius` (identity: isotropic search).
  NeighbourSearch(const std::vector<Point>& points, int dimension,
                  const NeighbourhoodOptions& options,
                  const Eigen::Matrix3d& shape = Eigen::Matrix3d::Identity());
  ~NeighbourSearch();
  NeighbourSearch(const NeighbourSearch&) = delete;
  NeighbourSearch& operator=(const NeighbourSearch&) = delete;

  /// Scratch space reused between calls (no allocation per node once warm),
  /// and a cache of candidates that serves runs of nearby targets (a grid
  /// row): the samples closest to a recent target, in ascending index
  /// order, with a `reach` such that every other sample is at least that far
  /// from the cache's centre. The cache never changes an answer, only how
  /// fast it is found.
  struct Workspace {
    std::vector<std::uint32_t> index;
    std::vector<double> distance;
    std::vector<std::uint32_t> candidates;
    std::vector<double> cx, cy, cz, d2, keys;
    std::vector<std::pair<std::uint32_t, double>> pairs;  // the tree's radius search
    // The last choice among the candidates, 1 or 0, as doubles so that the
    // max/min pass over the candidates vectorises (bytes need widening).
    std::vector<double> chosen;
    std::size_t chosen_count = 0;
    Point centre{0, 0, 0};
    double reach = -1;  // < 0: no cache
    Point last{0, 0, 0};
    double last_kth = 0;  // distance of the last target's k-th neighbour
    // The neighbours of `certified` and the gap between its k-th and
    // (k+1)-th nearest sample (<= 0: none): they serve nearby targets.
    Point certified{0, 0, 0};
    double gap = -1;
    std::vector<std::uint32_t> certified_set;
  };

  /// Fills `out` with the indices of the neighbours of `target`, closest
  /// first (in the search metric), leaving out sample `exclude` (>= 0, for
  /// leave-one-out). Returns out.size(); the caller checks min_points.
  /// Samples at the same distance are taken in ascending index order
  /// (without sectors; with sectors the k-d tree's order decides).
  std::size_t find(const Point& target, std::vector<std::uint32_t>& out, Workspace& ws,
                   std::int64_t exclude = -1) const;

  /// The same neighbours as find(), in ascending index order: what kriging
  /// needs (docs/kriging.md), without the cost of ordering by distance.
  std::size_t find_set(const Point& target, std::vector<std::uint32_t>& out, Workspace& ws,
                       std::int64_t exclude = -1) const;

  const NeighbourhoodOptions& options() const { return options_; }

 private:
  std::vector<Point> shaped_;  // points in the search metric
  int dimension_;
  NeighbourhoodOptions options_;
  Eigen::Matrix3d shape_;
  std::unique_ptr<detail::PointIndex> index_;

  Point to_search_space(const Point& p) const;
  int sector_of(const Point& from, const Point& to) const;
  std::size_t find_sectored(const Point& q, std::vector<std::uint32_t>& out, Workspace& ws,
                            std::int64_t exclude) const;
  std::size_t find_nearest(const Point& q, std::vector<std::uint32_t>& out, Workspace& ws,
                           std::int64_t exclude) const;
  void fill_cache(const Point& centre, std::size_t count, double radius, Workspace& ws) const;
};

}  // namespace sillstone
