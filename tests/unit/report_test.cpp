// The report's inputs and figures: the kriged grid handed on in memory,
// exceedance areas, map units from the CRS, the grade-tonnage comparison,
// and a report that fails leaving nothing behind.
#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <tuple>

#include "sillstone/kriging.hpp"
#include "sillstone/kriging_sink.hpp"
#include "sillstone/model.hpp"
#include "sillstone/report.hpp"
#include "sillstone/study.hpp"
#include "sillstone/summary.hpp"
#include "sillstone/variogram.hpp"
#include "test_support.hpp"

using namespace sillstone;

namespace {

SampleSet sample_set(const std::vector<Point>& pts, const std::vector<double>& values, int dim) {
  SampleSet s;
  s.source = "test";
  s.dimension = dim;
  s.points = pts;
  s.values = {values};
  s.censored = {std::vector<unsigned char>(values.size(), 0)};
  s.value_names = {"v"};
  s.summary.missing = {0};
  s.summary.below_detection = {0};
  for (std::size_t i = 0; i < pts.size(); ++i) {
    s.ids.push_back("line " + std::to_string(i + 2));
    s.row_numbers.push_back(static_cast<std::int64_t>(i + 2));
  }
  return s;
}

// Samples on [0, 100)^2 from the shared synthetic generator.
SampleSet synthetic_2d() {
  const auto d = test::make_synthetic(60, 5, 100.0);
  return sample_set(d.points, d.a, 2);
}

GridSpec grid_2d() {
  GridSpec g;
  g.xmin = 0;
  g.ymax = 100;
  g.dx = g.dy = 10;
  g.nx = 10;
  g.ny = 7;
  return g;
}

std::size_t files_in(const std::string& dir) {
  std::size_t n = 0;
  for ([[maybe_unused]] const auto& e : std::filesystem::directory_iterator(dir)) ++n;
  return n;
}

}  // namespace

TEST_CASE("the in-memory kriged grid holds what the raster file holds, cell for cell", "[report]") {
  // Reference: the GeoTIFF written in the same pass, read back through GDAL
  // (nodata there is NaN in memory).
  const SampleSet s = synthetic_2d();
  KrigingOptions o;
  o.threshold = 0.5;
  NeighbourhoodOptions nb;
  nb.max_points = 12;
  nb.min_points = 3;
  nb.radius = 9;  // leaves some nodes unestimated
  const KrigingEngine engine(s, parse_model_spec("0.1 nugget + 1 spherical(range=40)"), o, nb);
  test::ScratchDir dir;
  RasterTarget target;
  target.path = dir.path("estimate.tif");
  RasterFileSink file(target, 1);
  MemorySink memory;
  TeeSink both({&file, &memory});
  const GridSpec g = grid_2d();
  const KrigingSummary sum = krige_grid(engine, g, {}, both);
  const KrigedGrid& k = memory.result();
  REQUIRE(k.estimate.size() == static_cast<std::size_t>(g.nodes()));
  REQUIRE(k.probability.size() == static_cast<std::size_t>(g.nodes()));
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(target.path.c_str(), GDAL_OF_RASTER));
  REQUIRE(ds);
  const std::vector<const std::vector<double>*> arrays = {&k.estimate, &k.variance, &k.probability};
  std::int64_t nodata_cells = 0;
  for (int b = 1; b <= 3; ++b) {
    std::vector<double> v(static_cast<std::size_t>(g.nodes()));
    REQUIRE(ds->GetRasterBand(b)->RasterIO(GF_Read, 0, 0, 10, 7, v.data(), 10, 7, GDT_Float64, 0, 0,
                                           nullptr) == CE_None);
    const double nodata = ds->GetRasterBand(b)->GetNoDataValue();
    for (std::size_t i = 0; i < v.size(); ++i) {
      const double m = (*arrays[static_cast<std::size_t>(b - 1)])[i];
      if (v[i] == nodata) {
        CHECK(std::isnan(m));
        nodata_cells += b == 1;
      } else {
        CHECK(m == v[i]);
      }
    }
  }
  CHECK(nodata_cells == sum.targets - sum.estimated);
  CHECK(nodata_cells > 0);  // the radius left some cells out: both kinds of cell were compared
}

TEST_CASE("a block model kept in memory puts each table row at its node", "[report]") {
  // Reference: the CSV rows written in the same pass, placed by their own
  // x, y, z through the grid convention x = xmin + (col + 0.5) dx (grid.hpp).
  std::vector<Point> pts;
  std::vector<double> v;
  for (int i = 0; i < 40; ++i) {
    pts.push_back({7.0 * (i % 7), 9.0 * (i / 7), 2.0 + (i % 3)});
    v.push_back(std::sin(0.3 * i) + 2);
  }
  const KrigingEngine engine(sample_set(pts, v, 3), parse_model_spec("1 exponential(range=30)"), {},
                             {});
  GridSpec g;
  g.dimension = 3;
  g.xmin = 0;
  g.ymax = 50;
  g.zmin = 0;
  g.dx = 10;
  g.dy = 10;
  g.dz = 2.5;
  g.nx = 4;
  g.ny = 5;
  g.nz = 2;
  test::ScratchDir dir;
  TableTarget t;
  t.path = dir.path("blocks.csv");
  TableFileSink file(t);
  MemorySink memory;
  TeeSink both({&file, &memory});
  GridKrigingOptions go;
  go.table_order = true;
  krige_grid(engine, g, go, both);
  const KrigedGrid& k = memory.result();
  std::ifstream f(t.path);
  std::string line;
  std::getline(f, line);
  int rows = 0;
  while (std::getline(f, line)) {
    std::stringstream ls(line);
    std::string cell;
    std::vector<double> c;
    while (std::getline(ls, cell, ',')) c.push_back(std::stod(cell));
    const auto col = static_cast<std::int64_t>(std::floor((c[0] - g.xmin) / g.dx));
    const auto row = static_cast<std::int64_t>(std::floor((g.ymax - c[1]) / g.dy));
    const auto layer = static_cast<std::int64_t>(std::floor((c[2] - g.zmin) / g.dz));
    const auto at = static_cast<std::size_t>((layer * g.ny + row) * g.nx + col);
    CHECK(k.estimate[at] == Approx(c[3]).epsilon(1e-15));
    CHECK(k.variance[at] == Approx(c[4]).epsilon(1e-15));
    CHECK(k.neighbours[at] == static_cast<int>(c[5]));
    CHECK(k.listed[at] == 1);
    ++rows;
  }
  CHECK(rows == g.nodes());
}

TEST_CASE("exceedance areas count the cells whose probability is above each level", "[report]") {
  // By definition (report.hpp): cells with P strictly above the level times dx * dy.
  KrigedGrid k;
  k.layout.grid.nx = 3;
  k.layout.grid.ny = 2;
  k.layout.grid.dx = 2;
  k.layout.grid.dy = 3;
  k.layout.threshold = 1;
  k.probability = {0.2, 0.6, 0.95, std::nan(""), 0.5, 0.91};
  const auto a = exceedance_areas(k, {0.5, 0.9});
  REQUIRE(a.size() == 2);
  CHECK(a[0].cells == 3);
  CHECK(a[0].area == 18);
  CHECK(a[1].cells == 2);
  CHECK(a[1].area == 12);
  k.probability.clear();
  CHECK_THROWS_WITH(exceedance_areas(k, {0.5}), Catch::Contains("no exceedance probability"));
}

TEST_CASE("map units come from the CRS", "[report]") {
  // Unit names as OSR gives them (GDAL's osr in Python, checked live by
  // tests/reference/report_contents.py); the US survey foot is 1200/3937 m
  // by its definition.
  auto wkt = [](int epsg) {
    OGRSpatialReference srs;
    REQUIRE(srs.importFromEPSG(epsg) == OGRERR_NONE);
    char* text = nullptr;
    srs.exportToWkt(&text);
    std::string s = text;
    CPLFree(text);
    return s;
  };
  const MapUnits none = map_units("");
  CHECK(none.name == "map units");
  CHECK(none.metres == 0);
  const MapUnits utm = map_units(wkt(32633));
  CHECK(utm.name == "metre");
  CHECK(utm.symbol == "m");
  CHECK(utm.metres == 1);
  const MapUnits feet = map_units(wkt(2227));
  CHECK(feet.name == "US survey foot");
  CHECK(feet.metres == Approx(1200.0 / 3937.0).epsilon(1e-12));
  CHECK_FALSE(feet.geographic);
  const MapUnits degrees = map_units(wkt(4326));
  CHECK(degrees.geographic);
  CHECK(degrees.name == "degree");
  CHECK(degrees.metres == 0);
  CHECK_THROWS_WITH(map_units("not a CRS"), Catch::Contains("the CRS cannot be read"));
}

TEST_CASE("the grade-tonnage comparison states the direction the numbers show", "[report]") {
  auto rows = [](const std::vector<double>& tonnage) {
    std::vector<GradeTonnageRow> r;
    for (std::size_t i = 0; i < tonnage.size(); ++i) r.push_back({0.5 * i, 1, tonnage[i], 1});
    return r;
  };
  // Smoothing as in the ore-body demo's README table (kriged against true
  // blocks): more tonnage near the mean, less at high cut-offs.
  const auto samples = rows({100, 80, 50, 20, 8});
  CHECK(grade_tonnage_comparison(rows({100.5, 95, 60, 15, 4}), samples, "g/t") ==
        "Compared with the samples, the kriged blocks give about the same tonnage (within 2%) at "
        "cut-off 0 g/t, more tonnage at cut-offs 0.5 to 1 g/t and less tonnage at cut-offs 1.5 "
        "to 2 g/t.");
  // The opposite direction: less tonnage at low cut-offs, more at high ones.
  CHECK(grade_tonnage_comparison(rows({90, 70, 55, 30, 10}), samples, "") ==
        "Compared with the samples, the kriged blocks give less tonnage at cut-offs 0 to 0.5 and "
        "more tonnage at cut-offs 1 to 2.");
  CHECK_THROWS_WITH(grade_tonnage_comparison(rows({1, 2}), rows({1}), ""),
                    Catch::Contains("different cut-offs"));
}

TEST_CASE("a report that fails leaves no report.html and no temporary file", "[report]") {
  const SampleSet s = synthetic_2d();
  const DataSummary summary = summarise(s, {});
  VariogramOptions vo;
  vo.lag = 10;
  vo.lags = 5;
  const EmpiricalVariogram variogram = compute_variogram(s, vo);
  ModelFile model;
  model.model = parse_model_spec("0.1 nugget + 1 spherical(range=40)");
  KrigingOptions without, with;
  with.threshold = 0.5;
  const GridSpec g = grid_2d();
  const KrigingEngine engine(s, model.model, without, {});
  MemorySink memory;
  const KrigingSummary ks = krige_grid(engine, g, {}, memory);
  ReportInput in;
  in.samples = &s;
  in.summary = &summary;
  in.variogram = &variogram;
  in.model = &model;
  in.grid = &g;
  in.kriging_summary = &ks;
  in.result = &memory.result();
  in.version = "test";
  test::ScratchDir dir;
  const std::string path = dir.path("report.html");

  SECTION("an input is missing or incomplete") {
    in.kriging = &without;
    DataSummary partial = summary;
    partial.load.missing.clear();
    in.summary = &partial;
    CHECK_THROWS_WITH(write_report(path, in, false), Catch::Contains("does not cover every value"));
    in.summary = &summary;
    in.kriging = nullptr;
    CHECK_THROWS_WITH(write_report(path, in, false), "report: the input lacks the kriging options");
    CHECK(files_in(dir.path("")) == 0);
  }
  SECTION("the threshold has no probability in the kriged grid; an earlier report is kept") {
    in.kriging = &with;
    const std::string before = dir.write("report.html", "earlier report");
    CHECK_THROWS_WITH(write_report(path, in, true),
                      Catch::Contains("holds no exceedance probability"));
    CHECK(files_in(dir.path("")) == 1);
    std::ifstream f(before);
    CHECK(std::string(std::istreambuf_iterator<char>(f), {}) == "earlier report");
  }
  SECTION("consistent inputs give a whole report") {
    in.kriging = &without;
    write_report(path, in, false);
    std::ifstream f(path);
    const std::string html(std::istreambuf_iterator<char>(f), {});
    CHECK(html.find("<h2 id=\"maps\">Maps</h2>") != std::string::npos);
    CHECK(html.size() > 1000);
    CHECK(html.substr(html.size() - 15) == "</body></html>\n");
    CHECK(files_in(dir.path("")) == 1);
  }
}

TEST_CASE("a run that fails at the report stage renames nothing into its folder", "[report]") {
  // The failure is injected through RunOptions::on_stage, the run's own
  // progress hook: every output is still under its temporary name then.
  test::ScratchDir dir;
  std::string csv = "x,y,v\n";
  const auto d = test::make_synthetic(40, 9, 100.0);
  for (std::size_t i = 0; i < d.points.size(); ++i)
    csv += std::to_string(d.points[i].x) + "," + std::to_string(d.points[i].y) + "," +
           std::to_string(d.a[i]) + "\n";
  dir.write("samples.csv", csv);
  const std::string study_path =
      dir.write("study.toml",
                "[samples]\npath = \"samples.csv\"\nx = \"x\"\ny = \"y\"\nvalue = \"v\"\n\n"
                "[model]\nspec = \"0.1 nugget + 1 spherical(range=40)\"\n\n[grid]\ncell = 10\n");
  const Study study = read_study(study_path);
  RunOptions ro;
  ro.on_stage = [](const std::string& stage) {
    if (stage == "report") throw std::runtime_error("injected failure");
  };
  SECTION("a new run folder is removed again") {
    ro.output_dir = dir.path("run");
    CHECK_THROWS_WITH(run_study(study, ro), "injected failure");
    CHECK_FALSE(std::filesystem::exists(ro.output_dir));
  }
  SECTION("an earlier run's report stays as it was") {
    ro.output_dir = dir.path("earlier");
    std::filesystem::create_directory(ro.output_dir);
    const std::string before = dir.write("earlier/report.html", "earlier report");
    ro.overwrite = true;
    CHECK_THROWS_WITH(run_study(study, ro), "injected failure");
    CHECK(files_in(ro.output_dir) == 1);
    std::ifstream f(before);
    CHECK(std::string(std::istreambuf_iterator<char>(f), {}) == "earlier report");
  }
}
