// Rasters for the report: decimation of large grids and PNG encoding through
// GDAL (a MEM dataset copied by the PNG driver into an in-memory /vsimem/
// file), then base64 for a data URI.
#include <cpl_vsi.h>
#include <gdal_priv.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <memory>
#include <mutex>
#include <stdexcept>

#include "sillstone/error.hpp"
#include "svg.hpp"

namespace sillstone {

namespace {
bool is_nodata(double v, double nodata) { return std::isnan(v) || v == nodata; }
}  // namespace

RasterGrid decimate(const RasterGrid& grid, std::int64_t max_pixels) {
  if (grid.nx <= 0 || grid.ny <= 0 ||
      static_cast<std::int64_t>(grid.values.size()) != grid.nx * grid.ny)
    throw InputError("plots", "a raster of " + std::to_string(grid.nx) + " x " +
                                  std::to_string(grid.ny) + " cells has " +
                                  std::to_string(grid.values.size()) + " values");
  max_pixels = std::max<std::int64_t>(max_pixels, 1);
  const std::int64_t k = (std::max(grid.nx, grid.ny) + max_pixels - 1) / max_pixels;
  if (k <= 1) return grid;
  RasterGrid out;
  out.nx = (grid.nx + k - 1) / k;
  out.ny = (grid.ny + k - 1) / k;
  out.nodata = std::numeric_limits<double>::quiet_NaN();
  out.geotransform = grid.geotransform;  // same extent: cell sizes stretched to cover it
  out.geotransform[1] =
      grid.geotransform[1] * static_cast<double>(grid.nx) / static_cast<double>(out.nx);
  out.geotransform[5] =
      grid.geotransform[5] * static_cast<double>(grid.ny) / static_cast<double>(out.ny);
  out.values.assign(static_cast<std::size_t>(out.nx * out.ny), out.nodata);
  for (std::int64_t r = 0; r < out.ny; ++r) {
    for (std::int64_t c = 0; c < out.nx; ++c) {
      double sum = 0;
      std::int64_t count = 0;
      for (std::int64_t i = r * k; i < std::min(grid.ny, (r + 1) * k); ++i) {
        for (std::int64_t j = c * k; j < std::min(grid.nx, (c + 1) * k); ++j) {
          const double v = grid.values[static_cast<std::size_t>(i * grid.nx + j)];
          if (is_nodata(v, grid.nodata)) continue;
          sum += v;
          ++count;
        }
      }
      if (count > 0)
        out.values[static_cast<std::size_t>(r * out.nx + c)] = sum / static_cast<double>(count);
    }
  }
  return out;
}

namespace detail {

std::string encode_png(int width, int height, const std::vector<std::uint8_t>& rgba) {
  if (width <= 0 || height <= 0 ||
      rgba.size() != static_cast<std::size_t>(width) * static_cast<std::size_t>(height) * 4)
    throw std::invalid_argument("encode_png: RGBA buffer does not match the image size");
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
  GDALDriver* mem = GetGDALDriverManager()->GetDriverByName("MEM");
  GDALDriver* png = GetGDALDriverManager()->GetDriverByName("PNG");
  if (!mem || !png) throw std::runtime_error("plots: GDAL has no MEM or PNG driver");
  std::unique_ptr<GDALDataset> src(mem->Create("", width, height, 4, GDT_Byte, nullptr));
  if (!src) throw std::runtime_error("plots: cannot create an in-memory raster");
  int bands[4] = {1, 2, 3, 4};
  // Pixel-interleaved RGBA in, one band per channel out.
  if (src->RasterIO(GF_Write, 0, 0, width, height, const_cast<std::uint8_t*>(rgba.data()), width,
                    height, GDT_Byte, 4, bands, 4, static_cast<GSpacing>(width) * 4, 1,
                    nullptr) != CE_None)
    throw std::runtime_error("plots: cannot fill the in-memory raster");
  src->GetRasterBand(4)->SetColorInterpretation(GCI_AlphaBand);

  static std::atomic<unsigned long> counter{0};
  const std::string name = "/vsimem/sillstone_plot_" + std::to_string(counter++) + ".png";
  GDALDataset* out = png->CreateCopy(name.c_str(), src.get(), FALSE, nullptr, nullptr, nullptr);
  if (!out)
    throw std::runtime_error("plots: GDAL's PNG driver failed: " +
                             std::string(CPLGetLastErrorMsg()));
  GDALClose(out);
  vsi_l_offset length = 0;
  GByte* data = VSIGetMemFileBuffer(name.c_str(), &length, TRUE);  // TRUE: take it and unlink
  VSIUnlink((name + ".aux.xml").c_str());
  if (!data) throw std::runtime_error("plots: the PNG was not written");
  std::string bytes(reinterpret_cast<const char*>(data), static_cast<std::size_t>(length));
  CPLFree(data);
  return bytes;
}

std::string base64(const std::string& bytes) {
  static const char* alphabet = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
  std::string out;
  out.reserve((bytes.size() + 2) / 3 * 4);
  std::size_t i = 0;
  for (; i + 2 < bytes.size(); i += 3) {
    const unsigned v = (static_cast<unsigned char>(bytes[i]) << 16) |
                       (static_cast<unsigned char>(bytes[i + 1]) << 8) |
                       static_cast<unsigned char>(bytes[i + 2]);
    out += alphabet[(v >> 18) & 63];
    out += alphabet[(v >> 12) & 63];
    out += alphabet[(v >> 6) & 63];
    out += alphabet[v & 63];
  }
  const std::size_t rest = bytes.size() - i;
  if (rest > 0) {
    unsigned v = static_cast<unsigned char>(bytes[i]) << 16;
    if (rest == 2) v |= static_cast<unsigned char>(bytes[i + 1]) << 8;
    out += alphabet[(v >> 18) & 63];
    out += alphabet[(v >> 12) & 63];
    out += rest == 2 ? alphabet[(v >> 6) & 63] : '=';
    out += '=';
  }
  return out;
}

}  // namespace detail
}  // namespace sillstone
