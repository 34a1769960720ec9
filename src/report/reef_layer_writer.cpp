#include "cullcast/report/reef_layer_writer.hpp"

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
using gdal_output::ScratchFile;

std::string driver_for(const fs::path& path) {
  std::string ext = path.extension().string();
  for (char& ch : ext) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  if (ext == ".geojson" || ext == ".json") return "GeoJSON";
  if (ext == ".gpkg") return "GPKG";
  throw std::runtime_error("cannot write " + path.string() +
                           ": unknown GIS format (expected .geojson or .gpkg)");
}

}  // namespace

void write_reef_layer(const fs::path& path, const std::vector<reefs::Reef>& reefs,
                      const std::vector<LayerField>& fields, const std::string& layer_name) {
  const std::string driver_name = driver_for(path);
  for (const auto& f : fields) {
    const std::size_t n = f.type == LayerField::Type::real      ? f.reals.size()
                          : f.type == LayerField::Type::integer ? f.integers.size()
                                                                : f.texts.size();
    if (n != reefs.size()) {
      throw std::invalid_argument("write_reef_layer: field '" + f.name + "' has " +
                                  std::to_string(n) + " values for " + std::to_string(reefs.size()) +
                                  " reefs");
    }
  }
  GDALDriver* driver = gdal_output::driver(driver_name);
  const auto fail = [&](const std::string& what) {
    return std::runtime_error("cannot write " + path.string() + ": " + what + ": " +
                              CPLGetLastErrorMsg());
  };
  AtomicFile target(path);
  const ScratchFile scratch(target);
  {
    DatasetPtr ds(driver->Create(scratch.path.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
    if (!ds) throw fail("cannot create the dataset");
    OGRSpatialReference wgs84;
    wgs84.SetWellKnownGeogCS("WGS84");
    wgs84.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);  // lon, lat
    OGRLayer* layer = ds->CreateLayer(layer_name.c_str(), &wgs84, wkbMultiPolygon, nullptr);
    if (layer == nullptr) throw fail("cannot create layer '" + layer_name + "'");
    auto add_field = [&](const std::string& name, OGRFieldType type) {
      OGRFieldDefn defn(name.c_str(), type);
      if (layer->CreateField(&defn) != OGRERR_NONE) throw fail("cannot create field '" + name + "'");
    };
    add_field("id", OFTString);
    add_field("name", OFTString);
    for (const auto& f : fields) {
      add_field(f.name, f.type == LayerField::Type::real      ? OFTReal
                        : f.type == LayerField::Type::integer ? OFTInteger64
                                                              : OFTString);
    }
    // One transaction: GeoPackage writes feature by feature otherwise (slow).
    const bool transaction = ds->StartTransaction() == OGRERR_NONE;
    for (std::size_t i = 0; i < reefs.size(); ++i) {
      OGRFeatureUniquePtr feature(OGRFeature::CreateFeature(layer->GetLayerDefn()));
      feature->SetField("id", reefs[i].id.c_str());
      feature->SetField("name", reefs[i].name.c_str());
      for (const auto& f : fields) {
        const int k = feature->GetFieldIndex(f.name.c_str());
        switch (f.type) {
          case LayerField::Type::real:
            if (std::isnan(f.reals[i])) {
              feature->SetFieldNull(k);
            } else {
              feature->SetField(k, f.reals[i]);
            }
            break;
          case LayerField::Type::integer:
            feature->SetField(k, static_cast<GIntBig>(f.integers[i]));
            break;
          case LayerField::Type::text:
            feature->SetField(k, f.texts[i].c_str());
            break;
        }
      }
      OGRMultiPolygon shape = gdal_output::reef_shape(reefs[i]);
      feature->SetGeometry(&shape);
      if (layer->CreateFeature(feature.get()) != OGRERR_NONE) {
        throw fail("cannot write feature " + std::to_string(i) + " (reef \"" + reefs[i].id + "\")");
      }
    }
    if (transaction && ds->CommitTransaction() != OGRERR_NONE) throw fail("cannot commit");
    ds->FlushCache();
  }  // dataset closed before the rename
  fs::rename(scratch.path, target.temp_path());
  target.commit();
}

}  // namespace cullcast::report
