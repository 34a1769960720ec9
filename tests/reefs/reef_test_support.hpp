#pragma once
// Helpers shared by the reefs tests: scratch folders, files, hand-made reefs,
// and the same shapes as OGR geometries for reference checks with GDAL/GEOS.
#include <ogr_geometry.h>

#include <unistd.h>

#include <cmath>
#include <memory>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"
#include "../support/scratch_folder.hpp"

namespace reef_test {

namespace fs = std::filesystem;
using cullcast::reefs::LonLat;
using cullcast::reefs::Polygon;
using cullcast::reefs::Reef;
using cullcast::reefs::Ring;

// This process's scratch folders, removed when the test program ends.
inline const cullcast::test::ScratchFolder scratch_root("reefs");

inline fs::path scratch(const std::string& name) {
  fs::path dir = scratch_root.dir / name;
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

inline fs::path write_file(const fs::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
  return path;
}

inline std::string demo_dir() { return std::string(CULLCAST_SOURCE_DIR) + "/scenarios/lantern-reach"; }

// Closed ring from points given without the closing point.
inline Ring ring(std::vector<LonLat> points) {
  points.push_back(points.front());
  return points;
}

// A star-shaped ring (concave when wobble > ~0.2), radius in degrees.
inline Ring star(double lon, double lat, double radius_deg, int vertices, double wobble, int lobes,
                 bool clockwise = false) {
  std::vector<LonLat> pts;
  for (int i = 0; i < vertices; ++i) {
    const double t = 2 * M_PI * i / vertices * (clockwise ? -1 : 1);
    const double r = radius_deg * (1 + wobble * std::sin(lobes * t));
    pts.push_back({lon + r * std::cos(t), lat + r * std::sin(t)});
  }
  return ring(pts);
}

inline Reef make_reef(const std::string& id, std::vector<Polygon> parts) {
  Reef r;
  r.id = id;
  r.parts = std::move(parts);
  return r;
}

// The same reef as an OGR geometry (for GEOS-backed reference predicates).
inline std::unique_ptr<OGRGeometry> to_ogr(const Reef& reef) {
  auto multi = std::make_unique<OGRMultiPolygon>();
  for (const auto& part : reef.parts) {
    OGRPolygon polygon;
    auto add_ring = [&](const Ring& r) {
      OGRLinearRing lr;
      for (const auto& p : r) lr.addPoint(p.lon, p.lat);
      polygon.addRing(&lr);
    };
    add_ring(part.outer);
    for (const auto& h : part.holes) add_ring(h);
    multi->addGeometry(&polygon);
  }
  return multi;
}

inline int run(const std::string& command) { return std::system((command + " >/dev/null 2>&1").c_str()); }

}  // namespace reef_test
