// sillstone/summary.hpp -- data checks and summary statistics (`inspect`).
//
// The second stage of the pipeline: what a practitioner looks at before any
// variogram. Formulas and references are in docs/statistics.md.
//
// Example:
//   sillstone::DataSummary s = sillstone::summarise(samples, {});
//   sillstone::write_summary_text(std::cout, s);
//
// Thread safety: all functions are re-entrant; they share no state.
#pragma once

#include <Eigen/Core>

#include <cstddef>
#include <iosfwd>
#include <string>
#include <vector>

#include "sillstone/samples.hpp"

namespace sillstone {

/// Classical statistics of one variable (missing values skipped).
struct UnivariateStats {
  std::size_t count = 0;
  double mean = 0;
  double sd = 0;  ///< sample standard deviation, divisor n - 1
  double cv = 0;  ///< sd / mean (NaN when the mean is 0)
  double min = 0, q1 = 0, median = 0, q3 = 0,
         max = 0;       ///< quartiles: linear interpolation (type 7)
  double skewness = 0;  ///< Fisher-Pearson moment coefficient g1 = m3 / m2^(3/2)
};

/// Computes UnivariateStats of the non-NaN entries of `values`. Needs at least
/// one value; sd, cv and skewness are NaN when they are undefined (n < 2, zero spread).
UnivariateStats describe(const std::vector<double>& values);

/// The p-quantile (0 <= p <= 1) of sorted finite data by linear interpolation
/// between order statistics (Hyndman & Fan 1996, definition 7).
double quantile_sorted(const std::vector<double>& sorted, double p);

/// Options of cell declustering.
struct DeclusteringOptions {
  double cell = 0;  ///< cell size in CRS units; 0: scan sizes and choose (see docs)
  int sizes = 24;   ///< number of cell sizes scanned when cell == 0
  int offsets = 4;  ///< grid origins averaged for each size (diagonal shifts of cell/offsets)
  bool is_valid(std::string* why) const;
};

/// Result of cell declustering (Journel 1983; Isaaks & Srivastava 1989, ch. 10).
struct DeclusteringResult {
  double mean = 0;                 ///< declustered mean at the chosen cell size
  double cell = 0;                 ///< the chosen cell size
  std::string rule;                ///< how the cell size was chosen, in words
  std::vector<double> weights;     ///< per value used (sum 1), at the chosen size
  std::vector<double> scan_cells;  ///< cell sizes scanned (empty when given)
  std::vector<double> scan_means;  ///< declustered mean for each scanned size
};

/// Cell-declustered mean of `values` (NaN entries skipped) at `points`.
DeclusteringResult decluster(const std::vector<Point>& points, const std::vector<double>& values,
                             int dimension, const DeclusteringOptions& options);

/// Distances from each sample to its nearest neighbour.
struct SpacingStats {
  std::size_t count = 0;
  double min = 0, median = 0, mean = 0, max = 0;
  /// Samples whose nearest neighbour is closer than kNearFraction of the
  /// median spacing (but not at the same place): repeated samples or
  /// coordinate typos, which kriging treats as almost one point.
  static constexpr double kNearFraction = 0.01;
  std::size_t near = 0;
  /// The closest such pair (indices into the points given) and its distance.
  std::size_t closest_a = 0, closest_b = 0;
  double closest = 0;
};
SpacingStats nearest_neighbour_spacing(const std::vector<Point>& points, int dimension);

/// A suggested set of lag classes for the empirical variogram.
struct LagAdvice {
  double lag = 0;                ///< class width W
  int lags = 0;                  ///< number of classes N: (i W, (i+1) W], i = 0..N-1
  double max_distance = 0;       ///< N W
  std::size_t min_pairs = 0;     ///< fewest pairs in any class (estimated when sampled)
  bool pairs_estimated = false;  ///< true when counted on a subsample and scaled
  std::string rule;              ///< the rules of thumb applied, in words
};
LagAdvice suggest_lags(const std::vector<Point>& points, int dimension, double typical_spacing);

/// Pairwise-complete covariance and correlation of several variables: entry
/// (i, j) uses the rows where both are present, with means over those rows
/// and divisor n_ij - 1.
struct PairwiseMoments {
  Eigen::MatrixXd covariance;
  Eigen::MatrixXd correlation;
  Eigen::MatrixXi pairs;  ///< n_ij
};
PairwiseMoments pairwise_moments(const std::vector<std::vector<double>>& columns);

/// Everything `inspect` reports.
struct DataSummary {
  std::string source, layer;
  int dimension = 2;
  std::size_t samples = 0;
  LoadSummary load;
  std::string crs_name, crs_authority;  ///< empty: no CRS
  BelowDetection below_detection = BelowDetection::half;
  DuplicatePolicy duplicates = DuplicatePolicy::average;
  Point extent_min, extent_max;
  std::vector<std::string> names;
  std::vector<UnivariateStats> stats;
  std::vector<DeclusteringResult> declustered;
  SpacingStats spacing;
  LagAdvice lags;
  PairwiseMoments moments;            ///< filled when there are several variables
  std::vector<std::string> warnings;  ///< the loader's and the summary's
};

struct SummaryOptions {
  DeclusteringOptions declustering;
  bool is_valid(std::string* why) const { return declustering.is_valid(why); }
};

/// Computes the summary of a loaded SampleSet.
DataSummary summarise(const SampleSet& samples, const SummaryOptions& options);

/// Human-readable report (the `inspect` screen).
void write_summary_text(std::ostream& out, const DataSummary& summary);

/// The same as JSON (the `inspect --json` document); non-finite numbers are null.
std::string summary_to_json(const DataSummary& summary);

}  // namespace sillstone
