// sillstone/variogram.hpp -- the empirical variogram (`sillstone variogram`).
//
// The third stage of the pipeline: from samples to semivariance (or
// covariance, or correlation) by lag class and direction. Formulas,
// conventions and references are in docs/variogram.md.
//
// Conventions:
//  - Lag classes are (lag_from, lag_to]: a pair at distance d belongs to the
//    class with lag_from < d <= lag_to; pairs at distance 0 are not counted.
//    Distances are Euclidean in the samples' CRS units (3D when z is given).
//  - Azimuth: degrees clockwise from north. Dip: degrees below the
//    horizontal, positive down. Tolerances are inclusive; bandwidths are
//    half-widths.
//
// Example:
//   sillstone::VariogramOptions opt;
//   opt.lag = 25;  opt.lags = 12;  opt.azimuths = {0, 45, 90, 135};
//   sillstone::EmpiricalVariogram v = sillstone::compute_variogram(samples, opt);
//   sillstone::write_variogram("variogram.csv", v, /*overwrite=*/false);
//
// Thread safety: compute_variogram runs its own OpenMP threads (see
// VariogramOptions::threads); all functions are re-entrant.
#pragma once

#include <cstdint>
#include <functional>
#include <iosfwd>
#include <limits>
#include <optional>
#include <string>
#include <vector>

#include "sillstone/normal_score.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/transform.hpp"

namespace sillstone {

/// How the semivariance of a class is estimated from its pairs.
enum class VariogramEstimator : int {
  matheron,         ///< gamma = sum (z_head - z_tail)^2 / (2 N)
  cressie_hawkins,  ///< robust: 2 gamma = (mean |dz|^(1/2))^4 / (0.457 + 0.494 / N)
};

/// What is computed for each class.
enum class VariogramStatistic : int {
  semivariance,  ///< gamma(h), with the chosen estimator
  covariance,    ///< C(h) = mean(z_head z_tail) - m_head m_tail
  correlogram,   ///< rho(h) = C(h) / (s_head s_tail)
};

/// Settings of the empirical variogram. Defaults are those of the command line.
struct VariogramOptions {
  static constexpr int kDefaultLags = 15;  ///< N when only the maximum distance fixes the classes

  std::string value;  ///< value column; empty: the first of the SampleSet

  // Lag classes (i W, (i+1) W], i = 0..N-1. Give W and N, or D alone
  // (W = D / N with N = kDefaultLags), or D and N, or W and D (N = D / W).
  double lag = 0;           ///< W, class width in CRS units; 0: derived
  int lags = 0;             ///< N, number of classes; 0: derived
  double max_distance = 0;  ///< D, the upper bound of the last class; 0: N W

  // Directions. No azimuth and no dip: omnidirectional.
  std::vector<double> azimuths;   ///< degrees clockwise from north, 0 <= a < 360
  double angle_tolerance = 22.5;  ///< degrees either side of each azimuth, 0 < t < 90
  double bandwidth = std::numeric_limits<double>::infinity();  ///< horizontal half-width
  std::vector<double> dips;     ///< 3D only: degrees down from horizontal, 0..90
  double dip_tolerance = 22.5;  ///< degrees either side of each dip, 0 < t < 90
  double vertical_bandwidth = std::numeric_limits<double>::infinity();  ///< vertical half-width

  VariogramEstimator estimator = VariogramEstimator::matheron;
  VariogramStatistic statistic = VariogramStatistic::semivariance;
  Transform transform = Transform::none;
  double log_offset = 0;  ///< C in log(value + C), for Transform::log

  bool surface = false;     ///< also compute the 2D variogram surface
  double surface_cell = 0;  ///< its cell size; 0: the lag width W

  int threads = 0;  ///< OpenMP threads; 0: every core. Results do not depend on it.

  /// True when the options are complete and consistent; otherwise `why` says
  /// what is wrong (in words fit for an error line).
  bool is_valid(std::string* why) const;

  /// The N + 1 class bounds 0, W, 2W, ..., D. Requires is_valid().
  std::vector<double> lag_edges() const;
};

/// One lag class in one direction: a row of the variogram table.
struct VariogramRow {
  std::optional<double> azimuth;  ///< empty: any azimuth (omnidirectional or vertical)
  std::optional<double> dip;      ///< empty: 2D, or any dip (omnidirectional)
  double lag_from = 0, lag_to = 0;
  double mean_distance = std::numeric_limits<double>::quiet_NaN();  ///< NaN without pairs
  std::uint64_t pairs = 0;
  double value = std::numeric_limits<double>::quiet_NaN();  ///< NaN without pairs or when undefined
};

/// The 2D variogram surface: semivariance on a square grid of lag vectors
/// (dx, dy), cells centred on (i c, j c) for i, j = -m..m. Each pair counts at
/// h and -h, so the surface is point-symmetric.
struct VariogramSurface {
  double cell = 0;             ///< c, in CRS units
  int half = 0;                ///< m
  std::vector<double> values;  ///< (2m+1)^2, row by row from dy = +m c (north) down; NaN: no pair
  std::vector<std::uint64_t> pairs;  ///< the same layout
};

/// How the computation went, for the user and for the report.
struct VariogramSummary {
  std::size_t samples = 0;  ///< samples with a value in the column used
  std::uint64_t pairs = 0;  ///< pairs counted over all classes and directions
  double mean = std::numeric_limits<double>::quiet_NaN();      ///< of the values used (transformed)
  double variance = std::numeric_limits<double>::quiet_NaN();  ///< the same, divisor n - 1
  std::size_t empty_classes = 0;                               ///< classes without a pair
  std::size_t sparse_classes = 0;                              ///< classes with 1..29 pairs
  std::string transform;              ///< e.g. "none", "log(value + 0.5)", "normal-score"
  int threads = 0;                    ///< threads used
  double seconds = 0;                 ///< wall time of the pair enumeration
  std::vector<std::string> notes;     ///< facts worth saying, e.g. the transform applied
  std::vector<std::string> warnings;  ///< the loader's and ours; each one sentence
};

/// The empirical variogram.
struct EmpiricalVariogram {
  std::string source;  ///< samples path (empty when read from a variogram file)
  std::string value;   ///< the value column used
  int dimension = 2;
  VariogramOptions options;        ///< as used: lag, lags and max_distance all filled in
  std::vector<VariogramRow> rows;  ///< direction by direction, classes in order
  NormalScoreTable normal_scores;  ///< with Transform::normal_score: the back-transform table
  std::optional<VariogramSurface> surface;
  VariogramSummary summary;
  /// False for a CSV table without the transform,log_offset columns (written
  /// by earlier versions): its transform is not known.
  bool transform_recorded = true;
};

/// The transform the variogram's values were computed on (kind, log offset,
/// normal-score table): the one model.json records and kriging undoes.
ValueTransform transform_of(const EmpiricalVariogram& variogram);

/// Called with the fraction done (0..1), from one thread at a time, in increasing order.
using Progress = std::function<void(double)>;

/// Computes the empirical variogram of one value column of `samples`.
/// Throws InputError (component "variogram") for invalid options, for too few
/// samples, for dips or a surface that do not fit the data's dimension, and
/// for values that the transform cannot take (naming the file, row and column).
/// Pairs are enumerated with a k-d tree; results are bit-for-bit identical
/// for any thread count.
EmpiricalVariogram compute_variogram(const SampleSet& samples, const VariogramOptions& options,
                                     const Progress& progress = {});

/// The name of the value column: "semivariance", "covariance" or "correlation".
std::string value_column(VariogramStatistic statistic);

/// The CSV table: azimuth,dip,lag_from,lag_to,mean_distance,pairs,<value column>.
/// Empty cells for no azimuth/dip and for undefined numbers; numbers in the
/// shortest form that reads back to the same double.
std::string variogram_to_csv(const EmpiricalVariogram& variogram);

/// The JSON document: settings, rows (the CSV's columns as keys), warnings,
/// and the normal-score table when used. Undefined numbers are null.
std::string variogram_to_json(const EmpiricalVariogram& variogram);

/// A readable table (the screen of `sillstone variogram` without -o).
void write_variogram_text(std::ostream& out, const EmpiricalVariogram& variogram);

/// Writes the CSV (".csv") or JSON (".json") by the extension of `path`,
/// atomically (see outputs.hpp).
void write_variogram(const std::string& path, const EmpiricalVariogram& variogram, bool overwrite);

/// Writes the surface as a one-band GeoTIFF in lag coordinates (x = dx,
/// y = dy, CRS units), nodata -9999 for cells without pairs, atomically.
/// Requires variogram.surface.
void write_variogram_surface(const std::string& path, const EmpiricalVariogram& variogram,
                             bool overwrite);

/// Reads a CSV or JSON file written by write_variogram. Rows and the
/// statistic come from either; the other settings only from JSON (from CSV
/// the lag classes and directions are taken from the rows). Throws InputError
/// naming the file, line (CSV) or row (JSON) and column.
EmpiricalVariogram read_variogram(const std::string& path);

/// True when `path` holds a variogram table rather than samples: a text file
/// whose first non-blank line starts with the CSV header's first six columns
/// (azimuth,dip,lag_from,lag_to,mean_distance,pairs), or a JSON object with a
/// top-level "rows" key (a GeoJSON source has "type" and "features" instead).
/// Only the start of the file is read. False when the file cannot be read.
bool is_variogram_table(const std::string& path);

}  // namespace sillstone
