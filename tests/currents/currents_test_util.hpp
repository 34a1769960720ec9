#pragma once
// Shared helpers for the currents tests: scratch folders, CDL -> NetCDF with
// the reference `ncgen` tool (netcdf-bin), and a CDL builder for regular grids.
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

namespace cullcast::currents::testing {

namespace fs = std::filesystem;

// A fresh folder under /tmp removed at the end of the test.
class ScratchDir {
 public:
  ScratchDir() {
    static int counter = 0;
    path_ = fs::temp_directory_path() / ("cullcast-cur-" + std::to_string(::getpid()) + "-" + std::to_string(counter++));
    fs::remove_all(path_);
    fs::create_directories(path_);
  }
  ~ScratchDir() {
    std::error_code ignored;
    fs::remove_all(path_, ignored);
  }
  ScratchDir(const ScratchDir&) = delete;
  ScratchDir& operator=(const ScratchDir&) = delete;
  fs::path operator/(const std::string& name) const { return path_ / name; }
  const fs::path& path() const { return path_; }

 private:
  fs::path path_;
};

inline void write_text(const fs::path& p, const std::string& text) {
  std::ofstream out(p);
  out << text;
  if (!out) throw std::runtime_error("cannot write " + p.string());
}

// Runs ncgen (the NetCDF reference CDL compiler) on `cdl`; returns the .nc path.
inline std::string ncgen(const ScratchDir& dir, const std::string& name, const std::string& cdl,
                         const std::string& kind = "classic") {
  const fs::path cdl_path = dir / (name + ".cdl");
  const fs::path nc_path = dir / (name + ".nc");
  write_text(cdl_path, cdl);
  const std::string cmd = "ncgen -k " + kind + " -o '" + nc_path.string() + "' '" + cdl_path.string() + "' 2>&1";
  if (std::system(cmd.c_str()) != 0) throw std::runtime_error("ncgen failed on " + cdl_path.string());
  return nc_path.string();
}

inline std::string num(double v) {
  std::ostringstream o;
  o.precision(17);
  o << v;
  return o.str();
}

inline std::string join(const std::vector<double>& v) {
  std::string s;
  for (size_t i = 0; i < v.size(); ++i) s += (i ? ", " : "") + num(v[i]);
  return s;
}

// A regular-grid CF file with float u, v given by formulas of (t in file
// units, depth, lat, lon). Empty `depth` gives (time, lat, lon) variables.
struct RegularSpec {
  std::vector<double> lon, lat, depth, time;
  std::string time_units = "hours since 2026-12-01 00:00:00";
  std::string calendar = "standard";
  std::string depth_positive = "down";
  std::string velocity_units = "m s-1";
  std::function<double(double, double, double, double)> u = [](double, double, double, double) { return 0.0; };
  std::function<double(double, double, double, double)> v = [](double, double, double, double) { return 0.0; };
  std::function<bool(double, double, double)> land;  // (depth, lat, lon) -> masked
  std::string u_standard_name = "eastward_sea_water_velocity";
  std::string lon_units = "degrees_east";
  std::string extra_variables;  // appended CDL declarations
  std::string extra_data;       // appended CDL data
};

inline std::string regular_cdl(const RegularSpec& s) {
  std::ostringstream c;
  const bool z = !s.depth.empty();
  c << "netcdf regular {\ndimensions:\n  time = UNLIMITED ;\n  lon = " << s.lon.size() << " ;\n  lat = " << s.lat.size()
    << " ;\n";
  if (z) c << "  depth = " << s.depth.size() << " ;\n";
  c << "variables:\n  double time(time) ;\n    time:units = \"" << s.time_units << "\" ;\n";
  if (!s.calendar.empty()) c << "    time:calendar = \"" << s.calendar << "\" ;\n";
  c << "    time:standard_name = \"time\" ;\n";
  c << "  double lon(lon) ;\n    lon:units = \"" << s.lon_units << "\" ;\n  double lat(lat) ;\n    lat:units = \"degrees_north\" ;\n";
  if (z) c << "  double depth(depth) ;\n    depth:units = \"m\" ;\n    depth:positive = \"" << s.depth_positive << "\" ;\n";
  const std::string dims = z ? "(time, depth, lat, lon)" : "(time, lat, lon)";
  c << "  float u" << dims << " ;\n    u:standard_name = \"" << s.u_standard_name << "\" ;\n    u:units = \""
    << s.velocity_units << "\" ;\n    u:_FillValue = -999.f ;\n";
  c << "  float v" << dims << " ;\n    v:standard_name = \"northward_sea_water_velocity\" ;\n    v:units = \""
    << s.velocity_units << "\" ;\n    v:_FillValue = -999.f ;\n";
  c << s.extra_variables;
  c << "data:\n  time = " << join(s.time) << " ;\n  lon = " << join(s.lon) << " ;\n  lat = " << join(s.lat) << " ;\n";
  if (z) c << "  depth = " << join(s.depth) << " ;\n";
  const std::vector<double> levels = z ? s.depth : std::vector<double>{0.0};
  for (int which = 0; which < 2; ++which) {
    c << "  " << (which == 0 ? "u" : "v") << " = ";
    bool first = true;
    for (double t : s.time)
      for (double d : levels)
        for (double la : s.lat)
          for (double lo : s.lon) {
            const bool masked = s.land && s.land(d, la, lo);
            const double val = which == 0 ? s.u(t, d, la, lo) : s.v(t, d, la, lo);
            c << (first ? "" : ", ") << (masked ? std::string("_") : num(val));
            first = false;
          }
    c << " ;\n";
  }
  c << s.extra_data << "}\n";
  return c.str();
}

}  // namespace cullcast::currents::testing

#include <catch2/catch.hpp>
#include "cullcast/base/civil_time.hpp"
namespace Catch {
template <>
struct StringMaker<cullcast::CivilTime> {
  static std::string convert(const cullcast::CivilTime& t) { return cullcast::format_iso8601(t); }
};
}  // namespace Catch
