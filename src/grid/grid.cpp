#include <gdal_priv.h>

#include <cmath>
#include <memory>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/samples.hpp"

namespace sillstone {
namespace {

constexpr const char* kComponent = "grid";

std::string number(double v) { return format_for_people(v, 12); }

// Number of whole cells covering [lo, hi]; a remainder under 1e-9 of a cell
// counts as none (extents typed in decimals are rarely exact multiples).
std::int64_t cells_across(double lo, double hi, double cell) {
  const double n = std::ceil((hi - lo) / cell - 1e-9);
  // A count beyond 2^62 (or infinite: a tiny cell over a huge extent) would
  // overflow the conversion; any such grid is refused by the node limit.
  constexpr double kHuge = 4.6e18;
  return n < kHuge ? static_cast<std::int64_t>(n) : static_cast<std::int64_t>(kHuge);
}

}  // namespace

bool GridOptions::is_valid(std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  if (cell.size() > 3) return fail("--cell takes DX[,DY[,DZ]]");
  for (double c : cell)
    if (!(c > 0) || !std::isfinite(c)) return fail("cell sizes must be positive (--cell)");
  if (!extent.empty() && extent.size() != 4 && extent.size() != 6)
    return fail("--extent takes xmin,ymin,xmax,ymax[,zmin,zmax]");
  for (double e : extent)
    if (!std::isfinite(e)) return fail("--extent must be finite numbers");
  if (!extent.empty() && !like.empty()) return fail("give --extent or --like, not both");
  if (like.empty() && cell.empty()) return fail("--cell is needed unless --like gives the grid");
  return true;
}

GridSpec make_grid(const GridOptions& o, int dimension, const std::vector<double>& samples_extent,
                   const std::string& crs_wkt, std::int64_t max_nodes) {
  std::string why;
  if (!o.is_valid(&why)) throw InputError(kComponent, why);
  GridSpec g;
  g.dimension = dimension;
  g.crs_wkt = crs_wkt;

  if (!o.like.empty()) {
    if (dimension == 3) throw InputError(kComponent, "--like describes 2D grids only");
    refuse_special_input(o.like, kComponent, "--like");
    GDALAllRegister();
    std::unique_ptr<GDALDataset> ds(GDALDataset::Open(
        o.like.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr));
    if (!ds) throw InputError(kComponent, o.like + ": cannot be read as a raster (--like)");
    double gt[6];
    if (ds->GetGeoTransform(gt) != CE_None)
      throw InputError(kComponent, o.like + ": has no geotransform (--like)");
    if (gt[2] != 0 || gt[4] != 0 || gt[5] >= 0)
      throw InputError(kComponent, o.like + ": is rotated or not north-up; only north-up "
                                            "templates are supported (--like)");
    g.xmin = gt[0];
    g.dx = gt[1];
    g.ymax = gt[3];
    g.dy = -gt[5];
    g.nx = ds->GetRasterXSize();
    g.ny = ds->GetRasterYSize();
    if (const OGRSpatialReference* srs = ds->GetSpatialRef()) {
      char* wkt = nullptr;
      const char* opts[] = {"FORMAT=WKT2_2019", nullptr};
      if (srs->exportToWkt(&wkt, opts) == OGRERR_NONE && wkt) g.crs_wkt = wkt;
      CPLFree(wkt);
    }
    if (!o.cell.empty()) g.notes.push_back("--cell ignored: the grid comes from --like");
    return g;
  }

  const std::vector<double>& e = o.extent.empty() ? samples_extent : o.extent;
  if (e.size() < 4) throw InputError(kComponent, "no extent: give --extent or --like");
  const double dx = o.cell[0];
  const double dy = o.cell.size() > 1 ? o.cell[1] : dx;
  const double dz = o.cell.size() > 2 ? o.cell[2] : dx;
  const double xmin = e[0], ymin = e[1], xmax = e[2], ymax = e[3];
  if (!(xmax > xmin) || !(ymax > ymin))
    throw InputError(kComponent, "the extent " + number(xmin) + "," + number(ymin) + "," +
                                     number(xmax) + "," + number(ymax) +
                                     " has zero or negative area (xmax must exceed xmin, ymax ymin)");
  g.xmin = xmin;
  g.ymax = ymax;
  g.dx = dx;
  g.dy = dy;
  g.nx = cells_across(xmin, xmax, dx);
  g.ny = cells_across(ymin, ymax, dy);
  if (dimension == 3) {
    if (e.size() < 6) throw InputError(kComponent, "a 3D grid needs zmin,zmax in --extent");
    const double zmin = e[4], zmax = e[5];
    if (!(zmax > zmin))
      throw InputError(kComponent, "the extent's zmax must exceed zmin");
    g.zmin = zmin;
    g.dz = dz;
    g.nz = cells_across(zmin, zmax, dz);
  }
  if (std::abs(g.xmax() - xmax) > 1e-9 * dx || std::abs(g.ymin() - ymin) > 1e-9 * dy)
    g.notes.push_back("the extent is not a whole number of cells: widened east/south to " +
                      number(g.xmax()) + ", " + number(g.ymin()));
  // Overflow-safe size check before any product is formed.
  const double nodes = static_cast<double>(g.nx) * static_cast<double>(g.ny) * static_cast<double>(g.nz);
  if (nodes > static_cast<double>(max_nodes))
    throw InputError(kComponent, "the grid would have " + number(nodes) + " nodes (" +
                                     std::to_string(g.nx) + " x " + std::to_string(g.ny) +
                                     (dimension == 3 ? " x " + std::to_string(g.nz) : "") +
                                     "), more than the limit of " + number(static_cast<double>(max_nodes)) +
                                     "; its estimate and variance alone would take " +
                                     number(nodes * 16 / 1e12) +
                                     " TB; use a larger --cell or a smaller --extent");
  return g;
}

}  // namespace sillstone
