// The pair enumeration of the variogram (src/variogram/pair_cells.hpp)
// against a brute-force double loop: every pair closer than the reach must be
// offered exactly once, whatever the layout of the samples.
#include <catch2/catch.hpp>

#include <cmath>
#include <map>
#include <random>
#include <utility>
#include <vector>

#include "variogram/pair_cells.hpp"

using namespace sillstone;

namespace {

double distance(const Point& a, const Point& b) {
  const double dx = a.x - b.x, dy = a.y - b.y, dz = a.z - b.z;
  return std::sqrt(dx * dx + dy * dy + dz * dz);
}

// Checks that the runs offer each pair within `reach` exactly once and every
// offered pair once at most.
void check_pairs(const std::vector<Point>& points, int dimension, double reach) {
  const detail::PairCells cells(points, dimension, reach);
  const auto& order = cells.order();
  REQUIRE(order.size() == points.size());
  std::map<std::pair<std::uint32_t, std::uint32_t>, int> offered;
  for (std::size_t s = 0; s < points.size(); ++s) {
    const Point& p = points[order[s]];
    cells.for_each_run(s, p.y, p.z, [&](std::size_t from, std::size_t to) {
      for (std::size_t t = from; t < to; ++t) {
        std::uint32_t a = order[s], b = order[t];
        REQUIRE(a != b);
        if (a > b) std::swap(a, b);
        ++offered[{a, b}];
      }
    });
  }
  std::size_t within = 0;
  for (std::uint32_t i = 0; i < points.size(); ++i)
    for (std::uint32_t j = i + 1; j < points.size(); ++j) {
      const auto it = offered.find({i, j});
      const int times = it == offered.end() ? 0 : it->second;
      if (distance(points[i], points[j]) <= reach) {
        ++within;
        INFO("pair " << i << ", " << j << " at " << distance(points[i], points[j]));
        REQUIRE(times == 1);
      } else {
        REQUIRE(times <= 1);
      }
    }
  CHECK(within > 0);
}

}  // namespace

TEST_CASE("pair cells: random 2D samples, reaches small and large", "[pair_cells]") {
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> u(0, 1000);
  std::vector<Point> points(600);
  for (auto& p : points) p = {u(rng), u(rng), 0};
  for (double reach : {7.0, 60.0, 333.0, 2000.0}) check_pairs(points, 2, reach);
}

TEST_CASE("pair cells: random 3D samples, including the last row of cells", "[pair_cells]") {
  std::mt19937_64 rng(12);
  std::uniform_real_distribution<double> u(0, 200);
  std::vector<Point> points(500);
  for (auto& p : points) p = {u(rng), u(rng), u(rng) / 4};
  for (double reach : {9.0, 25.0, 70.0}) check_pairs(points, 3, reach);
}

TEST_CASE("pair cells: drill holes, lines, coincident points, UTM offsets", "[pair_cells]") {
  std::vector<Point> holes;  // vertical holes 2 m composites, 40 m apart
  for (int h = 0; h < 6; ++h)
    for (int k = 0; k < 60; ++k) holes.push_back({40.0 * (h % 3), 40.0 * (h / 3), -2.0 * k});
  check_pairs(holes, 3, 10);
  check_pairs(holes, 3, 41);
  std::vector<Point> line;  // along y, with repeated positions and pairs exactly at the reach
  for (int k = 0; k < 300; ++k) line.push_back({5, 5000000.0 + 2.5 * (k / 2), 0});
  check_pairs(line, 2, 10);
  std::vector<Point> diagonal;
  for (int k = 0; k < 300; ++k) diagonal.push_back({600000.0 + 3.0 * k, 4000000.0 + 3.0 * k, 0});
  check_pairs(diagonal, 2, 12.5);
}
