// Classical statistics: moments, quantiles, pairwise covariance.
// Sums use a two-pass algorithm (mean first, then centred sums) for accuracy
// on data with a large offset, e.g. water levels near 300 m; the mean is a
// compensated sum, and moments are taken on values scaled by a power of two
// so that extreme values neither cancel nor overflow.
#include <algorithm>
#include <cmath>
#include <limits>

#include "sillstone/error.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {

double quantile_sorted(const std::vector<double>& sorted, double p) {
  const std::size_t n = sorted.size();
  if (n == 0) return std::numeric_limits<double>::quiet_NaN();
  const double h = (static_cast<double>(n) - 1) * p;  // Hyndman & Fan (1996), definition 7
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, n - 1);
  return sorted[lo] + (h - static_cast<double>(lo)) * (sorted[hi] - sorted[lo]);
}

namespace {

// Neumaier's compensated sum (Neumaier 1974): the rounding error of each
// addition is carried and added back at the end, so that sums such as
// 1e300 - 1e300 + 7 + 8 + 1 keep their small terms (16, where a plain sum
// in sorted order gives 0).
double compensated_sum(const std::vector<double>& v, double scale) {
  double sum = 0, carry = 0;
  for (double x : v) {
    const double y = x / scale;
    const double t = sum + y;
    carry += std::abs(sum) >= std::abs(y) ? (sum - t) + y : (y - t) + sum;
    sum = t;
  }
  return sum + carry;
}

// A power of two near the largest magnitude: dividing by it is exact (short
// of underflow in values 2^-1000 times smaller than the largest, which
// cannot change a sum of them) and keeps squares and cubes of values up to
// the largest double finite.
double power_of_two_scale(const std::vector<double>& v) {
  double big = 0;
  for (double x : v) big = std::max(big, std::abs(x));
  return big > 0 ? std::ldexp(1.0, std::ilogb(big)) : 1.0;
}

}  // namespace

UnivariateStats describe(const std::vector<double>& values) {
  constexpr double nan = std::numeric_limits<double>::quiet_NaN();
  std::vector<double> v;
  v.reserve(values.size());
  for (double x : values)
    if (!std::isnan(x)) v.push_back(x);
  UnivariateStats s;
  s.count = v.size();
  if (v.empty()) throw InputError("summary", "no values to describe");
  std::sort(v.begin(), v.end());
  const auto n = static_cast<double>(v.size());
  // Sums on values divided by a power of two `scale`, so that neither the
  // sum nor the squares overflow: the SD of {1e300, -1e300, 7, 8, 1} is
  // 7.07e299, finite, though its variance is not.
  const double scale = power_of_two_scale(v);
  const double mean_scaled = compensated_sum(v, scale) / n;
  s.mean = mean_scaled * scale;
  // Centred moments of the scaled values, two-pass with the correction of
  // Chan, Golub & LeVeque (1983): subtracting (sum d)^2 / n removes the
  // error of a mean that was rounded (values near 1e16 are 2 apart).
  double m1 = 0, m2 = 0, m3 = 0;
  for (double x : v) {
    const double d = x / scale - mean_scaled;
    m1 += d;
    m2 += d * d;
    m3 += d * d * d;
  }
  m2 = std::max(0.0, m2 - m1 * m1 / n);
  s.sd = v.size() > 1 ? std::sqrt(m2 / (n - 1)) * scale : nan;
  s.cv = s.mean != 0 && v.size() > 1 ? s.sd / s.mean : nan;
  m2 /= n;
  m3 /= n;
  s.skewness = m2 > 0 ? m3 / std::pow(m2, 1.5) : nan;  // scale-free
  s.min = v.front();
  s.max = v.back();
  s.q1 = quantile_sorted(v, 0.25);
  s.median = quantile_sorted(v, 0.5);
  s.q3 = quantile_sorted(v, 0.75);
  return s;
}

PairwiseMoments pairwise_moments(const std::vector<std::vector<double>>& columns) {
  const auto m = static_cast<Eigen::Index>(columns.size());
  PairwiseMoments out;
  out.covariance = Eigen::MatrixXd::Constant(m, m, std::numeric_limits<double>::quiet_NaN());
  out.correlation = out.covariance;
  out.pairs = Eigen::MatrixXi::Zero(m, m);
  for (Eigen::Index i = 0; i < m; ++i) {
    for (Eigen::Index j = i; j < m; ++j) {
      const auto& a = columns[static_cast<std::size_t>(i)];
      const auto& b = columns[static_cast<std::size_t>(j)];
      double sa = 0, sb = 0;
      std::size_t n = 0;
      for (std::size_t r = 0; r < a.size(); ++r)
        if (!std::isnan(a[r]) && !std::isnan(b[r])) {
          sa += a[r];
          sb += b[r];
          ++n;
        }
      out.pairs(i, j) = out.pairs(j, i) = static_cast<int>(n);
      if (n < 2) continue;
      const double ma = sa / static_cast<double>(n), mb = sb / static_cast<double>(n);
      double caa = 0, cbb = 0, cab = 0;
      for (std::size_t r = 0; r < a.size(); ++r)
        if (!std::isnan(a[r]) && !std::isnan(b[r])) {
          caa += (a[r] - ma) * (a[r] - ma);
          cbb += (b[r] - mb) * (b[r] - mb);
          cab += (a[r] - ma) * (b[r] - mb);
        }
      const double denom = static_cast<double>(n) - 1;
      out.covariance(i, j) = out.covariance(j, i) = cab / denom;
      if (caa > 0 && cbb > 0)
        out.correlation(i, j) = out.correlation(j, i) = cab / std::sqrt(caa * cbb);
    }
  }
  return out;
}

}  // namespace sillstone
