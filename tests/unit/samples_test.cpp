// The sample loader on files the tests write themselves (CSV, GeoPackage,
// GeoJSON).
#include <sys/stat.h>  // mkfifo
#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>

#include "sillstone/error.hpp"
#include "sillstone/samples.hpp"
#include "test_support.hpp"

using namespace sillstone;
using sillstone::test::ScratchDir;

namespace {

SampleOptions csv_options(const std::string& path, std::vector<std::string> values = {"v"}) {
  SampleOptions o;
  o.path = path;
  o.x = "x";
  o.y = "y";
  o.values = std::move(values);
  return o;
}

std::string error_of(const SampleOptions& o) {
  try {
    load_samples(o);
  } catch (const InputError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("CSV with named coordinate columns", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("s.csv", "id,x,y,v\nA,0,0,1.5\nB,10,0,2.5\nC,0,10,3\n");
  const SampleSet s = load_samples(csv_options(path));
  REQUIRE(s.size() == 3);
  CHECK(s.dimension == 2);
  CHECK(s.points[1].x == 10.0);
  CHECK(s.values[0][2] == 3.0);
  CHECK(s.ids[0] == "line 2");
  CHECK(s.row_numbers[2] == 4);
  CHECK(s.crs_wkt.empty());
  CHECK(s.summary.warnings.size() == 1);  // no CRS: local coordinates
}

TEST_CASE("a bad cell is an error naming file, line and column", "[samples]") {
  ScratchDir dir;
  // Blank line 3 and a Windows line ending: the error must still name line 5.
  const auto path = dir.write("bad.csv", "x,y,v\r\n0,0,1\r\n\r\n1,1,2\r\n2,2,abc\r\n");
  const std::string e = error_of(csv_options(path));
  CHECK_THAT(e, Catch::Contains("bad.csv, line 5, column 'v'"));
  CHECK_THAT(e, Catch::Contains("'abc'"));
}

TEST_CASE("a bad coordinate names its column", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("bad.csv", "x,y,v\n0,0,1\n1,north,2\n");
  CHECK_THAT(error_of(csv_options(path)), Catch::Contains("line 3, column 'y'"));
}

TEST_CASE("UTF-8 byte-order mark, CRLF and blank lines are accepted", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("bom.csv", "\xEF\xBB\xBFx,y,v\r\n0,0,1\r\n\r\n5,5,2\r\n\r\n");
  const SampleSet s = load_samples(csv_options(path));
  REQUIRE(s.size() == 2);
  CHECK(s.ids[1] == "line 4");
}

TEST_CASE("missing markers are skipped and counted, rows without values dropped", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("m.csv", "x,y,a,b\n0,0,1,NA\n1,0,,2\n2,0,N/A,-\n,5,1,1\n3,0,4,5\n");
  const SampleSet s = load_samples(csv_options(path, {"a", "b"}));
  CHECK(s.size() == 3);
  CHECK(s.summary.dropped_no_value == 1);       // line 4: both missing
  CHECK(s.summary.dropped_no_coordinate == 1);  // line 5: blank x
  CHECK(std::isnan(s.values[1][0]));
  CHECK(std::isnan(s.values[0][1]));
}

TEST_CASE("non-detects follow --below-detection", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("nd.csv", "x,y,v\n0,0,<2\n1,0,< 4\n2,0,3\n");
  auto o = csv_options(path);
  auto values = [&](BelowDetection b) {
    o.below_detection = b;
    return load_samples(o).values[0];
  };
  CHECK(values(BelowDetection::half) == std::vector<double>{1, 2, 3});
  CHECK(values(BelowDetection::limit) == std::vector<double>{2, 4, 3});
  CHECK(values(BelowDetection::zero) == std::vector<double>{0, 0, 3});
  o.below_detection = BelowDetection::drop;
  const SampleSet dropped = load_samples(o);
  CHECK(dropped.size() == 1);
  CHECK(dropped.summary.below_detection[0] == 2);
}

TEST_CASE("duplicate locations: average, first, error", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("d.csv", "x,y,v\n0,0,1\n5,5,7\n0,0,3\n0,0,NA\n");
  auto o = csv_options(path);
  const SampleSet avg = load_samples(o);
  REQUIRE(avg.size() == 2);
  CHECK(avg.values[0][0] == 2.0);  // mean of 1 and 3; the NA row was dropped first
  CHECK(avg.summary.dropped_no_value == 1);
  CHECK(avg.summary.duplicate_locations == 1);
  CHECK(avg.summary.duplicate_rows_removed == 1);
  o.duplicates = DuplicatePolicy::first;
  CHECK(load_samples(o).values[0][0] == 1.0);
  o.duplicates = DuplicatePolicy::error;
  CHECK_THAT(error_of(o), Catch::Contains("(line 2 = line 4)"));
}

TEST_CASE("unknown columns, layers and empty inputs are clear errors", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("s.csv", "x,y,v\n0,0,1\n");
  CHECK_THAT(error_of(csv_options(path, {"lead"})),
             Catch::Contains("column 'lead': no such column"));
  CHECK_THAT(error_of(csv_options(path, {"lead"})), Catch::Contains("the columns are: x, y, v"));
  auto o = csv_options(path);
  o.layer = "other";
  CHECK_THAT(error_of(o), Catch::Contains("no layer 'other'"));
  CHECK_THAT(error_of(csv_options(dir.write("h.csv", "x,y,v\n"))), Catch::Contains("no data rows"));
  CHECK_THAT(error_of(csv_options(dir.write("e.csv", ""))), Catch::Contains("empty"));
  CHECK_THAT(error_of(csv_options(dir.path("none.csv"))), Catch::Contains("no such file"));
  CHECK_THAT(error_of(csv_options(dir.path(""))), Catch::Contains("folder"));
}

TEST_CASE("the attribute filter (where) selects rows through OGR", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("w.csv", "x,y,v,depth\n0,0,1,top\n1,0,2,deep\n2,0,3,top\n");
  auto o = csv_options(path);
  o.where = "depth = 'top'";
  const SampleSet s = load_samples(o);
  REQUIRE(s.size() == 2);
  CHECK(s.values[0][1] == 3.0);
  CHECK(s.ids[1] == "line 4");
  o.where = "depth = = 'x'";
  CHECK_THAT(error_of(o), Catch::Contains("not a valid attribute filter"));
}

TEST_CASE("GeoPackage points with a projected CRS", "[samples]") {
  ScratchDir dir;
  const auto path = dir.path("s.gpkg");
  test::write_points(path, "GPKG", 32630, {{431000, 5712000, 0}, {431100, 5712050, 0}}, {4.0, 5.0});
  SampleOptions o;
  o.path = path;
  o.values = {"value"};
  const SampleSet s = load_samples(o);
  REQUIRE(s.size() == 2);
  CHECK(s.points[1].y == 5712050.0);
  CHECK(s.crs_authority == "EPSG:32630");
  CHECK(s.ids[0] == "feature 1");
  CHECK(s.summary.warnings.empty());
  o.crs = "EPSG:27700";  // assigning a different CRS to a source that has one
  CHECK_THAT(error_of(o), Catch::Contains("already has a CRS"));
}

TEST_CASE("geographic coordinates are refused unless reprojected", "[samples]") {
  ScratchDir dir;
  const auto path = dir.path("s.geojson");
  // Longitude -3 is the central meridian of UTM zone 30N, where the easting is
  // the false easting, 500000 m exactly (definition of the UTM projection).
  test::write_points(path, "GeoJSON", 4326, {{-3.0, 51.5, 0}, {-2.99, 51.51, 0}}, {1.0, 2.0});
  SampleOptions o;
  o.path = path;
  o.values = {"value"};
  CHECK_THAT(error_of(o), Catch::Contains("--to-crs"));
  o.to_crs = "EPSG:32630";
  const SampleSet s = load_samples(o);
  REQUIRE(s.size() == 2);
  CHECK(s.points[0].x == Approx(500000.0).margin(1e-6));
  CHECK(s.points[0].y > 5.7e6);
  CHECK(s.points[0].y < 5.71e6);
  CHECK(s.crs_authority == "EPSG:32630");
}

TEST_CASE("CSV gets a CRS from --crs, 3D with --z", "[samples]") {
  ScratchDir dir;
  const auto path = dir.write("z.csv", "e,n,elev,v\n100,200,-5,1\n110,200,-15,2\n");
  SampleOptions o;
  o.path = path;
  o.x = "e";
  o.y = "n";
  o.z = "elev";
  o.values = {"v"};
  o.crs = "EPSG:32630";
  const SampleSet s = load_samples(o);
  CHECK(s.dimension == 3);
  CHECK(s.points[1].z == -15.0);
  CHECK(s.crs_name == "WGS 84 / UTM zone 30N");
  o.crs = "EPSG:4326";
  CHECK_THAT(error_of(o), Catch::Contains("geographic"));
}

TEST_CASE("option checks say what is wrong", "[samples]") {
  SampleOptions o;
  std::string why;
  CHECK_FALSE(o.is_valid(&why));
  o.path = "a.csv";
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THAT(why, Catch::Contains("--value"));
  o.values = {"v"};
  o.x = "x";
  CHECK_FALSE(o.is_valid(&why));
  CHECK_THAT(why, Catch::Contains("--x and --y"));
}

TEST_CASE("require_variation refuses a column whose values are all equal", "[samples]") {
  ScratchDir dir;
  const SampleSet same =
      load_samples(csv_options(dir.write("c.csv", "x,y,v\n0,0,2\n1,0,NA\n0,1,2\n1,1,2\n")));
  CHECK_THROWS_WITH(require_variation(same, 0, "fit"),
                    "fit: " + dir.path("c.csv") +
                        ", column 'v': all 3 values are equal (2): with zero "
                        "variance there is no spatial variation to fit a model to");
  const SampleSet varied =
      load_samples(csv_options(dir.write("d.csv", "x,y,v\n0,0,2\n1,0,2\n0,1,2.0000001\n")));
  CHECK_NOTHROW(require_variation(varied, 0, "fit"));
}

// A FIFO with no writer would block open(2) for ever (POSIX open(): O_RDONLY
// on a FIFO blocks until a writer opens it); it is refused from stat alone.
TEST_CASE("a FIFO given as samples is refused without being opened", "[samples]") {
  ScratchDir dir;
  const std::string fifo = dir.path("pipe.csv");
  REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
  CHECK_THROWS_WITH(load_samples(csv_options(fifo)),
                    Catch::Contains("pipe.csv: is a FIFO (named pipe), not a file (SAMPLES)"));
  CHECK_THROWS_WITH(refuse_special_input(fifo, "krige", "--mask"),
                    Catch::StartsWith("krige: ") && Catch::Contains("(--mask)"));
  // What readers judge themselves passes: regular files, folders, missing
  // paths, GDAL virtual paths.
  CHECK_NOTHROW(refuse_special_input(dir.write("s.csv", "x,y,v\n"), "samples", "SAMPLES"));
  CHECK_NOTHROW(refuse_special_input(dir.path(""), "samples", "SAMPLES"));
  CHECK_NOTHROW(refuse_special_input(dir.path("missing.csv"), "samples", "SAMPLES"));
  CHECK_NOTHROW(
      refuse_special_input("/vsizip/" + dir.path("a.zip") + "/s.csv", "samples", "SAMPLES"));
  CHECK(is_gdal_virtual_path("/vsicurl/https://example.org/s.csv"));
  CHECK_FALSE(is_gdal_virtual_path("vsizip/s.csv"));
}
