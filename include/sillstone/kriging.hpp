// sillstone/kriging.hpp -- simple, ordinary, universal and external-drift
// kriging, at points and over blocks, in 2D and 3D.
//
// The systems solved, the back-transforms, the exceedance probability and
// the block quality figures are written out in docs/kriging.md with their
// sources. In brief, for the n neighbours of a target x0 (or block V):
//
//   simple:      K lambda = k,                      Z* = m + lambda'(z - m)
//   ordinary /   [K  F][lambda]   [k ]
//   universal:   [F' 0][  mu  ] = [f0],              Z* = lambda'z
//
// with K_ij = C(x_i - x_j), k_i = C(x_i - x0) (block: the average of C over
// the block's discretisation points), F the drift functions at the samples
// (1 for ordinary; 1, x, y[, z] for a linear drift; plus squares and cross
// products for a quadratic one; plus the external-drift raster's value) and
// f0 the same at the target. Kriging variance: sigma^2 = C00 - lambda'k -
// mu'f0, with C00 = C(0) (total sill, nugget included) for points and the
// block-to-block average covariance for blocks. The system is solved in
// covariance form: a Cholesky factorisation of K, the drift handled through
// its Schur complement F'K^-1 F.
//
// Thread safety: a KrigingEngine is immutable after construction; estimate()
// may run concurrently with one Workspace per thread.
#pragma once

#include <cstdint>
#include <functional>
#include <limits>
#include <memory>
#include <string>
#include <vector>

#include "sillstone/grid.hpp"
#include "sillstone/model.hpp"
#include "sillstone/neighbourhood.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/transform.hpp"

namespace sillstone {

enum class KrigingMethod : int { simple, ordinary, universal };
enum class Drift : int { none, linear, quadratic };

struct KrigingOptions {
  KrigingMethod method = KrigingMethod::ordinary;          ///< --method
  double mean = std::numeric_limits<double>::quiet_NaN();  ///< simple kriging mean on the kriged
                                                           ///< scale; NaN: declustered sample mean
  Drift drift = Drift::none;    ///< --drift (universal kriging: linear when not given)
  std::string external_drift;   ///< --external-drift RASTER: its value is a drift term
  std::vector<double> block;    ///< --block DX,DY[,DZ]; empty: point kriging
  std::vector<int> discretise;  ///< --discretise NX,NY[,NZ]; default 4 per axis
  ValueTransform transform;     ///< the model's (kind none or log): kriged on forward(value)
  double threshold = std::numeric_limits<double>::quiet_NaN();  ///< --threshold T (original scale)
  int threads = 0;                                              ///< --threads; 0: every core
  /// Checks the options against the data dimension and the model.
  bool is_valid(int dimension, const CovarianceModel& model, std::string* why) const;
};

/// The kriging result at one target, before any back-transform.
struct NodeEstimate {
  enum class Status : int {
    ok,
    too_few_neighbours,  ///< fewer than --min-points within the search
    singular,            ///< the covariance matrix is singular or badly conditioned
                         ///< (estimated reciprocal condition number below 1e-12)
    drift_unresolved,  ///< the neighbours cannot fix the drift (e.g. collinear for a linear drift)
    outside_drift,     ///< the external drift raster has no value at the target
  };
  Status status = Status::too_few_neighbours;
  int neighbours = 0;
  double estimate = std::numeric_limits<double>::quiet_NaN();  ///< on the kriged scale
  double variance = std::numeric_limits<double>::quiet_NaN();  ///< kriging variance, kriged scale
  double lagrange = 0;         ///< mu of the constant term (0 for simple kriging)
  double target_variance = 0;  ///< C00: C(0) for points, the block variance for blocks
  double weighted_cov = 0;     ///< lambda'k
  double weights_var = 0;      ///< lambda'K lambda
  bool ok() const { return status == Status::ok; }
};

/// Values written to outputs, on the original scale.
struct NodeOutput {
  double estimate = std::numeric_limits<double>::quiet_NaN();
  double variance = std::numeric_limits<double>::quiet_NaN();  ///< kriging variance (log scale with
                                                               ///< --transform log)
  double probability = std::numeric_limits<double>::quiet_NaN();  ///< P(Z > threshold)
  double slope =
      std::numeric_limits<double>::quiet_NaN();  ///< slope of regression lambda'k / lambda'K lambda
  double efficiency =
      std::numeric_limits<double>::quiet_NaN();  ///< kriging efficiency (C00 - sigma^2) / C00
};

namespace detail {
class CovarianceKernel;
}

class KrigingEngine {
 public:
  /// Prepares kriging of value column `column` of `samples`. Throws InputError
  /// for options that do not fit the data or the model (e.g. a power model
  /// with simple kriging, log of non-positive values naming the row, too
  /// few samples for the drift).
  KrigingEngine(const SampleSet& samples, const CovarianceModel& model,
                const KrigingOptions& options, const NeighbourhoodOptions& neighbourhood,
                std::size_t column = 0);
  ~KrigingEngine();
  KrigingEngine(const KrigingEngine&) = delete;
  KrigingEngine& operator=(const KrigingEngine&) = delete;

  /// Per-thread scratch space: matrices sized for the largest system, reused
  /// (no heap allocation per target once warm), and the last factorisation,
  /// reused while the neighbour set is unchanged.
  /// Its members are internal to the engine.
  struct Workspace {
    NeighbourSearch::Workspace search;
    std::vector<std::uint32_t> nb, factored_nb, factored_sorted, removed, added;
    bool have_factor = false;
    /// When true, a factorisation is UPDATED when a few samples leave or
    /// join the neighbour set (a rank-one update per sample out, one more
    /// row per sample in) instead of being recomputed (at most
    /// update_budget times, set from the system's conditioning). Results then depend,
    /// by rounding, on the targets estimated since the last restart():
    /// callers that need results independent of threads restart at fixed
    /// points (grid kriging: every chunk of nodes). Off: every result is a
    /// function of its neighbour set alone.
    bool incremental = false;
    int updates = 0;        // since the last full factorisation
    int update_budget = 0;  // updates allowed before the next (from the conditioning)
    /// Forgets the factorisation: the next target starts afresh.
    void restart() { have_factor = false; }
    NodeEstimate::Status factor_status = NodeEstimate::Status::ok;
    // The factorisation of the system of `factored_nb`: K = LL' (L column-major,
    // leading dimension ld, with the inverses of its diagonal), w = L^-1 z,
    // G = L^-1 F (column c at c * ld), S = G'G (Cholesky factor), G'w.
    std::size_t ld = 0;
    std::vector<double> L, inv_diag, w, G, S, Gw;
    // Per target: k, y = L^-1 k, G'y, f0, r = G'y - f0 then mu, the weights.
    std::vector<double> k, y, Gy, f0, r, lambda, drift;
    std::vector<double> lag_x, lag_y, lag_z, block_cov;  // lags for batched covariances
    std::vector<double> column, extra;                   // scratch of the updates
    std::vector<double> cond_l, cond_x, cond_z;          // condition estimate scratch
  };
  std::unique_ptr<Workspace> make_workspace() const;

  /// Kriging at `target` (absolute coordinates; the block centre with
  /// --block), leaving out sample `exclude` (>= 0, for cross-validation).
  /// `external` is the external drift's value at the target (ignored without
  /// one). `weights`, when given, receives (sample index, weight) pairs.
  NodeEstimate estimate(const Point& target, Workspace& ws, std::int64_t exclude = -1,
                        double external = 0,
                        std::vector<std::pair<std::uint32_t, double>>* weights = nullptr) const;

  /// Back-transform, exceedance probability and block figures for outputs.
  NodeOutput finish(const NodeEstimate& e) const;

  const KrigingOptions& options() const { return options_; }
  const CovarianceModel& model() const { return model_; }
  int dimension() const { return dimension_; }
  std::size_t size() const { return values_.size(); }
  /// The kriged value of sample i (after any transform).
  double value(std::size_t i) const { return values_[i]; }
  /// Simple kriging mean actually used (kriged scale), NaN for other methods.
  double mean() const { return mean_; }
  /// Notes for the user: the simple-kriging mean used, the transform, ...
  const std::vector<std::string>& notes() const { return notes_; }
  /// Warnings about the data and the model found when the engine was built:
  /// very few samples, samples on one line (or plane), all values equal,
  /// near-duplicate samples, a gaussian structure without nugget on samples
  /// dense for its range. Each is one sentence without "warning:".
  const std::vector<std::string>& warnings() const { return warnings_; }
  /// The external drift raster's value at an absolute point (NaN outside).
  double external_at(const Point& p) const;

 private:
  struct Drifts;
  struct External;
  CovarianceModel model_;
  KrigingOptions options_;
  int dimension_;
  Point origin_;                       // coordinates are centred on it internally
  double drift_scale_ = 1;             // drift coordinates are (x - origin) / drift_scale
  std::vector<Point> points_;          // centred sample coordinates
  std::vector<double> values_;         // kriged-scale values
  std::vector<double> external_;       // external drift at the samples
  std::vector<Point> discretisation_;  // block offsets from the centre (one point: {0,0,0})
  double target_variance_ = 0;         // C00
  double mean_ = std::numeric_limits<double>::quiet_NaN();
  int drift_terms_ = 0;  // p: columns of F
  std::unique_ptr<NeighbourSearch> search_;
  std::unique_ptr<detail::CovarianceKernel> kernel_;  // batched covariances (models with a sill)
  std::unique_ptr<External> external_raster_;
  std::vector<std::string> notes_;
  std::vector<std::string> warnings_;

  void diagnose(const SampleSet& samples, const std::vector<std::size_t>& used);
  double cov(double dx, double dy, double dz) const;
  void drift_row(const Point& centred, double external, double* f) const;
  /// Condition number of the drift matrix of samples nb[0..n), its
  /// non-constant columns centred and scaled (infinite for a constant term).
  double drift_condition(const std::uint32_t* nb, std::size_t n) const;
  void right_hand_side(const Point& centred_target, Workspace& ws, double external) const;
  NodeEstimate estimate_intrinsic(const Point& centred_target, Workspace& ws, double external,
                                  std::vector<std::pair<std::uint32_t, double>>* weights,
                                  NodeEstimate& e) const;
  void factorise(Workspace& ws) const;
  bool update_factor(Workspace& ws) const;
  int update_budget(const Workspace& ws) const;
  void remove_from_factor(Workspace& ws, std::size_t j) const;
  bool append_to_factor(Workspace& ws, std::uint32_t sample) const;
  void finish_factor(Workspace& ws) const;
  void complete(const Workspace& ws, double est, double lk, double mu_f0,
                std::vector<std::pair<std::uint32_t, double>>* weights, NodeEstimate& e) const;
};

/// Counts of what happened across a grid or a cross-validation.
struct KrigingSummary {
  std::int64_t targets = 0;
  std::int64_t estimated = 0;
  std::int64_t masked = 0;
  std::int64_t too_few_neighbours = 0;
  std::int64_t singular = 0;
  std::int64_t drift_unresolved = 0;
  std::int64_t outside_drift = 0;
  /// Estimated targets with an output value that is not a finite number (e.g.
  /// a back-transform that overflows), written as nodata or an empty cell.
  std::int64_t non_finite = 0;
  /// Table outputs: per optional column, the estimated rows left empty
  /// because the figure is undefined there (e.g. kriging_efficiency of a
  /// power model, slope_of_regression where every weight is 0).
  std::vector<std::pair<std::string, std::int64_t>> empty_columns;
  double seconds = 0;
  int threads = 1;
  std::vector<std::string> warnings;
  /// Adds the status of one target.
  void count(NodeEstimate::Status s);
};

/// Progress callback: fraction done in [0, 1].
using Progress = std::function<void(double)>;

/// A 2D raster output of `krige` (layout of shared/PRODUCT.md: band 1
/// estimate, band 2 variance, band 3 probability_above_T with a threshold).
struct RasterTarget {
  std::string path;    ///< final path; written under a temporary name, renamed when done
  std::string format;  ///< GDAL driver; empty: from the extension (GeoTIFF by default)
  bool overwrite = false;
  std::string mask;  ///< polygons (any OGR source): nodes outside them are nodata
  std::vector<std::pair<std::string, std::string>> metadata;  ///< run metadata items
  double nodata = -9999.0;
};

/// Krigs every node of a 2D grid and writes the raster, streaming blocks of
/// rows so that grids larger than memory can be written. Results are
/// bit-for-bit identical for any thread count. (krige_grid with a
/// RasterFileSink, kriging_sink.hpp; other sinks keep the grid in memory.)
KrigingSummary krige_raster(const KrigingEngine& engine, const GridSpec& grid,
                            const RasterTarget& target, const Progress& progress = {});

/// A block-model (or node) table: CSV or GeoPackage chosen by extension, with
/// columns x,y,z,estimate,variance,neighbours[,probability_above_T],
/// slope_of_regression,kriging_efficiency. Rows run x fastest, then y, then z
/// (all ascending). Unestimated nodes have empty (null) values.
struct TableTarget {
  std::string path;
  bool overwrite = false;
  /// Optional list of blocks to estimate: any OGR source of points, with
  /// x, y[, z] columns or point geometries (e.g. the blocks inside a
  /// geological wireframe). A node is estimated when a listed point lies in
  /// its cell; the others are left out of the table.
  std::string blocks;
};
KrigingSummary krige_table(const KrigingEngine& engine, const GridSpec& grid,
                           const TableTarget& target, const Progress& progress = {});

/// Refuses (InputError) an --external-drift raster that kriging `samples`
/// would refuse: unreadable, rotated, in another CRS, too large. For checks
/// before long work; KrigingEngine makes the same checks.
void check_external_drift(const std::string& path, const SampleSet& samples);

/// Refuses (InputError) a --mask that krige_raster would refuse for `grid`:
/// unreadable, not polygons, in a CRS other than the grid's.
void check_mask(const std::string& path, const GridSpec& grid);

/// What writing a grid would take, estimated before any work.
struct OutputSize {
  double disk = 0;    ///< bytes of the output (rasters: uncompressed)
  double memory = 0;  ///< bytes held while kriging (rasters: one block of rows; tables: one layer)
};
/// The estimate for `grid` with `values_per_node` values per node (raster
/// bands, or table columns after x, y, z) written as a raster or a table.
OutputSize output_size(const GridSpec& grid, std::size_t values_per_node, bool table);

/// Refuses (InputError "grid", naming `path` and the estimate) a grid whose
/// output would need more disk than is free in the output's folder or more
/// memory than the machine has, or a raster wider or taller than GDAL allows.
/// Call it before any long work. `kept_in_memory`: bytes of results held in
/// memory as well (e.g. a KrigedGrid for the report), added to the memory
/// needed.
void check_output_size(const GridSpec& grid, std::size_t values_per_node, bool table,
                       const std::string& path, double kept_in_memory = 0);

/// Name of the probability band/column for a threshold, e.g. "probability_above_450".
std::string probability_name(double threshold);

/// One line per count that is not zero, for the user (nodes masked, left
/// unestimated and why). `target` names what was kriged: "node" (grids,
/// left as nodata) or "sample" (cross-validation, left unestimated).
std::vector<std::string> describe(const KrigingSummary& summary,
                                  const std::string& target = "node");

}  // namespace sillstone
