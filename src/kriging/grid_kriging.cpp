// Kriging a whole grid: row blocks in parallel, handed to a sink (kriging_sink.hpp).
#include <gdal_alg.h>
#include <gdal_priv.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>
#include <omp.h>
#include <unistd.h>  // sysconf: the machine's memory

#include <algorithm>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <functional>
#include <future>
#include <limits>
#include <memory>

#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/samples.hpp"

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
    refuse_special_input(path, kComponent, "--mask");
    GDALAllRegister();
    ds_.reset(GDALDataset::Open(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, nullptr, nullptr,
                                nullptr));
    if (!ds_ || ds_->GetLayerCount() < 1)
      throw InputError(kComponent, path + ": cannot be read as polygons (--mask)");
    OGRLayer* layer = ds_->GetLayer(0);
    const OGRSpatialReference* srs = layer->GetSpatialRef();
    if (srs && grid.crs_wkt.empty())
      note_ = path + ": the mask is in " + std::string(srs->GetName()) +
              " but the samples have no CRS: they are taken to be in the same CRS (give theirs "
              "with --crs to have this checked)";
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

  // A warning for the user, or empty.
  const std::string& note() const { return note_; }

  // inside[i] = 1 for nodes of rows [row0, row0 + rows) whose centre is in a polygon.
  void rows(const GridSpec& g, std::int64_t row0, std::int64_t rows,
            std::vector<unsigned char>& inside) {
    inside.assign(static_cast<std::size_t>(g.nx * rows), 0);
    GDALDriver* mem = GetGDALDriverManager()->GetDriverByName("MEM");
    std::unique_ptr<GDALDataset> ds(
        mem->Create("", static_cast<int>(g.nx), static_cast<int>(rows), 1, GDT_Byte, nullptr));
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
    if (ds->GetRasterBand(1)->RasterIO(
            GF_Read, 0, 0, static_cast<int>(g.nx), static_cast<int>(rows), inside.data(),
            static_cast<int>(g.nx), static_cast<int>(rows), GDT_Byte, 0, 0, nullptr) != CE_None)
      throw std::runtime_error("reading the rasterised mask failed");
  }

 private:
  std::unique_ptr<GDALDataset> ds_;
  std::vector<std::unique_ptr<OGRGeometry>> geometries_;
  std::string note_;
};

// The cells of `grid` that hold at least one point of a block list.
std::vector<unsigned char> listed_blocks(const std::string& path, const GridSpec& g) {
  refuse_special_input(path, kComponent, "--blocks");
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(path.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY,
                                                    nullptr, nullptr, nullptr));
  if (!ds || ds->GetLayerCount() < 1)
    throw InputError(kComponent, path + ": cannot be read as a list of blocks");
  OGRLayer* layer = ds->GetLayer(0);
  OGRFeatureDefn* defn = layer->GetLayerDefn();
  const int fx = defn->GetFieldIndex("x"), fy = defn->GetFieldIndex("y"),
            fz = defn->GetFieldIndex("z");
  const bool fields = fx >= 0 && fy >= 0;
  std::vector<unsigned char> keep(static_cast<std::size_t>(g.nodes()), 0);
  for (auto& f : *layer) {
    double x, y, z = g.zmin + g.dz / 2;
    if (fields) {
      x = f->GetFieldAsDouble(fx);
      y = f->GetFieldAsDouble(fy);
      if (fz >= 0) z = f->GetFieldAsDouble(fz);
    } else if (const OGRGeometry* geom = f->GetGeometryRef();
               geom && wkbFlatten(geom->getGeometryType()) == wkbPoint) {
      const OGRPoint* p = geom->toPoint();
      x = p->getX();
      y = p->getY();
      if (p->Is3D()) z = p->getZ();
    } else {
      throw InputError(kComponent,
                       path + ", feature " + std::to_string(f->GetFID()) +
                           ": a block list needs x, y[, z] columns or point geometries");
    }
    const double col = std::floor((x - g.xmin) / g.dx), row = std::floor((g.ymax - y) / g.dy),
                 layer_index = g.dimension == 3 ? std::floor((z - g.zmin) / g.dz) : 0.0;
    if (col < 0 || row < 0 || layer_index < 0 || col >= static_cast<double>(g.nx) ||
        row >= static_cast<double>(g.ny) || layer_index >= static_cast<double>(g.nz))
      continue;
    // Table order: x fastest, then y ascending (south to north), then z.
    const auto i = static_cast<std::int64_t>(layer_index) * g.nx * g.ny +
                   (g.ny - 1 - static_cast<std::int64_t>(row)) * g.nx +
                   static_cast<std::int64_t>(col);
    keep[static_cast<std::size_t>(i)] = 1;
  }
  return keep;
}

// Krigs `count` nodes given by `node(i) -> Point`, in parallel, into `out`;
// `chunk_done(first, last)` runs on the same thread after each chunk of
// nodes [first, last) (e.g. to convert them for writing).
template <class NodeAt, class ChunkDone>
void krige_nodes(const KrigingEngine& engine, std::int64_t count, const NodeAt& node,
                 const std::vector<unsigned char>* inside,
                 std::vector<std::unique_ptr<KrigingEngine::Workspace>>& workspaces,
                 std::vector<NodeEstimate>& out, int threads, const ChunkDone& chunk_done) {
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
      const std::int64_t first = c * kChunk, last = std::min(count, (c + 1) * kChunk);
      for (std::int64_t i = first; i < last; ++i) {
        NodeEstimate& e = out[static_cast<std::size_t>(i)];
        if (inside && !(*inside)[static_cast<std::size_t>(i)]) {
          e = NodeEstimate{};
          e.neighbours = -1;  // marks "masked"
          continue;
        }
        const Point p = node(i);
        e = engine.estimate(p, ws, -1, external ? engine.external_at(p) : 0.0);
      }
      chunk_done(first, last);
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

void check_mask(const std::string& path, const GridSpec& grid) { Mask(path, grid); }

std::string probability_name(double threshold) {
  return "probability_above_" + format_for_file(threshold);
}

std::vector<std::string> describe(const KrigingSummary& s, const std::string& target) {
  std::vector<std::string> out;
  auto line = [&out](std::int64_t n, const std::string& text) {
    if (n > 0) out.push_back(std::to_string(n) + " " + text);
  };
  const std::string t = target + "(s)";
  const std::string left = target == "node" ? ": nodata" : ": left unestimated";
  line(s.masked, t + " outside the mask or block list: nodata or left out");
  line(s.too_few_neighbours, t + " with fewer samples than --min-points in the search" + left);
  line(s.singular, t +
                       " whose kriging system was singular or badly conditioned "
                       "(near-duplicate samples, or a gaussian model without nugget)" +
                       left);
  line(s.drift_unresolved, t +
                               " whose neighbours cannot fix the drift (too few, or nearly on a "
                               "line or plane for it: condition number over 1e4)" +
                               left);
  line(s.outside_drift, t + " outside the external drift raster" + left);
  line(s.non_finite, "estimated " + t +
                         " whose estimate, variance or probability is not a "
                         "finite number (e.g. a back-transform that overflows)" +
                         left);
  for (const auto& [column, count] : s.empty_columns) {
    const std::string why =
        column == "kriging_efficiency"    ? "the model has no sill, or the block variance is 0"
        : column == "slope_of_regression" ? "every weight is 0 (lambda'K lambda = 0)"
                                          : "the value is not a finite number";
    line(count, "estimated row(s) with an empty " + column + ": " + why);
  }
  return out;
}

namespace {

// Nodes kriged at once for a raster: 256 rows (the GeoTIFF tile height),
// fewer for very wide grids, at most about 4 million nodes.
std::int64_t raster_block_rows(const GridSpec& grid) {
  return std::max<std::int64_t>(
      1, std::min<std::int64_t>(256, (1 << 22) / std::max<std::int64_t>(grid.nx, 1)));
}

// Bytes held per node while a block of nodes is kriged and written.
constexpr double kBytesPerNode = sizeof(NodeEstimate) + sizeof(NodeOutput) + 2 * sizeof(double);
// Bytes per row of a CSV block table (about 20 characters per number).
constexpr double kTableBytesPerValue = 20;

std::string bytes_text(double bytes) {
  const char* units[] = {"bytes", "kB", "MB", "GB", "TB"};
  int u = 0;
  while (bytes >= 1000 && u < 4) {
    bytes /= 1000;
    ++u;
  }
  return format_for_people(bytes, bytes < 10 ? 2 : 3) + " " + units[u];
}

}  // namespace

OutputSize output_size(const GridSpec& grid, std::size_t values_per_node, bool table) {
  OutputSize o;
  const double nodes =
      static_cast<double>(grid.nx) * static_cast<double>(grid.ny) * static_cast<double>(grid.nz);
  const double values = static_cast<double>(values_per_node);
  if (table) {
    o.disk = nodes * (values + 3) * kTableBytesPerValue;  // x, y, z and the values
    // One layer of estimates at a time, and the block list's flags.
    o.memory = static_cast<double>(grid.nx) * static_cast<double>(grid.ny) * kBytesPerNode + nodes;
  } else {
    o.disk = nodes * values * sizeof(double);  // uncompressed
    o.memory =
        static_cast<double>(grid.nx) * static_cast<double>(raster_block_rows(grid)) * kBytesPerNode;
  }
  return o;
}

void check_output_size(const GridSpec& grid, std::size_t values_per_node, bool table,
                       const std::string& path, double kept_in_memory) {
  namespace fs = std::filesystem;
  if (!table) {
    constexpr std::int64_t kMaxSide = std::numeric_limits<int>::max();  // GDAL's raster size type
    if (grid.nx > kMaxSide || grid.ny > kMaxSide)
      throw InputError("grid", path + ": a raster has at most " + std::to_string(kMaxSide) +
                                   " columns and rows; this grid has " + std::to_string(grid.nx) +
                                   " x " + std::to_string(grid.ny) +
                                   "; use a larger --cell or a smaller --extent");
  }
  OutputSize need = output_size(grid, values_per_node, table);
  need.memory += kept_in_memory;
  const std::string nodes =
      std::to_string(grid.nodes()) + " nodes x " + std::to_string(values_per_node) + " values";
  const fs::path folder =
      fs::path(path).has_parent_path() ? fs::path(path).parent_path() : fs::path(".");
  std::error_code ec;
  const fs::space_info space = fs::space(folder, ec);
  if (!ec && need.disk > static_cast<double>(space.available))
    throw InputError("grid", path + ": the output would need about " + bytes_text(need.disk) +
                                 (table ? "" : " uncompressed") + " (" + nodes +
                                 "), more than the " +
                                 bytes_text(static_cast<double>(space.available)) + " free in " +
                                 folder.string() + "; use a larger --cell or a smaller --extent");
  const long pages = ::sysconf(_SC_PHYS_PAGES), page = ::sysconf(_SC_PAGE_SIZE);
  if (pages > 0 && page > 0) {
    const double memory = static_cast<double>(pages) * static_cast<double>(page);
    if (need.memory > memory)
      throw InputError("grid",
                       path + ": kriging this grid would need about " + bytes_text(need.memory) +
                           " of memory (" + nodes +
                           (table ? ", one layer at a time" : ", one block of rows at a time") +
                           (kept_in_memory > 0 ? ", and every node kept for the report" : "") +
                           "), more than the " + bytes_text(memory) +
                           " this machine has; use a larger --cell or a smaller --extent");
  }
}

namespace {

// One block of kriged nodes, converted for the sinks on the kriging threads.
struct NodeBuffers {
  std::vector<NodeEstimate> block;
  std::vector<double> estimate, variance, probability, slope, efficiency;
  std::vector<int> neighbours;
  std::vector<unsigned char> non_finite;  // estimated, but a value is not finite

  void resize(std::size_t n, bool with_probability) {
    for (auto* v : {&estimate, &variance, &slope, &efficiency}) v->resize(n);
    probability.resize(with_probability ? n : 0);
    neighbours.resize(n);
    non_finite.resize(n);
  }
  // Back-transforms nodes [first, last) (engine.finish) into the arrays.
  void convert(const KrigingEngine& engine, std::int64_t first, std::int64_t last) {
    const bool with_probability = !probability.empty();
    for (auto i = static_cast<std::size_t>(first); i < static_cast<std::size_t>(last); ++i) {
      const NodeOutput v = engine.finish(block[i]);
      non_finite[i] = block[i].ok() && (!std::isfinite(v.estimate) || !std::isfinite(v.variance) ||
                                        (with_probability && !std::isfinite(v.probability)));
      estimate[i] = v.estimate;
      variance[i] = v.variance;
      if (with_probability) probability[i] = v.probability;
      slope[i] = v.slope;
      efficiency[i] = v.efficiency;
      neighbours[i] = block[i].neighbours;
    }
  }
  KrigedNodes nodes(std::int64_t layer, std::int64_t first_row, std::int64_t rows, int step,
                    const std::vector<unsigned char>* listed) const {
    KrigedNodes n;
    n.layer = layer;
    n.first_row = first_row;
    n.rows = rows;
    n.row_step = step;
    n.estimate = estimate.data();
    n.variance = variance.data();
    n.probability = probability.empty() ? nullptr : probability.data();
    n.slope = slope.data();
    n.efficiency = efficiency.data();
    n.neighbours = neighbours.data();
    n.listed = listed && !listed->empty() ? listed->data() : nullptr;
    return n;
  }
};

std::vector<std::unique_ptr<KrigingEngine::Workspace>> workspaces_for(const KrigingEngine& engine,
                                                                      int threads) {
  std::vector<std::unique_ptr<KrigingEngine::Workspace>> w;
  for (int i = 0; i < threads; ++i) w.push_back(engine.make_workspace());
  return w;
}

// A 2D grid in raster order, streamed in blocks of rows: while the threads
// krige one block, the previous one goes to the sink on another thread (with
// --threads 1, in line). The kriging threads back-transform each chunk of
// nodes as they finish it. Memory stays bounded: two blocks.
void krige_rows(const KrigingEngine& engine, const GridSpec& grid, Mask* mask, KrigingSink& sink,
                const Progress& progress, KrigingSummary& summary) {
  auto workspaces = workspaces_for(engine, summary.threads);
  const bool with_probability = !std::isnan(engine.options().threshold);
  const std::int64_t block_rows = raster_block_rows(grid);
  NodeBuffers buffers[2];
  std::vector<unsigned char> inside;
  auto hand_on = [&](NodeBuffers& b, std::int64_t row0, std::int64_t rows) {
    tally(b.block, summary);
    for (unsigned char f : b.non_finite) summary.non_finite += f;  // nodata, and warned of
    sink.write(b.nodes(0, row0, rows, 1, nullptr));
  };
  std::future<void> pending;
  int current = 0;
  for (std::int64_t row0 = 0; row0 < grid.ny; row0 += block_rows) {
    const std::int64_t rows = std::min(block_rows, grid.ny - row0);
    if (mask) mask->rows(grid, row0, rows, inside);
    NodeBuffers& b = buffers[current];
    b.resize(static_cast<std::size_t>(grid.nx * rows), with_probability);
    krige_nodes(
        engine, grid.nx * rows,
        [&](std::int64_t i) {
          return Point{grid.x(i % grid.nx), grid.y(row0 + i / grid.nx), 0};
        },
        mask ? &inside : nullptr, workspaces, b.block, summary.threads,
        [&](std::int64_t first, std::int64_t last) { b.convert(engine, first, last); });
    if (pending.valid()) pending.get();  // the previous block is handed on (or throws)
    if (progress && row0 > 0) progress(static_cast<double>(row0) / static_cast<double>(grid.ny));
    if (summary.threads > 1)
      pending = std::async(std::launch::async, hand_on, std::ref(b), row0, rows);
    else
      hand_on(b, row0, rows);
    current = 1 - current;
  }
  if (pending.valid()) pending.get();
}

// A grid in table order: layer by layer, rows south to north, only the
// listed nodes when a block list is given.
void krige_layers(const KrigingEngine& engine, const GridSpec& grid, const std::string& blocks,
                  KrigingSink& sink, const Progress& progress, KrigingSummary& summary) {
  std::vector<unsigned char> listed;
  if (!blocks.empty()) listed = listed_blocks(blocks, grid);
  auto workspaces = workspaces_for(engine, summary.threads);
  const bool with_probability = !std::isnan(engine.options().threshold);
  const std::int64_t per_layer = grid.nx * grid.ny;
  std::vector<unsigned char> layer_listed;
  NodeBuffers b;
  std::int64_t empty_slope = 0, empty_efficiency = 0;
  for (std::int64_t layer_index = 0; layer_index < grid.nz; ++layer_index) {
    auto node = [&](std::int64_t i) {
      return Point{grid.x(i % grid.nx), grid.y(grid.ny - 1 - i / grid.nx),
                   grid.dimension == 3 ? grid.z(layer_index) : 0.0};
    };
    if (!listed.empty())
      layer_listed.assign(listed.begin() + layer_index * per_layer,
                          listed.begin() + (layer_index + 1) * per_layer);
    b.resize(static_cast<std::size_t>(per_layer), with_probability);
    krige_nodes(engine, per_layer, node, listed.empty() ? nullptr : &layer_listed, workspaces,
                b.block, summary.threads,
                [&](std::int64_t first, std::int64_t last) { b.convert(engine, first, last); });
    tally(b.block, summary);
    for (std::size_t i = 0; i < b.block.size(); ++i) {
      if ((!layer_listed.empty() && !layer_listed[i]) || !b.block[i].ok()) continue;
      summary.non_finite += b.non_finite[i];
      empty_slope += !std::isfinite(b.slope[i]);
      empty_efficiency += !std::isfinite(b.efficiency[i]);
    }
    sink.write(b.nodes(layer_index, grid.ny - 1, grid.ny, -1, &layer_listed));
    if (progress) progress(static_cast<double>(layer_index + 1) / static_cast<double>(grid.nz));
  }
  if (empty_slope) summary.empty_columns.push_back({"slope_of_regression", empty_slope});
  if (empty_efficiency) summary.empty_columns.push_back({"kriging_efficiency", empty_efficiency});
}

}  // namespace

KrigingSummary krige_grid(const KrigingEngine& engine, const GridSpec& grid,
                          const GridKrigingOptions& options, KrigingSink& sink,
                          const Progress& progress) {
  const auto start = std::chrono::steady_clock::now();
  if (!options.table_order && grid.dimension != 2)
    throw InputError(kComponent, "rasters are 2D; write a 3D grid as a table");
  if (options.table_order && !options.mask.empty())
    throw InputError(kComponent, "a mask applies to rasters; limit a table with a block list");
  KrigedLayout layout;
  layout.grid = grid;
  layout.threshold = engine.options().threshold;
  layout.log_variance = engine.options().transform.kind == Transform::log;
  KrigingSummary summary;
  summary.threads = thread_count(engine.options().threads);
  std::unique_ptr<Mask> mask;  // read before anything is written
  if (!options.mask.empty()) mask = std::make_unique<Mask>(options.mask, grid);
  sink.begin(layout);
  if (options.table_order) {
    krige_layers(engine, grid, options.blocks, sink, progress, summary);
  } else {
    krige_rows(engine, grid, mask.get(), sink, progress, summary);
    if (progress) progress(1.0);
  }
  sink.finish();
  summary.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  summary.warnings = describe(summary);
  if (mask && !mask->note().empty()) summary.warnings.push_back(mask->note());
  return summary;
}

KrigingSummary krige_raster(const KrigingEngine& engine, const GridSpec& grid,
                            const RasterTarget& target, const Progress& progress) {
  if (grid.dimension != 2)
    throw InputError(kComponent, "rasters are 2D; write a 3D grid as a table");
  RasterFileSink sink(target, thread_count(engine.options().threads));
  GridKrigingOptions o;
  o.mask = target.mask;
  return krige_grid(engine, grid, o, sink, progress);
}

KrigingSummary krige_table(const KrigingEngine& engine, const GridSpec& grid,
                           const TableTarget& target, const Progress& progress) {
  TableFileSink sink(target);
  GridKrigingOptions o;
  o.table_order = true;
  o.blocks = target.blocks;
  return krige_grid(engine, grid, o, sink, progress);
}

}  // namespace sillstone
