#include <gdal_priv.h>
#include <ogr_spatialref.h>

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

namespace {

std::string crs_name(const OGRSpatialReference& srs) {
  const char* name = srs.GetName();
  return name && *name ? name : "an unnamed CRS";
}

// The template's CRS against the samples'. A template in another CRS would
// lay the samples' coordinates on a grid measured in other units (metres
// read as degrees), so it is refused, with the template's extent in the
// samples' CRS (OGR's TransformBounds, 21 points per edge) to pass to
// --extent instead. A template without a CRS is refused when the samples
// have one: its numbers could be in any CRS. Samples without a CRS are
// taken to be in the template's, with a warning, unless that CRS is
// geographic: distances in degrees are refused as they are for samples.
void check_template_crs(const std::string& path, const OGRSpatialReference* srs, GridSpec* g,
                        const std::string& samples_wkt) {
  if (samples_wkt.empty()) {
    if (srs && srs->IsGeographic())
      throw InputError(kComponent, path + ": the template is in a geographic CRS (" +
                                       crs_name(*srs) +
                                       ", degrees) and the samples have none; distances in "
                                       "degrees are not used: give the samples' CRS with --crs "
                                       "and a projected template, or --extent and --cell");
    if (srs)
      g->warnings.push_back(path + ": the template is in " + crs_name(*srs) +
                            " but the samples have no CRS: they are taken to be in the same CRS "
                            "(give theirs with --crs to have this checked)");
    return;
  }
  OGRSpatialReference mine;
  mine.importFromWkt(samples_wkt.c_str());
  mine.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  if (!srs)
    throw InputError(kComponent, path + ": the template has no CRS while the samples are in " +
                                     crs_name(mine) +
                                     "; assign the template its CRS, or give the grid with "
                                     "--extent and --cell instead of --like");
  if (srs->IsSame(&mine)) return;
  OGRSpatialReference theirs(*srs);
  theirs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  std::string hint;
  std::unique_ptr<OGRCoordinateTransformation> ct(
      OGRCreateCoordinateTransformation(&theirs, &mine));
  double x0 = 0, y0 = 0, x1 = 0, y1 = 0;
  if (ct && ct->TransformBounds(g->xmin, g->ymin(), g->xmax(), g->ymax, &x0, &y0, &x1, &y1, 21) &&
      std::isfinite(x0) && std::isfinite(y0) && std::isfinite(x1) && std::isfinite(y1))
    hint = ", or give the grid with --cell and --extent " + number(x0) + "," + number(y0) + "," +
           number(x1) + "," + number(y1) + " (the template's extent in the samples' CRS)";
  throw InputError(kComponent, path + ": the template's CRS (" + crs_name(theirs) +
                                   ") differs from the samples' (" + crs_name(mine) +
                                   "); reproject the template" + hint);
}

GridSpec grid_from_template(const GridOptions& o, const std::string& crs_wkt) {
  refuse_special_input(o.like, kComponent, "--like");
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(
      o.like.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr));
  if (!ds) throw InputError(kComponent, o.like + ": cannot be read as a raster (--like)");
  double gt[6];
  if (ds->GetGeoTransform(gt) != CE_None)
    throw InputError(kComponent, o.like + ": has no geotransform (--like)");
  if (gt[2] != 0 || gt[4] != 0 || gt[5] >= 0)
    throw InputError(kComponent, o.like +
                                     ": is rotated or not north-up; only north-up "
                                     "templates are supported (--like)");
  GridSpec g;
  g.crs_wkt = crs_wkt;
  g.xmin = gt[0];
  g.dx = gt[1];
  g.ymax = gt[3];
  g.dy = -gt[5];
  g.nx = ds->GetRasterXSize();
  g.ny = ds->GetRasterYSize();
  const OGRSpatialReference* srs = ds->GetSpatialRef();
  check_template_crs(o.like, srs, &g, crs_wkt);
  if (srs && crs_wkt.empty()) {
    char* wkt = nullptr;
    const char* opts[] = {"FORMAT=WKT2_2019", nullptr};
    if (srs->exportToWkt(&wkt, opts) == OGRERR_NONE && wkt) g.crs_wkt = wkt;
    CPLFree(wkt);
  }
  if (!o.cell.empty()) g.notes.push_back("--cell ignored: the grid comes from --like");
  return g;
}

// Cells across [lo, hi] on one axis, refusing a cell wider than the extent:
// the grid would then not hold one whole cell of the area (a cell of 1e300
// over a site of 20 m gave GDAL a raster of 0 x 0).
std::int64_t axis_cells(double lo, double hi, double cell, const char* axis) {
  if (cell > (hi - lo) * (1 + 1e-9))
    throw InputError(kComponent, std::string("--cell ") + number(cell) +
                                     " is larger than the extent's " + axis + " (" +
                                     number(hi - lo) +
                                     "): the grid would not hold one whole cell; give a smaller "
                                     "--cell or a larger --extent");
  return cells_across(lo, hi, cell);
}

// States the grid's size and refuses one over the limits: `max_nodes` always,
// kLargeGridNodes unless the options allow a large grid.
void check_grid_size(const GridOptions& o, GridSpec* g, std::int64_t max_nodes) {
  // Overflow-safe size check before any product is formed.
  const double nodes =
      static_cast<double>(g->nx) * static_cast<double>(g->ny) * static_cast<double>(g->nz);
  const std::string shape = std::to_string(g->nx) + " x " + std::to_string(g->ny) +
                            (g->dimension == 3 ? " x " + std::to_string(g->nz) : "");
  if (nodes > static_cast<double>(max_nodes))
    throw InputError(kComponent, "the grid would have " + number(nodes) + " nodes (" + shape +
                                     "), more than the limit of " +
                                     number(static_cast<double>(max_nodes)) +
                                     "; its estimate and variance alone would take " +
                                     number(nodes * 16 / 1e12) +
                                     " TB; use a larger --cell or a smaller --extent");
  const double gb_per_band = nodes * sizeof(double) / 1e9;
  if (nodes > static_cast<double>(kLargeGridNodes) && !o.large_grid)
    throw InputError(kComponent, "the grid would have " + number(nodes) + " nodes (" + shape +
                                     "), " + number(gb_per_band) +
                                     " GB per output band uncompressed, more than the " +
                                     number(static_cast<double>(kLargeGridNodes)) +
                                     " nodes allowed without --large-grid; use a larger --cell "
                                     "or a smaller --extent, or give --large-grid");
  g->notes.push_back("the grid has " + shape + " = " + std::to_string(g->nodes()) + " nodes, " +
                     number(nodes * sizeof(double)) + " bytes per output band uncompressed");
}

}  // namespace

GridSpec make_grid(const GridOptions& o, int dimension, const std::vector<double>& samples_extent,
                   const std::string& crs_wkt, std::int64_t max_nodes) {
  std::string why;
  if (!o.is_valid(&why)) throw InputError(kComponent, why);
  if (dimension == 2 && o.cell.size() == 3)
    throw InputError(kComponent,
                     "--cell has a third size (DZ) but the samples are 2D; give "
                     "DX[,DY] (or --z for 3D samples)");
  if (dimension == 2 && o.extent.size() == 6)
    throw InputError(kComponent,
                     "--extent has zmin,zmax but the samples are 2D; give "
                     "xmin,ymin,xmax,ymax (or --z for 3D samples)");
  if (!o.like.empty()) {
    if (dimension == 3) throw InputError(kComponent, "--like describes 2D grids only");
    GridSpec g = grid_from_template(o, crs_wkt);
    check_grid_size(o, &g, max_nodes);
    return g;
  }
  GridSpec g;
  g.dimension = dimension;
  g.crs_wkt = crs_wkt;

  const std::vector<double>& e = o.extent.empty() ? samples_extent : o.extent;
  if (e.size() < 4) throw InputError(kComponent, "no extent: give --extent or --like");
  const double dx = o.cell[0];
  const double dy = o.cell.size() > 1 ? o.cell[1] : dx;
  const double dz = o.cell.size() > 2 ? o.cell[2] : dx;
  const double xmin = e[0], ymin = e[1], xmax = e[2], ymax = e[3];
  if (!(xmax > xmin) || !(ymax > ymin))
    throw InputError(kComponent,
                     "the extent " + number(xmin) + "," + number(ymin) + "," + number(xmax) + "," +
                         number(ymax) +
                         " has zero or negative area (xmax must exceed xmin, ymax ymin)");
  g.xmin = xmin;
  g.ymax = ymax;
  g.dx = dx;
  g.dy = dy;
  g.nx = axis_cells(xmin, xmax, dx, "width");
  g.ny = axis_cells(ymin, ymax, dy, "height");
  if (dimension == 3) {
    if (e.size() < 6) throw InputError(kComponent, "a 3D grid needs zmin,zmax in --extent");
    const double zmin = e[4], zmax = e[5];
    if (!(zmax > zmin)) throw InputError(kComponent, "the extent's zmax must exceed zmin");
    g.zmin = zmin;
    g.dz = dz;
    g.nz = axis_cells(zmin, zmax, dz, "depth (zmax - zmin)");
  }
  if (std::abs(g.xmax() - xmax) > 1e-9 * dx || std::abs(g.ymin() - ymin) > 1e-9 * dy)
    g.notes.push_back("the extent is not a whole number of cells: widened east/south to " +
                      number(g.xmax()) + ", " + number(g.ymin()));
  check_grid_size(o, &g, max_nodes);
  return g;
}

}  // namespace sillstone
