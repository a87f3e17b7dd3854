// The empirical variogram: pair enumeration and the statistics of each class.
//
// Order of work: pick the value column and transform it; centre coordinates
// (and values) so that UTM-scale numbers keep their precision; sort the
// samples into cells (pair_cells.hpp) so that the partners of each sample lie
// in a few contiguous runs of memory; for each run, compute the distances and
// squared differences in one vectorised loop, then add each pair to its class.
// OpenMP threads take fixed chunks of samples; each chunk sums into its own
// accumulators, which are added to the totals in chunk order, so that every
// sum is formed in the same order whatever the thread count.
#include <omp.h>

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>

#include "core/capped_list.hpp"
#include "sillstone/error.hpp"
#include "sillstone/format.hpp"
#include "sillstone/names.hpp"
#include "sillstone/variogram.hpp"
#include "variogram/pair_cells.hpp"

namespace sillstone {
namespace {

constexpr const char* kComponent = "variogram";
constexpr std::size_t kBlock = 256;      // fewest samples in a unit of parallel work
constexpr std::size_t kMaxChunks = 256;  // most units of parallel work
constexpr std::size_t kChunkMemory = std::size_t{256} << 20;  // bytes of their sums, at most
constexpr std::uint64_t kFewPairs = 30;  // common practice (Journel & Huijbregts 1978, from memory)
constexpr double kAngleSlack = 1e-9;     // degrees: an angle this close to a tolerance is on it
constexpr double kDegree = 0.017453292519943295;  // pi / 180

// Sine and cosine of an angle in degrees, exact at multiples of 90 degrees and
// equal at 45, so that directions along the axes have no rounding noise.
void sin_cos_degrees(double angle, double* sine, double* cosine) {
  double r = std::fmod(angle, 360.0);
  if (r < 0) r += 360;
  const int quadrant = static_cast<int>(r / 90);
  const double x = r - 90 * quadrant;
  double s = std::sin(x * kDegree), c = std::cos(x * kDegree);
  if (x == 0) {
    s = 0;
    c = 1;
  }
  if (x == 45) s = c = std::sqrt(0.5);
  const double turned[4][2] = {{s, c}, {c, -s}, {-s, -c}, {-c, s}};  // + 0, 90, 180, 270
  *sine = turned[quadrant][0];
  *cosine = turned[quadrant][1];
}

// The sums of one lag class in one direction. Values are centred on their
// mean, which leaves every statistic unchanged and keeps the products small.
struct Sums {
  std::uint64_t n = 0;
  double distance = 0;
  double squared = 0;  // sum (z_head - z_tail)^2
  double root = 0;     // sum |z_head - z_tail|^(1/2)       (Cressie-Hawkins)
  double head = 0, tail = 0, head2 = 0, tail2 = 0, product = 0;  // (covariance, correlogram)

  void add(const Sums& o) {
    n += o.n;
    distance += o.distance;
    squared += o.squared;
    root += o.root;
    head += o.head;
    tail += o.tail;
    head2 += o.head2;
    tail2 += o.tail2;
    product += o.product;
  }
};

// One direction's test on a pair's separation vector h = p_j - p_i.
struct Direction {
  std::optional<double> azimuth, dip;
  bool omni = true;       // no test at all
  bool oriented = false;  // azimuth given: head and tail follow the azimuth
  bool vertical = false;  // dip 90
  double ex = 0, ey = 0;  // horizontal unit vector along the azimuth
  double tan_tolerance = 0;
  double sin_dip = 0, cos_dip = 1;
  double sin_low = -2, sin_high = 2;  // window for the pair's dip, as sines
  double bandwidth = 0, vertical_bandwidth = 0;

  // 0: not in this direction; +1: in, with j the head; -1: in, with i the head.
  int test(double dx, double dy, double dz, double d) const {
    if (omni) return 1;
    if (!oriented) {  // dip only (3D): the azimuth is free, pairs are taken pointing down
      const double up = std::abs(dz) / d;  // sine of the pair's dip
      if (up < sin_low || up > sin_high) return 0;
      const double horizontal = std::sqrt(dx * dx + dy * dy);
      if (vertical) return horizontal <= bandwidth ? 1 : 0;
      return std::abs(horizontal * sin_dip - std::abs(dz) * cos_dip) <= vertical_bandwidth ? 1 : 0;
    }
    const double along = dx * ex + dy * ey, across = std::abs(dx * ey - dy * ex);
    int sense;
    if (along != 0)
      sense = along > 0 ? 1 : -1;
    else if (across == 0)  // a vertical pair: its azimuth is any; take it pointing down
      sense = dz <= 0 ? 1 : -1;
    else
      return 0;  // perpendicular
    const double forward = std::abs(along);
    if (across > tan_tolerance * forward || across > bandwidth) return 0;
    if (dip) {
      const double down = -sense * dz;  // of the pair taken along the azimuth
      const double s = down / d;
      if (s < sin_low || s > sin_high) return 0;
      if (std::abs(forward * sin_dip - down * cos_dip) > vertical_bandwidth) return 0;
    }
    return sense;
  }
};

std::vector<Direction> make_directions(const VariogramOptions& o, int dimension) {
  std::vector<Direction> out;
  auto with_dip = [&o](Direction d, double dip) {
    d.omni = false;
    d.dip = dip;
    d.vertical = dip == 90;
    sin_cos_degrees(dip, &d.sin_dip, &d.cos_dip);
    const double lo = dip - o.dip_tolerance - kAngleSlack, hi = dip + o.dip_tolerance + kAngleSlack;
    d.sin_low = lo <= -90 ? -2 : std::sin(lo * kDegree);
    d.sin_high = hi >= 90 ? 2 : std::sin(hi * kDegree);
    return d;
  };
  Direction base;
  base.bandwidth = o.bandwidth;
  base.vertical_bandwidth = o.vertical_bandwidth;
  base.tan_tolerance = std::tan((o.angle_tolerance + kAngleSlack) * kDegree);
  auto along = [&base](double azimuth) {
    Direction d = base;
    d.omni = false;
    d.oriented = true;
    d.azimuth = azimuth;
    sin_cos_degrees(azimuth, &d.ex, &d.ey);
    return d;
  };
  const bool vertical_given = std::find(o.dips.begin(), o.dips.end(), 90.0) != o.dips.end();
  if (o.dips.empty()) {
    for (double a : o.azimuths) out.push_back(dimension == 3 ? with_dip(along(a), 0) : along(a));
  } else if (o.azimuths.empty()) {
    for (double dip : o.dips) out.push_back(with_dip(base, dip));
  } else {
    for (double a : o.azimuths)
      for (double dip : o.dips)
        if (dip != 90) out.push_back(with_dip(along(a), dip));
    if (vertical_given) out.push_back(with_dip(base, 90));  // once: its azimuth is any
  }
  if (out.empty()) out.push_back(base);  // omnidirectional
  return out;
}

// The statistic of one class from its sums.
double class_value(const Sums& s, const VariogramOptions& o, bool oriented) {
  if (s.n == 0) return std::nan("");
  const double n = static_cast<double>(s.n);
  switch (o.statistic) {
    case VariogramStatistic::semivariance:
      if (o.estimator == VariogramEstimator::cressie_hawkins) {
        // Cressie & Hawkins (1980): 2 gamma = (mean |dz|^(1/2))^4 / (0.457 + 0.494 / N).
        const double m = s.root / n;
        return m * m * m * m / (0.457 + 0.494 / n) / 2;
      }
      return s.squared / (2 * n);
    case VariogramStatistic::covariance:
    case VariogramStatistic::correlogram: {
      double mh = s.head / n, mt = s.tail / n, vh = s.head2 / n, vt = s.tail2 / n;
      if (!oriented) {  // each pair counted both ways: head and tail statistics agree
        mh = mt = (s.head + s.tail) / (2 * n);
        vh = vt = (s.head2 + s.tail2) / (2 * n);
      }
      const double c = s.product / n - mh * mt;
      if (o.statistic == VariogramStatistic::covariance) return c;
      const double sh = std::sqrt(std::max(0.0, vh - mh * mh));
      const double st = std::sqrt(std::max(0.0, vt - mt * mt));
      return sh > 0 && st > 0 ? c / (sh * st) : std::nan("");
    }
  }
  return std::nan("");
}

// The distances from (xi, yi, zi) to m samples, the squared differences of
// their values from vi, and each pair's class: k when edges[k] < d <=
// edges[k + 1]; last + 1 when it is no pair (d = 0: coincident samples;
// d > reach); kNearEdge when d / W lies within 1e-9 of a whole number, so that
// only the edges themselves can tell (settled_class() settles those, a handful in
// a billion). The part of the pair loop that vectorises.
constexpr std::int32_t kNearEdge = -1;

// GCC builds copies for AVX-512 and AVX2 processors, one picked at load time
// (no FMA in this file: the distances round the same way in every copy). The
// 1e-9 margin is far above the rounding of d / W (a few 1e-16 relative, times
// at most the 10,000 classes allowed).
#if defined(__GNUC__) && !defined(__clang__) && defined(__x86_64__)
__attribute__((target_clones("avx512f", "avx2", "default")))
#endif
void pair_distances(const double* __restrict x, const double* __restrict y,
                    const double* __restrict z, const double* __restrict v, std::size_t m,
                    double xi, double yi, double zi, double vi, double reach, double inverse_width,
                    std::int32_t last, double* __restrict distance, double* __restrict squared,
                    std::int32_t* __restrict klass) {
  const double top = last + 1;
#pragma omp simd
  for (std::size_t t = 0; t < m; ++t) {
    const double dx = x[t] - xi, dy = y[t] - yi, dz = z[t] - zi, dv = v[t] - vi;
    const double d = std::sqrt(dx * dx + dy * dy + dz * dz);
    distance[t] = d;
    squared[t] = dv * dv;
    double q = d * inverse_width;
    q = q < top ? q : top;
    const std::int32_t k = static_cast<std::int32_t>(q);
    const double r = q - k;
    const bool near = r < 1e-9 || r > 1 - 1e-9;
    const std::int32_t c = near ? kNearEdge : (k < last ? k : last);
    klass[t] = d > 0 && d <= reach ? c : last + 1;
  }
}

// The class of a pair as pair_distances() left it, with a kNearEdge settled
// against the edges themselves: edges[k] < d <= edges[k+1].
inline std::size_t settled_class(std::int32_t k, double d, const std::vector<double>& edges) {
  if (__builtin_expect(k == kNearEdge, 0)) {
    const auto above = std::lower_bound(edges.begin() + 1, edges.end(), d);  // first edge >= d
    return static_cast<std::size_t>(above - edges.begin()) - 1;
  }
  return static_cast<std::size_t>(k);
}

// The sums of one class in the common case are four doubles: distance,
// squared difference, count (exact in a double up to 2^53) and a pad; a pair
// is added to them as one vector (unaligned loads and stores, through memcpy).
typedef double Four __attribute__((vector_size(32)));
constexpr std::size_t kWidth = 4;

// Adds the m pairs of one run, as pair_distances() left them, to `sums`
// (kCopies copies of `bins` classes, the last bin of each taking what is no
// pair): pair t goes to copy t % 4, so that successive pairs of one class do
// not wait on each other.
constexpr std::size_t kCopies = 4;
#if defined(__GNUC__) && !defined(__clang__) && defined(__x86_64__)
__attribute__((target_clones("avx2", "default")))
#endif
void add_run(double* __restrict sums, std::size_t bins, const double* __restrict distance,
             const double* __restrict squared, const std::int32_t* __restrict klass,
             std::size_t m, const std::vector<double>& edges) {
  auto one = [&](std::size_t t, double* __restrict copy) {
    double* at = copy + kWidth * settled_class(klass[t], distance[t], edges);
    Four sum;
    std::memcpy(&sum, at, sizeof sum);
    const Four pair = {distance[t], squared[t], 1.0, 0.0};
    sum += pair;
    std::memcpy(at, &sum, sizeof sum);
  };
  const std::size_t stride = kWidth * bins;
  std::size_t t = 0;
  for (; t + kCopies <= m; t += kCopies) {
    one(t, sums);
    one(t + 1, sums + stride);
    one(t + 2, sums + 2 * stride);
    one(t + 3, sums + 3 * stride);
  }
  for (; t < m; ++t) one(t, sums + (t % kCopies) * stride);
}

// Counts, distance sums and squared-difference sums by class for the common
// case (one direction, Matheron, no surface), without branches; the copies
// are added in a fixed order.
class PlainSums {
 public:
  explicit PlainSums(std::size_t classes)
      : classes_(classes), bins_(classes + 1), sums_(kCopies * bins_ * kWidth) {}

  void clear() { std::fill(sums_.begin(), sums_.end(), 0.0); }

  void add(const double* distance, const double* squared, const std::int32_t* klass, std::size_t m,
           const std::vector<double>& edges) {
    add_run(sums_.data(), bins_, distance, squared, klass, m, edges);
  }

  // Adds the sums of every class into `out` (one Sums per class).
  void add_to(std::vector<Sums>& out) const {
    for (std::size_t c = 0; c < kCopies; ++c)
      for (std::size_t k = 0; k < classes_; ++k) {
        const double* b = sums_.data() + (c * bins_ + k) * kWidth;
        out[k].distance += b[0];
        out[k].squared += b[1];
        out[k].n += static_cast<std::uint64_t>(b[2]);
      }
  }

 private:
  std::size_t classes_, bins_;
  std::vector<double> sums_;  // kCopies copies of bins_ bins of kWidth sums
};

// Per-chunk (and total) accumulators: one Sums per direction and class, and
// the surface cells.
struct Accumulators {
  std::vector<Sums> classes;
  std::vector<Sums> cells;
  void clear() {
    std::fill(classes.begin(), classes.end(), Sums{});
    std::fill(cells.begin(), cells.end(), Sums{});
  }
  void add(const Accumulators& o) {
    for (std::size_t k = 0; k < classes.size(); ++k) classes[k].add(o.classes[k]);
    for (std::size_t k = 0; k < cells.size(); ++k) cells[k].add(o.cells[k]);
  }
};

std::string format(double x) { return format_for_people(x, 6); }

// The values of the column, transformed; NaN where missing.
std::vector<double> transformed_values(const SampleSet& samples, std::size_t column,
                                       const VariogramOptions& o, EmpiricalVariogram* v) {
  std::vector<double> z = samples.values[column];
  const std::string& name = samples.value_names[column];
  switch (o.transform) {
    case Transform::none:
      v->summary.transform = "none";
      break;
    case Transform::log: {
      for (std::size_t i = 0; i < z.size(); ++i) {
        if (std::isnan(z[i]) || z[i] + o.log_offset > 0) continue;
        const InputLocation where{samples.source, samples.ids[i], name};
        if (o.log_offset == 0)
          throw InputError(kComponent, where,
                           "the value " + format(z[i]) +
                               " is not positive, so --transform log "
                               "cannot take it; add --log-offset C to use log(value + C)");
        throw InputError(kComponent, where,
                         "the value " + format(z[i]) + " plus --log-offset " +
                             format(o.log_offset) + " is not positive, so its log is undefined");
      }
      for (double& x : z)
        if (!std::isnan(x)) x = std::log(x + o.log_offset);
      v->summary.transform =
          o.log_offset == 0 ? "log(value)" : "log(value + " + format(o.log_offset) + ")";
      break;
    }
    case Transform::normal_score: {
      NormalScores ns = normal_scores(z);
      z = std::move(ns.scores);
      v->normal_scores = std::move(ns.table);
      v->summary.transform = "normal-score";
      break;
    }
  }
  if (o.transform != Transform::none)
    v->summary.notes.push_back("the variogram is of the transformed values: " +
                               v->summary.transform);
  return z;
}

}  // namespace

EmpiricalVariogram compute_variogram(const SampleSet& samples, const VariogramOptions& options,
                                     const Progress& progress) {
  std::string why;
  if (!options.is_valid(&why)) throw InputError(kComponent, why);
  const int dim = samples.dimension;
  if (dim != 3 && !options.dips.empty())
    throw InputError(kComponent, "--dips need 3D samples (give the elevation column with --z)");
  if (dim == 3 && options.surface)
    throw InputError(kComponent, "the variogram surface is 2D; it is not made for 3D samples");
  if (dim != 3 && options.vertical_bandwidth != VariogramOptions{}.vertical_bandwidth)
    throw InputError(kComponent, "--vertical-bandwidth needs 3D samples (--z)");

  EmpiricalVariogram v;
  v.source = samples.source;
  v.dimension = dim;
  v.summary.warnings = samples.summary.warnings;
  std::size_t column = 0;
  if (!options.value.empty()) {
    const auto& names = samples.value_names;
    const auto it = std::find(names.begin(), names.end(), options.value);
    if (it == names.end())
      throw InputError(kComponent, InputLocation{samples.source, "", options.value},
                       "no such value column among the samples");
    column = static_cast<std::size_t>(it - names.begin());
  }
  if (column >= samples.values.size())
    throw InputError(kComponent, samples.source + ": the samples have no value column");
  v.value = samples.value_names[column];
  require_moderate_values(samples, column, kComponent);

  // Resolved lag classes.
  v.options = options;
  v.options.value = v.value;
  const std::vector<double> edges = options.lag_edges();
  const std::size_t nclass = edges.size() - 1;
  v.options.lags = static_cast<int>(nclass);
  v.options.max_distance = edges.back();
  v.options.lag = edges.back() / static_cast<double>(nclass);
  const double width = v.options.lag, inverse_width = 1 / width;

  // Samples with a value, centred: coordinates on the middle of their extent,
  // values on their mean.
  const std::vector<double> z_all = transformed_values(samples, column, options, &v);
  std::vector<Point> points;
  std::vector<double> z;
  for (std::size_t i = 0; i < samples.size(); ++i)
    if (!std::isnan(z_all[i])) {
      points.push_back(samples.points[i]);
      z.push_back(z_all[i]);
    }
  const std::size_t n = points.size();
  if (n < 2)
    throw InputError(kComponent, samples.source + ": column '" + v.value + "' has " +
                                     std::to_string(n) + " value(s); a variogram needs pairs");
  Point lo = points.front(), hi = lo;
  for (const auto& p : points) {
    lo = {std::min(lo.x, p.x), std::min(lo.y, p.y), std::min(lo.z, p.z)};
    hi = {std::max(hi.x, p.x), std::max(hi.y, p.y), std::max(hi.z, p.z)};
  }
  const Point centre{(lo.x + hi.x) / 2, (lo.y + hi.y) / 2, dim == 3 ? (lo.z + hi.z) / 2 : 0.0};
  for (auto& p : points) p = {p.x - centre.x, p.y - centre.y, dim == 3 ? p.z - centre.z : 0.0};
  const bool all_equal = std::all_of(z.begin(), z.end(), [&z](double x) { return x == z.front(); });
  double mean = 0;
  for (double x : z) mean += x;
  mean /= static_cast<double>(n);
  double ss = 0;
  for (double& x : z) {
    x -= mean;
    ss += x * x;
  }
  v.summary.samples = n;
  v.summary.mean = mean;
  v.summary.variance = ss / static_cast<double>(n - 1);

  const std::vector<Direction> directions = make_directions(options, dim);
  const std::size_t ndir = directions.size();

  // The surface grid and how far pairs must be sought for it.
  const bool surface = options.surface;
  const double cell = options.surface_cell > 0 ? options.surface_cell : width;
  const int half = surface ? static_cast<int>(std::ceil(edges.back() / cell - 1e-9)) : 0;
  const std::size_t side = 2 * static_cast<std::size_t>(half) + 1;
  double radius = edges.back();
  if (surface) radius = std::max(radius, std::sqrt(2.0) * (half + 0.5) * cell);

  const bool moments = options.statistic != VariogramStatistic::semivariance;
  const bool roots = options.estimator == VariogramEstimator::cressie_hawkins;
  auto accumulate = [&](Sums& s, double d, double zt, double zh) {
    const double dz = zh - zt;
    ++s.n;
    s.distance += d;
    s.squared += dz * dz;
    if (roots) s.root += std::sqrt(std::abs(dz));
    if (moments) {
      s.head += zh;
      s.tail += zt;
      s.head2 += zh * zh;
      s.tail2 += zt * zt;
      s.product += zh * zt;
    }
  };

  // Samples in the cells' order, as separate coordinate arrays for the
  // vectorised distance loop.
  const detail::PairCells cells(points, dim, radius);
  std::vector<double> xs(n), ys(n), zs(n), vs(n);
  for (std::size_t s = 0; s < n; ++s) {
    const std::uint32_t i = cells.order()[s];
    xs[s] = points[i].x;
    ys[s] = points[i].y;
    zs[s] = points[i].z;
    vs[s] = z[i];
  }

  // Work comes in chunks of consecutive positions, fixed by the data and the
  // options alone; each chunk sums into its own accumulators and the chunks
  // are added in order afterwards, so every sum is formed in the same order
  // whatever the thread count. The chunk count is bounded by the memory of
  // their accumulators.
  const std::size_t slots = ndir * nclass + (surface ? side * side : 0);
  const std::size_t most_chunks =
      std::clamp<std::size_t>(kChunkMemory / (slots * sizeof(Sums)), 2, kMaxChunks);
  const std::size_t chunk = std::max(kBlock, (n + most_chunks - 1) / most_chunks);
  const std::size_t chunks = (n + chunk - 1) / chunk;
  std::vector<Accumulators> sums(chunks);

  // The common case (one direction, Matheron, no surface) sums counts,
  // distances and squared differences only.
  const bool plain = ndir == 1 && directions.front().omni && !surface && !moments && !roots;
  const double reach = edges.back();
  const std::size_t last_class = nclass - 1;
  const int threads = options.threads > 0 ? options.threads : omp_get_max_threads();
  const auto started = std::chrono::steady_clock::now();
  std::size_t chunks_done = 0;

#pragma omp parallel num_threads(threads)
  {
    std::vector<double> distance, squared;
    std::vector<std::int32_t> klass;
    PlainSums plain_sums(nclass);
#pragma omp for schedule(dynamic, 1)
    for (std::size_t c = 0; c < chunks; ++c) {
      Accumulators local;
      local.classes.resize(ndir * nclass);
      local.cells.resize(surface ? side * side : 0);
      plain_sums.clear();
      const std::size_t end = std::min(n, (c + 1) * chunk);
      for (std::size_t i = c * chunk; i < end; ++i) {
        const double xi = xs[i], yi = ys[i], zi = zs[i], vi = vs[i];
        cells.for_each_run(i, yi, zi, [&](std::size_t from, std::size_t to) {
          const std::size_t m = to - from;
          if (distance.size() < m) {
            distance.resize(m);
            squared.resize(m);
            klass.resize(m);
          }
          pair_distances(xs.data() + from, ys.data() + from, zs.data() + from, vs.data() + from, m,
                         xi, yi, zi, vi, reach, inverse_width,
                         static_cast<std::int32_t>(last_class), distance.data(), squared.data(),
                         klass.data());
          if (plain) {
            plain_sums.add(distance.data(), squared.data(), klass.data(), m, edges);
            return;
          }
          for (std::size_t t = 0; t < m; ++t) {
            const double d = distance[t];
            if (d == 0) continue;  // coincident samples are no pair
            const std::size_t j = from + t;
            const double dx = xs[j] - xi, dy = ys[j] - yi, dz = zs[j] - zi;
            if (d <= reach) {
              const std::size_t k = settled_class(klass[t], d, edges);
              for (std::size_t r = 0; r < ndir; ++r) {
                const int sense = directions[r].test(dx, dy, dz, d);
                if (sense > 0)
                  accumulate(local.classes[r * nclass + k], d, vi, vs[j]);
                else if (sense < 0)
                  accumulate(local.classes[r * nclass + k], d, vs[j], vi);
              }
            }
            if (surface) {
              const long cx = std::lround(std::floor(dx / cell + 0.5));
              const long cy = std::lround(std::floor(dy / cell + 0.5));
              if (std::abs(cx) > half || std::abs(cy) > half) continue;
              // h = (dx, dy) and -h; rows run from dy = +half down.
              accumulate(local.cells[static_cast<std::size_t>(
                             (half - cy) * static_cast<long>(side) + (cx + half))],
                         d, vi, vs[j]);
              accumulate(local.cells[static_cast<std::size_t>(
                             (half + cy) * static_cast<long>(side) + (half - cx))],
                         d, vs[j], vi);
            }
          }
        });
      }
      if (plain) plain_sums.add_to(local.classes);
      sums[c] = std::move(local);
#pragma omp critical(sillstone_variogram_progress)
      {
        ++chunks_done;
        if (progress) progress(static_cast<double>(chunks_done) / static_cast<double>(chunks));
      }
    }
  }
  Accumulators total;
  total.classes.resize(ndir * nclass);
  total.cells.resize(surface ? side * side : 0);
  for (const auto& part : sums) total.add(part);
  v.summary.seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
  v.summary.threads = threads;

  // Rows and their warnings.
  std::vector<std::string> sparse, empty;
  std::size_t undefined_classes =
      0;  // pairs, but no finite value (e.g. a correlogram of constant values)
  for (std::size_t r = 0; r < ndir; ++r) {
    const Direction& dir = directions[r];
    std::string label = dir.omni ? "omnidirectional" : "";
    if (dir.azimuth) label = "azimuth " + format(*dir.azimuth);
    if (dir.dip) label += (label.empty() ? "" : " ") + std::string("dip ") + format(*dir.dip);
    std::vector<std::string> few, none;  // a few classes named, the rest counted
    std::size_t few_count = 0, none_count = 0;
    for (std::size_t k = 0; k < nclass; ++k) {
      const Sums& s = total.classes[r * nclass + k];
      VariogramRow row;
      row.azimuth = dir.azimuth;
      row.dip = dir.dip;
      row.lag_from = edges[k];
      row.lag_to = edges[k + 1];
      row.pairs = s.n;
      if (s.n > 0) row.mean_distance = s.distance / static_cast<double>(s.n);
      row.value = class_value(s, options, dir.oriented);
      v.rows.push_back(row);
      v.summary.pairs += s.n;
      const std::string bounds = "(" + format(edges[k]) + ", " + format(edges[k + 1]) + "]";
      if (s.n == 0) {
        ++v.summary.empty_classes;
        if (++none_count <= detail::kListedEntries) none.push_back(bounds);
      } else if (!std::isfinite(row.value)) {
        ++undefined_classes;
      }
      if (s.n > 0 && s.n < kFewPairs) {
        ++v.summary.sparse_classes;
        if (++few_count <= detail::kListedEntries) few.push_back(bounds);
      }
    }
    if (few_count)
      sparse.push_back(label + ": " + detail::capped_join(few, few_count, ", ", "classes"));
    if (none_count)
      empty.push_back(label + ": " + detail::capped_join(none, none_count, ", ", "classes"));
  }
  auto join = [](const std::vector<std::string>& parts) {
    std::string out;
    for (const auto& p : parts) out += (out.empty() ? "" : "; ") + p;
    return out;
  };
  if (v.summary.sparse_classes)
    v.summary.warnings.push_back(std::to_string(v.summary.sparse_classes) +
                                 " class(es) hold fewer than " + std::to_string(kFewPairs) +
                                 " pairs, too few for a reliable value (common practice; "
                                 "Journel & Huijbregts 1978, from memory): " +
                                 join(sparse));
  if (v.summary.empty_classes)
    v.summary.warnings.push_back(std::to_string(v.summary.empty_classes) +
                                 " class(es) hold no pair; their values are empty: " + join(empty));
  if (undefined_classes)
    v.summary.warnings.push_back(std::to_string(undefined_classes) +
                                 " class(es) hold pairs but no defined value (the values of their "
                                 "pairs do not vary); their values are empty");
  if (all_equal)
    v.summary.warnings.push_back("all values of '" + v.value +
                                 "' are equal (zero variance): there is no spatial variation to "
                                 "model");

  if (surface) {
    VariogramSurface s;
    s.cell = cell;
    s.half = half;
    VariogramOptions semivariance = options;
    semivariance.statistic = VariogramStatistic::semivariance;
    for (const Sums& c : total.cells) {
      s.values.push_back(class_value(c, semivariance, false));
      s.pairs.push_back(c.n);
    }
    v.surface = std::move(s);
  }
  return v;
}

}  // namespace sillstone
