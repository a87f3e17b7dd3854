// sillstone/raster.hpp -- streaming GDAL raster output.
//
// Rows are written in blocks as they are computed, so a grid larger than
// memory can be written. The writer works on a temporary path (see
// outputs.hpp); the caller renames it when complete.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "sillstone/grid.hpp"

namespace sillstone {

struct RasterLayout {
  GridSpec grid;                   ///< 2D grid: size, geotransform, CRS
  std::vector<std::string> bands;  ///< band descriptions, e.g. "estimate", "variance"
  double nodata = -9999.0;         ///< written for masked or unestimable cells
  std::string format = "GTiff";    ///< a GDAL raster driver that supports Create()
  std::vector<std::pair<std::string, std::string>> metadata;  ///< dataset metadata items
  /// Threads GDAL may use to compress GeoTIFF tiles (its NUM_THREADS);
  /// the file is the same byte for byte for any count.
  int threads = 1;
};

/// Bytes the raster would take uncompressed (Float64 cells), for refusing
/// grids that cannot fit before any work starts.
double raster_bytes(const GridSpec& grid, std::size_t bands);

/// The GDAL driver of a raster output, "GTiff": rasters are written as
/// GeoTIFF, the one raster format whose whole output (bands, descriptions,
/// nodata, CRS, metadata) lands in the one file that is published, and which
/// the tests read back. Refuses (InputError, component "output") a path
/// whose extension is not .tif or .tiff (naming `path_option` and the
/// extension), and a `format` other than "GTiff" (naming `format_option`).
std::string raster_driver_for(const std::string& path, const std::string& format,
                              const std::string& path_option = "-o",
                              const std::string& format_option = "--format");

class RasterWriter {
 public:
  /// Creates the raster at `path` (Float64 bands; GeoTIFFs are tiled and
  /// DEFLATE-compressed, BigTIFF when needed). Throws InputError when the
  /// driver is unknown or cannot create files, std::runtime_error on I/O failure.
  RasterWriter(const std::string& path, const RasterLayout& layout);
  ~RasterWriter();
  RasterWriter(const RasterWriter&) = delete;
  RasterWriter& operator=(const RasterWriter&) = delete;

  /// Writes `rows` full rows starting at `first_row` of band `band` (0-based)
  /// from `data` (row-major, rows * nx values).
  void write_rows(int band, std::int64_t first_row, std::int64_t rows, const double* data);

  /// Writes out every block held in GDAL's cache. Call it when the rows
  /// written so far end on a tile boundary (256 rows for GeoTIFFs): the
  /// cache then never holds more than one band of rows per band, whatever
  /// GDAL_CACHEMAX allows (by default 5% of the memory).
  void flush();

  /// Flushes and closes the file; throws if anything failed.
  void close();

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace sillstone
