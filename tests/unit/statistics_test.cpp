// Classical statistics and the scale behaviour of covariance.
#include <catch2/catch.hpp>

#include <cmath>

#include "sillstone/summary.hpp"
#include "test_support.hpp"

using namespace sillstone;

TEST_CASE("describe() on a hand-checkable sample", "[statistics]") {
  // 1..5: mean 3, sample variance 2.5, quartiles 2, 3, 4 (type 7), symmetric.
  const auto s = describe({5, 1, 4, std::nan(""), 2, 3});
  CHECK(s.count == 5);
  CHECK(s.mean == 3.0);
  CHECK(s.sd == Approx(std::sqrt(2.5)).epsilon(1e-15));
  CHECK(s.cv == Approx(std::sqrt(2.5) / 3).epsilon(1e-15));
  CHECK(s.q1 == 2.0);
  CHECK(s.median == 3.0);
  CHECK(s.q3 == 4.0);
  CHECK(s.skewness == Approx(0.0).margin(1e-15));
}

TEST_CASE("skewness of a right-skewed sample is positive, and exact", "[statistics]") {
  // {0, 0, 3}: mean 1, m2 = (1+1+4)/3 = 2, m3 = (-1-1+8)/3 = 2, g1 = 2 / 2^1.5.
  const auto s = describe({0, 0, 3});
  CHECK(s.skewness == Approx(2.0 / std::pow(2.0, 1.5)).epsilon(1e-14));
}

TEST_CASE("quantiles interpolate between order statistics", "[statistics]") {
  const std::vector<double> v{10, 20, 30, 40};
  CHECK(quantile_sorted(v, 0.0) == 10.0);
  CHECK(quantile_sorted(v, 1.0) == 40.0);
  CHECK(quantile_sorted(v, 0.25) == Approx(17.5));  // h = 0.75
}

TEST_CASE("pairwise-complete covariance uses the rows where both are present", "[statistics]") {
  const double na = std::nan("");
  const PairwiseMoments m = pairwise_moments({{1, 2, 3, na}, {2, 4, na, 8}});
  CHECK(m.pairs(0, 1) == 2);
  CHECK(m.covariance(0, 1) == Approx(1.0));  // rows 1-2: (1,2),(2,4): cov = 0.5*1*2 = 1
  CHECK(m.correlation(0, 1) == Approx(1.0));
  CHECK(m.covariance(0, 0) == Approx(1.0));                         // variance of 1,2,3
  CHECK(m.covariance(1, 1) == Approx(9.3333333333).epsilon(1e-9));  // variance of 2,4,8
}

// The property the whole field rests on (a textbook property of covariance):
// Cov(aX, bY) = ab Cov(X, Y), and the correlation is unchanged (up to the sign
// of ab). Checked on generated data with several scale factors.
TEST_CASE("scaling variables scales covariance by a*b and leaves correlation", "[statistics]") {
  const auto data = test::make_synthetic(500, 20261201);
  const PairwiseMoments base = pairwise_moments({data.a, data.b});
  REQUIRE(base.correlation(0, 1) > 0.5);  // the generator makes them correlated
  for (const auto& [a, b] : std::vector<std::pair<double, double>>{
           {1000.0, 1.0}, {0.001, 2.5}, {-3.0, 7.0}, {1e6, 1e-6}}) {
    std::vector<double> xa = data.a, xb = data.b;
    for (auto& v : xa) v *= a;
    for (auto& v : xb) v *= b;
    const PairwiseMoments scaled = pairwise_moments({xa, xb});
    CHECK(scaled.covariance(0, 1) == Approx(a * b * base.covariance(0, 1)).epsilon(1e-12));
    CHECK(scaled.covariance(0, 0) == Approx(a * a * base.covariance(0, 0)).epsilon(1e-12));
    CHECK(scaled.correlation(0, 1) ==
          Approx((a * b > 0 ? 1 : -1) * base.correlation(0, 1)).epsilon(1e-12));
  }
}

TEST_CASE("shifting a variable leaves its covariance unchanged", "[statistics]") {
  const auto data = test::make_synthetic(300, 7);
  std::vector<double> shifted = data.a;
  for (auto& v : shifted) v += 1e6;  // e.g. levels above a datum
  const auto base = pairwise_moments({data.a, data.b});
  const auto moved = pairwise_moments({shifted, data.b});
  CHECK(moved.covariance(0, 1) == Approx(base.covariance(0, 1)).epsilon(1e-9));
  CHECK(moved.covariance(0, 0) == Approx(base.covariance(0, 0)).epsilon(1e-9));
}
