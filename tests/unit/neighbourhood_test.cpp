// Neighbour search against brute force on random data of several sizes
// (fixed seeds, so runs repeat).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <random>

#include "sillstone/neighbourhood.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

// Brute force: indices sorted by (metric distance, index), filtered like the
// search is documented to filter.
std::vector<std::uint32_t> brute(const std::vector<Point>& pts, const Point& q,
                                 const NeighbourhoodOptions& o, const Eigen::Matrix3d& shape,
                                 std::int64_t exclude) {
  auto tr = [&](const Point& p) {
    Eigen::Vector3d v = shape * Eigen::Vector3d(p.x, p.y, 0);
    return Point{v.x(), v.y(), 0};
  };
  const Point tq = tr(q);
  std::vector<std::pair<double, std::uint32_t>> d;
  for (std::uint32_t i = 0; i < pts.size(); ++i) {
    const Point t = tr(pts[i]);
    d.push_back({std::hypot(t.x - tq.x, t.y - tq.y), i});
  }
  std::sort(d.begin(), d.end());
  std::vector<std::uint32_t> out;
  int per[4] = {0, 0, 0, 0};
  for (const auto& [dist, i] : d) {
    if (out.size() >= static_cast<std::size_t>(o.max_points)) break;
    if (o.radius > 0 && dist > o.radius) break;
    if (static_cast<std::int64_t>(i) == exclude) continue;
    if (o.sectors > 1 && o.max_per_sector > 0) {
      const Point t = tr(pts[i]);
      const int s = (t.x - tq.x >= 0 ? 0 : 1) | (t.y - tq.y >= 0 ? 0 : 2);
      if (per[s] >= o.max_per_sector) continue;
      ++per[s];
    }
    out.push_back(i);
  }
  return out;
}

}  // namespace

TEST_CASE("neighbours equal brute force, with radius, sectors, anisotropy, exclusion",
          "[neighbourhood]") {
  Eigen::Matrix3d aniso = Eigen::Matrix3d::Identity();
  const double a = 30.0 * M_PI / 180.0;  // some rotation and a 3:1 stretch
  Eigen::Matrix3d rot;
  rot << std::cos(a), -std::sin(a), 0, std::sin(a), std::cos(a), 0, 0, 0, 1;
  aniso = Eigen::Vector3d(1.0, 3.0, 1.0).asDiagonal() * rot;
  for (std::size_t n : {5u, 60u, 700u}) {
    const auto data = test::make_synthetic(n, 100 + n, 1000.0);
    std::mt19937_64 rng(n);
    std::uniform_real_distribution<double> u(-100.0, 1100.0);
    for (const Eigen::Matrix3d& shape : {Eigen::Matrix3d(Eigen::Matrix3d::Identity()), aniso}) {
      for (int variant = 0; variant < 4; ++variant) {
        NeighbourhoodOptions o;
        o.max_points = 12;
        if (variant == 1) o.radius = 150;
        if (variant >= 2) {
          o.sectors = 4;
          o.max_per_sector = 2;
        }
        if (variant == 3) o.radius = 400;
        NeighbourSearch search(data.points, 2, o, shape);
        NeighbourSearch::Workspace ws;
        std::vector<std::uint32_t> got;
        for (int t = 0; t < 50; ++t) {
          const Point q{u(rng), u(rng), 0};
          const std::int64_t exclude = t % 3 == 0 ? static_cast<std::int64_t>(t % n) : -1;
          search.find(q, got, ws, exclude);
          INFO("n=" << n << " variant=" << variant << " t=" << t);
          CHECK(got == brute(data.points, q, o, shape, exclude));
        }
      }
    }
  }
}

TEST_CASE("a global neighbourhood holds every sample but the excluded one", "[neighbourhood]") {
  const auto data = test::make_synthetic(30, 3);
  NeighbourhoodOptions o;
  o.global = true;
  NeighbourSearch search(data.points, 2, o);
  NeighbourSearch::Workspace ws;
  std::vector<std::uint32_t> got;
  CHECK(search.find({500, 500, 0}, got, ws) == 30);
  CHECK(search.find({500, 500, 0}, got, ws, 7) == 29);
  CHECK(std::find(got.begin(), got.end(), 7u) == got.end());
}

TEST_CASE("neighbourhood options are checked", "[neighbourhood]") {
  NeighbourhoodOptions o;
  std::string why;
  CHECK(o.is_valid(2, &why));
  o.sectors = 8;
  CHECK_FALSE(o.is_valid(2, &why));
  CHECK(o.is_valid(3, &why));
  o.min_points = 30;
  CHECK_FALSE(o.is_valid(3, &why));
  CHECK_THAT(why, Catch::Contains("--min-points"));
}

// Runs of nearby targets (grid rows) are served from a cache of candidates;
// the answers must not depend on it: every target against brute force,
// including samples on a regular lattice, where many are exactly as far
// (ties go to the lower index, as in brute()).
TEST_CASE("neighbours along grid rows equal brute force, ties by index", "[neighbourhood]") {
  std::vector<std::vector<Point>> sets;
  sets.push_back(test::make_synthetic(2000, 77, 1000.0).points);
  std::vector<Point> lattice;
  for (int i = 0; i < 30; ++i)
    for (int j = 0; j < 30; ++j) lattice.push_back({i * 10.0, j * 10.0, 0});
  sets.push_back(lattice);
  for (const auto& pts : sets) {
    for (const double radius : {0.0, 25.0}) {
      NeighbourhoodOptions o;
      o.max_points = 12;
      o.radius = radius;
      const Eigen::Matrix3d identity = Eigen::Matrix3d::Identity();
      NeighbourSearch search(pts, 2, o);
      NeighbourSearch::Workspace ws;
      std::vector<std::uint32_t> got;
      for (int row = 0; row < 12; ++row)
        for (int col = 0; col < 60; ++col) {
          const Point q{-20 + col * 5.0, 300 - row * 25.0, 0};  // lattice: many ties
          std::vector<std::uint32_t> expected = brute(pts, q, o, identity, -1);
          search.find(q, got, ws);
          INFO("row " << row << " col " << col << " radius " << radius);
          CHECK(got == expected);
          std::sort(expected.begin(), expected.end());
          search.find_set(q, got, ws, col % 7 == 0 ? 3 : -1);
          if (col % 7 == 0) {
            expected = brute(pts, q, o, identity, 3);
            std::sort(expected.begin(), expected.end());
          }
          CHECK(got == expected);
        }
    }
  }
}
