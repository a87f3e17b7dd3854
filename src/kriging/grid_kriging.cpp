// Kriging a whole grid: row blocks in parallel, streamed to a raster or a table.
#include <gdal_alg.h>
#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <functional>
#include <future>
#include <memory>
#include <sstream>

#include "core/format.hpp"
#include "sillstone/error.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/outputs.hpp"
#include "sillstone/raster.hpp"

namespace sillstone {
namespace {

constexpr const char* kComponent = "krige";

int thread_count(int requested) {
  return requested > 0 ? requested : std::max(1, omp_get_max_threads());
}

// Mask polygons, rasterised onto each block of rows.
class Mask {
 public:
  Mask(const std::string& path, const GridSpec& grid) {
    GDALAllRegister();
    ds_.reset(GDALDataset::Open(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, nullptr,
                                nullptr, nullptr));
    if (!ds_ || ds_->GetLayerCount() < 1)
      throw InputError(kComponent, path + ": cannot be read as polygons (--mask)");
    OGRLayer* layer = ds_->GetLayer(0);
    const OGRSpatialReference* srs = layer->GetSpatialRef();
    if (srs && !grid.crs_wkt.empty()) {
      OGRSpatialReference mine;
      mine.importFromWkt(grid.crs_wkt.c_str());
      if (!srs->IsSame(&mine))
        throw InputError(kComponent, path + ": the mask's CRS (" + std::string(srs->GetName()) +
                                         ") differs from the samples'; reproject the mask");
    }
    for (auto& f : *layer) {
      const OGRGeometry* g = f->GetGeometryRef();
      if (!g) continue;
      const auto type = wkbFlatten(g->getGeometryType());
      if (type != wkbPolygon && type != wkbMultiPolygon)
        throw InputError(kComponent, path + ", feature " + std::to_string(f->GetFID()) +
                                         ": the mask must hold polygons (found a " +
                                         g->getGeometryName() + ")");
      geometries_.emplace_back(g->clone());
    }
    if (geometries_.empty()) throw InputError(kComponent, path + ": holds no polygon (--mask)");
  }

  // inside[i] = 1 for nodes of rows [row0, row0 + rows) whose centre is in a polygon.
  void rows(const GridSpec& g, std::int64_t row0, std::int64_t rows, std::vector<unsigned char>& inside) {
    inside.assign(static_cast<std::size_t>(g.nx * rows), 0);
    GDALDriver* mem = GetGDALDriverManager()->GetDriverByName("MEM");
    std::unique_ptr<GDALDataset> ds(mem->Create("", static_cast<int>(g.nx), static_cast<int>(rows), 1,
                                                GDT_Byte, nullptr));
    double gt[6] = {g.xmin, g.dx, 0, g.ymax - static_cast<double>(row0) * g.dy, 0, -g.dy};
    ds->SetGeoTransform(gt);
    int band = 1;
    double burn = 1;
    std::vector<OGRGeometryH> handles;
    std::vector<double> burns(geometries_.size(), burn);
    for (auto& geom : geometries_) handles.push_back(OGRGeometry::ToHandle(geom.get()));
    if (GDALRasterizeGeometries(GDALDataset::ToHandle(ds.get()), 1, &band,
                                static_cast<int>(handles.size()), handles.data(), nullptr, nullptr,
                                burns.data(), nullptr, nullptr, nullptr) != CE_None)
      throw std::runtime_error(std::string("rasterising the mask failed: ") + CPLGetLastErrorMsg());
    if (ds->GetRasterBand(1)->RasterIO(GF_Read, 0, 0, static_cast<int>(g.nx), static_cast<int>(rows),
                                       inside.data(), static_cast<int>(g.nx), static_cast<int>(rows),
                                       GDT_Byte, 0, 0, nullptr) != CE_None)
      throw std::runtime_error("reading the rasterised mask failed");
  }

 private:
  std::unique_ptr<GDALDataset> ds_;
  std::vector<std::unique_ptr<OGRGeometry>> geometries_;
};

// Krigs `count` nodes given by `node(i) -> Point`, in parallel, into `out`.
template <class NodeAt>
void krige_nodes(const KrigingEngine& engine, std::int64_t count, const NodeAt& node,
                 const std::vector<unsigned char>* inside,
                 std::vector<std::unique_ptr<KrigingEngine::Workspace>>& workspaces,
                 std::vector<NodeEstimate>& out, int threads) {
  out.resize(static_cast<std::size_t>(count));
  const bool external = !engine.options().external_drift.empty();
  // Chunks of consecutive nodes (along a row) share neighbour sets, and the
  // workspace updates the factorisation from node to node within a chunk
  // (KrigingEngine::Workspace::incremental). Each chunk starts afresh, so a
  // node's result depends only on the fixed chunk it is in, never on which
  // thread ran the chunks before: results are identical for any thread
  // count.
  constexpr std::int64_t kChunk = 256;
  const std::int64_t chunks = (count + kChunk - 1) / kChunk;
#pragma omp parallel num_threads(threads)
  {
    KrigingEngine::Workspace& ws = *workspaces[static_cast<std::size_t>(omp_get_thread_num())];
    ws.incremental = true;
#pragma omp for schedule(dynamic, 1)
    for (std::int64_t c = 0; c < chunks; ++c) {
      ws.restart();
      for (std::int64_t i = c * kChunk; i < std::min(count, (c + 1) * kChunk); ++i) {
        NodeEstimate& e = out[static_cast<std::size_t>(i)];
        if (inside && !(*inside)[static_cast<std::size_t>(i)]) {
          e = NodeEstimate{};
          e.neighbours = -1;  // marks "masked"
          continue;
        }
        const Point p = node(i);
        e = engine.estimate(p, ws, -1, external ? engine.external_at(p) : 0.0);
      }
    }
  }
}

void tally(const std::vector<NodeEstimate>& block, KrigingSummary& s) {
  for (const auto& e : block) {
    if (e.neighbours == -1 && !e.ok()) {
      ++s.targets;
      ++s.masked;
    } else {
      s.count(e.status);
    }
  }
}

}  // namespace

std::string probability_name(double threshold) { return "probability_above_" + detail::shortest(threshold); }

std::vector<std::string> describe(const KrigingSummary& s) {
  std::vector<std::string> out;
  auto line = [&out](std::int64_t n, const std::string& text) {
    if (n > 0) out.push_back(std::to_string(n) + " " + text);
  };
  line(s.masked, "node(s) outside the mask: nodata");
  line(s.too_few_neighbours, "node(s) with fewer samples than --min-points in the search: nodata");
  line(s.singular, "node(s) whose kriging system was singular or badly conditioned "
                   "(near-duplicate samples, or a gaussian model without nugget): nodata");
  line(s.drift_unresolved, "node(s) whose neighbours cannot fix the drift: nodata");
  line(s.outside_drift, "node(s) outside the external drift raster: nodata");
  return out;
}

KrigingSummary krige_raster(const KrigingEngine& engine, const GridSpec& grid,
                            const RasterTarget& target, const Progress& progress) {
  const auto start = std::chrono::steady_clock::now();
  if (grid.dimension != 2) throw InputError(kComponent, "rasters are 2D; write a 3D grid as a table");
  const bool with_probability = !std::isnan(engine.options().threshold);
  RasterLayout layout;
  layout.grid = grid;
  layout.bands = {"estimate", engine.options().transform == Transform::log ? "variance (log scale)" : "variance"};
  if (with_probability) layout.bands.push_back(probability_name(engine.options().threshold));
  layout.nodata = target.nodata;
  layout.metadata = target.metadata;
  layout.format = raster_driver_for(target.path, target.format);

  std::unique_ptr<Mask> mask;
  if (!target.mask.empty()) mask = std::make_unique<Mask>(target.mask, grid);
  PendingOutput out(target.path, target.overwrite, kComponent);
  RasterWriter writer(out.temp_path(), layout);

  KrigingSummary summary;
  summary.threads = thread_count(engine.options().threads);
  std::vector<std::unique_ptr<KrigingEngine::Workspace>> workspaces;
  for (int i = 0; i < summary.threads; ++i) workspaces.push_back(engine.make_workspace());

  // 256 rows per block (the GeoTIFF tile height), fewer for very wide grids.
  const std::int64_t block_rows =
      std::max<std::int64_t>(1, std::min<std::int64_t>(256, (1 << 22) / std::max<std::int64_t>(grid.nx, 1)));
  // Two sets of buffers: while the threads krige one block, the previous one
  // is back-transformed, compressed and written on another thread (GDAL
  // compresses on the calling thread), so writing does not leave the
  // kriging threads idle (with --threads 1 it is written in line). Memory
  // stays bounded: two blocks, and GDAL's cache flushed at every tile row.
  struct Buffers {
    std::vector<NodeEstimate> block;
    std::vector<NodeOutput> values;
    std::vector<double> band;
  } buffers[2];
  std::vector<unsigned char> inside;
  auto write_block = [&](Buffers& b, std::int64_t row0, std::int64_t rows) {
    tally(b.block, summary);
    b.values.resize(b.block.size());
    for (std::size_t i = 0; i < b.block.size(); ++i) b.values[i] = engine.finish(b.block[i]);
    b.band.resize(b.block.size());
    auto write = [&](int index, double NodeOutput::*field) {
      for (std::size_t i = 0; i < b.values.size(); ++i) {
        const double v = b.values[i].*field;
        b.band[i] = std::isfinite(v) ? v : target.nodata;
      }
      writer.write_rows(index, row0, rows, b.band.data());
    };
    write(0, &NodeOutput::estimate);
    write(1, &NodeOutput::variance);
    if (with_probability) write(2, &NodeOutput::probability);
    if ((row0 + rows) % 256 == 0 || row0 + rows == grid.ny) writer.flush();
  };
  std::future<void> pending;
  int current = 0;
  for (std::int64_t row0 = 0; row0 < grid.ny; row0 += block_rows) {
    const std::int64_t rows = std::min(block_rows, grid.ny - row0);
    if (mask) mask->rows(grid, row0, rows, inside);
    Buffers& b = buffers[current];
    krige_nodes(engine, grid.nx * rows,
                [&](std::int64_t i) { return Point{grid.x(i % grid.nx), grid.y(row0 + i / grid.nx), 0}; },
                mask ? &inside : nullptr, workspaces, b.block, summary.threads);
    if (pending.valid()) pending.get();  // the previous block is written (or throws)
    if (progress && row0 > 0) progress(static_cast<double>(row0) / static_cast<double>(grid.ny));
    // With one thread asked for, one thread it is: write in line.
    if (summary.threads > 1)
      pending = std::async(std::launch::async, write_block, std::ref(b), row0, rows);
    else
      write_block(b, row0, rows);
    current = 1 - current;
  }
  if (pending.valid()) pending.get();
  if (progress) progress(1.0);
  writer.close();
  out.commit();
  summary.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  summary.warnings = describe(summary);
  return summary;
}

KrigingSummary krige_table(const KrigingEngine& engine, const GridSpec& grid,
                           const TableTarget& target, const Progress& progress) {
  const auto start = std::chrono::steady_clock::now();
  namespace fs = std::filesystem;
  std::string ext = fs::path(target.path).extension().string();
  std::transform(ext.begin(), ext.end(), ext.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  if (ext != ".csv" && ext != ".gpkg")
    throw InputError(kComponent, target.path + ": a block model is written as .csv or .gpkg");
  const bool with_probability = !std::isnan(engine.options().threshold);
  std::vector<std::string> columns = {"x", "y", "z", "estimate", "variance", "neighbours"};
  if (with_probability) columns.push_back(probability_name(engine.options().threshold));
  columns.push_back("slope_of_regression");
  columns.push_back("kriging_efficiency");

  PendingOutput out(target.path, target.overwrite, kComponent);
  std::ofstream csv;
  std::unique_ptr<GDALDataset> gpkg;
  OGRLayer* layer = nullptr;
  if (ext == ".csv") {
    csv.open(out.temp_path(), std::ios::binary);
    if (!csv) throw std::runtime_error("cannot write " + out.temp_path());
    for (std::size_t c = 0; c < columns.size(); ++c) csv << (c ? "," : "") << columns[c];
    csv << "\n";
  } else {
    GDALAllRegister();
    GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GPKG");
    gpkg.reset(driver->Create(out.temp_path().c_str(), 0, 0, 0, GDT_Unknown, nullptr));
    if (!gpkg) throw std::runtime_error("cannot create " + out.temp_path());
    OGRSpatialReference srs;
    const bool has_srs = !grid.crs_wkt.empty() && srs.importFromWkt(grid.crs_wkt.c_str()) == OGRERR_NONE;
    layer = gpkg->CreateLayer("blocks", has_srs ? &srs : nullptr, grid.dimension == 3 ? wkbPoint25D : wkbPoint, nullptr);
    for (const auto& c : columns) {
      OGRFieldDefn f(c.c_str(), c == "neighbours" ? OFTInteger : OFTReal);
      layer->CreateField(&f);
    }
    if (layer->StartTransaction() != OGRERR_NONE) throw std::runtime_error("cannot write " + out.temp_path());
  }

  KrigingSummary summary;
  summary.threads = thread_count(engine.options().threads);
  std::vector<std::unique_ptr<KrigingEngine::Workspace>> workspaces;
  for (int i = 0; i < summary.threads; ++i) workspaces.push_back(engine.make_workspace());
  const std::int64_t per_layer = grid.nx * grid.ny;
  std::vector<NodeEstimate> block;
  for (std::int64_t layer_index = 0; layer_index < grid.nz; ++layer_index) {
    // Rows ascend in y (south to north) in the table.
    auto node = [&](std::int64_t i) {
      return Point{grid.x(i % grid.nx), grid.y(grid.ny - 1 - i / grid.nx), grid.dimension == 3 ? grid.z(layer_index) : 0.0};
    };
    krige_nodes(engine, per_layer, node, nullptr, workspaces, block, summary.threads);
    tally(block, summary);
    for (std::int64_t i = 0; i < per_layer; ++i) {
      const NodeEstimate& e = block[static_cast<std::size_t>(i)];
      const NodeOutput o = engine.finish(e);
      const Point p = node(i);
      std::vector<double> v = {p.x, p.y, p.z, o.estimate, o.variance, static_cast<double>(e.neighbours)};
      if (with_probability) v.push_back(o.probability);
      v.push_back(o.slope);
      v.push_back(o.efficiency);
      if (csv.is_open()) {
        for (std::size_t c = 0; c < v.size(); ++c) {
          if (c) csv << ",";
          if (c == 2 && grid.dimension == 2) continue;
          if (c == 5) csv << e.neighbours;
          else csv << detail::shortest(v[c]);
        }
        csv << "\n";
      } else {
        OGRFeature f(layer->GetLayerDefn());
        for (std::size_t c = 0; c < v.size(); ++c) {
          if (c == 2 && grid.dimension == 2) continue;
          if (c == 5) f.SetField(static_cast<int>(c), e.neighbours);
          else if (std::isfinite(v[c])) f.SetField(static_cast<int>(c), v[c]);
        }
        OGRPoint pt(p.x, p.y);
        if (grid.dimension == 3) pt.setZ(p.z);
        f.SetGeometry(&pt);
        if (layer->CreateFeature(&f) != OGRERR_NONE)
          throw std::runtime_error("writing " + out.temp_path() + " failed");
      }
    }
    if (progress) progress(static_cast<double>(layer_index + 1) / static_cast<double>(grid.nz));
  }
  if (csv.is_open()) {
    csv.close();
    if (!csv) throw std::runtime_error("writing " + out.temp_path() + " failed");
  } else {
    if (layer->CommitTransaction() != OGRERR_NONE)
      throw std::runtime_error("writing " + out.temp_path() + " failed");
    gpkg.reset();
  }
  out.commit();
  summary.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  summary.warnings = describe(summary);
  return summary;
}

}  // namespace sillstone
