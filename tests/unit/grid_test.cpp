// Grids (nodes at cell centres, rows north to south) and streamed rasters.
#include <catch2/catch.hpp>

#include <gdal_priv.h>

#include <memory>

#include "sillstone/error.hpp"
#include "sillstone/grid.hpp"
#include "sillstone/raster.hpp"
#include "test_support.hpp"

using namespace sillstone;

TEST_CASE("nodes sit at cell centres, rows run north to south", "[grid]") {
  GridOptions o;
  o.cell = {10};
  o.extent = {1000, 2000, 1100, 2050};
  const GridSpec g = make_grid(o, 2, {}, "");
  CHECK(g.nx == 10);
  CHECK(g.ny == 5);
  CHECK(g.x(0) == 1005.0);
  CHECK(g.y(0) == 2045.0);  // first row is the northernmost
  CHECK(g.y(4) == 2005.0);
  const auto gt = g.geotransform();
  CHECK(gt[0] == 1000.0);
  CHECK(gt[3] == 2050.0);
  CHECK(gt[5] == -10.0);
  // One note, the size: 10 x 5 nodes of 8 bytes (a double) per band.
  REQUIRE(g.notes.size() == 1);
  CHECK(g.notes[0] == "the grid has 10 x 5 = 50 nodes, 400 bytes per output band uncompressed");
}

TEST_CASE("an extent that is not whole cells is widened and said", "[grid]") {
  GridOptions o;
  o.cell = {30, 20};
  o.extent = {0, 0, 100, 50};
  const GridSpec g = make_grid(o, 2, {}, "");
  CHECK(g.nx == 4);  // 120 m
  CHECK(g.ny == 3);  // 60 m, widened south
  CHECK(g.xmax() == 120.0);
  CHECK(g.ymin() == -10.0);
  REQUIRE(g.notes.size() == 2);  // the widening, then the size
  CHECK_THAT(g.notes[0], Catch::Contains("widened"));
}

TEST_CASE("bad grids are refused before any work", "[grid]") {
  GridOptions o;
  o.cell = {10};
  o.extent = {0, 0, 0, 100};
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("zero or negative area"));
  o.extent = {0, 0, 100, 100};
  o.cell = {-5};
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("positive"));
  o.cell = {0.001};
  o.extent = {0, 0, 1e6, 1e6};
  CHECK_THROWS_WITH(make_grid(o, 2, {}, "", 1'000'000'000LL), Catch::Contains("nodes"));
}

TEST_CASE(
    "grids over the large-grid limit need large_grid, cells wider than the extent are refused",
    "[grid]") {
  GridOptions o;
  o.cell = {0.01};
  o.extent = {0, 0, 100, 1000};  // 10000 x 100000 nodes, over kLargeGridNodes (1e8)
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("without --large-grid"));
  o.large_grid = true;
  const GridSpec g = make_grid(o, 2, {}, "");  // nothing is allocated by make_grid
  CHECK(g.nodes() == 10000LL * 100000LL);
  o.cell = {100.5};  // wider than the 100 m extent
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("larger than the extent's width"));
  o.cell = {1e300};
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("--cell 1e+300"));
  o.cell = {100, 100, 5};  // a third size on 2D data
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("samples are 2D"));
  o.cell = {100};
  o.extent = {0, 0, 100, 100, 0, 10};
  CHECK_THROWS_WITH(make_grid(o, 2, {}, ""), Catch::Contains("zmin,zmax"));
}

TEST_CASE("a raster is written, and reads back with GDAL", "[grid]") {
  test::ScratchDir dir;
  GridOptions o;
  o.cell = {5};
  o.extent = {431000, 5712000, 431020, 5712010};
  OGRSpatialReference srs;
  srs.importFromEPSG(32630);
  char* wkt = nullptr;
  srs.exportToWkt(&wkt);
  RasterLayout layout;
  layout.grid = make_grid(o, 2, {}, wkt);
  CPLFree(wkt);
  layout.bands = {"estimate", "variance"};
  layout.metadata = {{"SILLSTONE_MODEL", "1 nugget"}};
  const auto path = dir.path("out.tif");
  {
    RasterWriter w(path, layout);
    std::vector<double> rows(4 * 2);
    for (int band = 0; band < 2; ++band)
      for (int block = 0; block < 2; ++block) {  // two blocks of one row each
        for (std::size_t i = 0; i < 4; ++i)
          rows[i] = band * 100 + block * 10 + static_cast<double>(i);
        w.write_rows(band, block, 1, rows.data());
      }
    w.close();
  }
  GDALAllRegister();
  std::unique_ptr<GDALDataset> ds(GDALDataset::Open(path.c_str(), GDAL_OF_RASTER));
  REQUIRE(ds);
  CHECK(ds->GetRasterXSize() == 4);
  CHECK(ds->GetRasterYSize() == 2);
  double gt[6];
  ds->GetGeoTransform(gt);
  CHECK(gt[0] == 431000.0);
  CHECK(gt[3] == 5712010.0);
  CHECK(std::string(ds->GetRasterBand(2)->GetDescription()) == "variance");
  CHECK(ds->GetRasterBand(1)->GetNoDataValue() == -9999.0);
  CHECK(std::string(ds->GetMetadataItem("SILLSTONE_MODEL")) == "1 nugget");
  CHECK(std::string(ds->GetSpatialRef()->GetAuthorityCode(nullptr)) == "32630");
  double v = 0;
  CHECK(ds->GetRasterBand(2)->RasterIO(GF_Read, 3, 1, 1, 1, &v, 1, 1, GDT_Float64, 0, 0) ==
        CE_None);
  CHECK(v == 113.0);
}
