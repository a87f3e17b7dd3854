// sillstone/samples.hpp -- loading point samples from any OGR vector source.
//
// The first stage of the pipeline: a CSV, GeoPackage, Shapefile, GeoJSON,
// FlatGeobuf ... layer becomes a SampleSet: coordinates, one or more value
// columns, and a LoadSummary saying what was read, repaired and dropped.
//
// Example:
//   sillstone::SampleOptions opt;
//   opt.path = "samples.csv";  opt.x = "easting";  opt.y = "northing";
//   opt.values = {"lead_mg_kg"};  opt.crs = "EPSG:32630";
//   sillstone::SampleSet set = sillstone::load_samples(opt);
//
// Thread safety: load_samples may be called from several threads on different
// sources; GDAL's drivers are registered once on first use.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace sillstone {

/// How a value written as "<DL" (below the detection limit DL) is replaced.
enum class BelowDetection : int {
  half,   ///< DL / 2 (the default; always reported)
  limit,  ///< DL itself
  zero,   ///< 0
  drop,   ///< the value is treated as missing
};

/// What happens to several samples at exactly the same location.
enum class DuplicatePolicy : int {
  average,  ///< one sample with the mean of each value (the default; warned)
  first,    ///< the first row in source order is kept
  error,    ///< refused with an InputError naming the rows
};

/// Options of the sample reader. Defaults are those of the command line.
struct SampleOptions {
  std::string path;                 ///< any OGR-readable source
  std::string layer;                ///< layer name; empty: the first layer
  std::vector<std::string> values;  ///< value columns (at least one)
  std::string x, y, z;  ///< coordinate columns; x and y empty: point geometries; z empty: 2D
  std::string where;    ///< OGR SQL attribute filter, e.g. "depth_cm = '0-15'"
  std::string crs;      ///< CRS to assign when the source has none (EPSG:NNNN, WKT, PROJ)
  std::string to_crs;   ///< CRS to reproject to before analysis
  BelowDetection below_detection = BelowDetection::half;
  DuplicatePolicy duplicates = DuplicatePolicy::average;

  /// True when the options are complete and consistent; otherwise `why` says
  /// what is wrong (in words fit for an error line).
  bool is_valid(std::string* why) const;
};

/// One location. For 2D data z is 0.
struct Point {
  double x = 0, y = 0, z = 0;
};

/// What the reader did, for the user and for the report.
struct LoadSummary {
  std::size_t rows_read = 0;                    ///< features that passed the attribute filter
  std::size_t rows_kept = 0;                    ///< rows in the SampleSet before merging duplicates
  std::size_t dropped_no_coordinate = 0;        ///< blank/missing coordinate or empty geometry
  std::size_t dropped_no_value = 0;             ///< every value column missing (blank, NA, N/A, -)
  std::vector<std::size_t> missing;             ///< per value column: missing markers seen
  std::vector<std::size_t> below_detection;     ///< per value column: "<DL" values seen
  std::size_t duplicate_locations = 0;          ///< locations holding more than one row
  std::size_t duplicate_rows_removed = 0;       ///< rows merged away by the duplicate policy
  std::vector<std::string> duplicate_examples;  ///< up to 5 "line 12 = line 40" notes, each
                                                ///< naming up to 5 rows and counting the rest
  std::vector<std::string> warnings;            ///< each one sentence, without "warning:"
};

/// Samples ready for analysis. Coordinates are in the analysis CRS (after
/// --to-crs), absolute (not centred). Values are NaN where missing.
struct SampleSet {
  std::string source;            ///< path as given
  std::string layer;             ///< layer actually read
  int dimension = 2;             ///< 2 or 3
  std::vector<Point> points;     ///< one per sample
  std::vector<std::string> ids;  ///< "line 14" (CSV) or "feature 7"; first row of a merged group
  std::vector<std::int64_t> row_numbers;    ///< the CSV line number or feature id, as a number
  std::vector<std::string> value_names;     ///< as requested
  std::vector<std::vector<double>> values;  ///< values[column][sample], NaN = missing
  std::vector<std::vector<unsigned char>> censored;  ///< 1 where the value was "<DL"
  std::string crs_wkt;                               ///< empty: local coordinates, no CRS
  std::string crs_name;       ///< human-readable CRS name, e.g. "WGS 84 / UTM zone 30N"
  std::string crs_authority;  ///< e.g. "EPSG:32630" when known
  BelowDetection below_detection = BelowDetection::half;
  DuplicatePolicy duplicates = DuplicatePolicy::average;
  LoadSummary summary;

  std::size_t size() const { return points.size(); }
};

/// Reads, checks and cleans the samples. Throws InputError (naming the file,
/// row and column) for anything it cannot read; repairs what the options say
/// to repair and records it in `summary`.
SampleSet load_samples(const SampleOptions& options);

/// Refuses (InputError from `component`) an input path that names a FIFO, a
/// socket or a device: opening one would wait for a writer that may never
/// come, or read a stream rather than a file. Uses stat(2), which never
/// blocks, before anything opens the path; a link is judged by what it
/// points to. GDAL virtual paths ("/vsizip/...", "/vsicurl/...") are left to
/// GDAL, and missing paths, folders and regular files pass (their readers
/// say what is wrong with them). `role` names the input, e.g. "--mask".
void refuse_special_input(const std::string& path, const std::string& component,
                          const std::string& role);

/// Whether `path` is a GDAL virtual file system path ("/vsizip/...").
bool is_gdal_virtual_path(const std::string& path);

/// Refuses (InputError from `component`, naming the file and the column) a
/// value column whose values are all equal: with zero variance there is no
/// spatial variation to fit a model to. Missing values are ignored.
void require_variation(const SampleSet& samples, std::size_t column, const std::string& component);

/// Largest magnitude of a value that variograms, fits, cross-validation and
/// kriging accept. Their squares and squared differences stay below 4e200,
/// so sums of them over any number of pairs stay finite; a measured value
/// never comes near it, so a value beyond it is a unit or typing error.
constexpr double kMaxValueMagnitude = 1e100;

/// The first value of `column` beyond +-kMaxValueMagnitude, as an index into
/// the samples, or samples.size() when there is none.
std::size_t first_extreme_value(const SampleSet& samples, std::size_t column);

/// Refuses (InputError from `component`, naming the file, row and column) a
/// value beyond +-kMaxValueMagnitude: its square, or its squared difference
/// from another value, would overflow or come near the double range.
void require_moderate_values(const SampleSet& samples, std::size_t column,
                             const std::string& component);

/// How a single cell of a value column was read.
struct ParsedValue {
  enum class Kind { number, missing, below_detection, invalid } kind = Kind::invalid;
  double value = 0;  ///< the number, or the detection limit for below_detection
};

/// Reads one cell: numbers (leading/trailing blanks allowed), missing markers
/// (empty, NA, N/A, NaN, -, in any case) and non-detects ("<0.5", "< 0.5").
/// Infinite, out-of-range and other text is `invalid`.
ParsedValue parse_value(const std::string& text);

}  // namespace sillstone
