// Declustering, nearest-neighbour spacing and lag advice.
#include <catch2/catch.hpp>

#include <cmath>

#include "sillstone/error.hpp"
#include "sillstone/summary.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

// A 10 x 10 grid at 100 m with value 10, plus a tight cluster of 60 samples
// with value 100 around one grid node: the raw mean is pulled far up, the
// declustered mean should come back near the grid's.
void clustered_site(std::vector<Point>* p, std::vector<double>* v) {
  for (int i = 0; i < 10; ++i)
    for (int j = 0; j < 10; ++j) {
      p->push_back({i * 100.0 + 50, j * 100.0 + 50, 0});
      v->push_back(10.0);
    }
  for (int k = 0; k < 60; ++k) {
    p->push_back({450 + 3.0 * (k % 8), 450 + 3.0 * (k / 8), 0});
    v->push_back(100.0);
  }
}

}  // namespace

TEST_CASE("cell declustering undoes preferential clustering", "[summary]") {
  std::vector<Point> p;
  std::vector<double> v;
  clustered_site(&p, &v);
  const double raw = describe(v).mean;  // (100*10 + 60*100) / 160 = 43.75
  CHECK(raw == Approx(43.75));
  const DeclusteringResult d = decluster(p, v, 2, {});
  CHECK(d.mean < 15.0);  // the grid alone has mean 10; one of ~100 cells holds the cluster
  CHECK(d.cell > 30.0);
  CHECK_THAT(d.rule, Catch::Contains("lowest"));
  double total = 0;
  for (double w : d.weights) total += w;
  CHECK(total == Approx(1.0).epsilon(1e-12));
}

TEST_CASE("declustering a regular grid changes nothing", "[summary]") {
  std::vector<Point> p;
  std::vector<double> v;
  for (int i = 0; i < 12; ++i)
    for (int j = 0; j < 12; ++j) {
      p.push_back({i * 10.0, j * 10.0, 0});
      v.push_back(i + 0.5 * j);
    }
  DeclusteringOptions o;
  o.cell = 10.0;  // one sample per cell whatever the origin shift
  CHECK(decluster(p, v, 2, o).mean == Approx(describe(v).mean).epsilon(1e-12));
}

TEST_CASE("declustering options are checked", "[summary]") {
  DeclusteringOptions o;
  o.cell = -1;
  std::string why;
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THROWS_AS(decluster({{0, 0, 0}}, {1.0}, 2, o), InputError);
}

TEST_CASE("nearest-neighbour spacing of a square grid is its step", "[summary]") {
  std::vector<Point> p;
  for (int i = 0; i < 20; ++i)
    for (int j = 0; j < 20; ++j) p.push_back({i * 25.0, j * 25.0, 0});
  const SpacingStats s = nearest_neighbour_spacing(p, 2);
  CHECK(s.min == Approx(25.0));
  CHECK(s.median == Approx(25.0));
  CHECK(s.max == Approx(25.0));
}

TEST_CASE("suggested lags hold enough pairs and reach half the extent", "[summary]") {
  const auto data = test::make_synthetic(400, 11, 1000.0);
  const SpacingStats s = nearest_neighbour_spacing(data.points, 2);
  const LagAdvice a = suggest_lags(data.points, 2, s.median);
  CHECK(a.lags >= 5);
  CHECK(a.lags <= 25);
  CHECK(a.min_pairs >= 30);               // common practice, see lag_advice.cpp
  CHECK(a.max_distance <= 500.0 + 1e-9);  // about half the largest extent
  CHECK(a.max_distance > 300.0);
  CHECK(a.max_distance == Approx(a.lag * a.lags));
  CHECK_FALSE(a.pairs_estimated);
}
