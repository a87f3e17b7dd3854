// Cell declustering (Journel 1983; Isaaks & Srivastava 1989, ch. 10): each sample is weighted by
// 1 / (samples in its cell x occupied cells), so clustered samples share the
// weight of their cell. Averaging over a few shifted grid origins removes most
// of the dependence on where the grid happens to start.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <unordered_map>

#include "sillstone/error.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {
namespace {

struct Used {
  std::vector<Point> points;
  std::vector<double> values;
};

// Weights at one cell size, averaged over `offsets` diagonal shifts of the origin.
std::vector<double> cell_weights(const Used& u, int dimension, double cell, int offsets,
                                 const Point& origin) {
  const std::size_t n = u.points.size();
  std::vector<double> weights(n, 0.0);
  std::vector<std::int64_t> keys(n);
  std::unordered_map<std::int64_t, int> counts;
  counts.reserve(n);
  for (int k = 0; k < offsets; ++k) {
    const double shift = cell * k / offsets;
    counts.clear();
    for (std::size_t i = 0; i < n; ++i) {
      // Cell indices are small non-negative integers (the extent over the cell
      // size is bounded by the scan), packed into one 64-bit key.
      const auto ix =
          static_cast<std::int64_t>(std::floor((u.points[i].x - origin.x + shift) / cell));
      const auto iy =
          static_cast<std::int64_t>(std::floor((u.points[i].y - origin.y + shift) / cell));
      const auto iz =
          dimension == 3
              ? static_cast<std::int64_t>(std::floor((u.points[i].z - origin.z + shift) / cell))
              : 0;
      keys[i] = (ix << 42) ^ (iy << 21) ^ iz;
      ++counts[keys[i]];
    }
    const double occupied = static_cast<double>(counts.size());
    for (std::size_t i = 0; i < n; ++i) weights[i] += 1.0 / (counts[keys[i]] * occupied * offsets);
  }
  return weights;
}

double weighted_mean(const Used& u, const std::vector<double>& w) {
  double s = 0;
  for (std::size_t i = 0; i < w.size(); ++i) s += w[i] * u.values[i];
  return s;
}

}  // namespace

bool DeclusteringOptions::is_valid(std::string* why) const {
  auto fail = [why](const char* text) {
    if (why) *why = text;
    return false;
  };
  if (!(cell >= 0) || !std::isfinite(cell)) return fail("the declustering cell size must be >= 0");
  if (sizes < 2) return fail("at least 2 declustering cell sizes are needed");
  if (offsets < 1) return fail("at least 1 declustering grid origin is needed");
  return true;
}

DeclusteringResult decluster(const std::vector<Point>& points, const std::vector<double>& values,
                             int dimension, const DeclusteringOptions& options) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError("declustering", why);
  Used u;
  for (std::size_t i = 0; i < values.size(); ++i)
    if (!std::isnan(values[i])) {
      u.points.push_back(points[i]);
      u.values.push_back(values[i]);
    }
  DeclusteringResult r;
  if (u.points.empty()) throw InputError("declustering", "no values to decluster");

  Point lo = u.points.front(), hi = lo;
  for (const auto& p : u.points) {
    lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  double span = std::max(hi.x - lo.x, hi.y - lo.y);
  if (dimension == 3) span = std::max(span, hi.z - lo.z);
  const double naive = [&] {
    double s = 0;
    for (double v : u.values) s += v;
    return s / static_cast<double>(u.values.size());
  }();

  if (options.cell > 0 && span / options.cell > 1e6)
    throw InputError("declustering",
                     "the cell size is too small for the extent (over a million "
                     "cells across)");
  if (options.cell > 0 || span <= 0 || u.points.size() < 3) {
    r.cell = options.cell > 0 ? options.cell : std::max(span, 1.0);
    r.weights = cell_weights(u, dimension, r.cell, options.offsets, lo);
    r.mean = weighted_mean(u, r.weights);
    r.rule = options.cell > 0 ? "cell size given" : "too few distinct samples to decluster";
    return r;
  }

  // Scan cell sizes geometrically from span/50 to span/2 (common practice:
  // cells from about the sample spacing up to a fraction of the site).
  const double c0 = span / 50, c1 = span / 2;
  for (int k = 0; k < options.sizes; ++k) {
    const double c = c0 * std::pow(c1 / c0, static_cast<double>(k) / (options.sizes - 1));
    r.scan_cells.push_back(c);
    r.scan_means.push_back(weighted_mean(u, cell_weights(u, dimension, c, options.offsets, lo)));
  }
  // When the declustered means fall below the raw mean the samples cluster in
  // high values (hot spots), and the minimum is taken; when they rise above
  // it, the maximum (common practice, from memory).
  const auto [mn, mx] = std::minmax_element(r.scan_means.begin(), r.scan_means.end());
  const bool high_clusters = naive - *mn >= *mx - naive;
  const auto best = high_clusters ? mn : mx;
  r.cell = r.scan_cells[static_cast<std::size_t>(best - r.scan_means.begin())];
  r.weights = cell_weights(u, dimension, r.cell, options.offsets, lo);
  r.mean = weighted_mean(u, r.weights);
  r.rule = std::string("scanned ") + std::to_string(options.sizes) +
           " cell sizes from 1/50 to 1/2 of the largest extent, " +
           std::to_string(options.offsets) + " grid origins each; took the size giving the " +
           (high_clusters ? "lowest mean (samples cluster in high values)"
                          : "highest mean (samples cluster in low values)");
  return r;
}

}  // namespace sillstone
