#pragma once
// Per-reef values joined to the reef polygons, written as a GIS layer through
// GDAL/OGR (GeoJSON, RFC 7946, or OGC GeoPackage 1.2), atomically. Geometry
// in WGS84 longitude/latitude (EPSG:4326), one feature per reef in layer order.
#include <filesystem>
#include <string>
#include <vector>

#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::report {

struct LayerField {
  enum class Type { real, integer, text };
  std::string name;
  Type type = Type::real;
  std::vector<double> reals;            // Type::real, NaN = null
  std::vector<long long> integers;      // Type::integer
  std::vector<std::string> texts;       // Type::text
};

// Driver from the extension: .geojson / .json -> GeoJSON, .gpkg -> GPKG.
// Every field holds one value per reef. Fields "id" and "name" are added from
// the reefs. Throws std::runtime_error naming the file when GDAL fails.
void write_reef_layer(const std::filesystem::path& path, const std::vector<reefs::Reef>& reefs,
                      const std::vector<LayerField>& fields, const std::string& layer_name);

}  // namespace cullcast::report
