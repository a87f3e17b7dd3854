// sillstone/grid.hpp -- the grid or block model that kriging fills.
//
// Conventions (shared/PRODUCT.md): the extent gives the OUTER EDGES of the
// raster; nodes are cell centres; rows run north to south as in GeoTIFF.
// Node (col, row[, layer]) is at
//   x = xmin + (col + 0.5) dx,  y = ymax - (row + 0.5) dy,  z = zmin + (layer + 0.5) dz.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <vector>

namespace sillstone {

/// How the user described the grid.
struct GridOptions {
  std::vector<double> cell;  ///< dx[,dy[,dz]] (dy = dx and dz = dx when left out)
  std::vector<double>
      extent;               ///< xmin,ymin,xmax,ymax[,zmin,zmax]; empty: from `like` or the samples
  std::string like;         ///< template raster: its size, geotransform and CRS
  bool large_grid = false;  ///< allow more than kLargeGridNodes nodes (--large-grid)
  bool is_valid(std::string* why) const;
};

/// Grids with more nodes than this are refused unless GridOptions::large_grid
/// is set: 100 million nodes already take 800 MB per band uncompressed and
/// minutes to hours of kriging, which a mistyped --cell should not start.
constexpr std::int64_t kLargeGridNodes = 100'000'000;

/// A regular grid, 2D (nz == 1, dimension 2) or 3D.
struct GridSpec {
  int dimension = 2;
  double xmin = 0, ymax = 0, zmin = 0;  ///< outer edges: west, north, bottom
  double dx = 1, dy = 1, dz = 1;        ///< cell sizes (positive)
  std::int64_t nx = 0, ny = 0, nz = 1;  ///< columns, rows, layers
  std::string crs_wkt;                  ///< the CRS of the outputs (empty: none)
  std::vector<std::string> notes;       ///< adjustments made (e.g. extent widened to whole cells)
  std::vector<std::string> warnings;    ///< assumptions to check (e.g. a template's CRS assumed)

  std::int64_t nodes() const { return nx * ny * nz; }
  double x(std::int64_t col) const { return xmin + (static_cast<double>(col) + 0.5) * dx; }
  double y(std::int64_t row) const { return ymax - (static_cast<double>(row) + 0.5) * dy; }
  double z(std::int64_t layer) const { return zmin + (static_cast<double>(layer) + 0.5) * dz; }
  double xmax() const { return xmin + static_cast<double>(nx) * dx; }
  double ymin() const { return ymax - static_cast<double>(ny) * dy; }
  double zmax() const { return zmin + static_cast<double>(nz) * dz; }
  /// GDAL geotransform of a north-up raster.
  std::array<double, 6> geotransform() const { return {xmin, dx, 0.0, ymax, 0.0, -dy}; }
};

/// Builds the grid. `samples_extent` (xmin,ymin,xmax,ymax[,zmin,zmax]) is used
/// when neither an extent nor a template is given. An extent that is not a
/// whole number of cells is widened east and south (and up) to whole cells,
/// with a note; another note states the grid's size (nodes, bytes per band).
/// Throws InputError for zero-area extents, non-positive cells, cells larger
/// than the extent, a third cell size or extent pair on 2D data, unreadable
/// or rotated templates, a template whose CRS is not the samples' (or has
/// none when the samples have one), grids over kLargeGridNodes without
/// `large_grid`, and grids over `max_nodes`.
GridSpec make_grid(const GridOptions& options, int dimension,
                   const std::vector<double>& samples_extent, const std::string& crs_wkt,
                   std::int64_t max_nodes = 4'000'000'000LL);

}  // namespace sillstone
