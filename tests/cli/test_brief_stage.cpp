// End to end: `cullcast brief` as a program, on settlement records written by
// the drift stage's writer, real synthetic CF currents, and the outputs of
// `connect` and `prioritise` run before it.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "cullcast/currents/synthetic_currents.hpp"
#include "../support/settlement_file.hpp"
#include "../support/scratch_folder.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
using cullcast::test::read_all;

namespace {

struct BriefWorkspace : cullcast::test::ScratchFolder {
  BriefWorkspace() : ScratchFolder("brief") {
    fs::create_directories(dir / "out");
    cullcast::currents::SyntheticOptions o;
    o.kind = cullcast::currents::SyntheticKind::uniform;
    o.days = 2;
    o.days_per_file = 2;
    o.lon_min = 149.9;
    o.lon_max = 150.5;
    o.lat_min = -20.2;
    o.lat_max = -19.8;
    o.spacing_deg = 0.02;
    cullcast::currents::write_synthetic_currents(dir / "currents", o);
    std::ostringstream g;
    g << R"({"type":"FeatureCollection","features":[)";
    const char* ids[3] = {"R-0", "R-1", "P-2"};
    const char* names[3] = {"<script>alert(1)</script>", "Kestrel Reef", "Plover Bank"};
    for (int i = 0; i < 3; ++i) {
      const double x = 150.0 + 0.1 * i, y = -20.0;
      g << (i ? "," : "") << R"({"type":"Feature","properties":{"id":")" << ids[i] << R"(","name":")" << names[i]
        << R"(","priority":)" << (i == 2 ? 1.0 : 0.0) << R"(},"geometry":{"type":"Polygon","coordinates":[[)"
        << "[" << x << "," << y << "],[" << x + 0.01 << "," << y << "],[" << x + 0.01 << "," << y + 0.01 << "],["
        << x << "," << y + 0.01 << "],[" << x << "," << y << "]]]}}";
    }
    g << "]}";
    std::ofstream(dir / "reefs.geojson") << g.str();
    std::ofstream(dir / "surveys.csv") << "reef_id,density_per_ha,count_15_25cm,count_25cm_plus\nR-0,40,2,8\nR-1,60,,\nP-2,5,,\n";
    std::ofstream(dir / "s.toml") << R"([study]
name = "brief test"
[currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
name = "name"
priority = "priority"
surveys = "surveys.csv"
[[spawning]]
start = "2026-12-01T02:00:00Z"
[outputs]
dir = "out"
[cull]
vessel_days = 3
max_days_per_reef = 2
)";
  }
  // `cullcast <args> s.toml`
  int run(const std::string& args) const { return ScratchFolder::run(args + " " + (dir / "s.toml").string()); }
  // Records released at time 0 and settled 20 days later.
  void write_settlement() const {
    cullcast::test::SettlementPlan plan;
    plan.reef_ids = {"R-0", "R-1", "P-2"};
    plan.event_starts_s = {0.0, 86400.0};
    plan.release_s = {0.0, 0.0};
    plan.settlers = {{{50, 10, 40}, {0, 60, 30}, {0, 0, 100}}, {{50, 20, 5}, {0, 60, 40}, {0, 5, 100}}};
    cullcast::test::write_settlement(dir / "out" / "settlement.nc", plan);
  }
};

}  // namespace

TEST_CASE("brief names the stage to run first when its inputs are missing") {
  BriefWorkspace w;
  CHECK(w.run("brief") == 3);  // docs/exit-codes.md: bad input
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("cullcast disperse"));
  w.write_settlement();
  CHECK(w.run("brief") == 3);
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("cullcast connect"));
  REQUIRE(w.run("connect") == 0);
  CHECK(w.run("brief") == 3);
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("cullcast prioritise"));
  CHECK_FALSE(fs::exists(w.dir / "out" / "briefing.html"));
}

TEST_CASE("brief writes the page, the GeoPackage and the GeoTIFF from real stage outputs") {
  BriefWorkspace w;
  w.write_settlement();
  REQUIRE(w.run("connect") == 0);
  REQUIRE(w.run("prioritise") == 0);
  REQUIRE(w.run("brief") == 0);
  CHECK_THAT(read_all(w.dir / "stdout"), Contains("briefing.html"));
  const std::string html = read_all(w.dir / "out" / "briefing.html");
  CHECK_THAT(html, Contains("&lt;script&gt;alert(1)&lt;/script&gt;"));
  CHECK(html.find("<script") == std::string::npos);
  CHECK_THAT(html, Contains("Kestrel Reef"));
  CHECK_THAT(html, Contains("class='cull-site'"));
  CHECK_THAT(html, Contains("SHA-256"));
  const std::string gpkg = (w.dir / "out" / "briefing.gpkg").string();
  const std::string cmd = "ogrinfo -ro -so " + gpkg + " reefs > " + (w.dir / "ogr").string() + " 2>&1";
  REQUIRE(std::system(cmd.c_str()) == 0);
  CHECK_THAT(read_all(w.dir / "ogr"), Contains("Feature Count: 3"));
  const std::string tif = "gdalinfo " + (w.dir / "out" / "settlement_density.tif").string() + " > " +
                          (w.dir / "gdal").string() + " 2>&1";
  REQUIRE(std::system(tif.c_str()) == 0);
  CHECK_THAT(read_all(w.dir / "gdal"), Contains("NoData Value=-9999"));
  CHECK_THAT(read_all(w.dir / "gdal"), Contains("ID[\"EPSG\",4326]"));
}
