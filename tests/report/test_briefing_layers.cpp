// GIS outputs read back with Debian's gdal-bin (ogrinfo, gdalinfo): layers,
// fields, CRS (EPSG:4326) and feature counts.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <filesystem>

#include "cullcast/report/briefing_layers.hpp"
#include "report_test_support.hpp"

using namespace cullcast::report;
using Catch::Matchers::Contains;
namespace fs = std::filesystem;

TEST_CASE("briefing GeoPackage and GeoTIFF read back with ogrinfo and gdalinfo") {
  const fs::path dir = fs::temp_directory_path() / ("cullcast-brief-gis-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const auto d = report_test::sample_briefing();
  write_briefing_gpkg(dir / "briefing.gpkg", d);
  write_density_geotiff(dir / "density.tif", d);
  int rc = -1;
  const std::string layers = report_test::run_capture("ogrinfo -ro -q " + (dir / "briefing.gpkg").string(), &rc);
  CHECK(rc == 0);
  CHECK_THAT(layers, Contains("reefs (Multi Polygon)"));
  CHECK_THAT(layers, Contains("links (Line String)"));
  CHECK_THAT(layers, Contains("aggregations (Point)"));
  const std::string reefs = report_test::run_capture("ogrinfo -ro -so " + (dir / "briefing.gpkg").string() + " reefs");
  CHECK_THAT(reefs, Contains("Feature Count: 4"));
  CHECK_THAT(reefs, Contains("ID[\"EPSG\",4326]"));
  for (const char* field : {"id: String", "role: String", "self_recruitment: Real", "cull_rank: Integer",
                            "settle_probability: Real"}) {
    CHECK_THAT(reefs, Contains(field));
  }
  const std::string links = report_test::run_capture("ogrinfo -ro -so " + (dir / "briefing.gpkg").string() + " links");
  CHECK_THAT(links, Contains("Feature Count: 4"));
  CHECK_THAT(links, Contains("probability_sd: Real"));
  const std::string aggs = report_test::run_capture("ogrinfo -ro -so " + (dir / "briefing.gpkg").string() + " aggregations");
  CHECK_THAT(aggs, Contains("Feature Count: 1"));
  // The hostile name is stored as data, unchanged.
  const std::string q = report_test::run_capture("ogrinfo -ro -q " + (dir / "briefing.gpkg").string() +
                                                 " reefs -where \"id = 'A-2'\"");
  CHECK_THAT(q, Contains("name (String) = <script>alert(1)</script>"));
  CHECK_THAT(q, Contains("cull_rank (Integer) = (null)"));

  const std::string tif = report_test::run_capture("gdalinfo -stats " + (dir / "density.tif").string(), &rc);
  CHECK(rc == 0);
  CHECK_THAT(tif, Contains("Size is 41, 31"));
  CHECK_THAT(tif, Contains("ID[\"EPSG\",4326]"));
  CHECK_THAT(tif, Contains("NoData Value=-9999"));
  CHECK_THAT(tif, Contains("Pixel Size = (0.010000000000000,-0.010000000000000)"));
  CHECK_THAT(tif, Contains("Origin = (149.995000000000005,-20.094999999999999)"));
  CHECK_THAT(tif, Contains("STATISTICS_MAXIMUM=2"));  // the densest reef, settled_per_ha = 2
  // Value at a reef centre and on the island (nodata) through gdallocationinfo.
  const std::string at = report_test::run_capture("gdallocationinfo -valonly -wgs84 " + (dir / "density.tif").string() +
                                                  " 150.20 -20.10");
  CHECK(std::stod(at) == Approx(2.0));
  const std::string land = report_test::run_capture("gdallocationinfo -valonly -wgs84 " + (dir / "density.tif").string() +
                                                    " 150.03 -20.26");
  CHECK(std::stod(land) == Approx(-9999));
  fs::remove_all(dir);
}
