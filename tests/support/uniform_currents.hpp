#pragma once
// For drift tests: a synthetic CF currents file (netCDF-C++) on the test grid
// 150.0..150.5°E, 20.2..20.0°S every 0.01°, hourly frames, uniform in space
// and time on each depth level, with optional temperature and chlorophyll.
#include <algorithm>
#include <cstddef>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include <netcdf>

#include "cf_axes.hpp"

namespace cullcast::test {

struct CurrentsSpec {
  std::string name = "c.nc";             // file name in the test's folder
  std::size_t hours = 120;               // record length; frames hourly from the start of `time_units`
  std::string time_units = "hours since 2026-12-01 00:00:00";
  std::vector<double> depths;            // depth levels (m, positive down); empty = 2-D
  std::vector<double> u_m_s = {0.1};     // eastward velocity per level (one value for 2-D)
  double u_until_hour = 1e9;             // frames after this hour are still water (u = 0)
  std::optional<double> temperature_c;   // written in kelvin (CF canonical unit) unless temperature_degc
  bool temperature_degc = false;         // write the temperature in degC (exact float values)
  std::optional<double> chlorophyll_mg_m3;  // written in kg m-3 (CF canonical unit)
};

// Writes `dir / c.name`: variables u and v (v = 0), then temp and chl when asked.
inline void write_uniform_currents(const std::filesystem::path& dir, const CurrentsSpec& c) {
  using namespace netCDF;
  NcFile f((dir / c.name).string(), NcFile::replace, NcFile::nc4);
  const std::size_t nt = c.hours + 1, ny = 21, nx = 51, nz = std::max<std::size_t>(1, c.depths.size());
  const auto [t, y, x] = add_regular_axes(f, nt, ny, nx, 150.0, -20.2, 0.01, c.time_units);
  std::vector<NcDim> dims{t, y, x};
  if (!c.depths.empty()) {
    const NcDim z = f.addDim("depth", nz);
    NcVar vz = f.addVar("depth", ncDouble, z);
    vz.putAtt("standard_name", "depth");  // CF-1.13 §4.3
    vz.putAtt("units", "m");
    vz.putAtt("positive", "down");
    vz.putVar(c.depths.data());
    dims = {t, z, y, x};
  }
  const std::size_t plane = ny * nx, n = nt * nz * plane;
  auto per_level = [&](const std::vector<double>& by_level) {
    std::vector<float> out(n);
    for (std::size_t i = 0; i < n; ++i) out[i] = static_cast<float>(by_level[(i / plane) % nz]);
    return out;
  };
  std::vector<float> u = per_level(c.u_m_s);
  for (std::size_t i = 0; i < n; ++i) {
    if (static_cast<double>(i / (nz * plane)) > c.u_until_hour) u[i] = 0.0f;
  }
  auto add = [&](const char* name, const char* standard, const char* units, const std::vector<float>& data) {
    NcVar v = f.addVar(name, ncFloat, dims);
    v.putAtt("standard_name", standard);
    v.putAtt("units", units);
    v.putVar(data.data());
  };
  add("u", "eastward_sea_water_velocity", "m s-1", u);
  add("v", "northward_sea_water_velocity", "m s-1", std::vector<float>(n, 0.0f));
  if (c.temperature_c) {
    // CF standard name table v77: sea_water_temperature, canonical unit K.
    const double value = c.temperature_degc ? *c.temperature_c : *c.temperature_c + 273.15;
    add("temp", "sea_water_temperature", c.temperature_degc ? "degC" : "K",
        std::vector<float>(n, static_cast<float>(value)));
  }
  if (c.chlorophyll_mg_m3) {
    // CF standard name table v77: mass_concentration_of_chlorophyll_a_in_sea_water, kg m-3;
    // 1 mg m-3 = 1e-6 kg m-3.
    add("chl", "mass_concentration_of_chlorophyll_a_in_sea_water", "kg m-3",
        std::vector<float>(n, static_cast<float>(*c.chlorophyll_mg_m3 * 1e-6)));
  }
}

}  // namespace cullcast::test
