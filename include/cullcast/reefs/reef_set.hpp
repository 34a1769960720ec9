#pragma once
// CONTRACT (public API used by drift, network, cull, report).
// Reef outlines read through GDAL/OGR, transformed to WGS84 lon/lat.
#include <map>
#include <string>
#include <vector>

#include "cullcast/study/study.hpp"

namespace cullcast::reefs {

struct LonLat {
  double lon = 0;  // degrees east, -180..180
  double lat = 0;  // degrees north
};

using Ring = std::vector<LonLat>;  // closed: first point repeated at the end

struct Polygon {
  Ring outer;
  std::vector<Ring> holes;
};

struct Reef {
  std::string id;              // unique, from the scenario's id attribute
  std::string name;            // display name (id when no name attribute)
  double priority = 0;         // protection weight 0..1 (0 when no priority attribute)
  std::vector<Polygon> parts;  // polygon or multipolygon parts
  double area_ha = 0;          // geodesic area on the WGS84 ellipsoid, hectares
  double perimeter_km = 0;     // geodesic perimeter, km
  LonLat centroid;             // area centroid (for labels and ordering)
  double lon_min = 0, lon_max = 0, lat_min = 0, lat_max = 0;  // bounding box
  std::map<std::string, std::string> attributes;  // other attributes, kept for outputs
};

class ReefSet {
 public:
  // Throws InputError naming file, feature (index and id) and problem.
  static ReefSet load(const study::ReefSettings& settings);
  const std::vector<Reef>& reefs() const { return reefs_; }
  std::size_t size() const { return reefs_.size(); }
  // Index of the reef with this id, or -1.
  int index_of(const std::string& id) const;

  explicit ReefSet(std::vector<Reef> reefs);
  ReefSet() = default;

 private:
  std::vector<Reef> reefs_;
  std::map<std::string, int> by_id_;
};

}  // namespace cullcast::reefs
