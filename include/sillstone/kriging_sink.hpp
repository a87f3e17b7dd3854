// sillstone/kriging_sink.hpp -- where kriged grids and block models go.
//
// Grid kriging (krige_grid) hands its results, a few rows at a time, to a
// KrigingSink. Three sinks are offered: a raster file (GeoTIFF or another
// GDAL driver), a table file (blocks CSV or GeoPackage) and memory (the
// arrays with the grid's geometry and CRS, for the report). TeeSink hands
// the same nodes to several sinks, so `run` writes its files and keeps the
// result in memory in one pass.
//
// Thread safety: krige_grid calls a sink from one thread at a time, in node
// order (see KrigedNodes); a sink need not be thread-safe.
#pragma once

#include <cstdint>
#include <limits>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "sillstone/grid.hpp"
#include "sillstone/kriging.hpp"

namespace sillstone {

/// What is kriged, told to a sink before the first node.
struct KrigedLayout {
  GridSpec grid;                                                ///< geometry and CRS of the nodes
  double threshold = std::numeric_limits<double>::quiet_NaN();  ///< NaN: no probability
  bool log_variance = false;  ///< the variance is on the log scale (lognormal kriging)
  bool has_probability() const { return threshold == threshold; }
};

/// Some nodes of one layer of the grid: `rows` whole rows of grid.nx nodes,
/// starting at grid row `first_row` (0 = northernmost) and moving `row_step`
/// rows at a time (+1: north to south, raster order; -1: south to north,
/// block-table order). Arrays hold rows * grid.nx values in that order; NaN
/// marks a value that could not be estimated (or is undefined, for slope and
/// efficiency).
struct KrigedNodes {
  std::int64_t layer = 0;
  std::int64_t first_row = 0;
  std::int64_t rows = 0;
  int row_step = 1;
  const double* estimate = nullptr;     ///< original scale
  const double* variance = nullptr;     ///< kriging variance (log scale with lognormal kriging)
  const double* probability = nullptr;  ///< P(Z > threshold); null without a threshold
  const double* slope = nullptr;        ///< slope of regression
  const double* efficiency = nullptr;   ///< kriging efficiency
  const int* neighbours = nullptr;      ///< samples used; -1 for masked or unlisted nodes
  /// Null: every node belongs to the output. Otherwise 0 marks a node outside
  /// the block list, which a table leaves out (a raster writes it as nodata).
  const unsigned char* listed = nullptr;
};

/// Receives a kriged grid: begin(), write() for every row of every layer in
/// order, then finish(). A sink that throws stops kriging; whatever it wrote
/// is its own to clean up (the file sinks leave nothing under the final name).
class KrigingSink {
 public:
  virtual ~KrigingSink() = default;
  virtual void begin(const KrigedLayout& layout) = 0;
  virtual void write(const KrigedNodes& nodes) = 0;
  virtual void finish() = 0;
};

/// A kriged grid kept in memory. Node (col, row, layer) is at index
/// (layer * ny + row) * nx + col, row 0 being the northernmost (raster
/// order); NaN marks no value.
struct KrigedGrid {
  KrigedLayout layout;
  std::vector<double> estimate, variance;
  std::vector<double> probability;  ///< empty without a threshold
  std::vector<double> slope, efficiency;
  std::vector<int> neighbours;        ///< -1: masked or not in the block list
  std::vector<unsigned char> listed;  ///< 1: the node is in the output (table row or raster cell)
  const GridSpec& grid() const { return layout.grid; }
  /// Bytes the arrays take for `grid` (with or without a probability).
  static double bytes(const GridSpec& grid, bool probability);
};

/// Keeps every node in memory (KrigedGrid).
class MemorySink : public KrigingSink {
 public:
  void begin(const KrigedLayout& layout) override;
  void write(const KrigedNodes& nodes) override;
  void finish() override {}
  /// The result; complete once finish() has run.
  const KrigedGrid& result() const { return grid_; }
  KrigedGrid take() { return std::move(grid_); }

 private:
  KrigedGrid grid_;
};

/// Hands every call on to each sink in turn (not owned).
class TeeSink : public KrigingSink {
 public:
  explicit TeeSink(std::vector<KrigingSink*> sinks) : sinks_(std::move(sinks)) {}
  void begin(const KrigedLayout& layout) override;
  void write(const KrigedNodes& nodes) override;
  void finish() override;

 private:
  std::vector<KrigingSink*> sinks_;
};

/// Writes the layout of shared/PRODUCT.md (band 1 estimate, band 2 variance,
/// band 3 probability_above_T) under a temporary name, renamed by finish().
/// Non-finite values are written as the target's nodata. 2D grids only.
class RasterFileSink : public KrigingSink {
 public:
  /// `threads`: GDAL's compression threads, 0 for every core (the file is
  /// identical for any count).
  RasterFileSink(const RasterTarget& target, int threads);
  ~RasterFileSink() override;
  void begin(const KrigedLayout& layout) override;
  void write(const KrigedNodes& nodes) override;
  void finish() override;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// Writes a block table (CSV or GeoPackage, by extension) with columns
/// x,y,z,estimate,variance,neighbours[,probability_above_T],
/// slope_of_regression,kriging_efficiency, one row per listed node in the
/// order received; empty cells for NaN. Renamed into place by finish().
class TableFileSink : public KrigingSink {
 public:
  /// Throws InputError for an extension other than .csv or .gpkg.
  explicit TableFileSink(const TableTarget& target);
  ~TableFileSink() override;
  void begin(const KrigedLayout& layout) override;
  void write(const KrigedNodes& nodes) override;
  void finish() override;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// Which nodes grid kriging visits, and in what order.
struct GridKrigingOptions {
  /// false: raster order (2D only), rows north to south in blocks;
  /// true: table order, layer by layer, rows south to north.
  bool table_order = false;
  std::string mask;    ///< raster order: polygons outside which nodes are nodata
  std::string blocks;  ///< table order: the block list (see TableTarget::blocks)
};

/// Krigs every node of `grid` into `sink` (begin, write..., finish). Results
/// are bit-for-bit identical for any thread count. Throws InputError for a
/// bad mask or block list, and passes on whatever the sink throws.
KrigingSummary krige_grid(const KrigingEngine& engine, const GridSpec& grid,
                          const GridKrigingOptions& options, KrigingSink& sink,
                          const Progress& progress = {});

}  // namespace sillstone
