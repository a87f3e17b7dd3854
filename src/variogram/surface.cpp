// The 2D variogram surface as a GeoTIFF in lag coordinates.
#include <gdal_priv.h>

#include <cmath>
#include <memory>
#include <mutex>

#include "sillstone/error.hpp"
#include "sillstone/names.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/variogram.hpp"
#include "sillstone/version.hpp"

namespace sillstone {

void write_variogram_surface(const std::string& path, const EmpiricalVariogram& v, bool overwrite) {
  if (!v.surface) throw std::logic_error("write_variogram_surface: no surface was computed");
  check_output_extension(path, {".tif", ".tiff"}, "--surface",
                         "the variogram surface (a GeoTIFF raster)");
  const VariogramSurface& s = *v.surface;
  static std::once_flag registered;
  std::call_once(registered, [] { GDALAllRegister(); });
  constexpr double kNodata = -9999;
  const int side = 2 * s.half + 1;
  write_atomically(path, overwrite, [&](const std::string& temporary) {
    GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GTiff");
    if (!driver) throw std::runtime_error("GDAL has no GTiff driver");
    std::unique_ptr<GDALDataset> ds(
        driver->Create(temporary.c_str(), side, side, 1, GDT_Float64, nullptr));
    if (!ds) throw std::runtime_error(path + ": cannot be created (" + CPLGetLastErrorMsg() + ")");
    // Lag space: x = dx, y = dy; the cell (i, j) is centred on (i c, j c).
    const double edge = (s.half + 0.5) * s.cell;
    double transform[6] = {-edge, s.cell, 0, edge, 0, -s.cell};
    ds->SetGeoTransform(transform);
    std::vector<double> data(s.values);
    for (double& x : data)
      if (std::isnan(x)) x = kNodata;
    GDALRasterBand* band = ds->GetRasterBand(1);
    band->SetNoDataValue(kNodata);
    band->SetDescription(
        ("semivariance (" + std::string(name_of(v.options.estimator)) + ")").c_str());
    if (band->RasterIO(GF_Write, 0, 0, side, side, data.data(), side, side, GDT_Float64, 0, 0,
                       nullptr) != CE_None)
      throw std::runtime_error(path + ": writing failed (" + CPLGetLastErrorMsg() + ")");
    ds->SetMetadataItem("SILLSTONE_VERSION", version().c_str());
    ds->SetMetadataItem("VARIOGRAM_VALUE", v.value.c_str());
    ds->SetMetadataItem("VARIOGRAM_TRANSFORM", v.summary.transform.c_str());
    ds->SetMetadataItem("LAG_AXES", "x = dx (east), y = dy (north), in the samples' CRS units");
    ds->SetMetadataItem("PAIRS", "each pair counts at h and -h");
    CPLErrorReset();
    ds.reset();  // closing flushes the file
    if (CPLGetLastErrorType() == CE_Failure)
      throw std::runtime_error(path + ": writing failed (" + CPLGetLastErrorMsg() + ")");
  });
}

}  // namespace sillstone
