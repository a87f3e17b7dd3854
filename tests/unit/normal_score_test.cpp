// The normal-score transform: Phi^-1 and van der Waerden scores.
#include <catch2/catch.hpp>

#include <cmath>
#include <random>

#include "sillstone/normal_score.hpp"
#include "sillstone/transform.hpp"

using namespace sillstone;

TEST_CASE("normal_quantile inverts the normal distribution function", "[normal_score]") {
  CHECK(normal_quantile(0.5) == 0.0);
  // 1.959963984540054: the two-sided 5% point of the standard normal (from memory).
  CHECK(normal_quantile(0.975) == Approx(1.959963984540054).epsilon(1e-14));
  std::mt19937_64 rng(7);
  std::uniform_real_distribution<double> u(-20.0, -1e-4);  // log10 p
  for (int k = 0; k < 2000; ++k) {
    const double p = std::pow(10.0, u(rng));
    const double x = normal_quantile(p);
    // Phi(x) = erfc(-x / sqrt 2) / 2 must give back p, to rounding.
    CHECK(0.5 * std::erfc(-x / std::sqrt(2.0)) == Approx(p).epsilon(1e-13));
  }
  for (int k = 1; k < 512; ++k) {  // p = k / 1024 and 1 - p are exact
    const double p = k / 1024.0;
    CHECK(normal_quantile(1 - p) == -normal_quantile(p));
  }
  CHECK(std::isnan(normal_quantile(0.0)));
  CHECK(std::isnan(normal_quantile(1.0)));
}

TEST_CASE("normal scores are (r - 0.5) / n quantiles, symmetric, ordered", "[normal_score]") {
  const std::vector<double> values = {7.0, 1.0, 30.0, 4.0, 2.0};
  const NormalScores ns = normal_scores(values);
  // Ranks 4, 1, 5, 3, 2 of n = 5.
  CHECK(ns.scores[1] == normal_quantile(0.1));
  CHECK(ns.scores[4] == normal_quantile(0.3));
  CHECK(ns.scores[3] == 0.0);
  CHECK(ns.scores[0] == normal_quantile(0.7));
  CHECK(ns.scores[2] == normal_quantile(0.9));
  CHECK(ns.scores[2] == Approx(-ns.scores[1]).epsilon(1e-15));
  double sum = 0;
  for (double s : ns.scores) sum += s;
  CHECK(std::abs(sum) < 1e-14);
  CHECK(ns.table.values == std::vector<double>({1.0, 2.0, 4.0, 7.0, 30.0}));
}

TEST_CASE("tied values share the score of their mid-rank, missing values stay missing",
          "[normal_score]") {
  const std::vector<double> values = {2.0, 1.0, std::nan(""), 2.0, 3.0};
  const NormalScores ns = normal_scores(values);
  // Four values: 1 has rank 1, the two 2s ranks 2 and 3 (mid-rank 2.5), 3 rank 4.
  CHECK(ns.scores[1] == normal_quantile(0.125));
  CHECK(ns.scores[0] == normal_quantile(0.5));
  CHECK(ns.scores[3] == ns.scores[0]);
  CHECK(ns.scores[4] == normal_quantile(0.875));
  CHECK(std::isnan(ns.scores[2]));
  CHECK(ns.table.values.size() == 3);
}

TEST_CASE("the table takes scores back to data values", "[normal_score]") {
  const NormalScores ns = normal_scores({5.0, 1.0, 3.0, 9.0});
  for (std::size_t k = 0; k < ns.table.values.size(); ++k)
    CHECK(ns.table.back_transform(ns.table.scores[k]) == ns.table.values[k]);
  // Half way between the scores of 3 and 5 is half way between the values.
  const double mid = (ns.table.scores[1] + ns.table.scores[2]) / 2;
  CHECK(ns.table.back_transform(mid) == Approx(4.0).epsilon(1e-14));
  CHECK(ns.table.back_transform(-10) == 1.0);  // no tail model: clamped
  CHECK(ns.table.back_transform(10) == 9.0);
}

TEST_CASE("a value transform goes forward and says what it is", "[normal_score]") {
  const ValueTransform none;
  CHECK(none.forward(-3.5) == -3.5);
  CHECK(none.describe() == "none");
  const ValueTransform log0 = ValueTransform::logarithm(0), log5 = ValueTransform::logarithm(0.5);
  CHECK(log0.describe() == "log(value)");
  CHECK(log5.describe() == "log(value + 0.5)");
  CHECK(log5.forward(1.5) == std::log(2.0));
  CHECK(std::isnan(log0.forward(0)));  // log(0): outside the domain
  CHECK(log5.accepts(-0.25));
  CHECK_FALSE(log5.accepts(-0.5));
  CHECK_FALSE(log0.same_as(log5));
  CHECK(log5.same_as(ValueTransform::logarithm(0.5)));
  // Normal scores: forward is the inverse of the table's back-transform.
  const NormalScores ns = normal_scores({3.1, 0.4, 7.9, 0.4, 12.0});
  ValueTransform t;
  t.kind = Transform::normal_score;
  t.table = ns.table;
  const double lo = t.table.scores.front(), hi = t.table.scores.back();
  for (double score = lo; score <= hi; score += (hi - lo) / 17)
    CHECK(t.forward(t.table.back_transform(score)) == Approx(score).epsilon(1e-12));
  CHECK(t.forward(-100) == t.table.scores.front());  // ends held
  CHECK(t.describe() == "normal-score");
}
