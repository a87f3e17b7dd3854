// The sinks of grid kriging: memory, a raster file, a block table file.
#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>
#include <omp.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <optional>
#include <stdexcept>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/raster.hpp"

namespace sillstone {

// --- Memory --------------------------------------------------------------------------

double KrigedGrid::bytes(const GridSpec& grid, bool probability) {
  const double nodes =
      static_cast<double>(grid.nx) * static_cast<double>(grid.ny) * static_cast<double>(grid.nz);
  return nodes * ((probability ? 5 : 4) * sizeof(double) + sizeof(int) + 1);
}

void MemorySink::begin(const KrigedLayout& layout) {
  grid_ = KrigedGrid{};
  grid_.layout = layout;
  const auto n = static_cast<std::size_t>(layout.grid.nodes());
  const double nan = std::nan("");
  for (auto* v : {&grid_.estimate, &grid_.variance, &grid_.slope, &grid_.efficiency})
    v->assign(n, nan);
  if (layout.has_probability()) grid_.probability.assign(n, nan);
  grid_.neighbours.assign(n, -1);
  grid_.listed.assign(n, 0);
}

void MemorySink::write(const KrigedNodes& nodes) {
  const GridSpec& g = grid_.layout.grid;
  const auto count = static_cast<std::size_t>(nodes.rows * g.nx);
  for (std::size_t i = 0; i < count; ++i) {
    const auto row = nodes.first_row + nodes.row_step * static_cast<std::int64_t>(i) / g.nx;
    const auto col = static_cast<std::int64_t>(i) % g.nx;
    const auto at = static_cast<std::size_t>((nodes.layer * g.ny + row) * g.nx + col);
    grid_.estimate[at] = nodes.estimate[i];
    grid_.variance[at] = nodes.variance[i];
    if (nodes.probability && !grid_.probability.empty())
      grid_.probability[at] = nodes.probability[i];
    grid_.slope[at] = nodes.slope[i];
    grid_.efficiency[at] = nodes.efficiency[i];
    grid_.neighbours[at] = nodes.neighbours[i];
    grid_.listed[at] = nodes.listed ? nodes.listed[i] : 1;
  }
}

void TeeSink::begin(const KrigedLayout& layout) {
  for (auto* s : sinks_) s->begin(layout);
}
void TeeSink::write(const KrigedNodes& nodes) {
  for (auto* s : sinks_) s->write(nodes);
}
void TeeSink::finish() {
  for (auto* s : sinks_) s->finish();
}

// --- Raster file -----------------------------------------------------------------------

struct RasterFileSink::Impl {
  RasterTarget target;
  int threads = 1;
  PendingOutput out;
  std::unique_ptr<RasterWriter> writer;
  std::int64_t nx = 0, ny = 0;
  std::vector<double> scratch;
  Impl(const RasterTarget& t, int n)
      : target(t),
        threads(n > 0 ? n : std::max(1, omp_get_max_threads())),
        out(t.path, t.overwrite) {}
};

RasterFileSink::RasterFileSink(const RasterTarget& target, int threads)
    : impl_(std::make_unique<Impl>(target, threads)) {}
RasterFileSink::~RasterFileSink() = default;

void RasterFileSink::begin(const KrigedLayout& kl) {
  if (kl.grid.dimension != 2)
    throw InputError("krige", "rasters are 2D; write a 3D grid as a table");
  RasterLayout layout;
  layout.grid = kl.grid;
  layout.bands = {"estimate", kl.log_variance ? "variance (log scale)" : "variance"};
  if (kl.has_probability()) layout.bands.push_back(probability_name(kl.threshold));
  layout.nodata = impl_->target.nodata;
  layout.metadata = impl_->target.metadata;
  layout.format = raster_driver_for(impl_->target.path, impl_->target.format);
  layout.threads = impl_->threads;
  impl_->nx = kl.grid.nx;
  impl_->ny = kl.grid.ny;
  impl_->writer = std::make_unique<RasterWriter>(impl_->out.temp_path(), layout);
}

void RasterFileSink::write(const KrigedNodes& nodes) {
  if (nodes.row_step != 1) throw std::logic_error("a raster is written north to south");
  const double nodata = impl_->target.nodata;
  const auto count = static_cast<std::size_t>(nodes.rows * impl_->nx);
  std::vector<double>& s = impl_->scratch;
  const double* bands[3] = {nodes.estimate, nodes.variance, nodes.probability};
  for (int band = 0; band < 3 && bands[band]; ++band) {
    s.assign(bands[band], bands[band] + count);
    for (double& x : s)
      if (!std::isfinite(x)) x = nodata;
    impl_->writer->write_rows(band, nodes.first_row, nodes.rows, s.data());
  }
  // Every tile row complete (256 rows for GeoTIFFs): GDAL's cache stays small.
  const std::int64_t end = nodes.first_row + nodes.rows;
  if (end % 256 == 0 || end == impl_->ny) impl_->writer->flush();
}

void RasterFileSink::finish() {
  impl_->writer->close();
  impl_->out.commit();
}

// --- Table file --------------------------------------------------------------------------

namespace {

std::string lower_extension(const std::string& path) {
  std::string ext = std::filesystem::path(path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return ext;
}

}  // namespace

struct TableFileSink::Impl {
  PendingOutput out;
  bool csv_format = true;
  GridSpec grid;
  std::ofstream csv;
  std::unique_ptr<GDALDataset> gpkg;
  OGRLayer* layer = nullptr;
  explicit Impl(const TableTarget& t) : out(t.path, t.overwrite) {}
  void row(const std::vector<double>& v, int neighbours, const Point& p);
};

TableFileSink::TableFileSink(const TableTarget& target) {
  const std::string ext = lower_extension(target.path);
  if (ext != ".csv" && ext != ".gpkg")
    throw InputError("krige", target.path + ": a block model is written as .csv or .gpkg");
  impl_ = std::make_unique<Impl>(target);
  impl_->csv_format = ext == ".csv";
}
TableFileSink::~TableFileSink() = default;

void TableFileSink::begin(const KrigedLayout& layout) {
  Impl& m = *impl_;
  m.grid = layout.grid;
  std::vector<std::string> columns = {"x", "y", "z", "estimate", "variance", "neighbours"};
  if (layout.has_probability()) columns.push_back(probability_name(layout.threshold));
  columns.push_back("slope_of_regression");
  columns.push_back("kriging_efficiency");
  const std::string& temp = m.out.temp_path();
  if (m.csv_format) {
    m.csv.open(temp, std::ios::binary);
    if (!m.csv) throw std::runtime_error("cannot write " + temp);
    for (std::size_t c = 0; c < columns.size(); ++c) m.csv << (c ? "," : "") << columns[c];
    m.csv << "\n";
    return;
  }
  GDALAllRegister();
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GPKG");
  m.gpkg.reset(driver->Create(temp.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
  if (!m.gpkg) throw std::runtime_error("cannot create " + temp);
  OGRSpatialReference srs;
  const bool has_srs =
      !m.grid.crs_wkt.empty() && srs.importFromWkt(m.grid.crs_wkt.c_str()) == OGRERR_NONE;
  m.layer = m.gpkg->CreateLayer("blocks", has_srs ? &srs : nullptr,
                                m.grid.dimension == 3 ? wkbPoint25D : wkbPoint, nullptr);
  if (!m.layer) throw std::runtime_error("cannot write " + temp);
  for (const auto& c : columns) {
    OGRFieldDefn f(c.c_str(), c == "neighbours" ? OFTInteger : OFTReal);
    m.layer->CreateField(&f);
  }
  if (m.layer->StartTransaction() != OGRERR_NONE) throw std::runtime_error("cannot write " + temp);
}

// One table row: x, y, z, then the values after them (column 5, neighbours, as an integer).
void TableFileSink::Impl::row(const std::vector<double>& v, int neighbours, const Point& p) {
  if (csv_format) {
    for (std::size_t c = 0; c < v.size(); ++c) {
      if (c) csv << ",";
      if (c == 2 && grid.dimension == 2) continue;
      if (c == 5)
        csv << neighbours;
      else
        csv << format_for_file(v[c]);
    }
    csv << "\n";
    return;
  }
  OGRFeature f(layer->GetLayerDefn());
  for (std::size_t c = 0; c < v.size(); ++c) {
    if (c == 2 && grid.dimension == 2) continue;
    if (c == 5)
      f.SetField(static_cast<int>(c), neighbours);
    else if (std::isfinite(v[c]))
      f.SetField(static_cast<int>(c), v[c]);
  }
  OGRPoint pt(p.x, p.y);
  if (grid.dimension == 3) pt.setZ(p.z);
  f.SetGeometry(&pt);
  if (layer->CreateFeature(&f) != OGRERR_NONE)
    throw std::runtime_error("writing " + out.temp_path() + " failed");
}

void TableFileSink::write(const KrigedNodes& nodes) {
  Impl& m = *impl_;
  const GridSpec& g = m.grid;
  const auto count = static_cast<std::size_t>(nodes.rows * g.nx);
  std::vector<double> v;
  for (std::size_t i = 0; i < count; ++i) {
    if (nodes.listed && !nodes.listed[i]) continue;
    const auto row = nodes.first_row + nodes.row_step * static_cast<std::int64_t>(i) / g.nx;
    const Point p{g.x(static_cast<std::int64_t>(i) % g.nx), g.y(row),
                  g.dimension == 3 ? g.z(nodes.layer) : 0.0};
    v = {p.x,
         p.y,
         p.z,
         nodes.estimate[i],
         nodes.variance[i],
         static_cast<double>(nodes.neighbours[i])};
    if (nodes.probability) v.push_back(nodes.probability[i]);
    v.push_back(nodes.slope[i]);
    v.push_back(nodes.efficiency[i]);
    m.row(v, nodes.neighbours[i], p);
  }
}

void TableFileSink::finish() {
  Impl& m = *impl_;
  if (m.csv_format) {
    m.csv.close();
    if (!m.csv) throw std::runtime_error("writing " + m.out.temp_path() + " failed");
  } else {
    if (m.layer->CommitTransaction() != OGRERR_NONE)
      throw std::runtime_error("writing " + m.out.temp_path() + " failed");
    m.gpkg.reset();
  }
  m.out.commit();
}

}  // namespace sillstone
