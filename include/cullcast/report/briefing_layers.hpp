#pragma once
// The briefing's GIS layers, written through GDAL, atomically, in WGS84
// longitude/latitude (EPSG:4326):
//  - GeoPackage (OGC 12-128r18) with layers `reefs` (multipolygons, metrics,
//    cull rank), `links` (line strings source centroid -> sink centroid, mean
//    probability and its spread over spawning events) and `aggregations` (points);
//  - GeoTIFF of settlement density on the currents grid: each cell touching a
//    reef carries that reef's settled larvae per hectare (mean per event; the
//    largest when several reefs touch it), open water 0, land cells nodata.
#include <filesystem>

#include "cullcast/report/briefing.hpp"

namespace cullcast::report {

constexpr double kDensityNodata = -9999.0;

void write_briefing_gpkg(const std::filesystem::path& file, const BriefingData& d);

// Throws std::runtime_error when the land grid is empty or GDAL fails.
void write_density_geotiff(const std::filesystem::path& file, const BriefingData& d);

}  // namespace cullcast::report
