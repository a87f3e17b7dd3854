// The kriging engine: a published worked example, dense-solve references,
// and the textbook properties of kriging.
#include <catch2/catch.hpp>

#include <gdal_priv.h>

#include <Eigen/Dense>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <memory>
#include <random>
#include <sstream>

#include "kriging/dense.hpp"  // the condition estimate (internal)
#include "sillstone/crossval.hpp"
#include "sillstone/error.hpp"
#include "sillstone/kriging.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

SampleSet make_set(const std::vector<Point>& pts, const std::vector<double>& values, int dim = 2) {
  SampleSet s;
  s.source = "test";
  s.dimension = dim;
  s.points = pts;
  s.values = {values};
  s.censored = {std::vector<unsigned char>(values.size(), 0)};
  s.value_names = {"v"};
  for (std::size_t i = 0; i < pts.size(); ++i) {
    s.ids.push_back("line " + std::to_string(i + 2));
    s.row_numbers.push_back(static_cast<std::int64_t>(i + 2));
  }
  return s;
}

NeighbourhoodOptions global() {
  NeighbourhoodOptions n;
  n.global = true;
  return n;
}

// The same system solved the plain way: the full bordered matrix, dense LU.
struct Dense {
  Eigen::VectorXd weights;
  double estimate, variance;
};
Dense dense_solve(const CovarianceModel& m, const std::vector<Point>& pts,
                  const std::vector<double>& z, const Point& t, int drift_terms, double mean = 0) {
  const auto n = static_cast<Eigen::Index>(pts.size());
  const Eigen::Index p = drift_terms;
  Eigen::MatrixXd a = Eigen::MatrixXd::Zero(n + p, n + p);
  Eigen::VectorXd b = Eigen::VectorXd::Zero(n + p);
  for (Eigen::Index i = 0; i < n; ++i) {
    for (Eigen::Index j = 0; j < n; ++j)
      a(i, j) = m.covariance(pts[i].x - pts[j].x, pts[i].y - pts[j].y);
    b(i) = m.covariance(pts[i].x - t.x, pts[i].y - t.y);
    const double f[3] = {1, pts[i].x, pts[i].y};
    for (Eigen::Index c = 0; c < p; ++c) a(i, n + c) = a(n + c, i) = f[c];
  }
  const double f0[3] = {1, t.x, t.y};
  for (Eigen::Index c = 0; c < p; ++c) b(n + c) = f0[c];
  const Eigen::VectorXd x = a.fullPivLu().solve(b);
  Dense d;
  d.weights = x.head(n);
  d.estimate = p == 0 ? mean : 0;
  for (Eigen::Index i = 0; i < n; ++i)
    d.estimate +=
        x(i) * (p == 0 ? z[static_cast<std::size_t>(i)] - mean : z[static_cast<std::size_t>(i)]);
  d.variance = m.covariance(0, 0) - x.head(n).dot(b.head(n)) - x.tail(p).dot(b.tail(p));
  return d;
}

}  // namespace

// Isaaks & Srivastava (1989), An Introduction to Applied Geostatistics,
// ch. 12: ordinary kriging of seven samples with the covariance 10 exp(-0.3h)
// (exponential, sill 10, practical range 10, no nugget). The published
// weights, estimate and variance are recalled from memory; the dense solve
// below confirms them independently.
TEST_CASE("the ordinary kriging worked example of Isaaks & Srivastava (1989)", "[kriging]") {
  const std::vector<Point> pts = {{61, 139, 0}, {63, 140, 0}, {64, 129, 0}, {68, 128, 0},
                                  {71, 140, 0}, {73, 141, 0}, {75, 128, 0}};
  const std::vector<double> z = {477, 696, 227, 646, 606, 791, 783};
  const CovarianceModel model = parse_model_spec("10 exponential(range=10)");
  const SampleSet s = make_set(pts, z);
  const KrigingEngine engine(s, model, {}, global());
  auto ws = engine.make_workspace();
  std::vector<std::pair<std::uint32_t, double>> w;
  const NodeEstimate e = engine.estimate({65, 137, 0}, *ws, -1, 0, &w);
  REQUIRE(e.ok());
  const double published[7] = {0.173, 0.318, 0.129, 0.086, 0.151, 0.057, 0.086};
  REQUIRE(w.size() == 7);
  for (const auto& [i, weight] : w) CHECK(weight == Approx(published[i]).margin(0.0006));
  CHECK(e.estimate == Approx(592.7).margin(0.05));
  CHECK(e.variance == Approx(8.96).margin(0.005));

  const Dense d = dense_solve(model, pts, z, {65, 137, 0}, 1);
  CHECK(e.estimate == Approx(d.estimate).epsilon(1e-12));
  CHECK(e.variance == Approx(d.variance).epsilon(1e-12));
}

TEST_CASE("simple, ordinary and universal kriging equal a dense solve", "[kriging]") {
  const auto data = test::make_synthetic(60, 5, 1000.0);
  const CovarianceModel model =
      parse_model_spec("0.3 nugget + 2 spherical(range=400) + 1 gaussian(range=250)");
  const SampleSet s = make_set(data.points, data.a);
  struct Case {
    KrigingMethod method;
    int drift_terms;
  };
  for (const Case c : {Case{KrigingMethod::simple, 0}, Case{KrigingMethod::ordinary, 1},
                       Case{KrigingMethod::universal, 3}}) {
    KrigingOptions o;
    o.method = c.method;
    if (c.method == KrigingMethod::simple) o.mean = 9.5;
    const KrigingEngine engine(s, model, o, global());
    auto ws = engine.make_workspace();
    for (const Point t : {Point{123, 456, 0}, Point{900, 20, 0}, Point{-200, 1300, 0}}) {
      const NodeEstimate e = engine.estimate(t, *ws);
      REQUIRE(e.ok());
      const Dense d = dense_solve(model, data.points, data.a, t, c.drift_terms, 9.5);
      CHECK(e.estimate == Approx(d.estimate).epsilon(1e-10));
      CHECK(e.variance == Approx(d.variance).epsilon(1e-10));
    }
  }
}

TEST_CASE("kriging is exact at data locations, nugget or not", "[kriging]") {
  const auto data = test::make_synthetic(40, 9, 500.0);
  const SampleSet s = make_set(data.points, data.a);
  for (const char* spec : {"1 exponential(range=200)", "0.5 nugget + 1 spherical(range=300)"}) {
    const KrigingEngine engine(s, parse_model_spec(spec), {}, global());
    auto ws = engine.make_workspace();
    for (std::size_t i = 0; i < 40; i += 7) {
      const NodeEstimate e = engine.estimate(data.points[i], *ws);
      REQUIRE(e.ok());
      CHECK(e.estimate == Approx(data.a[i]).epsilon(1e-10));
      CHECK(e.variance == Approx(0.0).margin(1e-9));
    }
  }
}

TEST_CASE("ordinary kriging weights sum to one", "[kriging]") {
  const auto data = test::make_synthetic(80, 12, 1000.0);
  const SampleSet s = make_set(data.points, data.a);
  NeighbourhoodOptions local;
  local.max_points = 16;
  const KrigingEngine engine(
      s, parse_model_spec("0.2 nugget + 1 exponential(range=300, azimuth=40, ratio=0.5)"), {},
      local);
  auto ws = engine.make_workspace();
  std::vector<std::pair<std::uint32_t, double>> w;
  for (const Point t : {Point{500, 500, 0}, Point{10, 990, 0}}) {
    REQUIRE(engine.estimate(t, *ws, -1, 0, &w).ok());
    double sum = 0;
    for (const auto& pr : w) sum += pr.second;
    CHECK(sum == Approx(1.0).epsilon(1e-12));
    CHECK(w.size() == 16);
  }
}

// The scale behaviour of covariance: data times k give estimates times k and
// variances times k^2 (model sills times k^2), with the weights unchanged.
TEST_CASE("scaling the data scales estimates by k and variances by k^2", "[kriging]") {
  const auto data = test::make_synthetic(50, 21, 1000.0);
  const double k = 37.5;
  std::vector<double> scaled = data.a;
  for (auto& v : scaled) v *= k;
  const KrigingEngine base(make_set(data.points, data.a),
                           parse_model_spec("0.1 nugget + 2 spherical(range=350)"), {}, global());
  const KrigingEngine big(make_set(data.points, scaled),
                          parse_model_spec("140.625 nugget + 2812.5 spherical(range=350)"), {},
                          global());
  auto w1 = base.make_workspace();
  auto w2 = big.make_workspace();
  std::vector<std::pair<std::uint32_t, double>> l1, l2;
  const NodeEstimate a = base.estimate({400, 600, 0}, *w1, -1, 0, &l1);
  const NodeEstimate b = big.estimate({400, 600, 0}, *w2, -1, 0, &l2);
  CHECK(b.estimate == Approx(k * a.estimate).epsilon(1e-12));
  CHECK(b.variance == Approx(k * k * a.variance).epsilon(1e-10));
  for (std::size_t i = 0; i < l1.size(); ++i)
    CHECK(l2[i].second == Approx(l1[i].second).epsilon(1e-10));
}

TEST_CASE("universal kriging reproduces a pure linear trend", "[kriging]") {
  const auto data = test::make_synthetic(30, 4, 1000.0);
  std::vector<double> plane;
  for (const auto& p : data.points) plane.push_back(120.0 + 0.02 * p.x - 0.035 * p.y);
  KrigingOptions o;
  o.method = KrigingMethod::universal;
  o.drift = Drift::linear;
  NeighbourhoodOptions local;
  local.max_points = 12;
  const KrigingEngine engine(make_set(data.points, plane),
                             parse_model_spec("1 spherical(range=500)"), o, local);
  auto ws = engine.make_workspace();
  for (const Point t : {Point{250, 250, 0}, Point{1500, -300, 0}}) {
    const NodeEstimate e = engine.estimate(t, *ws);
    REQUIRE(e.ok());
    CHECK(e.estimate == Approx(120.0 + 0.02 * t.x - 0.035 * t.y).epsilon(1e-10));
  }
}

TEST_CASE("block kriging: 1x1 discretisation is point kriging, variance falls with size",
          "[kriging]") {
  const auto data = test::make_synthetic(60, 31, 1000.0);
  const SampleSet s = make_set(data.points, data.a);
  const CovarianceModel model = parse_model_spec("0.2 nugget + 1 spherical(range=300)");
  const Point t{480, 520, 0};
  const KrigingEngine point(s, model, {}, global());
  auto ws = point.make_workspace();
  const NodeEstimate p = point.estimate(t, *ws);
  KrigingOptions o;
  o.block = {50, 50};
  o.discretise = {1, 1};
  const KrigingEngine one(s, model, o, global());
  auto ws1 = one.make_workspace();
  const NodeEstimate b1 = one.estimate(t, *ws1);
  CHECK(b1.estimate == Approx(p.estimate).epsilon(1e-13));
  CHECK(b1.variance == Approx(p.variance).epsilon(1e-13));
  double previous = p.variance;
  for (double size : {25.0, 50.0, 100.0, 200.0}) {
    KrigingOptions ob;
    ob.block = {size, size};
    const KrigingEngine blocks(s, model, ob, global());
    auto wsb = blocks.make_workspace();
    const NodeEstimate e = blocks.estimate(t, *wsb);
    REQUIRE(e.ok());
    CHECK(e.variance < previous);
    previous = e.variance;
  }
}

TEST_CASE("refusals: power with simple kriging, log of zero, collinear drift", "[kriging]") {
  const auto data = test::make_synthetic(20, 2, 100.0);
  KrigingOptions simple;
  simple.method = KrigingMethod::simple;
  CHECK_THROWS_WITH(KrigingEngine(make_set(data.points, data.a),
                                  parse_model_spec("1 power(exponent=1.5)"), simple, global()),
                    Catch::Contains("power model"));
  std::vector<double> with_zero = data.a;
  with_zero[3] = 0;
  KrigingOptions log;
  log.transform = ValueTransform::logarithm(0);
  CHECK_THROWS_WITH(KrigingEngine(make_set(data.points, with_zero),
                                  parse_model_spec("1 spherical(range=50)"), log, global()),
                    Catch::Contains("line 5, column 'v'"));
  std::vector<Point> line;
  for (int i = 0; i < 10; ++i) line.push_back({i * 10.0, i * 5.0, 0});
  KrigingOptions uk;
  uk.method = KrigingMethod::universal;
  CHECK_THROWS_WITH(KrigingEngine(make_set(line, std::vector<double>(10, 1.0)),
                                  parse_model_spec("1 spherical(range=50)"), uk, global()),
                    Catch::Contains("one line"));
}

TEST_CASE("the power model krigs through the generalised covariance", "[kriging]") {
  const auto data = test::make_synthetic(25, 8, 100.0);
  const KrigingEngine engine(make_set(data.points, data.a),
                             parse_model_spec("0.01 power(exponent=1.2)"), {}, global());
  auto ws = engine.make_workspace();
  const NodeEstimate at = engine.estimate(data.points[4], *ws);
  REQUIRE(at.ok());
  CHECK(at.estimate == Approx(data.a[4]).epsilon(1e-9));
  CHECK(at.variance == Approx(0).margin(1e-9));
  std::vector<std::pair<std::uint32_t, double>> w;
  const NodeEstimate off = engine.estimate({50, 50, 0}, *ws, -1, 0, &w);
  REQUIRE(off.ok());
  double sum = 0;
  for (const auto& pr : w) sum += pr.second;
  CHECK(sum == Approx(1.0).epsilon(1e-10));
  CHECK(off.variance > 0);
}

// Monte Carlo check of the lognormal back-transform of ordinary kriging
// (Journel & Huijbregts 1978): with Y Gaussian of unknown mean and Z = exp(Y),
// Z* = exp(Y*_OK + s^2/2 + mu) is unbiased for Z(x0). A wrong sign of mu
// would bias it by a factor exp(2 mu), far outside the tolerance here.
TEST_CASE("the lognormal ordinary-kriging back-transform is unbiased", "[kriging]") {
  const std::vector<Point> pts = {{0, 0, 0}, {100, 0, 0}, {0, 100, 0}, {30, 160, 0}, {150, 120, 0}};
  const Point target{400, 400, 0};  // far from the data: a large Lagrange multiplier
  const CovarianceModel model = parse_model_spec("0.5 exponential(range=600)");
  const std::size_t n = pts.size();
  Eigen::MatrixXd c(n + 1, n + 1);
  std::vector<Point> all = pts;
  all.push_back(target);
  for (std::size_t i = 0; i <= n; ++i)
    for (std::size_t j = 0; j <= n; ++j)
      c(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) =
          model.covariance(all[i].x - all[j].x, all[i].y - all[j].y);
  const Eigen::MatrixXd l = c.llt().matrixL();
  KrigingOptions o;
  o.transform = ValueTransform::logarithm(0);
  const KrigingEngine engine(make_set(pts, std::vector<double>(n, 1.0)), model, o, global());
  auto ws = engine.make_workspace();
  const NodeEstimate probe = engine.estimate(target, *ws);
  REQUIRE(std::abs(probe.lagrange) > 0.05);
  // Weights do not depend on the data: apply them to simulated log values.
  std::vector<std::pair<std::uint32_t, double>> w;
  engine.estimate(target, *ws, -1, 0, &w);
  std::mt19937_64 rng(42);
  std::normal_distribution<double> g(0, 1);
  const int runs = 200000;
  double sum_est = 0, sum_true = 0;
  Eigen::VectorXd u(n + 1);
  for (int r = 0; r < runs; ++r) {
    for (Eigen::Index i = 0; i <= static_cast<Eigen::Index>(n); ++i) u(i) = g(rng);
    const Eigen::VectorXd y = (l * u).array() + 1.0;  // mean 1, "unknown" to kriging
    double ystar = 0;
    for (const auto& [i, weight] : w) ystar += weight * y(i);
    sum_est += std::exp(ystar + probe.variance / 2 + probe.lagrange);
    sum_true += std::exp(y(static_cast<Eigen::Index>(n)));
  }
  // Both means estimate exp(1 + 0.25) = 3.49; their standard errors are ~0.5 %.
  CHECK(sum_est / runs == Approx(std::exp(1.25)).epsilon(0.02));
  CHECK(sum_true / runs == Approx(std::exp(1.25)).epsilon(0.02));
}

// log(v + C) kriging is log kriging of the shifted values w = v + C, and its
// estimate of v is that of w minus C (an identity of the definition; the
// shifted run uses no offset, so the two paths share no offset code).
TEST_CASE("kriging with a log offset back-transforms to the data's units", "[kriging]") {
  const auto data = test::make_synthetic(30, 3, 100.0);
  const double offset = 40;
  std::vector<double> v(data.a.size()), w(data.a.size());
  for (std::size_t i = 0; i < v.size(); ++i) {
    v[i] = data.a[i] - 30;  // some values negative: plain log would refuse them
    w[i] = v[i] + offset;
  }
  const CovarianceModel model = parse_model_spec("0.05 nugget + 0.5 exponential(range=80)");
  for (const KrigingMethod method : {KrigingMethod::simple, KrigingMethod::ordinary}) {
    KrigingOptions with_offset, shifted;
    with_offset.method = shifted.method = method;
    with_offset.transform = ValueTransform::logarithm(offset);
    shifted.transform = ValueTransform::logarithm(0);
    with_offset.threshold = 5;
    shifted.threshold = 5 + offset;
    const KrigingEngine a(make_set(data.points, v), model, with_offset, global());
    const KrigingEngine b(make_set(data.points, w), model, shifted, global());
    auto wa = a.make_workspace();
    auto wb = b.make_workspace();
    for (const Point& p : {Point{10, 10, 0}, Point{55, 70, 0}, data.points[3]}) {
      const NodeOutput oa = a.finish(a.estimate(p, *wa)), ob = b.finish(b.estimate(p, *wb));
      CHECK(oa.estimate == Approx(ob.estimate - offset).epsilon(1e-12));
      CHECK(oa.variance == Approx(ob.variance).epsilon(1e-12));
      CHECK(oa.probability == Approx(ob.probability).epsilon(1e-12));
    }
  }
  KrigingOptions bad;
  bad.transform = ValueTransform::logarithm(offset);
  bad.threshold = -offset;  // log(T + C) undefined
  std::string why;
  CHECK_FALSE(bad.is_valid(2, model, &why));
  CHECK_THAT(why, Catch::Contains("log(value + 40)"));
}

TEST_CASE("the search ellipse follows the longest structure's anisotropy", "[kriging]") {
  const CovarianceModel m = parse_model_spec(
      "0.1 nugget + 1 spherical(range=100) + 1 exponential(range=800, azimuth=30, ratio=0.25)");
  const auto s = search_shape(m);
  auto length = [&s](double dx, double dy) {
    const double u = s[0] * dx + s[1] * dy, v = s[3] * dx + s[4] * dy, w = s[6] * dx + s[7] * dy;
    return std::sqrt(u * u + v * v + w * w);
  };
  const double t = 30.0 * M_PI / 180.0;
  CHECK(length(std::sin(t) * 500, std::cos(t) * 500) ==
        Approx(500.0).epsilon(1e-12));  // major axis
  CHECK(length(std::cos(t) * 100, -std::sin(t) * 100) ==
        Approx(400.0).epsilon(1e-12));  // minor: / ratio
  const auto identity = search_shape(parse_model_spec("1 nugget"));
  CHECK(identity[0] == 1.0);
  CHECK(identity[4] == 1.0);
}

// Grid kriging updates the factorisation as samples leave and join the
// neighbour set (Workspace::incremental). Along a row of close nodes the
// updated systems must give what a fresh factorisation gives, to rounding.
TEST_CASE("factorisation updates along a row equal fresh factorisations", "[kriging]") {
  const auto data = test::make_synthetic(3000, 17, 1000.0);
  const SampleSet s = make_set(data.points, data.a);
  NeighbourhoodOptions local;
  local.max_points = 16;
  const CovarianceModel model =
      parse_model_spec("0.2 nugget + 1 spherical(range=300) + 0.5 cubic(range=120)");
  for (const KrigingMethod method :
       {KrigingMethod::simple, KrigingMethod::ordinary, KrigingMethod::universal}) {
    KrigingOptions o;
    o.method = method;
    if (method == KrigingMethod::simple) o.mean = 9.5;
    const KrigingEngine engine(s, model, o, local);
    auto updated = engine.make_workspace();
    auto fresh = engine.make_workspace();
    updated->incremental = true;
    int max_updates = 0;
    for (int i = 0; i < 400; ++i) {
      const Point t{100 + 2.0 * i, 500, 0};
      const NodeEstimate a = engine.estimate(t, *updated);
      max_updates = std::max(max_updates, updated->updates);
      fresh->restart();
      const NodeEstimate b = engine.estimate(t, *fresh);
      REQUIRE(a.ok());
      REQUIRE(b.ok());
      CHECK(a.estimate == Approx(b.estimate).epsilon(1e-11));
      CHECK(a.variance == Approx(b.variance).epsilon(1e-10));
      CHECK(a.lagrange == Approx(b.lagrange).epsilon(1e-9).margin(1e-12));
    }
    CHECK(max_updates > 5);  // the updates were exercised
  }
}

// Grid rows run in fixed chunks that restart the workspace, so the raster
// does not depend on how many threads share the chunks.
TEST_CASE("a kriged raster is identical for 1 and 2 threads", "[kriging]") {
  const auto data = test::make_synthetic(4000, 23, 1000.0);
  const SampleSet s = make_set(data.points, data.a);
  NeighbourhoodOptions local;
  local.max_points = 20;
  GridSpec grid;
  grid.xmin = 0;
  grid.ymax = 1000;
  grid.dx = grid.dy = 7.5;
  grid.nx = 133;
  grid.ny = 61;
  test::ScratchDir dir;
  std::vector<std::vector<double>> bands;
  for (const int threads : {1, 2}) {
    KrigingOptions o;
    o.threads = threads;
    const KrigingEngine engine(s, parse_model_spec("0.1 nugget + 1 spherical(range=250)"), o,
                               local);
    RasterTarget target;
    target.path = dir.path("t" + std::to_string(threads) + ".tif");
    const KrigingSummary summary = krige_raster(engine, grid, target);
    REQUIRE(summary.estimated == grid.nodes());
    std::unique_ptr<GDALDataset> ds(GDALDataset::Open(target.path.c_str(), GDAL_OF_RASTER));
    REQUIRE(ds);
    for (int b = 1; b <= 2; ++b) {
      std::vector<double> v(static_cast<std::size_t>(grid.nodes()));
      REQUIRE(ds->GetRasterBand(b)->RasterIO(GF_Read, 0, 0, 133, 61, v.data(), 133, 61, GDT_Float64,
                                             0, 0, nullptr) == CE_None);
      bands.push_back(v);
    }
  }
  CHECK(bands[0] == bands[2]);  // estimates, bit for bit
  CHECK(bands[1] == bands[3]);  // variances
}

// --- Reliability: condition estimate, warnings, output size ---------------------------------

TEST_CASE("the condition estimate brackets the true reciprocal condition number", "[kriging]") {
  // Reference: the exact 1-norm condition number from Eigen's dense inverse.
  // Hager/Higham's estimate of ||A^-1||_1 is a lower bound, so the estimated
  // rcond is never below the true one; it is rarely more than 3 times above it
  // (Higham 1988, from memory); 10 leaves room.
  std::mt19937_64 rng(20261202);
  std::uniform_real_distribution<double> u(0.0, 100.0);
  int compared = 0;
  for (int trial = 0; trial < 20; ++trial) {
    const std::size_t n = 3 + static_cast<std::size_t>(trial);
    std::vector<Point> pts;
    for (std::size_t i = 0; i < n; ++i) pts.push_back({u(rng), u(rng), 0});
    // Exponential without nugget: fine; gaussian with a long range: nearly singular.
    const CovarianceModel m =
        parse_model_spec(trial % 2 ? "1 gaussian(range=80)" : "1 exponential(range=40)");
    Eigen::MatrixXd k(static_cast<Eigen::Index>(n), static_cast<Eigen::Index>(n));
    std::vector<double> l(n * n), x(n), z(n);
    for (std::size_t j = 0; j < n; ++j)
      for (std::size_t i = 0; i < n; ++i) {
        const double c = m.covariance(pts[i].x - pts[j].x, pts[i].y - pts[j].y);
        k(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j)) = c;
        l[j * n + i] = c;
      }
    const double norm1 = detail::symmetric_norm1(l.data(), n, x.data());
    CHECK(norm1 == Approx(k.cwiseAbs().colwise().sum().maxCoeff()).epsilon(1e-12));
    if (!detail::cholesky(l.data(), n, 1e-14))
      continue;  // numerically singular: nothing to compare
    const double estimate = detail::cholesky_rcond(l.data(), n, norm1, x.data(), z.data());
    const double exact = 1.0 / (norm1 * k.inverse().cwiseAbs().colwise().sum().maxCoeff());
    if (exact < 1e-13) continue;  // the inverse itself is then inaccurate
    INFO("n = " << n << ", exact rcond " << exact << ", estimate " << estimate);
    CHECK(estimate >= exact * (1 - 1e-6));
    CHECK(estimate <= 10 * exact);
    ++compared;
  }
  CHECK(compared >= 10);  // the skips above must not empty the test
}

TEST_CASE("badly conditioned systems are nodata, never wrong numbers", "[kriging]") {
  // A gaussian model without nugget on a dense 8 x 8 grid: every pivot can
  // pass the pivot test while the system has lost its digits.
  std::vector<Point> pts;
  std::vector<double> z;
  for (int i = 0; i < 8; ++i)
    for (int j = 0; j < 8; ++j) {
      pts.push_back({double(i), double(j), 0});
      z.push_back(((i * 7 + j * 3) % 5) / 2.0);
    }
  const SampleSet s = make_set(pts, z);
  const KrigingEngine engine(s, parse_model_spec("1 gaussian(range=40)"), {}, global());
  auto ws = engine.make_workspace();
  const NodeEstimate e = engine.estimate({3.5, 3.5, 0}, *ws);
  CHECK(e.status == NodeEstimate::Status::singular);
  bool warned = false;
  for (const auto& w : engine.warnings())
    warned = warned || w.find("gaussian structure") != std::string::npos;
  CHECK(warned);
  // With a nugget the same data krige normally, and no warning is given.
  const KrigingEngine fine(s, parse_model_spec("0.05 nugget + 1 gaussian(range=40)"), {}, global());
  auto ws2 = fine.make_workspace();
  CHECK(fine.estimate({3.5, 3.5, 0}, *ws2).ok());
  for (const auto& w : fine.warnings()) CHECK(w.find("gaussian structure") == std::string::npos);
}

TEST_CASE("engine warnings: few samples, one line, equal values, near-duplicates", "[kriging]") {
  const CovarianceModel m = parse_model_spec("1 spherical(range=50)");
  auto has = [](const KrigingEngine& e, const std::string& text) {
    for (const auto& w : e.warnings())
      if (w.find(text) != std::string::npos) return true;
    return false;
  };
  {
    const KrigingEngine e(make_set({{0, 0, 0}, {10, 5, 0}, {20, 10, 0}, {30, 15, 0}}, {1, 2, 2, 3}),
                          m, {}, global());
    CHECK(has(e, "only 4 sample(s)"));
    CHECK(has(e, "lie on one line"));
    CHECK_FALSE(has(e, "values are equal"));
  }
  {
    const KrigingEngine e(make_set({{0, 0, 0}, {10, 5, 0}, {3, 12, 0}}, {5, 5, 5}), m, {},
                          global());
    CHECK(has(e, "all 3 values are equal (5)"));
    CHECK_FALSE(has(e, "lie on one line"));
  }
  {
    std::vector<Point> pts;
    std::vector<double> z;
    for (int i = 0; i < 12; ++i) {
      pts.push_back({double(i * 7 % 30), double(i * 11 % 40), 0});
      z.push_back(i);
    }
    pts.push_back({pts[4].x + 1e-7, pts[4].y, 0});  // 1e-7 apart: gamma = 1.5e-9 of the sill
    z.push_back(100);
    const KrigingEngine e(make_set(pts, z), m, {}, global());
    CHECK(has(e, "1 pair(s) of samples are near-duplicates"));
    CHECK(has(e, "line 6 and line 14"));
    CHECK_FALSE(has(e, "only"));
    // A nugget makes the pair ordinary: the model no longer correlates them perfectly.
    const KrigingEngine n(make_set(pts, z), parse_model_spec("0.1 nugget + 1 spherical(range=50)"),
                          {}, global());
    CHECK_FALSE(has(n, "near-duplicates"));
    // With a nugget, samples at one location are still near-duplicates (a
    // sort finds them; the nearest-neighbour pass then names them).
    std::vector<Point> same = pts;
    same.back() = pts[4];
    const KrigingEngine d(make_set(same, z), parse_model_spec("0.1 nugget + 1 spherical(range=50)"),
                          {}, global());
    CHECK(has(d, "1 pair(s) of samples are near-duplicates"));
    CHECK(has(d, "line 6 and line 14, 0 apart"));
  }
}

TEST_CASE("a neighbourhood too small for the drift is refused", "[kriging]") {
  std::vector<Point> pts = {{0, 0, 0}, {10, 5, 0}, {3, 12, 0}, {20, 2, 0}, {14, 18, 0}};
  KrigingOptions o;
  o.method = KrigingMethod::universal;
  NeighbourhoodOptions nb;
  nb.max_points = 3;
  CHECK_THROWS_WITH(KrigingEngine(make_set(pts, {1, 2, 3, 4, 5}),
                                  parse_model_spec("1 spherical(range=50)"), o, nb),
                    Catch::Contains("--max-points 3 is too few"));
  nb.max_points = 4;
  CHECK_NOTHROW(KrigingEngine(make_set(pts, {1, 2, 3, 4, 5}),
                              parse_model_spec("1 spherical(range=50)"), o, nb));
}

TEST_CASE("output size: estimates and refusals before any work", "[kriging]") {
  GridSpec g;
  g.nx = 1000;
  g.ny = 2000;
  const OutputSize raster = output_size(g, 3, false);
  CHECK(raster.disk == Approx(1000.0 * 2000 * 3 * 8));
  CHECK(raster.memory < raster.disk);  // rasters are written a block of rows at a time
  const OutputSize table = output_size(g, 5, true);
  CHECK(table.disk > raster.disk);
  test::ScratchDir dir;
  CHECK_NOTHROW(check_output_size(g, 3, false, dir.path("out.tif")));
  g.nx = 3'000'000'000LL;
  g.ny = 1;
  CHECK_THROWS_WITH(check_output_size(g, 2, false, dir.path("out.tif")),
                    Catch::Contains("a raster has at most 2147483647 columns"));
  g.nx = 1'000'000;
  g.ny = 1'000'000;  // 1e12 nodes: terabytes
  CHECK_THROWS_WITH(check_output_size(g, 2, false, dir.path("out.tif")),
                    Catch::Contains("would need about"));
}

TEST_CASE("undefined figures are empty and counted, never silent", "[kriging]") {
  const std::vector<Point> pts = {{0, 0, 0},  {10, 5, 0},  {3, 12, 0},
                                  {20, 2, 0}, {14, 18, 0}, {7, 25, 0}};
  auto has = [](const std::vector<std::string>& lines, const std::string& text) {
    for (const auto& w : lines)
      if (w.find(text) != std::string::npos) return true;
    return false;
  };
  SECTION("cross-validation of constant values: the correlation is undefined") {
    const CrossValidationResult cv =
        cross_validate(make_set(pts, {5, 5, 5, 5, 5, 5}), parse_model_spec("1 spherical(range=30)"),
                       {}, global(), {});
    CHECK(cv.summary.estimated == 6);
    CHECK(std::isnan(cv.summary.correlation));
    CHECK(has(cv.summary.counts.warnings,
              "correlation of observed and estimated values is undefined"));
    CHECK(has(cv.summary.counts.warnings, "all 6 values are equal"));
    CHECK_THAT(crossval_summary_text(cv),
               Catch::Contains("correlation observed-estimated                 nan"));
    CHECK_THAT(crossval_summary_json(cv), Catch::Contains("\"correlation\": null"));
  }
  SECTION("a block table with a power model: kriging_efficiency is empty on every row, counted") {
    test::ScratchDir dir;
    const KrigingEngine engine(make_set(pts, {1, 2, 3, 2.5, 1.5, 3.5}),
                               parse_model_spec("1 power(exponent=1.5)"), {}, global());
    GridSpec g;
    g.xmin = 0;
    g.ymax = 30;
    g.dx = g.dy = 10;
    g.nx = 2;
    g.ny = 3;
    TableTarget t;
    t.path = dir.path("blocks.csv");
    const KrigingSummary s = krige_table(engine, g, t);
    CHECK(s.estimated == 6);
    CHECK(has(s.warnings,
              "6 estimated row(s) with an empty kriging_efficiency: the model has no sill"));
    std::ifstream f(t.path);
    std::string header, row;
    std::getline(f, header);
    CHECK(header == "x,y,z,estimate,variance,neighbours,slope_of_regression,kriging_efficiency");
    int rows = 0;
    while (std::getline(f, row)) {
      ++rows;
      CHECK(row.back() == ',');  // the last cell, kriging_efficiency, is empty
    }
    CHECK(rows == 6);
  }
  SECTION("crossval counts unestimated samples by cause, in samples not nodes") {
    const CrossValidationResult cv = cross_validate(make_set(pts, {1, 2, 3, 2.5, 1.5, 3.5}),
                                                    parse_model_spec("1 spherical(range=30)"), {},
                                                    [] {
                                                      NeighbourhoodOptions n;
                                                      n.radius = 1;  // no neighbour within reach
                                                      n.min_points = 1;
                                                      return n;
                                                    }(),
                                                    {});
    CHECK(cv.summary.estimated == 0);
    CHECK(has(cv.summary.counts.warnings,
              "6 sample(s) with fewer samples than --min-points in the search: left unestimated"));
    CHECK(std::isnan(cv.summary.rmse));
  }
}

TEST_CASE("a neighbourhood nearly on a line leaves the drift unresolved, never wild estimates",
          "[kriging]") {
  // A well-spread cluster (the whole design fixes a linear drift) and, 1 km
  // away, 20 samples on a line whose coordinates are rounded to the
  // millimetre: nodes near the line see only line samples.
  auto data = test::make_synthetic(30, 11, 100.0);
  std::vector<double> z;
  for (const auto& p : data.points) z.push_back(std::sin(p.x / 17.0) * std::cos(p.y / 23.0));
  for (int i = 0; i < 20; ++i) {
    const double t = 5.3 * i + 0.37 * (i % 3);
    data.points.push_back({std::round((1000 + 0.8 * t) * 1000) / 1000,
                           std::round((1000 + 0.6 * t) * 1000) / 1000, 0});
    z.push_back(std::sin(t / 8.0));  // in [-1, 1]
  }
  KrigingOptions o;
  o.method = KrigingMethod::universal;
  o.drift = Drift::linear;
  NeighbourhoodOptions local;
  local.max_points = 8;
  const KrigingEngine engine(make_set(data.points, z), parse_model_spec("1 spherical(range=30)"), o,
                             local);
  auto ws = engine.make_workspace();
  int unresolved = 0, estimated = 0;
  for (int i = 0; i <= 20; ++i)
    for (int j = 0; j <= 20; ++j) {
      const NodeEstimate e = engine.estimate({1000.0 + 4.0 * i, 1000.0 + 4.0 * j, 0}, *ws);
      if (e.status == NodeEstimate::Status::drift_unresolved) ++unresolved;
      if (!e.ok()) continue;
      ++estimated;
      // Data in [-1, 1]: without the check estimates reached hundreds.
      CHECK(std::abs(e.estimate) < 5.0);
    }
  CHECK(unresolved > 0);
  // The cluster's own nodes are unaffected (its neighbourhoods are spread).
  const NodeEstimate e = engine.estimate({50, 50, 0}, *ws);
  CHECK(e.ok());
  (void)estimated;
}
