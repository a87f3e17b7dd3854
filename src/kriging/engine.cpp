// The kriging engine: one system per target. See kriging.hpp for the
// systems and docs/kriging.md for their derivation and sources.
#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include <Eigen/Dense>

#include <algorithm>
#include <cmath>
#include <iterator>
#include <limits>
#include <tuple>

#include "kriging/dense.hpp"
#include "models/kernel.hpp"
#include "samples/point_index.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/kriging.hpp"
#include "sillstone/names.hpp"
#include "sillstone/samples.hpp"
#include "sillstone/summary.hpp"

namespace sillstone {
namespace {

constexpr const char* kComponent = "kriging";
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Relative pivot below which a system counts as singular or badly
// conditioned: about 1e-12 of a diagonal entry loses all but ~4 digits.
constexpr double kPivotTol = 1e-12;
// Estimated reciprocal condition number below which a system that passed the
// pivot test still counts as badly conditioned: the weights may then be
// wrong from the fourth digit on (relative error up to about
// machine epsilon / rcond = 1e-4). Smooth models without a nugget (gaussian)
// on dense samples give such systems with every pivot above kPivotTol.
constexpr double kRcondTol = 1e-12;
// Fewer samples than this draw a warning: the map then shows the model more
// than the data, and nothing checks the model (common practice).
constexpr std::size_t kFewSamples = 10;
// Two samples whose values the model correlates above 1 - kNearDuplicate are
// "near-duplicates": kriging systems holding both lose about -log10 of this
// many digits, and cross-validation estimates each from the other.
constexpr double kNearDuplicate = 1e-6;
constexpr int kMaxThreads = 1024;
// Largest condition number of a neighbourhood's drift matrix F, with its
// non-constant columns centred and scaled to unit length (so that units and
// the offset of the coordinates do not count), above which the drift counts
// as unresolved and the node is nodata. It is the ratio of the largest to
// the smallest singular value: 1 for terms that vary independently, about
// the length-to-width ratio of the samples for a linear drift. Samples on a
// line whose coordinates were rounded to the millimetre give about 1e5: the
// drift across the line is then fixed by the rounding, and estimates off
// the line went to hundreds of times the data's range. Well-spread designs
// give under about 50 even for a quadratic drift, so the limit leaves a
// wide margin (our own choice).
constexpr double kDriftConditionLimit = 1e4;
// Most drift terms (3D quadratic drift plus an external drift).
constexpr int kMaxDriftTerms = 11;

std::string fmt(double v) { return format_for_people(v, 10); }

int drift_columns(const KrigingOptions& o, int dimension) {
  if (o.method == KrigingMethod::simple) return 0;
  int p = 1;
  const Drift d =
      o.method == KrigingMethod::universal && o.drift == Drift::none ? Drift::linear : o.drift;
  if (o.method == KrigingMethod::universal) {
    p += dimension;
    if (d == Drift::quadratic) p += dimension * (dimension + 1) / 2;
  }
  if (!o.external_drift.empty()) ++p;
  return p;
}

// Opens an external drift raster and refuses what kriging cannot use: an
// unreadable file, no band, a rotated grid, a CRS other than the samples',
// a raster too large to hold in memory. Fills `gt` with its geotransform.
std::unique_ptr<GDALDataset> open_external_drift(const std::string& path, const SampleSet& samples,
                                                 double* gt) {
  refuse_special_input(path, kComponent, "--external-drift");
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY,
                                                    nullptr, nullptr, nullptr));
  if (!ds || ds->GetRasterCount() < 1)
    throw InputError(kComponent, path + ": cannot be read as a raster (--external-drift)");
  if (ds->GetGeoTransform(gt) != CE_None || gt[2] != 0 || gt[4] != 0)
    throw InputError(kComponent, path + ": needs a north-up geotransform (--external-drift)");
  if (const OGRSpatialReference* srs = ds->GetSpatialRef()) {
    if (!samples.crs_wkt.empty()) {
      OGRSpatialReference mine;
      mine.importFromWkt(samples.crs_wkt.c_str());
      if (!srs->IsSame(&mine))
        throw InputError(kComponent, path + ": its CRS (" + std::string(srs->GetName()) +
                                         ") differs from the samples' (" + samples.crs_name +
                                         "); reproject one of them");
    }
  }
  if (static_cast<double>(ds->GetRasterXSize()) * static_cast<double>(ds->GetRasterYSize()) > 2e8)
    throw InputError(kComponent, path + ": too large to hold in memory (over 200 million cells)");
  return ds;
}

}  // namespace

void check_external_drift(const std::string& path, const SampleSet& samples) {
  double gt[6];
  open_external_drift(path, samples, gt);
}

// --- External drift raster, held in memory -----------------------------------------
struct KrigingEngine::External {
  std::vector<double> data;
  std::int64_t nx = 0, ny = 0;
  double gt[6] = {};
  bool has_nodata = false;
  double nodata = 0;
  std::string crs_wkt;

  // The value of the cell holding (x, y); NaN outside or on nodata.
  double at(double x, double y) const {
    const double col = (x - gt[0]) / gt[1];
    const double row = (y - gt[3]) / gt[5];
    if (!(col >= 0) || !(row >= 0) || col >= static_cast<double>(nx) ||
        row >= static_cast<double>(ny))
      return kNaN;
    const double v = data[static_cast<std::size_t>(row) * static_cast<std::size_t>(nx) +
                          static_cast<std::size_t>(col)];
    return (has_nodata && v == nodata) || !std::isfinite(v) ? kNaN : v;
  }
};

bool KrigingOptions::is_valid(int dimension, const CovarianceModel& model, std::string* why) const {
  auto fail = [why](const std::string& text) {
    if (why) *why = text;
    return false;
  };
  if (method == KrigingMethod::simple && !model.has_sill())
    return fail(
        "a power model has no sill, so it has no covariance: simple kriging needs one "
        "(use --method ordinary)");
  if (method == KrigingMethod::simple && !external_drift.empty())
    return fail("--external-drift needs --method ordinary or universal");
  if (method != KrigingMethod::universal && drift != Drift::none)
    return fail("--drift needs --method universal");
  if (!std::isnan(mean) && method != KrigingMethod::simple)
    return fail("--mean is for --method simple only");
  if (!std::isnan(mean) && !std::isfinite(mean)) return fail("--mean must be a finite number");
  if (transform.kind == Transform::normal_score)
    return fail(
        "kriging of normal scores is not offered (it needs a simulation to be back-"
        "transformed): compute the variogram with --transform log or none");
  if (transform.kind == Transform::log && !std::isfinite(transform.log_offset))
    return fail("the log offset must be a finite number");
  if (transform.kind == Transform::log &&
      (method == KrigingMethod::universal || !external_drift.empty()))
    return fail(
        "--transform log is supported with simple and ordinary kriging only (the "
        "unbiased back-transform of docs/kriging.md is defined for those)");
  if (!block.empty()) {
    if (static_cast<int>(block.size()) != dimension)
      return fail("--block takes " + std::string(dimension == 3 ? "DX,DY,DZ" : "DX,DY") + " for " +
                  std::to_string(dimension) + "D data");
    for (double b : block)
      if (!(b > 0) || !std::isfinite(b)) return fail("--block sizes must be positive");
  }
  if (!discretise.empty()) {
    if (block.empty()) return fail("--discretise needs --block");
    if (static_cast<int>(discretise.size()) != dimension)
      return fail("--discretise takes one count per axis (" + std::to_string(dimension) + ")");
    long total = 1;
    for (int d : discretise) {
      if (d < 1 || d > 64) return fail("--discretise counts must be between 1 and 64");
      total *= d;
    }
    if (total > 4096) return fail("--discretise gives more than 4096 points per block");
  }
  if (!std::isnan(threshold)) {
    if (!std::isfinite(threshold)) return fail("--threshold must be a finite number");
    if (transform.kind == Transform::log && !transform.accepts(threshold))
      return fail("--threshold must be above " + fmt(-transform.log_offset) + " with " +
                  transform.describe() + " (its log must be defined)");
  }
  // Each thread holds its own workspace: a typo such as 100000 would try to
  // start that many threads before any work.
  if (threads < 0 || threads > kMaxThreads)
    return fail("--threads must be between 0 (every core) and " + std::to_string(kMaxThreads));
  return true;
}

void KrigingSummary::count(NodeEstimate::Status s) {
  ++targets;
  switch (s) {
    case NodeEstimate::Status::ok:
      ++estimated;
      break;
    case NodeEstimate::Status::too_few_neighbours:
      ++too_few_neighbours;
      break;
    case NodeEstimate::Status::singular:
      ++singular;
      break;
    case NodeEstimate::Status::drift_unresolved:
      ++drift_unresolved;
      break;
    case NodeEstimate::Status::outside_drift:
      ++outside_drift;
      break;
  }
}

// --- Per-thread workspace ------------------------------------------------------------
std::unique_ptr<KrigingEngine::Workspace> KrigingEngine::make_workspace() const {
  auto ws = std::make_unique<Workspace>();
  const std::size_t n = search_->options().global
                            ? points_.size()
                            : static_cast<std::size_t>(search_->options().max_points);
  const auto p = static_cast<std::size_t>(drift_terms_);
  ws->nb.reserve(n);
  ws->factored_nb.reserve(n);
  ws->factored_sorted.reserve(n);
  ws->column.resize(n + 1);
  ws->extra.resize(p + 1);
  ws->ld = n;
  ws->L.resize(n * n);
  ws->G.resize(n * p);
  ws->S.resize(p * p);
  for (auto* v : {&ws->inv_diag, &ws->w}) v->resize(n);
  for (auto* v : {&ws->k, &ws->y, &ws->lambda}) v->reserve(n);
  for (auto* v : {&ws->Gw, &ws->Gy, &ws->drift}) v->resize(p);
  for (auto* v : {&ws->f0, &ws->r}) v->reserve(p);
  const std::size_t lags = std::max(n, discretisation_.size());
  for (auto* v : {&ws->lag_x, &ws->lag_y, &ws->lag_z, &ws->block_cov}) v->resize(lags);
  return ws;
}

// --- Construction ------------------------------------------------------------------------
KrigingEngine::KrigingEngine(const SampleSet& samples, const CovarianceModel& model,
                             const KrigingOptions& options,
                             const NeighbourhoodOptions& neighbourhood, std::size_t column)
    : model_(model), options_(options), dimension_(samples.dimension) {
  if (model.has_sill()) kernel_ = std::make_unique<detail::CovarianceKernel>(model);
  std::string why;
  if (!options.is_valid(dimension_, model, &why)) throw InputError(kComponent, why);
  if (!neighbourhood.is_valid(dimension_, &why)) throw InputError(kComponent, why);
  if (column >= samples.values.size()) throw InputError(kComponent, "no such value column");
  require_moderate_values(samples, column, kComponent);
  if (model.dimension() == 3 && dimension_ == 2)
    throw InputError(kComponent,
                     "the model has 3D anisotropy (dip, plunge or ratio2) but the "
                     "samples are 2D (give --z)");

  // Values on the kriged scale; samples without a value are left out.
  std::vector<std::size_t> used;
  const auto& raw = samples.values[column];
  for (std::size_t i = 0; i < raw.size(); ++i) {
    if (std::isnan(raw[i])) continue;
    double v = raw[i];
    if (options.transform.kind != Transform::none) {
      if (!options.transform.accepts(v))
        throw InputError(
            kComponent, InputLocation{samples.source, samples.ids[i], samples.value_names[column]},
            "the transform " + options.transform.describe() + " is undefined for the value " +
                fmt(v) + (options.transform.log_offset == 0 ? " (values must be positive)" : ""));
      v = options.transform.forward(v);
    }
    used.push_back(i);
    values_.push_back(v);
  }
  drift_terms_ = drift_columns(options, dimension_);
  const std::size_t needed = std::max<std::size_t>(static_cast<std::size_t>(drift_terms_) + 1, 1);
  if (!neighbourhood.global && drift_terms_ > 1 &&
      static_cast<std::size_t>(neighbourhood.max_points) < needed)
    throw InputError(kComponent, "--max-points " + std::to_string(neighbourhood.max_points) +
                                     " is too few for " + std::string(name_of(options.method)) +
                                     " kriging with these drift terms: its " +
                                     std::to_string(drift_terms_) + " drift terms need at least " +
                                     std::to_string(needed) + " samples in each system");
  if (values_.size() < needed)
    throw InputError(
        kComponent, samples.source + ": " + std::to_string(values_.size()) +
                        " sample(s) with a value; " + std::string(name_of(options.method)) +
                        " kriging with these drift terms needs at least " + std::to_string(needed));

  // Centre the coordinates (UTM-scale northings keep their precision).
  double sx = 0, sy = 0, sz = 0;
  for (std::size_t i : used) {
    sx += samples.points[i].x;
    sy += samples.points[i].y;
    sz += samples.points[i].z;
  }
  const auto n = static_cast<double>(used.size());
  origin_ = {sx / n, sy / n, dimension_ == 3 ? sz / n : 0.0};
  double half_extent = 0;
  for (std::size_t i : used) {
    const Point& p = samples.points[i];
    points_.push_back({p.x - origin_.x, p.y - origin_.y, dimension_ == 3 ? p.z - origin_.z : 0.0});
    half_extent = std::max({half_extent, std::abs(points_.back().x), std::abs(points_.back().y),
                            std::abs(points_.back().z)});
  }
  drift_scale_ = half_extent > 0 ? half_extent : 1.0;

  // Block discretisation: offsets of the points from the block centre.
  if (options.block.empty()) {
    discretisation_.push_back({0, 0, 0});
  } else {
    std::vector<int> nd = options.discretise;
    if (nd.empty()) nd.assign(static_cast<std::size_t>(dimension_), 4);  // common practice
    const int nz = dimension_ == 3 ? nd[2] : 1;
    for (int iz = 0; iz < nz; ++iz)
      for (int iy = 0; iy < nd[1]; ++iy)
        for (int ix = 0; ix < nd[0]; ++ix)
          discretisation_.push_back(
              {((ix + 0.5) / nd[0] - 0.5) * options.block[0],
               ((iy + 0.5) / nd[1] - 0.5) * options.block[1],
               dimension_ == 3 ? ((iz + 0.5) / nz - 0.5) * options.block[2] : 0.0});
  }
  double c00 = 0;
  for (const auto& d1 : discretisation_)
    for (const auto& d2 : discretisation_) c00 += cov(d1.x - d2.x, d1.y - d2.y, d1.z - d2.z);
  target_variance_ = c00 / static_cast<double>(discretisation_.size() * discretisation_.size());

  // External drift: the raster's value at each sample.
  if (!options.external_drift.empty()) {
    auto ext = std::make_unique<External>();
    const std::unique_ptr<GDALDataset> ds =
        open_external_drift(options.external_drift, samples, ext->gt);
    if (const OGRSpatialReference* srs = ds->GetSpatialRef(); srs && samples.crs_wkt.empty())
      warnings_.push_back(options.external_drift + ": the external drift raster is in " +
                          std::string(srs->GetName()) +
                          " but the samples have no CRS: they are taken to be in the same CRS "
                          "(give theirs with --crs to have this checked)");
    ext->nx = ds->GetRasterXSize();
    ext->ny = ds->GetRasterYSize();
    GDALRasterBand* band = ds->GetRasterBand(1);
    int has = 0;
    ext->nodata = band->GetNoDataValue(&has);
    ext->has_nodata = has != 0;
    ext->data.resize(static_cast<std::size_t>(ext->nx * ext->ny));
    if (band->RasterIO(GF_Read, 0, 0, static_cast<int>(ext->nx), static_cast<int>(ext->ny),
                       ext->data.data(), static_cast<int>(ext->nx), static_cast<int>(ext->ny),
                       GDT_Float64, 0, 0, nullptr) != CE_None)
      throw InputError(kComponent, options.external_drift + ": cannot be read");
    external_raster_ = std::move(ext);
    for (std::size_t k = 0; k < used.size(); ++k) {
      const Point& p = samples.points[used[k]];
      const double v = external_raster_->at(p.x, p.y);
      if (std::isnan(v))
        throw InputError(kComponent, InputLocation{samples.source, samples.ids[used[k]], ""},
                         "the sample lies outside the external drift raster (or on nodata): " +
                             options.external_drift);
      external_.push_back(v);
    }
  }

  // A drift the samples cannot fix (e.g. all on one line for a linear drift)
  // is refused here rather than failing at every node.
  if (drift_terms_ > 1) {
    Eigen::MatrixXd f(static_cast<Eigen::Index>(points_.size()), drift_terms_);
    std::vector<double> row(static_cast<std::size_t>(drift_terms_));
    for (std::size_t i = 0; i < points_.size(); ++i) {
      drift_row(points_[i], external_.empty() ? 0.0 : external_[i], row.data());
      for (int c = 0; c < drift_terms_; ++c)
        f(static_cast<Eigen::Index>(i), c) = row[static_cast<std::size_t>(c)];
    }
    Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(f);
    qr.setThreshold(1e-10);
    if (qr.rank() < drift_terms_)
      throw InputError(kComponent,
                       "the drift terms cannot be told apart on these samples (rank " +
                           std::to_string(qr.rank()) + " of " + std::to_string(drift_terms_) +
                           "): e.g. samples on one line cannot fix a linear drift, or the "
                           "external drift is constant at the samples");
    // Nearly so (e.g. on a line but for rounded coordinates): every
    // neighbourhood would be, so the run is refused rather than all nodata.
    std::vector<std::uint32_t> all(points_.size());
    for (std::size_t i = 0; i < all.size(); ++i) all[i] = static_cast<std::uint32_t>(i);
    const double condition = drift_condition(all.data(), all.size());
    if (condition > kDriftConditionLimit)
      throw InputError(kComponent,
                       "the drift terms are nearly indistinguishable on these samples (condition "
                       "number " +
                           fmt(condition) + " of the scaled drift matrix, above " +
                           fmt(kDriftConditionLimit) +
                           "): e.g. samples on a line but for rounded coordinates; the drift "
                           "across it would rest on the rounding. Use ordinary kriging, or "
                           "a drift the samples can fix");
  }

  diagnose(samples, used);

  // Simple kriging mean: given, or the declustered mean of the kriged values.
  if (options.method == KrigingMethod::simple) {
    if (std::isnan(options.mean)) {
      std::vector<Point> pts;
      for (std::size_t i : used) pts.push_back(samples.points[i]);
      const DeclusteringResult d = decluster(pts, values_, dimension_, {});
      mean_ = d.mean;
      notes_.push_back("simple kriging mean " + fmt(mean_) +
                       (options.transform.kind == Transform::log
                            ? " (on the scale of " + options.transform.describe() + ")"
                            : std::string()) +
                       ": the cell-declustered sample mean (cell " + fmt(d.cell) +
                       "); give --mean to set it");
    } else {
      mean_ = options.mean;
    }
  }
  if (!model.has_sill())
    notes_.push_back(
        "the power model has no sill: systems use the generalised covariance "
        "-gamma(h), valid because the weights sum to one");

  // The search ellipse follows the anisotropy of the longest structure.
  const auto shape = search_shape(model);
  Eigen::Matrix3d m;
  m << shape[0], shape[1], shape[2], shape[3], shape[4], shape[5], shape[6], shape[7], shape[8];
  search_ = std::make_unique<NeighbourSearch>(points_, dimension_, neighbourhood, m);
}

KrigingEngine::~KrigingEngine() = default;

double KrigingEngine::cov(double dx, double dy, double dz) const {
  return model_.has_sill() ? model_.covariance(dx, dy, dz) : -model_.variogram(dx, dy, dz);
}

double KrigingEngine::drift_condition(const std::uint32_t* nb, std::size_t n) const {
  const int q = drift_terms_ - 1;  // the columns after the constant
  if (q < 1) return 1.0;
  using Gram = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, 0, kMaxDriftTerms,
                             kMaxDriftTerms>;  // on the stack: no allocation per system
  double row[kMaxDriftTerms], mean[kMaxDriftTerms] = {};
  for (std::size_t i = 0; i < n; ++i) {
    drift_row(points_[nb[i]], external_.empty() ? 0.0 : external_[nb[i]], row);
    for (int c = 0; c < q; ++c) mean[c] += row[c + 1];
  }
  for (int c = 0; c < q; ++c) mean[c] /= static_cast<double>(n);
  Gram g = Gram::Zero(q, q);  // centred cross-products, two passes for accuracy
  for (std::size_t i = 0; i < n; ++i) {
    drift_row(points_[nb[i]], external_.empty() ? 0.0 : external_[nb[i]], row);
    for (int c = 0; c < q; ++c) row[c + 1] -= mean[c];
    for (int c = 0; c < q; ++c)
      for (int d = 0; d <= c; ++d) g(c, d) += row[c + 1] * row[d + 1];
  }
  for (int c = 0; c < q; ++c) {
    if (!(g(c, c) > 0)) return std::numeric_limits<double>::infinity();  // a constant term
    for (int d = 0; d < c; ++d) g(c, d) /= std::sqrt(g(c, c) * g(d, d));
  }
  for (int c = 0; c < q; ++c) g(c, c) = 1;
  // Eigenvalues of the correlation matrix C'C are the squared singular
  // values of the scaled, centred columns C; the constant column, orthogonal
  // to them and of unit length when scaled, adds the singular value 1,
  // which lies between the others (their squares average 1).
  const Eigen::SelfAdjointEigenSolver<Gram> eig(g, Eigen::EigenvaluesOnly);
  const double lo = eig.eigenvalues()(0), hi = eig.eigenvalues()(q - 1);
  return lo > 0 ? std::sqrt(hi / lo) : std::numeric_limits<double>::infinity();
}

void KrigingEngine::drift_row(const Point& c, double external, double* f) const {
  int i = 0;
  f[i++] = 1.0;
  if (options_.method == KrigingMethod::universal) {
    const double x = c.x / drift_scale_, y = c.y / drift_scale_, z = c.z / drift_scale_;
    f[i++] = x;
    f[i++] = y;
    if (dimension_ == 3) f[i++] = z;
    if (options_.drift == Drift::quadratic) {
      f[i++] = x * x;
      f[i++] = y * y;
      f[i++] = x * y;
      if (dimension_ == 3) {
        f[i++] = z * z;
        f[i++] = x * z;
        f[i++] = y * z;
      }
    }
  }
  if (!options_.external_drift.empty()) f[i++] = external;
}

double KrigingEngine::external_at(const Point& p) const {
  return external_raster_ ? external_raster_->at(p.x, p.y) : kNaN;
}

// --- Warnings about the data and the model -------------------------------------------------
void KrigingEngine::diagnose(const SampleSet& samples, const std::vector<std::size_t>& used) {
  const std::size_t n = points_.size();
  if (n < kFewSamples)
    warnings_.push_back("only " + std::to_string(n) +
                        " sample(s) with a value: the estimates and "
                        "variances rest on the model, which so few samples cannot check "
                        "(common practice: kriging wants some tens of samples)");
  if (n >= 2 && std::all_of(values_.begin(), values_.end(),
                            [this](double v) { return v == values_.front(); }))
    warnings_.push_back("all " + std::to_string(n) + " values are equal (" + fmt(values_.front()) +
                        "): there is no spatial variation; the estimate is that value everywhere");

  // Samples on one line (2D) or one plane (3D): the map away from it rests on
  // the model alone, and a linear drift cannot be fitted.
  if (n >= static_cast<std::size_t>(dimension_) + 1) {
    Eigen::MatrixXd f(static_cast<Eigen::Index>(n), dimension_ + 1);
    for (std::size_t i = 0; i < n; ++i) {
      const auto r = static_cast<Eigen::Index>(i);
      f(r, 0) = 1.0;
      f(r, 1) = points_[i].x / drift_scale_;
      f(r, 2) = points_[i].y / drift_scale_;
      if (dimension_ == 3) f(r, 3) = points_[i].z / drift_scale_;
    }
    Eigen::ColPivHouseholderQR<Eigen::MatrixXd> qr(f);
    qr.setThreshold(1e-10);
    if (qr.rank() < dimension_ + 1)
      warnings_.push_back(std::string("the samples lie on one ") +
                          (dimension_ == 3 ? "plane" : "line") +
                          ": away from it the estimates rest on the model alone, and universal "
                          "kriging with a linear drift is not possible");
  }

  if (n < 2 || !model_.has_sill()) return;
  // With a nugget of at least kNearDuplicate of the sill, the variogram is
  // at least that at any non-zero lag, so only samples at one location can
  // be near-duplicates; and the spacing below serves only models without a
  // nugget. A sort then settles it: without two equal points the
  // nearest-neighbour pass (a tree and n queries, a tenth of the start-up
  // for 50,000 samples, on one thread) finds nothing and is skipped.
  if (model_.nugget() > 0 && model_.nugget() >= kNearDuplicate * model_.total_sill()) {
    std::vector<std::uint32_t> order(n);
    for (std::uint32_t i = 0; i < n; ++i) order[i] = i;
    auto key = [this](std::uint32_t i) {
      return std::make_tuple(points_[i].x, points_[i].y, points_[i].z);
    };
    std::sort(order.begin(), order.end(),
              [&key](std::uint32_t a, std::uint32_t b) { return key(a) < key(b); });
    bool coincident = false;
    for (std::size_t i = 1; i < n && !coincident; ++i)
      coincident = key(order[i - 1]) == key(order[i]);
    if (!coincident) return;
  }
  // Near-duplicates: pairs the model correlates almost perfectly.
  detail::PointIndex index(points_, dimension_);
  std::vector<double> spacing;
  std::vector<std::string> pairs;
  std::size_t near = 0;
  const double sill = model_.total_sill();
  for (std::size_t i = 0; i < n; ++i) {
    const double q[3] = {points_[i].x, points_[i].y, points_[i].z};
    std::uint32_t idx[2];
    double d[2];
    if (index.nearest(q, 2, idx, d) < 2) continue;
    const std::uint32_t j = idx[0] == i ? idx[1] : idx[0];
    spacing.push_back(idx[0] == i ? d[1] : d[0]);
    if (j < i) continue;  // each pair once, from its first sample
    const Point& a = points_[i];
    const Point& b = points_[j];
    if (model_.variogram(a.x - b.x, a.y - b.y, a.z - b.z) < kNearDuplicate * sill) {
      ++near;
      if (pairs.size() < 5) {
        pairs.push_back(samples.ids[used[i]] + " and " + samples.ids[used[j]] + ", " +
                        format_for_people(std::hypot(a.x - b.x, a.y - b.y, a.z - b.z), 3) +
                        " apart");
      }
    }
  }
  if (near > 0) {
    std::string list;
    for (const auto& p : pairs) list += (list.empty() ? "" : "; ") + p;
    warnings_.push_back(std::to_string(near) +
                        " pair(s) of samples are near-duplicates: so close that "
                        "the model correlates their values above 1 - 1e-6 (" +
                        list + (near > pairs.size() ? "; ..." : "") +
                        "). Kriging systems holding both are ill-conditioned and cross-validation "
                        "estimates each from the other; merge them (one location each) or add a "
                        "nugget");
  }

  // A gaussian structure without nugget on samples that are dense for its
  // range: the covariance matrix is then close to singular (its smallest
  // eigenvalues fall off like exp(-c (range / spacing)^2)).
  if (model_.nugget() > 0 || spacing.empty()) return;
  std::sort(spacing.begin(), spacing.end());
  const double median = spacing[spacing.size() / 2];
  for (const Structure& s : model_.structures()) {
    if (s.family != Family::gaussian || !(s.sill > 0)) continue;
    const double minor =
        s.range * std::min(s.anisotropy.ratio, dimension_ == 3 ? s.anisotropy.ratio2 : 1.0);
    // Correlation of the gaussian at the median spacing along its shortest axis.
    const double rho = std::exp(-3.0 * (median / minor) * (median / minor));
    if (rho > 0.9)
      warnings_.push_back("the model has a gaussian structure (range " + fmt(s.range) +
                          ") and no nugget, and the samples are dense for that range (median "
                          "spacing " +
                          fmt(median) +
                          "): kriging systems are then "
                          "ill-conditioned, and those that fail the condition check are left "
                          "unestimated; a small nugget (say 1% of the sill) cures this");
    break;
  }
}

// --- One target ---------------------------------------------------------------------------
NodeEstimate KrigingEngine::estimate(const Point& target, Workspace& ws, std::int64_t exclude,
                                     double external,
                                     std::vector<std::pair<std::uint32_t, double>>* weights) const {
  NodeEstimate e;
  e.target_variance = target_variance_;
  if (external_raster_ && std::isnan(external)) {
    e.status = NodeEstimate::Status::outside_drift;
    return e;
  }
  const Point t{target.x - origin_.x, target.y - origin_.y,
                dimension_ == 3 ? target.z - origin_.z : 0.0};
  // The system is built in ascending sample order, not closest first: the
  // solution does not depend on the order, and a canonical order lets the
  // factorisation be reused whenever the next node has the same neighbour
  // SET (the distance order changes far more often than the set does).
  // Being a function of the set alone, the factorisation, and so every
  // result, is independent of which node or thread computed it first.
  const std::size_t n = search_->find_set(t, ws.nb, ws.search, exclude);
  e.neighbours = static_cast<int>(n);
  const auto p = static_cast<std::size_t>(drift_terms_);
  const auto min_points =
      static_cast<std::size_t>(search_->options().global ? 1 : search_->options().min_points);
  if (n < std::max<std::size_t>(min_points, p + (p > 0 ? 1 : 0)) || n == 0) {
    e.status = n < min_points ? NodeEstimate::Status::too_few_neighbours
                              : NodeEstimate::Status::drift_unresolved;
    return e;
  }

  if (!model_.has_sill()) return estimate_intrinsic(t, ws, external, weights, e);

  // Factorise K (and the drift's Schur complement) unless the neighbour set
  // is the one factorised last: neighbouring nodes often share it.
  if (!ws.have_factor) {
    factorise(ws);
  } else if (ws.nb != ws.factored_sorted) {
    if (!ws.incremental || !update_factor(ws)) factorise(ws);
  }
  // From here on the system's order is the factorisation's.
  ws.nb.assign(ws.factored_nb.begin(), ws.factored_nb.end());
  if (ws.factor_status != NodeEstimate::Status::ok) {
    e.status = ws.factor_status;
    return e;
  }

  // With K = LL', y = L^-1 k, w = L^-1 z, G = L^-1 F and S = G'G (the last
  // three kept with the factorisation):
  //   mu = S^-1 (G'y - f0),  Z* = w'y - (G'w)'mu,  lambda'k = y'y - mu'G'y,
  // the same solution as lambda = K^-1 (k - F mu) written out, but one
  // triangular solve per node instead of two, and the weights themselves
  // only when asked for.
  right_hand_side(t, ws, external);
  ws.y.assign(ws.k.begin(), ws.k.end());
  detail::forward_solve(ws.L.data(), ws.ld, n, ws.inv_diag.data(), ws.y.data());
  double est = detail::dot(ws.w.data(), ws.y.data(), n);
  double lk = detail::dot(ws.y.data(), ws.y.data(), n);
  double mu_f0 = 0;
  if (p > 0) {
    ws.r.resize(p);  // r = G'y - f0, then mu = S^-1 r
    for (std::size_t c = 0; c < p; ++c) {
      ws.Gy[c] = detail::dot(ws.G.data() + c * ws.ld, ws.y.data(), n);
      ws.r[c] = ws.Gy[c] - ws.f0[c];
    }
    detail::cholesky_solve(ws.S.data(), p, ws.r.data());
    for (std::size_t c = 0; c < p; ++c) {
      est -= ws.Gw[c] * ws.r[c];
      lk -= ws.r[c] * ws.Gy[c];
      mu_f0 += ws.r[c] * ws.f0[c];
    }
    e.lagrange = ws.r[0];
  }
  if (weights) {  // lambda = L'^-1 (y - G mu)
    ws.lambda.assign(ws.y.begin(), ws.y.end());
    for (std::size_t c = 0; c < p; ++c)
      for (std::size_t i = 0; i < n; ++i) ws.lambda[i] -= ws.G[c * ws.ld + i] * ws.r[c];
    detail::backward_solve(ws.L.data(), ws.ld, n, ws.inv_diag.data(), ws.lambda.data());
  }
  complete(ws, drift_terms_ == 0 ? mean_ + est : est, lk, mu_f0, weights, e);
  return e;
}

// Factorises the system of the neighbours in ws.nb: L (each column of K
// evaluated in one batch of covariances), then w = L^-1 z, G = L^-1 F and
// the Cholesky factor of S = G'G.
void KrigingEngine::factorise(Workspace& ws) const {
  const std::size_t n = ws.nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const std::size_t ld = ws.ld;
  ws.factored_nb = ws.nb;
  ws.factored_sorted = ws.nb;
  ws.have_factor = true;
  ws.updates = 0;
  ws.update_budget = 0;  // set once factorised
  ws.factor_status = NodeEstimate::Status::ok;
  const double* dz = dimension_ == 3 ? ws.lag_z.data() : nullptr;
  for (std::size_t j = 0; j < n; ++j) {  // column j of the lower triangle, in one batch
    const Point& pj = points_[ws.nb[j]];
    for (std::size_t i = j; i < n; ++i) {
      const Point& pi = points_[ws.nb[i]];
      ws.lag_x[i - j] = pi.x - pj.x;
      ws.lag_y[i - j] = pi.y - pj.y;
      ws.lag_z[i - j] = pi.z - pj.z;
    }
    kernel_->evaluate(n - j, ws.lag_x.data(), ws.lag_y.data(), dz, ws.L.data() + j * ld + j);
  }
  // Smooth models without a nugget (gaussian) on dense samples give systems
  // that pass the pivot test yet are badly conditioned; the reciprocal
  // condition number is estimated for them. With a nugget c0, K is a
  // positive semi-definite matrix plus c0 I, so its smallest eigenvalue is at
  // least c0 and cond_1(K) <= n ||K||_1 / c0 <= n^2 sill / c0. When that bound
  // is a thousand times below the limit the estimate (about as costly as the
  // factorisation) is skipped.
  const double nn = static_cast<double>(n) * static_cast<double>(n);
  const bool check_condition =
      !(model_.nugget() > 0 && nn * model_.total_sill() < 1e-3 / kRcondTol * model_.nugget());
  double norm1 = 0;
  if (check_condition) {
    ws.cond_l.resize(n * n);
    ws.cond_x.resize(n);
    ws.cond_z.resize(n);
    for (std::size_t j = 0; j < n; ++j)
      for (std::size_t i = j; i < n; ++i) ws.cond_l[j * n + i] = ws.L[j * ld + i];
    norm1 = detail::symmetric_norm1(ws.cond_l.data(), n, ws.cond_x.data());
  }
  if (!detail::cholesky_ld(ws.L.data(), ld, n, ws.inv_diag.data(), ws.block_cov.data(),
                           kPivotTol)) {
    ws.factor_status = NodeEstimate::Status::singular;
    return;
  }
  if (check_condition) {
    for (std::size_t j = 0; j < n; ++j)
      for (std::size_t i = j; i < n; ++i) ws.cond_l[j * n + i] = ws.L[j * ld + i];
    if (detail::cholesky_rcond(ws.cond_l.data(), n, norm1, ws.cond_x.data(), ws.cond_z.data()) <
        kRcondTol) {
      ws.factor_status = NodeEstimate::Status::singular;
      return;
    }
  }
  const bool simple = p == 0;
  for (std::size_t i = 0; i < n; ++i)
    ws.w[i] = simple ? values_[ws.nb[i]] - mean_ : values_[ws.nb[i]];
  detail::forward_solve(ws.L.data(), ld, n, ws.inv_diag.data(), ws.w.data());
  for (std::size_t i = 0; i < n && p > 0; ++i) {
    const std::uint32_t s = ws.nb[i];
    drift_row(points_[s], external_.empty() ? 0.0 : external_[s], ws.drift.data());
    for (std::size_t c = 0; c < p; ++c) ws.G[c * ld + i] = ws.drift[c];
  }
  for (std::size_t c = 0; c < p; ++c)
    detail::forward_solve(ws.L.data(), ld, n, ws.inv_diag.data(), ws.G.data() + c * ld);
  finish_factor(ws);
  ws.update_budget = update_budget(ws);
}

// G'w, S = G'G and the Cholesky factor of S, from w and G.
void KrigingEngine::finish_factor(Workspace& ws) const {
  const std::size_t n = ws.factored_nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const std::size_t ld = ws.ld;
  ws.factor_status = NodeEstimate::Status::ok;
  for (std::size_t c = 0; c < p; ++c) ws.Gw[c] = detail::dot(ws.G.data() + c * ld, ws.w.data(), n);
  for (std::size_t c = 0; c < p; ++c)
    for (std::size_t r = c; r < p; ++r)
      ws.S[c * p + r] = detail::dot(ws.G.data() + r * ld, ws.G.data() + c * ld, n);
  if (!detail::cholesky(ws.S.data(), p, 1e-10) ||
      drift_condition(ws.factored_nb.data(), n) > kDriftConditionLimit)
    ws.factor_status = NodeEstimate::Status::drift_unresolved;
}

// Brings the factorisation from the set ws.factored_sorted to ws.nb (both in
// ascending order) by updates, when only a few samples differ: each sample
// that left is removed (its row and column deleted, the trailing block
// restored by a rank-one update), each that joined is appended as a last
// row (one forward substitution). Updates cost O(n^2) against O(n^3) for a
// new factorisation and evaluate n covariances per new sample instead of
// n^2 / 2. Returns false (the caller then factorises afresh) when too much
// changed, after update_budget() updates (so that rounding cannot
// accumulate), or when the last factorisation failed or an appended pivot
// fails the test.
bool KrigingEngine::update_factor(Workspace& ws) const {
  if (ws.factor_status != NodeEstimate::Status::ok) return false;
  ws.removed.clear();
  ws.added.clear();
  std::set_difference(ws.factored_sorted.begin(), ws.factored_sorted.end(), ws.nb.begin(),
                      ws.nb.end(), std::back_inserter(ws.removed));
  std::set_difference(ws.nb.begin(), ws.nb.end(), ws.factored_sorted.begin(),
                      ws.factored_sorted.end(), std::back_inserter(ws.added));
  const std::size_t changes = ws.removed.size() + ws.added.size();
  if (4 * changes > ws.nb.size() + 4 || ws.updates + static_cast<int>(changes) > ws.update_budget)
    return false;
  for (std::uint32_t s : ws.removed) {
    const auto at = std::find(ws.factored_nb.begin(), ws.factored_nb.end(), s);
    remove_from_factor(ws, static_cast<std::size_t>(at - ws.factored_nb.begin()));
  }
  for (std::uint32_t s : ws.added)
    if (!append_to_factor(ws, s)) return false;
  ws.updates += static_cast<int>(changes);
  ws.factored_sorted.assign(ws.nb.begin(), ws.nb.end());
  finish_factor(ws);
  return ws.factor_status == NodeEstimate::Status::ok;
}

// How many updates a factorisation may take before it is recomputed. Each
// update adds rounding error of about eps cond(K); (max L_ii / min L_ii)^2,
// a lower bound of cond(K), keeps the sum under about 1e-10 (relative):
// 128 updates for a well-conditioned system (with a nugget: cond ~ 10^2),
// down to 4 when cond reaches ~10^6. Without this bound every 16 changes
// of a dense grid row cost a full factorisation.
int KrigingEngine::update_budget(const Workspace& ws) const {
  const std::size_t n = ws.factored_nb.size();
  double lo = std::numeric_limits<double>::infinity(), hi = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const double d = ws.L[i * ws.ld + i];
    lo = std::min(lo, d);
    hi = std::max(hi, d);
  }
  if (!(lo > 0)) return 0;
  const double cond = (hi / lo) * (hi / lo);
  const double budget = 1e-10 / (std::numeric_limits<double>::epsilon() * cond);
  return static_cast<int>(std::clamp(budget, 4.0, 128.0));
}

// Deletes sample j from the factorisation. With L = [L11 0 0; l21' l22 0;
// L31 l32 L33], the factor without row and column j is [L11 0; L31 L33~]
// with L33~ L33~' = L33 L33' + l32 l32', a rank-one update done by plane
// rotations (stable: nothing is subtracted). w and the columns of G are the
// extra rows of the factor of the matrix bordered by z and F, so the same
// rotations update them, with w_j and G_j as their entries of l32.
void KrigingEngine::remove_from_factor(Workspace& ws, std::size_t j) const {
  const std::size_t n = ws.factored_nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const std::size_t ld = ws.ld;
  double* L = ws.L.data();
  double* x = ws.column.data();
  for (std::size_t i = j + 1; i < n; ++i) x[i - 1] = L[j * ld + i];  // l32, new indices
  for (std::size_t c = 0; c < j; ++c)                                // rows below j move up
    std::copy(L + c * ld + j + 1, L + c * ld + n, L + c * ld + j);
  double* e = ws.extra.data();  // entries of the extra rows in column j
  e[0] = ws.w[j];
  std::copy(ws.w.data() + j + 1, ws.w.data() + n, ws.w.data() + j);
  for (std::size_t c = 0; c < p; ++c) {
    double* g = ws.G.data() + c * ld;
    e[c + 1] = g[j];
    std::copy(g + j + 1, g + n, g + j);
  }
  ws.factored_nb.erase(ws.factored_nb.begin() + static_cast<std::ptrdiff_t>(j));
  const std::size_t m = n - 1;
  // New column k is old column k + 1 (rows shifted up by one), rotated as it
  // is moved: one pass over the trailing block instead of a move and a
  // rotation. Old column k was consumed by the step before (or is column j).
  for (std::size_t k = j; k < m; ++k) {
    double* ck = L + k * ld;
    const double* old_column = L + (k + 1) * ld + 1;  // old row i + 1 at index i
    const double lkk = old_column[k];
    const double r = std::sqrt(lkk * lkk + x[k] * x[k]);
    const double cs = r / lkk, sn = x[k] / lkk;
    ck[k] = r;
    ws.inv_diag[k] = 1 / r;
    const double inv_cs = lkk / r;
#pragma omp simd
    for (std::size_t i = k + 1; i < m; ++i) {
      ck[i] = (old_column[i] + sn * x[i]) * inv_cs;
      x[i] = cs * x[i] - sn * ck[i];
    }
    double& wk = ws.w[k];
    wk = (wk + sn * e[0]) / cs;
    e[0] = cs * e[0] - sn * wk;
    for (std::size_t c = 0; c < p; ++c) {
      double& gk = ws.G[c * ld + k];
      gk = (gk + sn * e[c + 1]) / cs;
      e[c + 1] = cs * e[c + 1] - sn * gk;
    }
  }
}

// Appends `sample` as the last row: l = L^-1 k_s by forward substitution,
// then the pivot and w's and G's new entries. False when the pivot fails
// the test.
bool KrigingEngine::append_to_factor(Workspace& ws, std::uint32_t sample) const {
  const std::size_t m = ws.factored_nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const std::size_t ld = ws.ld;
  double* L = ws.L.data();
  const Point& ps = points_[sample];
  for (std::size_t i = 0; i < m; ++i) {
    const Point& pi = points_[ws.factored_nb[i]];
    ws.lag_x[i] = ps.x - pi.x;
    ws.lag_y[i] = ps.y - pi.y;
    ws.lag_z[i] = ps.z - pi.z;
  }
  ws.lag_x[m] = ws.lag_y[m] = ws.lag_z[m] = 0;  // the diagonal: C(0)
  double* l = ws.column.data();
  kernel_->evaluate(m + 1, ws.lag_x.data(), ws.lag_y.data(),
                    dimension_ == 3 ? ws.lag_z.data() : nullptr, l);
  const double diag = l[m];
  detail::forward_solve(L, ld, m, ws.inv_diag.data(), l);
  // The dot products are split over SIMD lanes (detail::dot): this row then
  // differs from a full factorisation's by rounding only.
  const double d = diag - detail::dot(l, l, m);
  if (!(d > kPivotTol * std::abs(diag))) return false;
  for (std::size_t k = 0; k < m; ++k) L[k * ld + m] = l[k];
  const double lmm = std::sqrt(d);
  L[m * ld + m] = lmm;
  ws.inv_diag[m] = 1 / lmm;
  const double z = drift_terms_ == 0 ? values_[sample] - mean_ : values_[sample];
  ws.w[m] = (z - detail::dot(ws.w.data(), l, m)) * ws.inv_diag[m];
  if (p > 0) {
    drift_row(ps, external_.empty() ? 0.0 : external_[sample], ws.drift.data());
    for (std::size_t c = 0; c < p; ++c) {
      double* g = ws.G.data() + c * ld;
      g[m] = (ws.drift[c] - detail::dot(g, l, m)) * ws.inv_diag[m];
    }
  }
  ws.factored_nb.push_back(sample);
  return true;
}

void KrigingEngine::right_hand_side(const Point& t, Workspace& ws, double external) const {
  const std::size_t n = ws.nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const double nd = static_cast<double>(discretisation_.size());
  ws.k.resize(n);
  const double* dz = dimension_ == 3 ? ws.lag_z.data() : nullptr;
  if (!kernel_) {  // intrinsic models: the generalised covariance -gamma
    for (std::size_t i = 0; i < n; ++i) {
      const Point& pi = points_[ws.nb[i]];
      double s = 0;
      for (const Point& d : discretisation_)
        s += cov(pi.x - (t.x + d.x), pi.y - (t.y + d.y), pi.z - (t.z + d.z));
      ws.k[i] = s / nd;
    }
  } else if (discretisation_.size() == 1) {  // point kriging: one batch of n lags
    for (std::size_t i = 0; i < n; ++i) {
      const Point& pi = points_[ws.nb[i]];
      ws.lag_x[i] = pi.x - t.x;
      ws.lag_y[i] = pi.y - t.y;
      ws.lag_z[i] = pi.z - t.z;
    }
    kernel_->evaluate(n, ws.lag_x.data(), ws.lag_y.data(), dz, ws.k.data());
  } else {  // block kriging: per sample, one batch over the discretisation points
    const std::size_t nd_points = discretisation_.size();
    for (std::size_t i = 0; i < n; ++i) {
      const Point& pi = points_[ws.nb[i]];
      for (std::size_t d = 0; d < nd_points; ++d) {
        const Point& o = discretisation_[d];
        ws.lag_x[d] = pi.x - (t.x + o.x);
        ws.lag_y[d] = pi.y - (t.y + o.y);
        ws.lag_z[d] = pi.z - (t.z + o.z);
      }
      kernel_->evaluate(nd_points, ws.lag_x.data(), ws.lag_y.data(), dz, ws.block_cov.data());
      double s = 0;
      for (std::size_t d = 0; d < nd_points; ++d) s += ws.block_cov[d];
      ws.k[i] = s / nd;
    }
  }
  ws.f0.assign(p, 0.0);
  ws.drift.resize(p);
  if (p == 0) return;
  for (const Point& d : discretisation_) {
    drift_row({t.x + d.x, t.y + d.y, t.z + d.z}, external, ws.drift.data());
    for (std::size_t c = 0; c < p; ++c) ws.f0[c] += ws.drift[c] / nd;
  }
}

// Intrinsic (power) models have no covariance: the bordered system with the
// generalised covariance -gamma is not positive definite, so it is solved
// whole by LU with partial pivoting. Slower (it allocates), but rare.
NodeEstimate KrigingEngine::estimate_intrinsic(
    const Point& t, Workspace& ws, double external,
    std::vector<std::pair<std::uint32_t, double>>* weights, NodeEstimate& e) const {
  const std::size_t n = ws.nb.size();
  const auto p = static_cast<std::size_t>(drift_terms_);
  const auto m = static_cast<Eigen::Index>(n + p);
  Eigen::MatrixXd a = Eigen::MatrixXd::Zero(m, m);
  Eigen::VectorXd b(m);
  right_hand_side(t, ws, external);
  for (std::size_t i = 0; i < n; ++i) {
    const Point& pi = points_[ws.nb[i]];
    for (std::size_t j = 0; j < n; ++j) {
      const Point& pj = points_[ws.nb[j]];
      a(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) =
          cov(pi.x - pj.x, pi.y - pj.y, pi.z - pj.z);
    }
    drift_row(pi, external_.empty() ? 0.0 : external_[ws.nb[i]], ws.drift.data());
    for (std::size_t c = 0; c < p; ++c) {
      a(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(n + c)) = ws.drift[c];
      a(static_cast<Eigen::Index>(n + c), static_cast<Eigen::Index>(i)) = ws.drift[c];
    }
    b(static_cast<Eigen::Index>(i)) = ws.k[i];
  }
  for (std::size_t c = 0; c < p; ++c) b(static_cast<Eigen::Index>(n + c)) = ws.f0[c];
  if (drift_condition(ws.nb.data(), n) > kDriftConditionLimit) {
    e.status = NodeEstimate::Status::drift_unresolved;
    return e;
  }
  const Eigen::PartialPivLU<Eigen::MatrixXd> lu(a);
  if (!(lu.rcond() > kPivotTol)) {
    e.status = NodeEstimate::Status::singular;
    return e;
  }
  const Eigen::VectorXd x = lu.solve(b);
  ws.lambda.assign(x.data(), x.data() + n);
  double mu_f0 = 0;
  for (std::size_t c = 0; c < p; ++c) mu_f0 += x(static_cast<Eigen::Index>(n + c)) * ws.f0[c];
  e.lagrange = x(static_cast<Eigen::Index>(n));
  double est = 0, lk = 0;
  for (std::size_t i = 0; i < n; ++i) {
    est += ws.lambda[i] * values_[ws.nb[i]];
    lk += ws.lambda[i] * ws.k[i];
  }
  complete(ws, est, lk, mu_f0, weights, e);
  return e;
}

// Estimate, variance and the figures that follow from the weights:
// `est` the estimate, `lk` = lambda'k, `mu_f0` = mu'f0.
void KrigingEngine::complete(const Workspace& ws, double est, double lk, double mu_f0,
                             std::vector<std::pair<std::uint32_t, double>>* weights,
                             NodeEstimate& e) const {
  const std::size_t n = ws.nb.size();
  e.estimate = est;
  e.weighted_cov = lk;
  e.weights_var = lk - mu_f0;  // lambda'K lambda, since K lambda = k - F mu and F'lambda = f0
  double var = target_variance_ - lk - mu_f0;
  // Rounding can leave a tiny negative variance at data locations.
  double scale = std::abs(target_variance_);  // the size of the numbers in the system
  for (std::size_t i = 0; i < n; ++i) scale = std::max(scale, std::abs(ws.k[i]));
  if (var < 0 && var > -1e-9 * scale) var = 0;
  e.variance = var;
  e.status = std::isfinite(e.estimate) && std::isfinite(var) && var >= 0
                 ? NodeEstimate::Status::ok
                 : NodeEstimate::Status::singular;
  if (weights) {
    weights->clear();
    for (std::size_t i = 0; i < n; ++i) weights->push_back({ws.nb[i], ws.lambda[i]});
  }
}

NodeOutput KrigingEngine::finish(const NodeEstimate& e) const {
  NodeOutput o;
  if (!e.ok()) return o;
  const double sd = std::sqrt(e.variance);
  auto above = [sd](double mean, double t) {  // P(N(mean, sd^2) > t)
    if (sd == 0) return mean > t ? 1.0 : 0.0;
    return 0.5 * std::erfc((t - mean) / (sd * std::sqrt(2.0)));
  };
  o.variance = e.variance;
  if (options_.transform.kind == Transform::log) {
    // Lognormal back-transform (docs/kriging.md): simple kriging
    // exp(y* + s^2/2); ordinary kriging exp(y* + s^2/2 + mu) with mu the
    // Lagrange multiplier of the covariance-form system (Journel &
    // Huijbregts 1978; Webster & Oliver 2007 write it -psi in variogram form).
    // With log(v + C) the estimate of v + C is taken back to v.
    o.estimate = std::exp(e.estimate + e.variance / 2 +
                          (options_.method == KrigingMethod::simple ? 0.0 : e.lagrange)) -
                 options_.transform.log_offset;
    if (!std::isnan(options_.threshold))
      o.probability = above(e.estimate, options_.transform.forward(options_.threshold));
  } else {
    o.estimate = e.estimate;
    if (!std::isnan(options_.threshold)) o.probability = above(e.estimate, options_.threshold);
  }
  if (e.weights_var > 0) o.slope = e.weighted_cov / e.weights_var;
  if (model_.has_sill() && e.target_variance > 0)
    o.efficiency = (e.target_variance - e.variance) / e.target_variance;
  return o;
}

}  // namespace sillstone
