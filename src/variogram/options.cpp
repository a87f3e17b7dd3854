// VariogramOptions: the validity check and the lag classes.
#include <algorithm>
#include <cmath>

#include "sillstone/format.hpp"
#include "sillstone/variogram.hpp"

namespace sillstone {
namespace {

constexpr int kMaxLags = 10000;
constexpr int kMaxSurfaceHalf = 250;  // at most 501 x 501 surface cells
constexpr int kMaxThreads = 1024;

// N when W and D are both given: D / W, allowing for rounding in D / W.
int lags_from(double lag, double max_distance) {
  const double n = std::floor(max_distance / lag + 1e-9);
  return n > kMaxLags ? kMaxLags + 1 : static_cast<int>(n);  // no overflowing conversion
}

std::string number(double x) { return format_for_people(x, 6); }

}  // namespace

bool VariogramOptions::is_valid(std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  auto positive_or_zero = [](double x) { return std::isfinite(x) && x >= 0; };
  if (!positive_or_zero(lag)) return fail("--lag must be a positive distance");
  if (!positive_or_zero(max_distance)) return fail("--max-distance must be a positive distance");
  if (lags < 0 || lags > kMaxLags)
    return fail("--lags must be between 1 and " + std::to_string(kMaxLags));
  if (lag == 0 && max_distance == 0)
    return fail("no lag classes were given: give --lag W with --lags N, or --max-distance D");
  if (lag > 0 && max_distance > 0) {
    const int n = lags > 0 ? lags : lags_from(lag, max_distance);
    if (n < 1) return fail("--max-distance is shorter than one --lag");
    if (n > kMaxLags) return fail("more than " + std::to_string(kMaxLags) + " lag classes");
    if (lags > 0 && std::abs(lags * lag - max_distance) > 1e-9 * max_distance)
      return fail("--lag " + number(lag) + " times --lags " + std::to_string(lags) +
                  " is not --max-distance " + number(max_distance) + "; give two of the three");
  }

  for (double a : azimuths)
    if (!(a >= 0 && a < 360)) return fail("azimuth " + number(a) + " is not in 0..360 (degrees)");
  for (double d : dips)
    if (!(d >= 0 && d <= 90))
      return fail("dip " + number(d) +
                  " is not in 0..90 (degrees, positive down; an upward "
                  "direction is the downward one at azimuth + 180)");
  // Pairs are undirected: azimuths a and a + 180 are the same horizontal direction.
  const double period = dips.empty() ? 180 : 360;
  for (std::size_t i = 0; i < azimuths.size(); ++i)
    for (std::size_t j = 0; j < i; ++j)
      if (std::fmod(azimuths[i], period) == std::fmod(azimuths[j], period))
        return fail("azimuth " + number(azimuths[i]) + " repeats azimuth " + number(azimuths[j]) +
                    (dips.empty() ? " (pairs have no sense of direction)" : ""));
  for (std::size_t i = 0; i < dips.size(); ++i)
    for (std::size_t j = 0; j < i; ++j)
      if (dips[i] == dips[j]) return fail("dip " + number(dips[i]) + " is given twice");
  if (!(angle_tolerance > 0 && angle_tolerance < 90))
    return fail(
        "--angle-tolerance must be between 0 and 90 degrees (exclusive); for all "
        "azimuths give no --azimuths");
  if (!(dip_tolerance > 0 && dip_tolerance < 90))
    return fail("--dip-tolerance must be between 0 and 90 degrees (exclusive)");
  if (!(bandwidth > 0)) return fail("--bandwidth must be a positive distance");
  if (!(vertical_bandwidth > 0)) return fail("--vertical-bandwidth must be a positive distance");
  const bool vertical = std::find(dips.begin(), dips.end(), 90.0) != dips.end();
  if (std::isfinite(bandwidth) && azimuths.empty() && !vertical)
    return fail("--bandwidth applies to directions: give --azimuths (or --dips 90)");
  if (std::isfinite(vertical_bandwidth) && azimuths.empty() && dips.empty())
    return fail("--vertical-bandwidth applies to directions: give --azimuths or --dips");

  if (estimator == VariogramEstimator::cressie_hawkins &&
      statistic != VariogramStatistic::semivariance)
    return fail(
        "--estimator cressie-hawkins estimates semivariance; it does not apply to "
        "--statistic covariance or correlogram");
  if (!std::isfinite(log_offset)) return fail("--log-offset must be a finite number");
  if (log_offset != 0 && transform != Transform::log)
    return fail("--log-offset applies only to --transform log");

  if (!positive_or_zero(surface_cell)) return fail("--surface-cell must be a positive distance");
  if (surface) {
    const std::vector<double> edges = lag_edges();
    const double cell = surface_cell > 0 ? surface_cell : edges[1];
    if (edges.back() / cell > kMaxSurfaceHalf)
      return fail("the variogram surface would have more than " +
                  std::to_string(2 * kMaxSurfaceHalf + 1) +
                  " cells a side; use a larger "
                  "--surface-cell");
  }
  // Each thread holds its own workspace: a typo such as 100000 would try to
  // start that many threads before any work.
  if (threads < 0 || threads > kMaxThreads)
    return fail("--threads must be between 0 (every core) and " + std::to_string(kMaxThreads));
  return true;
}

std::vector<double> VariogramOptions::lag_edges() const {
  int n = lags;
  if (n == 0) n = lag > 0 && max_distance > 0 ? lags_from(lag, max_distance) : kDefaultLags;
  std::vector<double> edges(static_cast<std::size_t>(n) + 1);
  // With D given, i D / N is exact whenever the bound is a round number.
  const bool by_distance = max_distance > 0 && (lag == 0 || lags > 0);
  for (int i = 0; i <= n; ++i)
    edges[static_cast<std::size_t>(i)] = by_distance ? i * max_distance / n : i * lag;
  return edges;
}

std::string value_column(VariogramStatistic statistic) {
  switch (statistic) {
    case VariogramStatistic::covariance:
      return "covariance";
    case VariogramStatistic::correlogram:
      return "correlation";
    case VariogramStatistic::semivariance:
      break;
  }
  return "semivariance";
}

}  // namespace sillstone
