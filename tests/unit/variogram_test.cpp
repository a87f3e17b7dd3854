// The empirical variogram: lag classes, directions, estimators, determinism,
// invariances, transforms, files.
#include <catch2/catch.hpp>

#include <gdal_priv.h>

#include <cmath>
#include <cstring>
#include <fstream>
#include <sstream>

#include "sillstone/error.hpp"
#include "sillstone/variogram.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

// A SampleSet as the loader would give it: rows named "line 2", "line 3", ...
SampleSet make_set(const std::vector<Point>& points, const std::vector<double>& values,
                   int dimension = 2) {
  SampleSet s;
  s.source = "test.csv";
  s.dimension = dimension;
  s.points = points;
  s.value_names = {"v"};
  s.values = {values};
  s.censored = {std::vector<unsigned char>(values.size(), 0)};
  for (std::size_t i = 0; i < points.size(); ++i) {
    s.ids.push_back("line " + std::to_string(i + 2));
    s.row_numbers.push_back(static_cast<std::int64_t>(i + 2));
  }
  return s;
}

SampleSet random_set(std::size_t n, std::uint64_t seed) {
  const auto data = test::make_synthetic(n, seed, 1000.0);
  return make_set(data.points, data.a);
}

VariogramOptions lags(double w, int n) {
  VariogramOptions o;
  o.lag = w;
  o.lags = n;
  return o;
}

std::uint64_t pairs_of(const EmpiricalVariogram& v) {
  std::uint64_t total = 0;
  for (const auto& r : v.rows) total += r.pairs;
  return total;
}

bool same_bits(double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; }

}  // namespace

TEST_CASE("a pair exactly at lag_to is in that class, coincident samples make no pair",
          "[variogram]") {
  // On a line at x = 0, 10, 20, 25 and a second sample at x = 0.
  const SampleSet s =
      make_set({{0, 0, 0}, {10, 0, 0}, {20, 0, 0}, {25, 0, 0}, {0, 0, 0}}, {1, 2, 4, 7, 3});
  const EmpiricalVariogram v = compute_variogram(s, lags(10, 3));
  REQUIRE(v.rows.size() == 3);
  // Distances 10, 10, 5, 10 -> (0, 10]; 20, 15, 20 -> (10, 20]; 25, 25 -> (20, 30].
  CHECK(v.rows[0].pairs == 4);
  CHECK(v.rows[1].pairs == 3);
  CHECK(v.rows[2].pairs == 2);
  CHECK(v.rows[0].lag_to == 10.0);
  CHECK(v.rows[2].mean_distance == 25.0);
  // (20, 30]: values 1 and 3 against 7: (36 + 16) / (2 * 2).
  CHECK(v.rows[2].value == 13.0);

  // A pair exactly at the largest distance is counted, one just beyond is not.
  CHECK(pairs_of(compute_variogram(make_set({{0, 0, 0}, {30, 0, 0}}, {1, 2}), lags(10, 3))) == 1);
  const EmpiricalVariogram beyond =
      compute_variogram(make_set({{0, 0, 0}, {30.000001, 0, 0}}, {1, 2}), lags(10, 3));
  CHECK(pairs_of(beyond) == 0);
  CHECK(beyond.summary.empty_classes == 3);
  CHECK(std::isnan(beyond.rows[0].value));
}

TEST_CASE("lag classes from W and N, from D alone, from D and N", "[variogram]") {
  VariogramOptions o;
  o.max_distance = 300;
  CHECK(o.lag_edges().size() == VariogramOptions::kDefaultLags + 1);
  CHECK(o.lag_edges()[3] == 60.0);
  o.lags = 4;
  CHECK(o.lag_edges() == std::vector<double>({0, 75, 150, 225, 300}));
  o = lags(0.1, 3);
  CHECK(o.lag_edges().back() == Approx(0.3));
  VariogramOptions none;
  std::string why;
  CHECK_FALSE(none.is_valid(&why));
  CHECK_THAT(why, Catch::Contains("--lag"));
  VariogramOptions clash = lags(10, 3);
  clash.max_distance = 50;
  CHECK_FALSE(clash.is_valid(&why));
}

TEST_CASE("the angle tolerance is inclusive", "[variogram]") {
  const SampleSet diagonal = make_set({{0, 0, 0}, {1, 1, 0}}, {0, 1});  // azimuth 45
  auto pairs_along = [&](const SampleSet& s, double azimuth, double tolerance) {
    VariogramOptions o = lags(2, 1);
    o.azimuths = {azimuth};
    o.angle_tolerance = tolerance;
    return pairs_of(compute_variogram(s, o));
  };
  CHECK(pairs_along(diagonal, 0, 45) == 1);
  CHECK(pairs_along(diagonal, 90, 45) == 1);
  CHECK(pairs_along(diagonal, 0, 44.999) == 0);
  // Azimuth 30: (sin 30, cos 30).
  const SampleSet thirty = make_set({{0, 0, 0}, {0.5, std::sqrt(3.0) / 2, 0}}, {0, 1});
  CHECK(pairs_along(thirty, 0, 30) == 1);
  CHECK(pairs_along(thirty, 0, 29.9999) == 0);
  CHECK(pairs_along(thirty, 180 - 1e-12, 30) == 1);  // pairs have no sense of direction
}

TEST_CASE("the bandwidth limits the offset across a direction, inclusively", "[variogram]") {
  auto pairs_with = [](double across) {
    VariogramOptions o = lags(20, 1);
    o.azimuths = {90};
    o.angle_tolerance = 45;
    o.bandwidth = 2;
    return pairs_of(compute_variogram(make_set({{0, 0, 0}, {10, across, 0}}, {0, 1}), o));
  };
  CHECK(pairs_with(2.0) == 1);
  CHECK(pairs_with(-2.0) == 1);
  CHECK(pairs_with(2.5) == 0);  // 14 degrees off: inside the tolerance, outside the band
}

TEST_CASE("head and tail follow the azimuth in directional covariances", "[variogram]") {
  // Two pairs along azimuth 90: tails (west) 1 and 2, heads (east) 5 and 10.
  const SampleSet s = make_set({{0, 0, 0}, {10, 0, 0}, {0, 100, 0}, {10, 100, 0}}, {1, 5, 2, 10});
  VariogramOptions o = lags(10, 1);
  o.azimuths = {90};
  o.statistic = VariogramStatistic::covariance;
  // mean(zh zt) - mh mt = (5 + 20) / 2 - 7.5 * 1.5 = 1.25
  CHECK(compute_variogram(s, o).rows[0].value == Approx(1.25).epsilon(1e-14));
  o.statistic = VariogramStatistic::correlogram;  // sh = 2.5, st = 0.5
  CHECK(compute_variogram(s, o).rows[0].value == Approx(1.0).epsilon(1e-14));
}

TEST_CASE("Cressie-Hawkins on a constructed case", "[variogram]") {
  // Pairs in (0, 1.5]: |dz| = 1 and 4, so mean |dz|^(1/2) = (1 + 2) / 2 = 1.5;
  // 2 gamma = 1.5^4 / (0.457 + 0.494 / 2) = 5.0625 / 0.704 (Cressie & Hawkins 1980).
  const SampleSet s = make_set({{0, 0, 0}, {1, 0, 0}, {2, 0, 0}}, {0, 1, 5});
  VariogramOptions o = lags(1.5, 1);
  o.estimator = VariogramEstimator::cressie_hawkins;
  const EmpiricalVariogram v = compute_variogram(s, o);
  CHECK(v.rows[0].pairs == 2);
  CHECK(v.rows[0].value == Approx(5.0625 / 0.704 / 2).epsilon(1e-14));
  o.estimator = VariogramEstimator::matheron;  // (1 + 16) / (2 * 2)
  CHECK(compute_variogram(s, o).rows[0].value == 4.25);
}

TEST_CASE("results are bit-for-bit the same for 1 and 2 threads", "[variogram]") {
  const SampleSet s = random_set(3000, 99);
  for (auto statistic : {VariogramStatistic::semivariance, VariogramStatistic::correlogram}) {
    VariogramOptions o = lags(40, 12);
    o.azimuths = {0, 45, 90, 135};
    o.statistic = statistic;
    o.surface = statistic == VariogramStatistic::semivariance;
    o.threads = 1;
    const EmpiricalVariogram one = compute_variogram(s, o);
    o.threads = 2;
    const EmpiricalVariogram two = compute_variogram(s, o);
    CHECK(two.summary.threads == 2);
    REQUIRE(one.rows.size() == two.rows.size());
    for (std::size_t k = 0; k < one.rows.size(); ++k) {
      CHECK(one.rows[k].pairs == two.rows[k].pairs);
      CHECK(same_bits(one.rows[k].value, two.rows[k].value));
      CHECK(same_bits(one.rows[k].mean_distance, two.rows[k].mean_distance));
    }
    if (o.surface)
      for (std::size_t k = 0; k < one.surface->values.size(); ++k)
        CHECK(same_bits(one.surface->values[k], two.surface->values[k]));
  }
}

TEST_CASE("scaling values by k scales semivariance by k^2, translation changes nothing",
          "[variogram]") {
  const SampleSet s = random_set(800, 5);
  VariogramOptions o = lags(50, 10);
  o.azimuths = {30, 120};
  const EmpiricalVariogram base = compute_variogram(s, o);

  SampleSet scaled = s;
  const double k = 3.7;
  for (double& x : scaled.values[0]) x *= k;
  const EmpiricalVariogram times = compute_variogram(scaled, o);

  SampleSet moved = s;  // UTM-scale coordinates
  for (auto& p : moved.points) p = {p.x + 1e6, p.y + 5e6, 0};
  const EmpiricalVariogram shifted = compute_variogram(moved, o);

  for (std::size_t r = 0; r < base.rows.size(); ++r) {
    REQUIRE(base.rows[r].pairs > 0);
    CHECK(times.rows[r].value == Approx(k * k * base.rows[r].value).epsilon(1e-12));
    CHECK(shifted.rows[r].pairs == base.rows[r].pairs);
    CHECK(shifted.rows[r].value == Approx(base.rows[r].value).epsilon(1e-9));
    CHECK(shifted.rows[r].mean_distance == Approx(base.rows[r].mean_distance).epsilon(1e-9));
  }
}

TEST_CASE("3D: dips select pairs by their angle below the horizontal", "[variogram]") {
  // A vertical hole (x = y = 0, z = 0, -2, -4) and a horizontal line at z = 0.
  const SampleSet s =
      make_set({{0, 0, 0}, {0, 0, -2}, {0, 0, -4}, {3, 0, 0}, {6, 0, 0}}, {1, 2, 3, 4, 5}, 3);
  VariogramOptions o = lags(2, 3);
  o.azimuths = {90};
  o.dips = {0, 90};
  const EmpiricalVariogram v = compute_variogram(s, o);
  REQUIRE(v.rows.size() == 6);  // azimuth 90 dip 0, then the vertical once
  CHECK(*v.rows[0].azimuth == 90.0);
  CHECK(*v.rows[0].dip == 0.0);
  CHECK_FALSE(v.rows[3].azimuth.has_value());
  CHECK(*v.rows[3].dip == 90.0);
  // Horizontal: (0,3) d 3 -> (2,4]; (3,6) d 3 -> (2,4]; (0,6) d 6 -> (4,6].
  CHECK(v.rows[1].pairs == 2);
  CHECK(v.rows[2].pairs == 1);
  // Vertical: d 2, 2 -> (0,2]; d 4 -> (2,4]. The slanted pairs are neither.
  CHECK(v.rows[3].pairs == 2);
  CHECK(v.rows[4].pairs == 1);
  CHECK(v.rows[5].pairs == 0);

  SampleSet flat = s;
  flat.dimension = 2;
  VariogramOptions with_dips = lags(2, 3);
  with_dips.dips = {0};
  CHECK_THROWS_WITH(compute_variogram(flat, with_dips), Catch::Contains("--z"));
}

TEST_CASE("a log transform refuses values <= 0 naming the row, unless offset", "[variogram]") {
  const SampleSet s = make_set({{0, 0, 0}, {1, 0, 0}, {2, 0, 0}}, {4, 0, 9});
  VariogramOptions o = lags(1, 2);
  o.transform = Transform::log;
  CHECK_THROWS_WITH(compute_variogram(s, o), Catch::Contains("test.csv, line 3, column 'v'") &&
                                                 Catch::Contains("--log-offset"));
  o.log_offset = 1;
  const EmpiricalVariogram v = compute_variogram(s, o);
  // (0,1]: log 5 - log 1 and log 1 - log 10 -> (ln(5)^2 + ln(10)^2) / 4.
  CHECK(
      v.rows[0].value ==
      Approx((std::log(5.0) * std::log(5.0) + std::log(10.0) * std::log(10.0)) / 4).epsilon(1e-14));
  CHECK(v.summary.transform == "log(value + 1)");
}

TEST_CASE("a normal-score variogram keeps its back-transform table", "[variogram]") {
  const SampleSet s = random_set(400, 21);
  VariogramOptions o = lags(50, 8);
  o.transform = Transform::normal_score;
  const EmpiricalVariogram v = compute_variogram(s, o);
  CHECK(v.normal_scores.values.size() == 400);
  CHECK(v.summary.mean == Approx(0.0).margin(1e-12));  // scores are symmetric
  // The scores' variance: below 1, since (r - 0.5) / n stops short of the tails.
  CHECK(v.summary.variance < 1.0);
  CHECK(v.summary.variance > 0.95);
  CHECK(v.normal_scores.back_transform(v.normal_scores.scores[7]) == v.normal_scores.values[7]);
}

TEST_CASE("invalid settings are refused with a reason", "[variogram]") {
  std::string why;
  VariogramOptions o = lags(10, 5);
  o.azimuths = {0, 180};
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THAT(why, Catch::Contains("repeats"));
  o.azimuths = {400};
  CHECK_FALSE(o.is_valid(&why));
  o.azimuths = {0};
  o.angle_tolerance = 90;
  CHECK_FALSE(o.is_valid(&why));
  o = lags(10, 5);
  o.statistic = VariogramStatistic::covariance;
  o.estimator = VariogramEstimator::cressie_hawkins;
  CHECK_FALSE(o.is_valid(&why));
  o = lags(10, 5);
  o.bandwidth = 3;  // without a direction
  CHECK_FALSE(o.is_valid(&why));
  o = lags(10, 5);
  o.log_offset = 1;  // without --transform log
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THROWS_AS(compute_variogram(random_set(10, 1), o), InputError);
}

TEST_CASE("CSV and JSON files read back to the same rows", "[variogram]") {
  test::ScratchDir dir;
  VariogramOptions o = lags(60, 6);
  o.azimuths = {0, 90};
  o.statistic = VariogramStatistic::correlogram;
  const EmpiricalVariogram v = compute_variogram(random_set(300, 8), o);
  for (const char* name : {"v.csv", "v.json"}) {
    write_variogram(dir.path(name), v, false);
    const EmpiricalVariogram back = read_variogram(dir.path(name));
    CHECK(back.options.statistic == VariogramStatistic::correlogram);
    CHECK(back.options.azimuths == o.azimuths);
    CHECK(back.options.lags == 6);
    CHECK(back.options.max_distance == 360.0);
    REQUIRE(back.rows.size() == v.rows.size());
    for (std::size_t k = 0; k < v.rows.size(); ++k) {
      CHECK(back.rows[k].azimuth == v.rows[k].azimuth);
      CHECK(back.rows[k].pairs == v.rows[k].pairs);
      CHECK(same_bits(back.rows[k].value, v.rows[k].value));  // shortest round-trip text
      CHECK(same_bits(back.rows[k].mean_distance, v.rows[k].mean_distance));
    }
  }
  std::ifstream csv(dir.path("v.csv"));
  std::string header;
  std::getline(csv, header);
  CHECK(header ==
        "azimuth,dip,lag_from,lag_to,mean_distance,pairs,correlation,transform,log_offset");
}

TEST_CASE("a CSV variogram records its transform, and an older table says it does not",
          "[variogram]") {
  test::ScratchDir dir;
  VariogramOptions o = lags(60, 4);
  o.transform = Transform::log;
  o.log_offset = 2.5;
  const EmpiricalVariogram v = compute_variogram(random_set(40, 9), o);
  write_variogram(dir.path("log.csv"), v, false);
  const EmpiricalVariogram back = read_variogram(dir.path("log.csv"));
  CHECK(back.transform_recorded);
  CHECK(transform_of(back).same_as(ValueTransform::logarithm(2.5)));
  CHECK(transform_of(back).describe() == "log(value + 2.5)");
  const EmpiricalVariogram old = read_variogram(
      dir.write("old.csv",
                "azimuth,dip,lag_from,lag_to,mean_distance,pairs,semivariance\n,,0,10,6,40,1.5\n"));
  CHECK_FALSE(old.transform_recorded);
  CHECK_THROWS_WITH(
      read_variogram(dir.write(
          "mixed.csv",
          "azimuth,dip,lag_from,lag_to,mean_distance,pairs,semivariance,transform,log_offset\n"
          ",,0,10,6,40,1.5,log,1\n,,10,20,15,40,1.7,none,\n")),
      Catch::Contains("mixed.csv, line 3") && Catch::Contains("same transform"));
  CHECK_THROWS_WITH(
      read_variogram(dir.write(
          "sqrt.csv",
          "azimuth,dip,lag_from,lag_to,mean_distance,pairs,semivariance,transform,log_offset\n"
          ",,0,10,6,40,1.5,sqrt,\n")),
      Catch::Contains("sqrt.csv, line 2, column 'transform'"));
}

TEST_CASE("reading a damaged variogram file names line and column", "[variogram]") {
  test::ScratchDir dir;
  const std::string csv = dir.write("bad.csv",
                                    "azimuth,dip,lag_from,lag_to,mean_distance,pairs,semivariance\n"
                                    ",,0,10,6.5,40,1.5\n"
                                    ",,10,20,15.2,many,1.9\n");
  CHECK_THROWS_WITH(read_variogram(csv), Catch::Contains("bad.csv, line 3, column 'pairs'") &&
                                             Catch::Contains("'many'"));
  const std::string header = dir.write("header.csv", "a,b,c\n");
  CHECK_THROWS_WITH(read_variogram(header), Catch::Contains("line 1"));
  const std::string json = dir.write("bad.json", R"({"rows": [{"azimuth": null, "dip": null,
      "lag_from": 0, "lag_to": 10, "mean_distance": 5, "pairs": 3, "semivariance": "x"}]})");
  CHECK_THROWS_WITH(read_variogram(json), Catch::Contains("row 1, column 'semivariance'"));
}

TEST_CASE("outputs are not overwritten without leave, nor written to missing folders",
          "[variogram]") {
  test::ScratchDir dir;
  const EmpiricalVariogram v = compute_variogram(random_set(50, 3), lags(100, 3));
  const std::string path = dir.write("keep.csv", "precious\n");
  CHECK_THROWS_WITH(write_variogram(path, v, false), Catch::Contains("--overwrite"));
  std::ifstream in(path);
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  CHECK(text == "precious\n");
  write_variogram(path, v, true);
  CHECK(read_variogram(path).rows.size() == 3);
  CHECK_THROWS_WITH(write_variogram(dir.path("no/such/folder/v.csv"), v, false),
                    Catch::Contains("does not exist"));
  CHECK_THROWS_AS(write_variogram(dir.path("v.txt"), v, false), InputError);
}

TEST_CASE("the variogram surface is symmetric and written as a GeoTIFF", "[variogram]") {
  // A field that varies only west-east: the surface is 0 along dx = 0.
  std::vector<Point> p;
  std::vector<double> z;
  for (int i = 0; i < 15; ++i)
    for (int j = 0; j < 15; ++j) {
      p.push_back({i * 10.0, j * 10.0, 0});
      z.push_back(0.5 * i);
    }
  VariogramOptions o = lags(10, 4);
  o.surface = true;
  const EmpiricalVariogram v = compute_variogram(make_set(p, z), o);
  REQUIRE(v.surface);
  const VariogramSurface& s = *v.surface;
  CHECK(s.half == 4);
  const int side = 9;
  auto at = [&](int cx, int cy) {
    return s.values[static_cast<std::size_t>((4 - cy) * side + cx + 4)];
  };
  CHECK(at(0, 3) == 0.0);  // north: no change
  CHECK(at(2, 0) == 0.5);  // 2 steps east: dz = 1, gamma = 1/2
  CHECK(at(2, 1) == at(-2, -1));
  CHECK(std::isnan(at(0, 0)));  // no pair at lag (0, 0)

  test::ScratchDir dir;
  const std::string tif = dir.path("surface.tif");
  write_variogram_surface(tif, v, false);
  CHECK_THROWS_AS(write_variogram_surface(tif, v, false), InputError);
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(
      GDALDataset::Open(tif.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY));
  REQUIRE(ds);
  CHECK(ds->GetRasterXSize() == side);
  GDALRasterBand* band = ds->GetRasterBand(1);
  int has_nodata = 0;
  CHECK(band->GetNoDataValue(&has_nodata) == -9999.0);
  CHECK(has_nodata);
  CHECK_THAT(std::string(band->GetDescription()), Catch::Contains("semivariance"));
  double geo[6];
  ds->GetGeoTransform(geo);
  CHECK(geo[0] == -45.0);
  double centre_east = 0;  // row 4 (dy = 0), column 6 (dx = 20)
  CHECK(band->RasterIO(GF_Read, 6, 4, 1, 1, &centre_east, 1, 1, GDT_Float64, 0, 0, nullptr) ==
        CE_None);
  CHECK(centre_east == at(2, 0));
}

TEST_CASE("is_variogram_table tells variogram tables from samples", "[variogram]") {
  test::ScratchDir dir;
  // The table's header, with or without blank lines and CRLF before it.
  CHECK(is_variogram_table(dir.write(
      "v.csv",
      "\nazimuth,dip,lag_from,lag_to,mean_distance,pairs,semivariance\r\n,,0,1,0.5,3,2\r\n")));
  CHECK(is_variogram_table(
      dir.write("c.txt", "azimuth,dip,lag_from,lag_to,mean_distance,pairs,covariance\n")));
  CHECK_FALSE(is_variogram_table(dir.write("s.csv", "x,y,v\n0,0,1\n")));
  CHECK_FALSE(is_variogram_table(dir.write("short.csv", "azimuth,dip,lag_from\n")));
  // JSON: a top-level "rows" key, wherever it comes; GeoJSON has "type" and "features".
  CHECK(is_variogram_table(dir.write(
      "v.json", R"({"sillstone": "0.1", "settings": {"type": 1, "rows": 2}, "rows": []})")));
  CHECK_FALSE(is_variogram_table(
      dir.write("s.geojson", R"({"type": "FeatureCollection", "rows": [], "features": []})")));
  CHECK_FALSE(is_variogram_table(dir.write("a.json", R"([{"rows": []}])")));
  CHECK_FALSE(is_variogram_table(dir.write("broken.json", R"({"sillstone": )")));
  CHECK_FALSE(is_variogram_table(dir.path("missing.csv")));
  // What write_variogram writes is recognised.
  const EmpiricalVariogram v = compute_variogram(random_set(50, 3), lags(100, 4));
  write_variogram(dir.path("out.csv"), v, false);
  write_variogram(dir.path("out.json"), v, false);
  CHECK(is_variogram_table(dir.path("out.csv")));
  CHECK(is_variogram_table(dir.path("out.json")));
}
