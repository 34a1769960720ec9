#pragma once
// Cell search on a curvilinear grid (2-D longitude/latitude arrays, CF-1.13
// §5.2 "two-dimensional latitude, longitude, coordinate variables").
// A coarse bucket index over the cells' bounding boxes narrows the search to a
// few cells; in each, the bilinear map (s, t) -> (lon, lat) of the four corners
// is inverted by Newton iteration (s, t in [0, 1] means the point is inside).
// For a grid whose cells are parallelograms (e.g. a rotated regular grid) the
// map is affine and the inversion is exact, so fields linear in lon/lat are
// reproduced exactly by bilinear interpolation.
#include <cstddef>
#include <cstdint>
#include <vector>

#include "cullcast/currents/flow_sampler.hpp"

namespace cullcast::currents {

class CurvilinearLocator {
 public:
  CurvilinearLocator() = default;
  // lon, lat: ny*nx node coordinates (row-major, columns fastest), degrees.
  // Longitudes are unwrapped around lon[0]. Throws std::invalid_argument for
  // non-finite coordinates or fewer than 2x2 nodes.
  CurvilinearLocator(std::vector<double> lon, std::vector<double> lat, std::ptrdiff_t nx, std::ptrdiff_t ny);

  bool locate(double lon, double lat, CellHit& hit) const noexcept;

  std::ptrdiff_t nx() const { return nx_; }
  std::ptrdiff_t ny() const { return ny_; }
  const std::vector<double>& lon() const { return lon_; }  // unwrapped
  const std::vector<double>& lat() const { return lat_; }
  double lon_min() const { return lon_min_; }
  double lon_max() const { return lon_max_; }
  double lat_min() const { return lat_min_; }
  double lat_max() const { return lat_max_; }

 private:
  bool try_cell(std::ptrdiff_t i, std::ptrdiff_t j, double x, double y, CellHit& hit) const noexcept;

  std::vector<double> lon_, lat_;
  std::ptrdiff_t nx_ = 0, ny_ = 0;
  double lon_ref_ = 0;  // unwrapping centre, degrees
  double lon_min_ = 0, lon_max_ = 0, lat_min_ = 0, lat_max_ = 0;
  // Buckets: a bx*by raster over the bounding box; bucket b lists the cells
  // (j*(nx-1)+i) in cells_[start_[b] .. start_[b+1]).
  std::ptrdiff_t bx_ = 1, by_ = 1;
  double inv_bw_ = 1, inv_bh_ = 1;  // buckets per degree
  std::vector<std::uint32_t> start_, cells_;
};

}  // namespace cullcast::currents
