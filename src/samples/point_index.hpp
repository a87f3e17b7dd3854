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
#include <utility>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone::detail {

class PointIndex {
 public:
  /// Indexes `points` (kept by reference: they must outlive the index) in
  /// `dimension` (2: x, y; 3: x, y, z) coordinates.
  PointIndex(const std::vector<Point>& points, int dimension) : cloud_{points, dimension} {
    // The dimension is a template argument of nanoflann's tree: with it
    // fixed at compile time the distance loops unroll (the dynamic form
    // was about a fifth slower).
    const nanoflann::KDTreeSingleIndexAdaptorParams params(16);
    if (dimension == 3)
      tree3_ = std::make_unique<Tree<3>>(3, cloud_, params);
    else
      tree2_ = std::make_unique<Tree<2>>(2, cloud_, params);
  }

  /// The k nearest samples to `query` (x, y, z), closest first. Writes up to
  /// k indices and their Euclidean distances; returns how many were found.
  std::size_t nearest(const double* query, std::size_t k, std::uint32_t* index,
                      double* distance) const {
    const std::size_t found = tree2_ ? tree2_->knnSearch(query, k, index, distance)
                                     : tree3_->knnSearch(query, k, index, distance);
    for (std::size_t i = 0; i < found; ++i) distance[i] = std::sqrt(distance[i]);
    return found;
  }

  /// Appends to `index` (cleared first) the samples closer than `radius` to
  /// `query`, in no particular order; every other sample is at least
  /// `radius` away (to rounding). `scratch` holds nanoflann's pairs.
  /// Cheaper than nearest() for many points: no sorted insertion.
  std::size_t within(const double* query, double radius,
                     std::vector<std::pair<std::uint32_t, double>>& scratch,
                     std::vector<std::uint32_t>& index) const {
    const nanoflann::SearchParams unsorted(32, 0, false);
    const double r2 = radius * radius;  // nanoflann's L2 radius is squared
    if (tree2_)
      tree2_->radiusSearch(query, r2, scratch, unsorted);
    else
      tree3_->radiusSearch(query, r2, scratch, unsorted);
    index.clear();
    for (const auto& pair : scratch) index.push_back(pair.first);
    return index.size();
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
    const nanoflann::SearchParams unsorted(32, 0.0f, false);
    if (tree2_)
      tree2_->findNeighbors(result, query, unsorted);
    else
      tree3_->findNeighbors(result, query, unsorted);
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
  template <int D>
  using Tree = nanoflann::KDTreeSingleIndexAdaptor<nanoflann::L2_Simple_Adaptor<double, Cloud>,
                                                   Cloud, D, std::uint32_t>;
  Cloud cloud_;
  std::unique_ptr<Tree<2>> tree2_;
  std::unique_ptr<Tree<3>> tree3_;
};

}  // namespace sillstone::detail
