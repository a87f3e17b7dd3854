#include "test_support.hpp"

#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <fstream>
#include <random>
#include <stdexcept>

namespace sillstone::test {

ScratchDir::ScratchDir() {
  static std::mt19937_64 rng{std::random_device{}()};
  dir_ = std::filesystem::temp_directory_path() / ("sillstone-test-" + std::to_string(rng()));
  std::filesystem::create_directories(dir_);
}

ScratchDir::~ScratchDir() {
  std::error_code ec;
  std::filesystem::remove_all(dir_, ec);
}

std::string ScratchDir::path(const std::string& name) const { return (dir_ / name).string(); }

std::string ScratchDir::write(const std::string& name, const std::string& text) const {
  const std::string p = path(name);
  std::ofstream out(p, std::ios::binary);
  out << text;
  return p;
}

Synthetic make_synthetic(std::size_t n, std::uint64_t seed, double size) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> u(0.0, size);
  std::normal_distribution<double> g(0.0, 1.0);
  Synthetic s;
  for (std::size_t i = 0; i < n; ++i) {
    s.points.push_back({u(rng), u(rng), 0.0});
    const double common = g(rng);
    s.a.push_back(10 + 3 * common + g(rng));
    s.b.push_back(-2 + 0.5 * common + 0.8 * g(rng));
  }
  return s;
}

void write_points(const std::string& path, const std::string& driver_name, int epsg,
                  const std::vector<Point>& points, const std::vector<double>& values) {
  GDALAllRegister();
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName(driver_name.c_str());
  if (!driver) throw std::runtime_error("no OGR driver " + driver_name);
  std::unique_ptr<GDALDataset> ds(driver->Create(path.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
  if (!ds) throw std::runtime_error("cannot create " + path);
  OGRSpatialReference srs;
  if (epsg) srs.importFromEPSG(epsg);
  srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  OGRLayer* layer = ds->CreateLayer("samples", epsg ? &srs : nullptr, wkbPoint, nullptr);
  OGRFieldDefn id("id", OFTInteger), value("value", OFTReal);
  layer->CreateField(&id);
  layer->CreateField(&value);
  for (std::size_t i = 0; i < points.size(); ++i) {
    OGRFeature f(layer->GetLayerDefn());
    f.SetField("id", static_cast<int>(i + 1));
    f.SetField("value", values[i]);
    OGRPoint p(points[i].x, points[i].y);
    f.SetGeometry(&p);
    if (layer->CreateFeature(&f) != OGRERR_NONE) throw std::runtime_error("cannot write " + path);
  }
}

}  // namespace sillstone::test
