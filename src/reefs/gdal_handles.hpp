#pragma once
// Move-only owners of GDAL/OGR handles, so every exit path releases them.
#include <gdal_priv.h>
#include <ogr_geometry.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <memory>
#include <mutex>

namespace cullcast::reefs::gdal {

struct DatasetCloser {
  void operator()(GDALDataset* d) const noexcept { GDALClose(GDALDataset::ToHandle(d)); }
};
using DatasetPtr = std::unique_ptr<GDALDataset, DatasetCloser>;

struct TransformDeleter {
  void operator()(OGRCoordinateTransformation* t) const noexcept {
    OGRCoordinateTransformation::DestroyCT(t);
  }
};
using TransformPtr = std::unique_ptr<OGRCoordinateTransformation, TransformDeleter>;

// OGRFeatureUniquePtr and OGRGeometryUniquePtr come with GDAL itself.

// GDALAllRegister exactly once per process, whichever thread asks first.
inline void register_drivers() {
  static std::once_flag once;
  std::call_once(once, [] { GDALAllRegister(); });
}

// Opens a vector dataset read-only, or returns null.
inline DatasetPtr open_vector(const char* path) {
  register_drivers();
  return DatasetPtr(GDALDataset::Open(path, GDAL_OF_VECTOR | GDAL_OF_READONLY));
}

}  // namespace cullcast::reefs::gdal
