// End to end: settlement records written as real NetCDF by the drift stage's
// writer, `cullcast connect` run as a program, every output read back with
// netCDF-C++ and GDAL (and the GeoPackage with Debian's ogrinfo).
#include <catch2/catch.hpp>

#include <gdal_priv.h>
#include <ogrsf_frmts.h>
#include <netcdf>
#include <unistd.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "../support/settlement_file.hpp"
#include "../support/scratch_folder.hpp"

namespace fs = std::filesystem;
using Catch::Detail::Approx;
using Catch::Matchers::Contains;
using cullcast::test::read_all;

namespace {

// Three square reefs 0.02 degrees wide on an invented coast.
std::string reef_geojson() {
  std::ostringstream s;
  s << R"({"type":"FeatureCollection","features":[)";
  for (int i = 0; i < 3; ++i) {
    const double x = 150.0 + 0.1 * i, y = -20.0;
    s << (i ? "," : "") << R"({"type":"Feature","properties":{"id":"R-)" << i
      << R"("},"geometry":{"type":"Polygon","coordinates":[[)"
      << "[" << x << "," << y << "],[" << x + 0.02 << "," << y << "],[" << x + 0.02 << ","
      << y + 0.02 << "],[" << x << "," << y + 0.02 << "],[" << x << "," << y << "]]]}}";
  }
  s << "]}";
  return s.str();
}

// Settlers by source (row) and reef (column) for two events of 1000 larvae per source.
const std::vector<std::vector<std::vector<int>>> kSettlers = {{{100, 20, 0}, {50, 200, 10}, {0, 30, 40}},
                                                              {{80, 40, 0}, {50, 100, 10}, {0, 30, 60}}};

// Each event's larvae are released at its start and settle 20 days later.
void write_settlement(const fs::path& file) {
  cullcast::test::SettlementPlan plan;
  plan.reef_ids = {"R-0", "R-1", "R-2"};
  plan.event_starts_s = {0.0, 30 * 86400.0};
  plan.release_s = plan.event_starts_s;
  plan.settlers = kSettlers;
  cullcast::test::write_settlement(file, plan);
}

struct Workspace : cullcast::test::ScratchFolder {
  Workspace() : ScratchFolder("connect") {
    fs::create_directories(dir / "currents");
    std::ofstream(dir / "currents" / "a.nc") << "x";  // the loader only checks that it exists
    std::ofstream(dir / "reefs.geojson") << reef_geojson();
    std::ofstream(dir / "s.toml") << R"([study]
name = "connect test"
[currents]
files = ["currents/*.nc"]
[reefs]
layer = "reefs.geojson"
[[spawning]]
start = "2026-12-08T20:00:00Z"
larvae_per_reef = 1000
[outputs]
dir = "out"
[connectivity]
min_probability = 0.015
larval_output = "equal"
attribute = ["R-1"]
)";
  }
};

}  // namespace

TEST_CASE("connect without settlement records says to run disperse first") {
  Workspace w;
  CHECK(w.run("connect " + (w.dir / "s.toml").string()) == 3);  // docs/exit-codes.md: bad input
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("settlement records not found") && Contains("cullcast disperse"));
}

TEST_CASE("connect warns when particles are too few for the precision asked") {
  Workspace w;
  fs::create_directories(w.dir / "out");
  write_settlement(w.dir / "out" / "settlement.nc");
  // e = 0.1 at P = 0.015 needs (1 - 0.015) / (0.015 * 0.01) = 6567 particles.
  REQUIRE(w.run("connect -q " + (w.dir / "s.toml").string() +
                " --set connectivity.target_relative_error=0.1") == 0);
  CHECK_THAT(read_all(w.dir / "stderr"), Contains("too few particles: 1000") && Contains("needs 6567"));
  CHECK(read_all(w.dir / "stdout").empty());
}

TEST_CASE("connect end to end: matrices, metrics and GIS layers from real files") {
  Workspace w;
  fs::create_directories(w.dir / "out");
  write_settlement(w.dir / "out" / "settlement.nc");
  REQUIRE(w.run("connect " + (w.dir / "s.toml").string()) == 0);
  const std::string out = read_all(w.dir / "stdout");
  CHECK_THAT(out, Contains("3 sources x 3 reefs, 2 event(s)"));
  CHECK_THAT(out, Contains("persistence eigenvalue"));
  CHECK_THAT(out, Contains("origins of settlers on R-1"));
  // A link of P = 0.015 at relative standard error 0.5 needs (1-p)/(p e^2) = 263
  // particles (binomial variance): 1000 are enough, no warning.
  CHECK_THAT(read_all(w.dir / "stderr"), !Contains("too few particles"));

  // connectivity.csv: event rows and ensemble rows, row = source, column = sink.
  std::ifstream csv(w.dir / "out" / "connectivity.csv");
  std::string header;
  std::getline(csv, header);
  CHECK(header.rfind("source_id,sink_id,event,released,settled,probability,", 0) == 0);
  CHECK_THAT(header, Contains("mean,sd,cv,min,max,q0.05,q0.5,q0.95"));
  std::map<std::string, std::string> rows;  // "source,sink,event" -> line
  for (std::string line; std::getline(csv, line);) {
    std::istringstream s(line);
    std::string a, b, e;
    std::getline(s, a, ',');
    std::getline(s, b, ',');
    std::getline(s, e, ',');
    rows[a + "," + b + "," + e] = line;
  }
  CHECK(rows.size() == 7 + 7 + 7);  // 7 links in each event, 7 in the union
  CHECK(rows.at("R-0,R-1,0").rfind("R-0,R-1,0,1000,20,0.02,20,", 0) == 0);
  CHECK(rows.at("R-0,R-1,1").rfind("R-0,R-1,1,1000,40,0.04,40,", 0) == 0);
  // Ensemble row: pooled 60/2000, mean 0.03, sd of (0.02, 0.04) = 0.0141421...
  CHECK(rows.at("R-0,R-1,all").rfind("R-0,R-1,all,2000,60,0.03,60,", 0) == 0);
  CHECK_THAT(rows.at("R-0,R-1,all"), Contains(",0.03,0.01414213562373095,"));

  // connectivity.nc: read back with netCDF-C++.
  netCDF::NcFile nc((w.dir / "out" / "connectivity.nc").string(), netCDF::NcFile::read);
  CHECK(nc.getDim("event").getSize() == 2);
  CHECK(nc.getDim("source").getSize() == 3);
  CHECK(nc.getDim("sink").getSize() == 3);
  double p[2][3][3];
  nc.getVar("probability").getVar(&p[0][0][0]);
  for (int e = 0; e < 2; ++e)
    for (int i = 0; i < 3; ++i)
      for (int j = 0; j < 3; ++j) CHECK(p[e][i][j] == Approx(kSettlers[e][i][j] / 1000.0));
  double mean[3][3];
  nc.getVar("probability_mean").getVar(&mean[0][0]);
  CHECK(mean[1][1] == Approx(0.15));
  std::string conventions;
  nc.getAtt("Conventions").getValues(conventions);
  CHECK(conventions == "CF-1.13");
  std::string units;
  nc.getVar("probability").getAtt("units").getValues(units);
  CHECK(units == "1");

  // reef_metrics.csv: mean matrix, REFERENCES §4 definitions (Botsford et al. 2009).
  const std::string metrics = read_all(w.dir / "out" / "reef_metrics.csv");
  CHECK_THAT(metrics, Contains("reef_id,larval_output,local_retention,self_recruitment"));
  CHECK_THAT(metrics, Contains("\nR-0,1,0.09,"));

  // GeoJSON read back with GDAL: local retention per reef from the mean matrix
  // (0.09, 0.15, 0.05) and self-recruitment of R-1: 0.15 / (0.03 + 0.15 + 0.03).
  GDALAllRegister();
  GDALDataset* ds = GDALDataset::Open((w.dir / "out" / "reef_metrics.geojson").c_str(), GDAL_OF_VECTOR);
  REQUIRE(ds != nullptr);
  OGRLayer* layer = ds->GetLayer(0);
  CHECK(layer->GetFeatureCount() == 3);
  std::map<std::string, double> lr, sr;
  std::map<std::string, std::string> role;
  for (auto& f : *layer) {
    lr[f->GetFieldAsString("id")] = f->GetFieldAsDouble("local_retention");
    sr[f->GetFieldAsString("id")] = f->GetFieldAsDouble("self_recruitment");
    role[f->GetFieldAsString("id")] = f->GetFieldAsString("role");
    CHECK(f->GetGeometryRef() != nullptr);
  }
  GDALClose(GDALDataset::ToHandle(ds));
  CHECK(lr["R-0"] == Approx(0.09));
  CHECK(lr["R-1"] == Approx(0.15));
  CHECK(lr["R-2"] == Approx(0.05));
  CHECK(sr["R-1"] == Approx(0.15 / 0.21));
  // Export of R-1 = 0.05 + 0.01 = 0.06, import 0.03 + 0.03 = 0.06 -> exchange.
  CHECK(role["R-1"] == "exchange");

  // GeoPackage with Debian's ogrinfo (gdal-bin).
  const std::string cmd = "ogrinfo -ro -so -al " + (w.dir / "out" / "reef_metrics.gpkg").string() + " > " +
                          (w.dir / "ogrinfo.txt").string();
  REQUIRE(std::system(cmd.c_str()) == 0);
  const std::string info = read_all(w.dir / "ogrinfo.txt");
  CHECK_THAT(info, Contains("Feature Count: 3"));
  CHECK_THAT(info, Contains("betweenness: Real"));
  CHECK_THAT(info, Contains("role: String"));

  // attribution.csv: R-1 receives 0.03, 0.15, 0.03 (mean matrix) with equal outputs.
  const std::string attribution = read_all(w.dir / "out" / "attribution.csv");
  CHECK_THAT(attribution, Contains("R-1,R-1,1,R-1,0.7142857142857"));
}
