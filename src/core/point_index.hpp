// A k-d tree over sample locations (nanoflann), with an API that speaks in
// distances, never nanoflann's squared distances.
//
// Thread safety: after construction all queries are const and may run
// concurrently from several threads.
#pragma once

#include <nanoflann.hpp>

#include <cmath>
#include <cstdint>
#include <memory>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone::detail {

class PointIndex {
 public:
  /// Indexes `points` (kept by reference: they must outlive the index) in
  /// `dimension` (2: x, y; 3: x, y, z) coordinates.
  PointIndex(const std::vector<Point>& points, int dimension)
      : cloud_{points, dimension},
        tree_(std::make_unique<Tree>(dimension, cloud_,
                                     nanoflann::KDTreeSingleIndexAdaptorParams(16))) {}

  /// The k nearest samples to `query` (x, y, z), closest first. Writes up to
  /// k indices and their Euclidean distances; returns how many were found.
  std::size_t nearest(const double* query, std::size_t k, std::uint32_t* index,
                      double* distance) const {
    const std::size_t found = tree_->knnSearch(query, k, index, distance);
    for (std::size_t i = 0; i < found; ++i) distance[i] = std::sqrt(distance[i]);
    return found;
  }

  /// Pair enumeration: calls visit(j, distance) for every sample j > i whose
  /// Euclidean distance to sample i is at most `radius` (inclusive), so that
  /// calls for i = 0..n-1 meet each pair once. The order of j is fixed by the
  /// tree (not sorted): the same on every call and thread. Nothing is stored.
  template <class Visit>
  void for_each_pair_with(std::uint32_t i, double radius, Visit&& visit) const {
    const Point& p = cloud_.points[i];
    const double query[3] = {p.x, p.y, p.z};
    LaterWithin<Visit> result{i, radius, radius * radius * (1 + 1e-12), visit};
    tree_->findNeighbors(result, query, nanoflann::SearchParams(32, 0.0f, false));
  }

 private:
  // nanoflann's radius result set keeps d^2 < r^2 (strict, squared). This one
  // searches a hair wider, keeps only later samples, then keeps
  // sqrt(d^2) <= r exactly and hands on the true distance.
  template <class Visit>
  struct LaterWithin {
    std::uint32_t after;
    double radius, search;
    Visit& visit;
    double worstDist() const { return search; }
    bool full() const { return true; }
    bool addPoint(double squared, std::uint32_t index) {
      if (index <= after) return true;
      const double distance = std::sqrt(squared);
      if (distance <= radius) visit(index, distance);
      return true;  // keep searching
    }
  };
  struct Cloud {
    const std::vector<Point>& points;
    int dimension;
    std::size_t kdtree_get_point_count() const { return points.size(); }
    double kdtree_get_pt(std::size_t i, std::size_t d) const {
      return d == 0 ? points[i].x : d == 1 ? points[i].y : points[i].z;
    }
    template <class BBox>
    bool kdtree_get_bbox(BBox&) const {
      return false;
    }
  };
  using Tree = nanoflann::KDTreeSingleIndexAdaptor<nanoflann::L2_Simple_Adaptor<double, Cloud>,
                                                   Cloud, -1, std::uint32_t>;
  Cloud cloud_;
  std::unique_ptr<Tree> tree_;
};

}  // namespace sillstone::detail
