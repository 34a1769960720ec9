#pragma once
// What the report's GDAL writers (reef_layer_writer.cpp, briefing_layers.cpp)
// share: the dataset owner, the driver look-up, the scratch file a driver
// writes before AtomicFile moves it into place, and a reef as OGR geometry.
#include <gdal_priv.h>
#include <ogr_geometry.h>
#include <ogrsf_frmts.h>

#include <filesystem>
#include <memory>
#include <mutex>
#include <stdexcept>
#include <string>
#include <system_error>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/reefs/reef_set.hpp"

namespace cullcast::report::gdal_output {

struct DatasetCloser {
  void operator()(GDALDataset* d) const noexcept { GDALClose(GDALDataset::ToHandle(d)); }
};
using DatasetPtr = std::unique_ptr<GDALDataset, DatasetCloser>;

// The named driver (drivers registered once per process), or an error.
inline GDALDriver* driver(const std::string& name) {
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
  GDALDriver* d = GetGDALDriverManager()->GetDriverByName(name.c_str());
  if (d == nullptr) throw std::runtime_error("GDAL has no " + name + " driver");
  return d;
}

// GDAL drivers check the extension (GeoPackage warns otherwise): write under
// AtomicFile's temporary name plus the target's extension, then rename onto
// the temporary name that AtomicFile moves into place. Removed when left behind.
struct ScratchFile {
  std::filesystem::path path;
  explicit ScratchFile(const AtomicFile& f)
      : path(f.temp_path().string() + f.target().extension().string()) {}
  ScratchFile(const ScratchFile&) = delete;
  ScratchFile& operator=(const ScratchFile&) = delete;
  ~ScratchFile() {
    std::error_code ignored;
    std::filesystem::remove(path, ignored);
  }
};

// The reef's parts as one multipolygon (outer ring, then holes), lon/lat.
inline OGRMultiPolygon reef_shape(const reefs::Reef& r) {
  auto ring_of = [](const reefs::Ring& ring) {
    OGRLinearRing out;
    for (const auto& p : ring) out.addPoint(p.lon, p.lat);
    out.closeRings();
    return out;
  };
  OGRMultiPolygon shape;
  for (const auto& part : r.parts) {
    OGRPolygon polygon;
    OGRLinearRing outer = ring_of(part.outer);
    polygon.addRing(&outer);
    for (const auto& h : part.holes) {
      OGRLinearRing hole = ring_of(h);
      polygon.addRing(&hole);
    }
    shape.addGeometry(&polygon);
  }
  return shape;
}

}  // namespace cullcast::report::gdal_output
