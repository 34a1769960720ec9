#include "cullcast/report/briefing_layers.hpp"

#include <gdal_priv.h>
#include <ogr_geometry.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <cmath>
#include <stdexcept>

#include "cullcast/base/atomic_file.hpp"
#include "gdal_output.hpp"

namespace cullcast::report {
namespace fs = std::filesystem;
namespace {

using gdal_output::DatasetPtr;
using gdal_output::driver;
using gdal_output::reef_shape;
using gdal_output::ScratchFile;

OGRSpatialReference wgs84() {
  OGRSpatialReference srs;
  srs.importFromEPSG(4326);
  srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);  // lon, lat
  return srs;
}

}  // namespace

void write_briefing_gpkg(const fs::path& file, const BriefingData& d) {
  const auto fail = [&](const std::string& what) {
    return std::runtime_error("cannot write " + file.string() + ": " + what + ": " + CPLGetLastErrorMsg());
  };
  AtomicFile target(file);
  {
    ScratchFile scratch(target);
    {
      DatasetPtr ds(driver("GPKG")->Create(scratch.path.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
      if (!ds) throw fail("cannot create the GeoPackage");
      OGRSpatialReference srs = wgs84();
      auto layer_of = [&](const char* name, OGRwkbGeometryType type,
                          std::initializer_list<std::pair<const char*, OGRFieldType>> fields) {
        OGRLayer* layer = ds->CreateLayer(name, &srs, type, nullptr);
        if (layer == nullptr) throw fail(std::string("cannot create layer '") + name + "'");
        for (const auto& [fname, ftype] : fields) {
          OGRFieldDefn defn(fname, ftype);
          if (layer->CreateField(&defn) != OGRERR_NONE) throw fail(std::string("cannot create field '") + fname + "'");
        }
        return layer;
      };
      auto add = [&](OGRLayer* layer, OGRFeature& f) {
        if (layer->CreateFeature(&f) != OGRERR_NONE) throw fail("cannot add a feature");
      };
      auto set_real = [](OGRFeature& f, const char* name, double v) {
        if (std::isnan(v)) {
          f.SetFieldNull(f.GetFieldIndex(name));
        } else {
          f.SetField(name, v);
        }
      };
      const bool transaction = ds->StartTransaction() == OGRERR_NONE;
      OGRLayer* reefs = layer_of("reefs", wkbMultiPolygon,
                                 {{"id", OFTString}, {"name", OFTString}, {"priority", OFTReal}, {"area_ha", OFTReal},
                                  {"role", OFTString}, {"larval_output", OFTReal}, {"local_retention", OFTReal},
                                  {"self_recruitment", OFTReal}, {"export_strength", OFTReal},
                                  {"import_strength", OFTReal}, {"settle_probability", OFTReal},
                                  {"settled_per_ha", OFTReal}, {"cull_rank", OFTInteger}, {"cull_effort_days", OFTReal}});
      for (std::size_t i = 0; i < d.reefs.size(); ++i) {
        const auto& r = d.reefs[i];
        const ReefResult q = i < d.results.size() ? d.results[i] : ReefResult{};
        OGRFeature f(reefs->GetLayerDefn());
        f.SetField("id", r.id.c_str());
        f.SetField("name", r.name.c_str());
        f.SetField("priority", r.priority);
        f.SetField("area_ha", r.area_ha);
        f.SetField("role", q.role.c_str());
        set_real(f, "larval_output", q.larval_output);
        set_real(f, "local_retention", q.local_retention);
        set_real(f, "self_recruitment", q.self_recruitment);
        set_real(f, "export_strength", q.export_strength);
        set_real(f, "import_strength", q.import_strength);
        set_real(f, "settle_probability", q.settle_probability);
        set_real(f, "settled_per_ha", q.settled_per_ha);
        for (const auto& c : d.ranking) {
          if (c.reef == static_cast<int>(i)) {
            f.SetField("cull_rank", c.rank);
            f.SetField("cull_effort_days", c.effort_days);
          }
        }
        OGRMultiPolygon shape = reef_shape(r);
        f.SetGeometry(&shape);
        add(reefs, f);
      }
      OGRLayer* links = layer_of("links", wkbLineString,
                                 {{"from_id", OFTString}, {"to_id", OFTString}, {"probability", OFTReal},
                                  {"probability_sd", OFTReal}, {"probability_min", OFTReal},
                                  {"probability_max", OFTReal}, {"events", OFTInteger}});
      for (const auto& l : d.links) {
        OGRFeature f(links->GetLayerDefn());
        f.SetField("from_id", d.reefs[l.from].id.c_str());
        f.SetField("to_id", d.reefs[l.to].id.c_str());
        f.SetField("probability", l.mean);
        f.SetField("probability_sd", l.sd);
        f.SetField("probability_min", l.min);
        f.SetField("probability_max", l.max);
        f.SetField("events", static_cast<int>(d.event_labels.size()));
        OGRLineString line;
        line.addPoint(d.reefs[l.from].centroid.lon, d.reefs[l.from].centroid.lat);
        line.addPoint(d.reefs[l.to].centroid.lon, d.reefs[l.to].centroid.lat);
        f.SetGeometry(&line);
        add(links, f);
      }
      OGRLayer* aggs = layer_of("aggregations", wkbPoint,
                                {{"id", OFTString}, {"adults", OFTReal}, {"reef_id", OFTString}});
      for (const auto& a : d.aggregations) {
        OGRFeature f(aggs->GetLayerDefn());
        f.SetField("id", a.id.c_str());
        f.SetField("adults", a.adults);
        if (a.reef >= 0) f.SetField("reef_id", d.reefs[a.reef].id.c_str());
        OGRPoint p(a.lon, a.lat);
        f.SetGeometry(&p);
        add(aggs, f);
      }
      if (transaction && ds->CommitTransaction() != OGRERR_NONE) throw fail("cannot commit");
    }
    fs::rename(scratch.path, target.temp_path());
  }
  target.commit();
}

void write_density_geotiff(const fs::path& file, const BriefingData& d) {
  const LandGrid& g = d.land;
  if (g.empty()) throw std::runtime_error("cannot write " + file.string() + ": no currents grid");
  const auto fail = [&](const std::string& what) {
    return std::runtime_error("cannot write " + file.string() + ": " + what + ": " + CPLGetLastErrorMsg());
  };
  // Raster row 0 is the northernmost; node (i, j) is the centre of pixel (i, row).
  const bool north_up = g.dlat > 0;
  const double dlat = std::fabs(g.dlat), dlon = g.dlon;
  const double lat_top = north_up ? g.lat0 + g.dlat * static_cast<double>(g.ny - 1) : g.lat0;
  std::vector<float> values(g.nx * g.ny, 0.0f);
  for (std::size_t row = 0; row < g.ny; ++row) {
    const std::size_t j = north_up ? g.ny - 1 - row : row;
    for (std::size_t i = 0; i < g.nx; ++i) {
      if (g.land[j * g.nx + i]) values[row * g.nx + i] = static_cast<float>(kDensityNodata);
    }
  }
  for (std::size_t k = 0; k < d.reefs.size() && k < d.results.size(); ++k) {
    const auto& r = d.reefs[k];
    const OGRMultiPolygon shape = reef_shape(r);
    const long i0 = std::max(0L, static_cast<long>(std::floor((r.lon_min - g.lon0) / dlon + 0.5)));
    const long i1 = std::min(static_cast<long>(g.nx) - 1, static_cast<long>(std::ceil((r.lon_max - g.lon0) / dlon - 0.5)));
    const long r0 = std::max(0L, static_cast<long>(std::floor((lat_top - r.lat_max) / dlat + 0.5)));
    const long r1 = std::min(static_cast<long>(g.ny) - 1, static_cast<long>(std::ceil((lat_top - r.lat_min) / dlat - 0.5)));
    for (long row = r0; row <= r1; ++row) {
      for (long i = i0; i <= i1; ++i) {
        const double cx = g.lon0 + dlon * static_cast<double>(i), cy = lat_top - dlat * static_cast<double>(row);
        OGRLinearRing ring;
        ring.addPoint(cx - dlon / 2, cy - dlat / 2);
        ring.addPoint(cx + dlon / 2, cy - dlat / 2);
        ring.addPoint(cx + dlon / 2, cy + dlat / 2);
        ring.addPoint(cx - dlon / 2, cy + dlat / 2);
        ring.closeRings();
        OGRPolygon cell;
        cell.addRing(&ring);
        if (!shape.Intersects(&cell)) continue;
        float& v = values[static_cast<std::size_t>(row) * g.nx + static_cast<std::size_t>(i)];
        if (v == static_cast<float>(kDensityNodata)) continue;  // land stays nodata
        v = std::max(v, static_cast<float>(d.results[k].settled_per_ha));
      }
    }
  }
  AtomicFile target(file);
  {
    ScratchFile scratch(target);
    {
      char** options = nullptr;
      options = CSLSetNameValue(options, "COMPRESS", "DEFLATE");
      DatasetPtr ds(driver("GTiff")->Create(scratch.path.c_str(), static_cast<int>(g.nx), static_cast<int>(g.ny), 1,
                                            GDT_Float32, options));
      CSLDestroy(options);
      if (!ds) throw fail("cannot create the GeoTIFF");
      double gt[6] = {g.lon0 - dlon / 2, dlon, 0, lat_top + dlat / 2, 0, -dlat};
      OGRSpatialReference srs = wgs84();
      if (ds->SetGeoTransform(gt) != CE_None || ds->SetSpatialRef(&srs) != CE_None) throw fail("cannot set the grid");
      GDALRasterBand* band = ds->GetRasterBand(1);
      band->SetNoDataValue(kDensityNodata);
      band->SetDescription("settled larvae per hectare of reef, mean per spawning event");
      band->SetUnitType("ha-1");
      if (band->RasterIO(GF_Write, 0, 0, static_cast<int>(g.nx), static_cast<int>(g.ny), values.data(),
                         static_cast<int>(g.nx), static_cast<int>(g.ny), GDT_Float32, 0, 0, nullptr) != CE_None) {
        throw fail("cannot write the band");
      }
      ds->SetMetadataItem("TIFFTAG_IMAGEDESCRIPTION", "cullcast settlement density (settled larvae per ha of reef)");
    }
    fs::rename(scratch.path, target.temp_path());
  }
  target.commit();
}

}  // namespace cullcast::report
