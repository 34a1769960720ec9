#include "cullcast/reefs/reef_set.hpp"

#include <cpl_error.h>

#include <cerrno>
#include <cmath>
#include <cstdlib>
#include <set>

#include "cullcast/base/error.hpp"
#include "cullcast/base/suggest.hpp"
#include "cullcast/reefs/reef_geometry.hpp"
#include "gdal_handles.hpp"

namespace cullcast::reefs {
namespace {

// Silences GDAL's own printing while we read; we report errors ourselves.
class QuietGdalErrors {
 public:
  QuietGdalErrors() { CPLPushErrorHandler(CPLQuietErrorHandler); }
  ~QuietGdalErrors() { CPLPopErrorHandler(); }
  QuietGdalErrors(const QuietGdalErrors&) = delete;
  QuietGdalErrors& operator=(const QuietGdalErrors&) = delete;
};

std::string in_quotes(const std::string& s) { return "\"" + s + "\""; }

std::string join(const std::vector<std::string>& items) {
  std::string out;
  for (const auto& item : items) out += (out.empty() ? "" : ", ") + item;
  return out.empty() ? "(none)" : out;
}

std::string trim(std::string s) {
  const auto first = s.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return {};
  const auto last = s.find_last_not_of(" \t\r\n");
  return s.substr(first, last - first + 1);
}

// Index of field `name` in the layer, or InputError listing the fields.
int require_field(OGRFeatureDefn& defn, const std::string& name, const std::string& setting,
                  const std::string& where) {
  const int index = defn.GetFieldIndex(name.c_str());
  if (index >= 0) return index;
  std::vector<std::string> fields;
  for (int i = 0; i < defn.GetFieldCount(); ++i) fields.emplace_back(defn.GetFieldDefn(i)->GetNameRef());
  std::string message = where + ": no attribute " + in_quotes(name) + " (the [reefs] setting " +
                        setting + "); available attributes: " + join(fields);
  const std::string close = closest_match(name, fields);
  if (!close.empty()) message += "; did you mean " + in_quotes(close) + "?";
  throw InputError(message);
}

Ring to_ring(const OGRLinearRing& ring) {
  Ring out;
  out.reserve(static_cast<std::size_t>(ring.getNumPoints()) + 1);
  for (int i = 0; i < ring.getNumPoints(); ++i) {
    const LonLat p{ring.getX(i), ring.getY(i)};
    if (!out.empty() && out.back().lon == p.lon && out.back().lat == p.lat) continue;
    out.push_back(p);
  }
  if (!out.empty() && (out.front().lon != out.back().lon || out.front().lat != out.back().lat)) {
    out.push_back(out.front());
  }
  return out;
}

// Collects the polygonal parts of a geometry (MakeValid may return a collection).
void collect_polygons(const OGRGeometry& g, std::vector<const OGRPolygon*>& out) {
  const auto type = wkbFlatten(g.getGeometryType());
  if (type == wkbPolygon) {
    out.push_back(g.toPolygon());
  } else if (type == wkbMultiPolygon || type == wkbGeometryCollection) {
    for (const OGRGeometry* part : *g.toGeometryCollection()) collect_polygons(*part, out);
  }
}

}  // namespace

ReefSet::ReefSet(std::vector<Reef> reefs) : reefs_(std::move(reefs)) {
  for (std::size_t k = 0; k < reefs_.size(); ++k) {
    Reef& r = reefs_[k];
    if (r.id.empty()) throw InputError("reef set: reef " + std::to_string(k) + " has an empty id");
    if (!by_id_.emplace(r.id, static_cast<int>(k)).second) {
      throw InputError("reef set: duplicate reef id " + in_quotes(r.id) + " (reefs " +
                       std::to_string(by_id_[r.id]) + " and " + std::to_string(k) + ")");
    }
    if (r.name.empty()) r.name = r.id;
    compute_metrics(r);
  }
}

int ReefSet::index_of(const std::string& id) const {
  const auto it = by_id_.find(id);
  return it == by_id_.end() ? -1 : it->second;
}

ReefSet ReefSet::load(const study::ReefSettings& settings) {
  const std::string file = settings.layer.string();
  QuietGdalErrors quiet;
  gdal::DatasetPtr dataset = gdal::open_vector(file.c_str());
  if (!dataset) {
    throw InputError("cannot open reef layer " + file + " as a GDAL vector source: " +
                     std::string(CPLGetLastErrorMsg()));
  }
  OGRLayer* layer = nullptr;
  if (settings.layer_name.empty()) {
    if (dataset->GetLayerCount() < 1) throw InputError(file + ": contains no vector layer");
    layer = dataset->GetLayer(0);
  } else {
    layer = dataset->GetLayerByName(settings.layer_name.c_str());
    if (layer == nullptr) {
      std::vector<std::string> names;
      for (int i = 0; i < dataset->GetLayerCount(); ++i) names.emplace_back(dataset->GetLayer(i)->GetName());
      std::string message = file + ": no layer " + in_quotes(settings.layer_name) +
                            " (the [reefs] setting layer_name); layers: " + join(names);
      const std::string close = closest_match(settings.layer_name, names);
      if (!close.empty()) message += "; did you mean " + in_quotes(close) + "?";
      throw InputError(message);
    }
  }
  const std::string where = file + " layer " + in_quotes(layer->GetName());

  if (layer->GetFeatureCount(TRUE) == 0) throw InputError(where + ": contains no reef features");
  // Fields.
  OGRFeatureDefn& defn = *layer->GetLayerDefn();
  const int id_index = require_field(defn, settings.id_field, "id", where);
  const int name_index = settings.name_field.empty() ? -1 : require_field(defn, settings.name_field, "name", where);
  const int priority_index =
      settings.priority_field.empty() ? -1 : require_field(defn, settings.priority_field, "priority", where);

  // Coordinate reference system -> WGS84 lon/lat.
  OGRSpatialReference wgs84;
  wgs84.SetWellKnownGeogCS("WGS84");
  wgs84.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
  gdal::TransformPtr transform;
  const OGRSpatialReference* layer_srs = layer->GetSpatialRef();
  const std::string driver = dataset->GetDriver() ? dataset->GetDriver()->GetDescription() : "";
  if (layer_srs == nullptr) {
    // RFC 7946 section 4: GeoJSON coordinates are WGS84 lon/lat when no crs is given.
    if (driver != "GeoJSON" && driver != "GeoJSONSeq") {
      throw InputError(where + ": has no coordinate reference system (a Shapefile needs its .prj "
                               "file); expected a layer whose CRS GDAL can read, found none");
    }
  } else {
    OGRSpatialReference source(*layer_srs);
    source.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
    if (!source.IsSame(&wgs84)) {
      transform.reset(OGRCreateCoordinateTransformation(&source, &wgs84));
      if (!transform) {
        throw InputError(where + ": cannot transform its CRS to WGS84: " +
                         std::string(CPLGetLastErrorMsg()));
      }
    }
  }

  std::vector<Reef> reefs;
  std::map<std::string, long long> seen;  // id -> feature number
  layer->ResetReading();
  long long number = 0;
  for (OGRFeatureUniquePtr feature(layer->GetNextFeature()); feature;
       feature.reset(layer->GetNextFeature())) {
    ++number;
    std::string id = feature->IsFieldSetAndNotNull(id_index) ? trim(feature->GetFieldAsString(id_index)) : "";
    const std::string at = where + " feature " + std::to_string(number) + " (FID " +
                           std::to_string(feature->GetFID()) +
                           (id.empty() ? ", no id" : ", id " + in_quotes(id)) + ")";
    if (id.empty()) throw InputError(at + ": attribute " + in_quotes(settings.id_field) + " is empty; every reef needs a unique id");
    if (const auto it = seen.find(id); it != seen.end()) {
      throw InputError(at + ": duplicate id " + in_quotes(id) + ", already used by feature " +
                       std::to_string(it->second));
    }
    seen.emplace(id, number);

    Reef reef;
    reef.id = id;
    reef.name = name_index >= 0 && feature->IsFieldSetAndNotNull(name_index)
                    ? trim(feature->GetFieldAsString(name_index))
                    : std::string();
    if (reef.name.empty()) reef.name = id;
    if (priority_index >= 0 && feature->IsFieldSetAndNotNull(priority_index)) {
      const std::string text = trim(feature->GetFieldAsString(priority_index));
      double value = 0;
      if (!text.empty()) {
        char* end = nullptr;
        errno = 0;
        value = std::strtod(text.c_str(), &end);
        if (end == text.c_str() || *end != '\0' || errno != 0 || !std::isfinite(value)) {
          throw InputError(at + ": attribute " + in_quotes(settings.priority_field) +
                           " expected a number from 0 to 1, found " + in_quotes(text));
        }
      }
      if (!(value >= 0 && value <= 1)) {
        throw InputError(at + ": attribute " + in_quotes(settings.priority_field) +
                         " expected a number from 0 to 1, found " + text);
      }
      reef.priority = value;
    }
    for (int i = 0; i < defn.GetFieldCount(); ++i) {
      if (i == id_index || i == name_index || i == priority_index) continue;
      if (!feature->IsFieldSetAndNotNull(i)) continue;
      reef.attributes[defn.GetFieldDefn(i)->GetNameRef()] = feature->GetFieldAsString(i);
    }

    // Geometry.
    const OGRGeometry* raw = feature->GetGeometryRef();
    if (raw == nullptr || raw->IsEmpty()) throw InputError(at + ": has no geometry (expected a Polygon or MultiPolygon)");
    OGRGeometryUniquePtr geometry(raw->clone());
    auto type = wkbFlatten(geometry->getGeometryType());
    if (type == wkbCurvePolygon || type == wkbMultiSurface) {
      geometry.reset(geometry->getLinearGeometry());
      type = wkbFlatten(geometry->getGeometryType());
    }
    if (type != wkbPolygon && type != wkbMultiPolygon) {
      throw InputError(at + ": expected a Polygon or MultiPolygon, found " +
                       std::string(OGRGeometryTypeToName(raw->getGeometryType())));
    }
    if (!geometry->IsValid()) {
      if (!settings.repair_geometry) {
        throw InputError(at + ": polygon is not valid (OGR IsValid: e.g. self-intersecting, or a "
                              "hole outside its shell); fix it, or set repair_geometry = true");
      }
      OGRGeometryUniquePtr repaired(geometry->MakeValid());
      if (!repaired) throw InputError(at + ": polygon is not valid and could not be repaired (OGR MakeValid)");
      geometry = std::move(repaired);
    }
    if (transform && geometry->transform(transform.get()) != OGRERR_NONE) {
      throw InputError(at + ": cannot transform coordinates to WGS84: " + std::string(CPLGetLastErrorMsg()));
    }
    std::vector<const OGRPolygon*> polygons;
    collect_polygons(*geometry, polygons);
    for (const OGRPolygon* polygon : polygons) {
      if (polygon->IsEmpty()) continue;
      Polygon part;
      part.outer = to_ring(*polygon->getExteriorRing());
      for (int h = 0; h < polygon->getNumInteriorRings(); ++h) {
        Ring hole = to_ring(*polygon->getInteriorRing(h));
        if (hole.size() >= 4) part.holes.push_back(std::move(hole));
      }
      if (part.outer.size() < 4) continue;  // a collapsed sliver left by a repair
      reef.parts.push_back(std::move(part));
    }
    if (reef.parts.empty()) throw InputError(at + ": has no polygon with an area (empty after reading or repair)");
    for (const auto& part : reef.parts) {
      for (const auto& p : part.outer) {
        if (!(std::abs(p.lon) <= 180 && std::abs(p.lat) <= 90)) {
          throw InputError(at + ": coordinate (" + std::to_string(p.lon) + ", " + std::to_string(p.lat) +
                           ") is not a longitude/latitude after transforming to WGS84; is the layer's CRS right?");
        }
      }
    }
    reefs.push_back(std::move(reef));
  }
  if (reefs.empty()) throw InputError(where + ": contains no reef features");
  return ReefSet(std::move(reefs));
}

}  // namespace cullcast::reefs
