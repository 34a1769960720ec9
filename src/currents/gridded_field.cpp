#include "cullcast/currents/gridded_field.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <netcdf>

#include "cullcast/base/error.hpp"
#include "cullcast/currents/netcdf_lock.hpp"
#include "nc_util.hpp"

namespace cullcast::currents {
namespace {

using netCDF::NcFile;
using netCDF::NcVar;
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

enum class Axis { lon, lat, depth, time, unknown };

Axis axis_of(const NcFile& f, const std::string& dim) {
  const NcVar c = f.getVar(dim);
  if (c.isNull()) return Axis::unknown;
  const std::string units = nc::lower(nc::text_att(c, "units").value_or(""));
  const std::string sn = nc::text_att(c, "standard_name").value_or("");
  const std::string axis = nc::text_att(c, "axis").value_or("");
  if (sn == "longitude" || units == "degrees_east" || units == "degree_east") return Axis::lon;
  if (sn == "latitude" || units == "degrees_north" || units == "degree_north") return Axis::lat;
  if (sn == "time" || units.find(" since ") != std::string::npos || axis == "T") return Axis::time;
  if (sn == "depth" || axis == "Z" || nc::has_att(c, "positive")) return Axis::depth;
  return Axis::unknown;
}

std::vector<double> read_axis(const NcFile& f, const std::string& dim, const std::string& where) {
  const NcVar c = f.getVar(dim);
  std::vector<double> v(c.getDim(0).getSize());
  if (!v.empty()) c.getVar(v.data());
  for (std::size_t i = 1; i < v.size(); ++i) {
    if (!(v[i] > v[i - 1])) {
      throw InputError(where + ": coordinate '" + dim + "' must increase strictly, found " +
                       std::to_string(v[i - 1]) + " then " + std::to_string(v[i]));
    }
  }
  if (v.size() < 2 && dim != "depth") {
    throw InputError(where + ": coordinate '" + dim + "' needs at least 2 values, found " +
                     std::to_string(v.size()));
  }
  return v;
}

struct Layout {
  bool has_time = false;
  std::string lon, lat, depth;
};

Layout layout_of(const NcFile& f, const NcVar& var, const std::string& where) {
  Layout l;
  const auto dims = var.getDims();
  std::vector<Axis> axes;
  for (const auto& d : dims) axes.push_back(axis_of(f, d.getName()));
  std::size_t k = 0;
  if (k < axes.size() && axes[k] == Axis::time) { l.has_time = true; ++k; }
  if (k < axes.size() && axes[k] == Axis::depth) { l.depth = dims[k].getName(); ++k; }
  if (axes.size() != k + 2 || axes[k] != Axis::lat || axes[k + 1] != Axis::lon) {
    std::string found;
    for (const auto& d : dims) {
      if (!found.empty()) found += ',';
      found += d.getName();
    }
    throw InputError(where + ": expected dimensions [time,][depth,]lat,lon with CF coordinate "
                     "variables, found (" + found + ")");
  }
  l.lat = dims[k].getName();
  l.lon = dims[k + 1].getName();
  return l;
}

// Values of the first record, unpacked; missing -> NaN.
std::vector<double> read_values(const NcVar& var, const Layout& l, std::size_t n) {
  std::vector<double> v(n);
  std::vector<std::size_t> start(var.getDimCount(), 0), count;
  for (const auto& d : var.getDims()) count.push_back(d.getSize());
  if (l.has_time) count[0] = 1;
  var.getVar(start, count, v.data());
  std::vector<double> missing;
  if (auto a = nc::num_att(var, "_FillValue")) missing.insert(missing.end(), a->begin(), a->end());
  if (auto a = nc::num_att(var, "missing_value")) missing.insert(missing.end(), a->begin(), a->end());
  const double scale = nc::num_att(var, "scale_factor").value_or(std::vector<double>{1.0}).at(0);
  const double offset = nc::num_att(var, "add_offset").value_or(std::vector<double>{0.0}).at(0);
  for (double& x : v) {
    // 9.96921e36 is the NetCDF default float fill (NetCDF User Guide, "Attribute conventions").
    const bool gone = !std::isfinite(x) || std::fabs(x) > 9e36 ||
                      std::find(missing.begin(), missing.end(), x) != missing.end();
    x = gone ? kNaN : x * scale + offset;
  }
  return v;
}

NcVar find_variable(const NcFile& f, const std::string& variable, const std::string& standard_name,
                    const std::string& file) {
  if (!variable.empty()) {
    const NcVar v = f.getVar(variable);
    if (v.isNull()) throw InputError(file + ": no variable '" + variable + "'");
    return v;
  }
  for (const auto& [name, v] : f.getVars()) {
    if (nc::text_att(v, "standard_name").value_or("") == standard_name) return v;
  }
  throw InputError(file + ": no variable with standard_name '" + standard_name +
                   "' (name it in the scenario)");
}

}  // namespace

GriddedField GriddedField::read(const std::filesystem::path& file, const std::string& variable,
                                const std::string& standard_name) {
  GriddedField g;
  const std::lock_guard<std::recursive_mutex> lock(netcdf_mutex());
  try {
    const NcFile f(file.string(), NcFile::read);
    const NcVar var = find_variable(f, variable, standard_name, file.string());
    g.what_ = file.string() + ": " + var.getName();
    const Layout l = layout_of(f, var, g.what_);
    g.lon_ = read_axis(f, l.lon, g.what_);
    g.lat_ = read_axis(f, l.lat, g.what_);
    if (!l.depth.empty()) g.depth_ = read_axis(f, l.depth, g.what_);
    g.values_ = read_values(var, l, g.nx() * g.ny() * g.nz());
    const std::string units = nc::text_att(var, "units").value_or("");
    if (standard_name.find("diffusivity") != std::string::npos && units != "m2 s-1" && units != "m2/s" &&
        units != "m^2/s" && units != "m2.s-1") {
      throw InputError(g.what_ + ": units must be m2 s-1 (a diffusivity), found '" + units + "'");
    }
    for (double x : g.values_) {
      if (standard_name.find("diffusivity") != std::string::npos && x < 0) {
        throw InputError(g.what_ + ": a diffusivity must be >= 0, found " + std::to_string(x));
      }
    }
  } catch (const netCDF::exceptions::NcException& e) {
    throw InputError("cannot read " + file.string() + ": " + nc::why(e));
  }
  return g;
}

GriddedField GriddedField::sea_floor(const std::filesystem::path& file, const std::string& variable) {
  GriddedField u = read(file, variable, "eastward_sea_water_velocity");
  GriddedField g;
  g.what_ = u.what_ + " (sea floor)";
  g.lon_ = u.lon_;
  g.lat_ = u.lat_;
  g.values_.assign(g.nx() * g.ny(), kNaN);
  const std::size_t layer = g.nx() * g.ny();
  for (std::size_t n = 0; n < layer; ++n) {
    if (std::isnan(u.values_[n])) continue;  // dry at the top: land
    if (u.depth_.empty()) {
      g.values_[n] = std::numeric_limits<double>::infinity();
      continue;
    }
    std::size_t k = 0;
    while (k + 1 < u.nz() && !std::isnan(u.values_[(k + 1) * layer + n])) ++k;
    g.values_[n] = u.depth_[k];
  }
  return g;
}

double GriddedField::horizontal(std::size_t level, double lon, double lat) const noexcept {
  auto find = [](const std::vector<double>& axis, double x, std::size_t& i, double& f) {
    if (!(x >= axis.front() && x <= axis.back())) return false;
    i = static_cast<std::size_t>(std::upper_bound(axis.begin(), axis.end(), x) - axis.begin());
    i = std::min(std::max<std::size_t>(i, 1), axis.size() - 1) - 1;
    f = (x - axis[i]) / (axis[i + 1] - axis[i]);
    return true;
  };
  std::size_t i = 0, j = 0;
  double fx = 0, fy = 0;
  if (!find(lon_, lon, i, fx) || !find(lat_, lat, j, fy)) return kNaN;
  const double* v = values_.data() + level * nx() * ny();
  double sum = 0, weights = 0;
  const double w[4] = {(1 - fx) * (1 - fy), fx * (1 - fy), (1 - fx) * fy, fx * fy};
  const std::size_t n[4] = {j * nx() + i, j * nx() + i + 1, (j + 1) * nx() + i, (j + 1) * nx() + i + 1};
  for (int c = 0; c < 4; ++c) {
    if (std::isnan(v[n[c]]) || w[c] == 0) continue;
    sum += w[c] * v[n[c]];
    weights += w[c];
  }
  return weights > 0 ? sum / weights : kNaN;
}

double GriddedField::sample(double lon, double lat, double depth_m) const noexcept {
  if (depth_.size() <= 1) return horizontal(0, lon, lat);
  if (!(depth_m > depth_.front())) return horizontal(0, lon, lat);
  if (depth_m >= depth_.back()) return horizontal(depth_.size() - 1, lon, lat);
  std::size_t k = 0;
  while (depth_[k + 1] <= depth_m) ++k;
  const double fz = (depth_m - depth_[k]) / (depth_[k + 1] - depth_[k]);
  const double a = horizontal(k, lon, lat), b = horizontal(k + 1, lon, lat);
  if (std::isnan(b)) return a;
  if (std::isnan(a)) return b;
  return a + fz * (b - a);
}

}  // namespace cullcast::currents
