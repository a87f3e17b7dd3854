// Axis ticks, tick labels, scale-bar lengths and histogram bin counts.
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <utility>

#include "sillstone/plots.hpp"
#include "sillstone/summary.hpp"  // quantile_sorted: the project's one quantile definition

namespace sillstone {

AxisTicks nice_ticks(double lo, double hi, int target) {
  if (!std::isfinite(lo) || !std::isfinite(hi)) lo = 0, hi = 1;
  if (lo > hi) std::swap(lo, hi);
  if (hi - lo <= 1e-12 * std::max(std::abs(lo), std::abs(hi))) {
    const double d = lo == 0 ? 0.5 : 0.05 * std::abs(lo);
    lo -= d;
    hi += d;
  }
  target = std::max(target, 1);
  constexpr double eps = 1e-9;  // lets a bound that is already a whole step stay put
  const double e = std::floor(std::log10((hi - lo) / target));
  AxisTicks best;
  double best_score = 1e300;
  for (double k = e - 1; k <= e + 1; ++k) {
    for (double m : {1.0, 2.0, 5.0}) {
      const double step = m * std::pow(10.0, k);
      const double first = std::floor(lo / step + eps), last = std::ceil(hi / step - eps);
      const double n = last - first;
      // Closest to the target number of intervals; among equals, the tighter axis.
      const double score = std::abs(n - target) + 1e-6 * (n * step) / (hi - lo);
      if (score < best_score) {
        best_score = score;
        best.step = step;
        best.lo = first * step;
        best.hi = last * step;
        best.values.clear();
        for (double i = first; i <= last; ++i) best.values.push_back(i * step);
      }
    }
  }
  return best;
}

namespace {

// Groups the digits of the integer part of a fixed-point number in threes
// with a narrow no-break space, from five integer digits up.
std::string group_thousands(const std::string& fixed) {
  const std::size_t sign = (!fixed.empty() && fixed[0] == '-') ? 1 : 0;
  std::size_t end = fixed.find('.');
  if (end == std::string::npos) end = fixed.size();
  const std::size_t digits = end - sign;
  if (digits < 5) return fixed;
  std::string out = fixed.substr(0, sign);
  for (std::size_t i = 0; i < digits; ++i) {
    if (i > 0 && (digits - i) % 3 == 0) out += "\u202f";
    out += fixed[sign + i];
  }
  return out + fixed.substr(end);
}

}  // namespace

std::string format_number(double value, double step) {
  if (!std::isfinite(value)) return "";
  char buf[64];
  const double a = std::abs(value);
  if (!(step > 0) || !std::isfinite(step))
    step = a > 0 ? std::pow(10.0, std::floor(std::log10(a)) - 3) : 1;
  if (a >= 1e12 || step < 1e-6) {
    if (a == 0) return "0";
    const int digits = std::max(
        0, static_cast<int>(std::floor(std::log10(a)) - std::floor(std::log10(step) + 1e-9)));
    std::snprintf(buf, sizeof buf, "%.*e", std::min(digits, 15), value);
    return buf;
  }
  const int decimals = std::max(0, static_cast<int>(std::ceil(-std::log10(step) - 1e-9)));
  std::snprintf(buf, sizeof buf, "%.*f", decimals, value);
  std::string s = buf;
  if (s[0] == '-' && s.find_first_not_of("-0.") == std::string::npos) s.erase(0, 1);
  return group_thousands(s);
}

double nice_length(double max_length) {
  if (!(max_length > 0) || !std::isfinite(max_length)) return 0;
  const double p = std::pow(10.0, std::floor(std::log10(max_length)));
  for (double m : {5.0, 2.0, 1.0})
    if (m * p <= max_length * (1 + 1e-12)) return m * p;
  return p;
}

int histogram_bins(const std::vector<double>& values) {
  std::vector<double> v;
  for (double x : values)
    if (std::isfinite(x)) v.push_back(x);
  std::sort(v.begin(), v.end());
  if (v.size() < 2 || v.front() == v.back()) return 1;
  const double n = static_cast<double>(v.size());
  const double iqr = quantile_sorted(v, 0.75) - quantile_sorted(v, 0.25);
  const double width = 2 * iqr / std::cbrt(n);  // Freedman & Diaconis (1981)
  const double bins = width > 0 ? std::ceil((v.back() - v.front()) / width)
                                : std::ceil(std::log2(n)) + 1;  // Sturges (1926)
  return static_cast<int>(std::clamp(bins, 5.0, 50.0));
}

}  // namespace sillstone
