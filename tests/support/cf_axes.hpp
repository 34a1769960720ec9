#pragma once
// For tests that write their own CF currents files (netCDF-C++): the regular
// time, latitude and longitude axes every such file starts with.
#include <array>
#include <cstddef>
#include <string>
#include <vector>

#include <netcdf>

namespace cullcast::test {

// Adds dimensions and coordinate variables "time" (nt hourly values 0, 1, ...
// in `time_units`, standard calendar), "lat" (ny values from lat0) and "lon"
// (nx values from lon0), both every `step_deg` degrees. Returns the
// dimensions {time, lat, lon}.
inline std::array<netCDF::NcDim, 3> add_regular_axes(netCDF::NcFile& f, std::size_t nt, std::size_t ny,
                                                     std::size_t nx, double lon0, double lat0, double step_deg,
                                                     const std::string& time_units =
                                                         "hours since 2026-12-01 00:00:00") {
  using namespace netCDF;
  const NcDim t = f.addDim("time", nt), y = f.addDim("lat", ny), x = f.addDim("lon", nx);
  NcVar vt = f.addVar("time", ncDouble, t);
  vt.putAtt("units", time_units);
  vt.putAtt("calendar", "standard");
  NcVar vy = f.addVar("lat", ncDouble, y);
  vy.putAtt("units", "degrees_north");
  NcVar vx = f.addVar("lon", ncDouble, x);
  vx.putAtt("units", "degrees_east");
  std::vector<double> tv(nt), yv(ny), xv(nx);
  for (std::size_t k = 0; k < nt; ++k) tv[k] = static_cast<double>(k);
  for (std::size_t j = 0; j < ny; ++j) yv[j] = lat0 + step_deg * static_cast<double>(j);
  for (std::size_t i = 0; i < nx; ++i) xv[i] = lon0 + step_deg * static_cast<double>(i);
  vt.putVar(tv.data());
  vy.putVar(yv.data());
  vx.putVar(xv.data());
  return {t, y, x};
}

}  // namespace cullcast::test
