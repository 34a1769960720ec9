// Gridded currents from CF-NetCDF (CF-1.13): discovery (§3.3 standard names,
// §4 coordinate types, §5.2 2-D lon/lat), decoding (§8.1 packing, §2.5.1
// missing data), time (§4.4), and frame streaming with hyperslab reads.
#include "cullcast/currents/current_field.hpp"

#include <algorithm>
#include <iterator>
#include <cmath>
#include <deque>
#include <exception>
#include <chrono>
#include <future>
#include <limits>
#include <map>
#include <hdf5.h>
#include <netcdf>
#include <omp.h>
#include <numbers>
#include <optional>
#include <sstream>
#include <type_traits>

#include "cullcast/base/error.hpp"
#include "cullcast/base/system_resources.hpp"
#include "cullcast/currents/cf_time.hpp"
#include "cullcast/currents/curvilinear_grid.hpp"
#include "cullcast/currents/netcdf_lock.hpp"
#include "nc_util.hpp"

namespace cullcast::currents {
namespace {

using netCDF::NcFile;
using netCDF::NcVar;
using netCDF::exceptions::NcException;

constexpr double kEarthRadius_m = 6371000.0;   // sphere for spacing figures (common practice)
constexpr double kMaxSpeed_m_s = 10.0;         // faster than any ocean current: a units/packing error
constexpr double kDeg = std::numbers::pi / 180.0;
constexpr double kInf = std::numeric_limits<double>::infinity();

const char* const kStdU = "eastward_sea_water_velocity";
const char* const kStdV = "northward_sea_water_velocity";
const char* const kStdW = "upward_sea_water_velocity";
const char* const kStdT = "sea_water_temperature";
const char* const kStdChl = "mass_concentration_of_chlorophyll_a_in_sea_water";

std::string quote(const std::string& s) { return "'" + s + "'"; }

std::string fmt(double v) {
  std::ostringstream o;
  o.precision(10);
  o << v;
  return o.str();
}

bool is_lon_units(const std::string& u) {
  // CF-1.13 §4.1
  static const char* const ok[] = {"degrees_east", "degree_east", "degree_e", "degrees_e", "degreee", "degreese"};
  const std::string l = nc::lower(u);
  for (const char* s : ok) if (l == s) return true;
  return false;
}
bool is_lat_units(const std::string& u) {
  // CF-1.13 §4.2
  static const char* const ok[] = {"degrees_north", "degree_north", "degree_n", "degrees_n", "degreen", "degreesn"};
  const std::string l = nc::lower(u);
  for (const char* s : ok) if (l == s) return true;
  return false;
}

// How a data variable is turned into physical values.
struct Decoding {
  std::string name;
  bool present = false;
  double scale = 1, offset = 0;           // CF §8.1: unpacked = packed*scale + offset
  std::vector<double> missing;            // packed values meaning "no data" (_FillValue, missing_value)
  double valid_min = -kInf, valid_max = kInf;  // packed (CF §2.5.1)
  double factor = 1, shift = 0;           // unit conversion after unpacking: x*factor + shift
};

struct FileInfo {
  std::string path;
  std::vector<double> times_s;  // model seconds
  Decoding u, v, w, temp, chl;
  std::string time_name;
};

struct FrameRef {
  double t_s;
  std::uint32_t file;
  std::uint32_t index;
};

// One decoded frame in the internal layout.
struct Frame {
  std::vector<float> vel;          // nodes * vel_channels (u, v[, w]); masked -> 0
  std::vector<std::uint8_t> wet;   // nodes
  std::vector<float> temp, chl;    // nodes; NaN where masked (only when enabled)
};

struct Block {
  std::size_t k = 0;            // interval between frames k and k+1
  std::vector<float> vel;       // nodes * channels, see flow_sampler.hpp
  std::vector<float> temp, chl; // nodes * 2: value, delta (NaN when masked)
};

// Geometry shared by every file.
struct Geometry {
  GridKind kind = GridKind::regular;
  std::ptrdiff_t nx = 0, ny = 0, nz = 1;
  std::ptrdiff_t z_first = 0;  // first level read, in file order (limit_depth() keeps a range)
  bool has_depth_dim = false;
  bool flip_x = false, flip_y = false, flip_z = false;  // file order -> internal ascending order
  std::vector<double> lon, lat;      // regular: 1-D internal ascending (lon unwrapped)
  std::vector<double> lon2, lat2;    // curvilinear: ny*nx as in file (raw values)
  std::vector<double> depth;         // internal ascending, positive down
  std::vector<double> raw_lon, raw_lat, raw_depth;  // as read, for comparison between files
  std::string dims_text;
};

std::string describe_dims(const NcVar& var) {
  std::string s = "(";
  const auto dims = var.getDims();
  for (size_t i = 0; i < dims.size(); ++i) s += (i ? ", " : "") + dims[i].getName();
  return s + ")";
}

}  // namespace

struct CurrentField::Impl {
  std::vector<FileInfo> files;
  std::vector<std::string> file_paths;  // in time order of first frame
  std::vector<FrameRef> frames;
  std::vector<double> times;
  Geometry geo;
  std::unique_ptr<CurvilinearLocator> locator;
  std::vector<std::uint8_t> mask;
  std::vector<double> cell_dx_m, cell_dy_m;  // local node spacing, for Courant numbers
  GridSummary summary;
  Calendar calendar;
  std::vector<TimeGap> gaps;
  double step_s = 0;
  VariableNames names;
  bool has_w = false, has_temp = false, has_chl = false;
  bool use_temp = false, use_chl = false;
  int frames_ahead = 1;

  // streaming state
  std::deque<Block> blocks;
  std::vector<Block> spare;  // storage of dropped blocks, reused
  std::vector<TimeBlock> hot_blocks;
  Frame last;
  std::size_t last_index = static_cast<std::size_t>(-1);

  // one open file at a time
  std::size_t open_file_index = static_cast<std::size_t>(-1);
  std::unique_ptr<NcFile> open_file;
  std::vector<double> buffer;

  // The read-ahead interval, decoded while the larvae move (prepare()):
  // on a background thread of its own, or, with no processor to spare, as
  // pending work (a deferred task) that read_pending() runs on one thread
  // of the caller's parallel step, else the prepare() that needs it. While
  // it runs, that thread alone uses the NetCDF library, the open file and
  // `buffer`; every other path that reads joins it first (settle()).
  struct Ahead {
    std::size_t k = 0;        // interval between frames k and k+1
    Frame first, second;      // frame k (moved in, or decoded there) and k+1
    bool have_first = false;
    Block block;
    std::future<void> done;   // rethrows the decoder's error
    // Pending: deferred and not run yet (nothing to wait for; dropping it
    // costs no decoding).
    bool pending() const { return done.valid() && done.wait_for(std::chrono::seconds(0)) == std::future_status::deferred; }
    // Waits for a running or finished decoder; leaves a pending one unrun.
    void join() const {
      if (done.valid() && !pending()) done.wait();
    }
  };
  // Unset: decode in the background only when a processor is spare
  // (OpenMP threads < usable processors): on a fully used machine the
  // decoder would only take turns with the step's threads.
  std::optional<bool> background_reads;
  double last_prepare_t0 = -std::numeric_limits<double>::infinity();
  // Declared last: destroyed first, so a running decoder is waited for while
  // everything it uses still exists.
  std::unique_ptr<Ahead> ahead;

  ~Impl() {
    if (ahead) ahead->join();
    const std::lock_guard<std::recursive_mutex> lock(netcdf_mutex());
    open_file.reset();
  }

  // Waits for the background decoder and drops its interval (errors included).
  void discard_ahead() {
    if (!ahead) return;
    ahead->join();
    spare.push_back(std::move(ahead->block));
    ahead.reset();
  }

  std::size_t nodes() const { return static_cast<size_t>(geo.nx * geo.ny * geo.nz); }
  int vel_channels() const { return has_w ? 3 : 2; }

  NcFile& file(std::size_t f) {
    if (open_file_index != f) {
      open_file.reset();
      open_file_index = static_cast<std::size_t>(-1);
      try {
        open_file = std::make_unique<NcFile>(files[f].path, NcFile::read);
      } catch (const NcException& e) {
        throw InputError("cannot open currents file " + quote(files[f].path) + ": " + nc::why(e));
      }
      open_file_index = f;
    }
    return *open_file;
  }

  // Reads one variable of one frame into `out` (internal layout), physical
  // units, NaN where missing.
  void read_var(std::size_t frame, const Decoding& dec, std::vector<double>& out) {
    const FrameRef& ref = frames[frame];
    const FileInfo& fi = files[ref.file];
    const std::lock_guard<std::recursive_mutex> lock(netcdf_mutex());
    NcFile& nf = file(ref.file);
    const size_t n = nodes();
    buffer.resize(n);
    try {
      NcVar var = nf.getVar(dec.name);
      std::vector<size_t> start{ref.index, 0, 0}, count{1, static_cast<size_t>(geo.ny), static_cast<size_t>(geo.nx)};
      if (geo.has_depth_dim) {
        start.insert(start.begin() + 1, static_cast<size_t>(geo.z_first));
        count.insert(count.begin() + 1, static_cast<size_t>(geo.nz));
      }
      var.getVar(start, count, buffer.data());
    } catch (const NcException& e) {
      throw InputError("cannot read variable " + quote(dec.name) + " at time index " + std::to_string(ref.index) +
                       " in " + quote(fi.path) + " (file truncated or damaged?): " + nc::why(e));
    }
    out.resize(n);
    unpack(dec, out);
  }

  // CF unpacking of `buffer` (file order) into `out` (internal order): NaN
  // where a value is missing or out of the valid range. Written so the
  // inner loop vectorises: up to four missing-value codes compared without a
  // loop, the column flip outside it (a frame's conversion costs as much as
  // inflating it otherwise).
  void unpack(const Decoding& dec, std::vector<double>& out) const {
    const std::ptrdiff_t nx = geo.nx, ny = geo.ny, nz = geo.nz;
    constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
    double codes[4] = {kNaN, kNaN, kNaN, kNaN};  // NaN never compares equal: an unused slot
    const std::size_t listed = dec.missing.size();
    for (std::size_t k = 0; k < std::min<std::size_t>(listed, 4); ++k) codes[k] = dec.missing[k];
    const double m0 = codes[0], m1 = codes[1], m2 = codes[2], m3 = codes[3];
    const double lo = dec.valid_min, hi = dec.valid_max;
    const double scale = dec.scale, offset = dec.offset, factor = dec.factor, shift = dec.shift;
    std::vector<double> flipped;
    for (std::ptrdiff_t k = 0; k < nz; ++k) {
      const std::ptrdiff_t kf = geo.flip_z ? nz - 1 - k : k;
      for (std::ptrdiff_t j = 0; j < ny; ++j) {
        const std::ptrdiff_t jf = geo.flip_y ? ny - 1 - j : j;
        const double* src = buffer.data() + (kf * ny + jf) * nx;
        if (geo.flip_x) {
          flipped.assign(std::make_reverse_iterator(src + nx), std::make_reverse_iterator(src));
          src = flipped.data();
        }
        double* dst = out.data() + (k * ny + j) * nx;
        for (std::ptrdiff_t i = 0; i < nx; ++i) {
          const double p = src[i];
          bool bad = std::isnan(p) | (p < lo) | (p > hi) | (p == m0) | (p == m1) | (p == m2) | (p == m3);
          dst[i] = bad ? kNaN : (p * scale + offset) * factor + shift;
        }
        for (std::size_t m = 4; m < listed; ++m) {  // rare: more than four codes
          for (std::ptrdiff_t i = 0; i < nx; ++i) {
            if (src[i] == dec.missing[m]) dst[i] = kNaN;
          }
        }
      }
    }
  }

  void decode(std::size_t frame, Frame& out, bool with_scalars) {
    std::vector<double> u, v, w;
    read_var(frame, files[frames[frame].file].u, u);
    read_var(frame, files[frames[frame].file].v, v);
    if (has_w) read_var(frame, files[frames[frame].file].w, w);
    const size_t n = nodes();
    const int c = vel_channels();
    out.vel.assign(n * c, 0.0f);
    out.wet.assign(n, 0);
    for (size_t i = 0; i < n; ++i) {
      if (std::isnan(u[i]) || std::isnan(v[i])) continue;
      if (u[i] * u[i] + v[i] * v[i] > kMaxSpeed_m_s * kMaxSpeed_m_s) {  // every node of every frame: no hypot call
        const double speed = std::hypot(u[i], v[i]);
        const size_t col = i % geo.nx, row = (i / geo.nx) % geo.ny;
        throw InputError(quote(files[frames[frame].file].path) + ": variables " + quote(files[frames[frame].file].u.name) +
                         "/" + quote(files[frames[frame].file].v.name) + " at time " + format(frames[frame].t_s) +
                         ", node (row " + std::to_string(row) + ", column " + std::to_string(col) + "): speed " +
                         fmt(speed) + " m/s exceeds " + fmt(kMaxSpeed_m_s) +
                         " m/s; check units, scale_factor and add_offset (CF-1.13 §8.1)");
      }
      out.wet[i] = 1;
      out.vel[i * c] = static_cast<float>(u[i]);
      out.vel[i * c + 1] = static_cast<float>(v[i]);
      if (has_w) out.vel[i * c + 2] = std::isnan(w[i]) ? 0.0f : static_cast<float>(w[i]);
    }
    out.temp.clear();
    out.chl.clear();
    if (with_scalars && use_temp) {
      read_var(frame, files[frames[frame].file].temp, u);
      out.temp.assign(u.begin(), u.end());
    }
    if (with_scalars && use_chl) {
      read_var(frame, files[frames[frame].file].chl, u);
      out.chl.assign(u.begin(), u.end());
    }
  }

  std::string format(double t_s) const { return format_iso8601(calendar.to_civil(t_s)); }

  void build_block(const Frame& a, const Frame& b, Block& blk) {
    const size_t n = nodes();
    const int rc = vel_channels();
    const int c = has_w ? 6 : 4;
    blk.vel.resize(n * c);
    for (size_t i = 0; i < n; ++i) {
      const float* p = &a.vel[i * rc];
      const float* q = &b.vel[i * rc];
      float* d = &blk.vel[i * c];
      d[0] = p[0];
      d[1] = p[1];
      d[2] = q[0] - p[0];
      d[3] = q[1] - p[1];
      if (has_w) { d[4] = p[2]; d[5] = q[2] - p[2]; }
    }
    auto scalar = [n](const std::vector<float>& x, const std::vector<float>& y, std::vector<float>& out) {
      if (x.empty()) { out.clear(); return; }
      out.resize(2 * n);
      for (size_t i = 0; i < n; ++i) {
        const bool ok = !std::isnan(x[i]) && !std::isnan(y[i]);
        out[2 * i] = ok ? x[i] : std::numeric_limits<float>::quiet_NaN();
        out[2 * i + 1] = ok ? y[i] - x[i] : 0.0f;
      }
    };
    scalar(a.temp, b.temp, blk.temp);
    scalar(a.chl, b.chl, blk.chl);
  }
};

namespace {

// ---------------------------------------------------------------- discovery

struct Discovered {
  Geometry geo;
  FileInfo info;
  std::string calendar_name;  // as found (before override)
  bool has_calendar_att = false;
  std::string time_units;
};

std::optional<NcVar> find_by_standard_name(const NcFile& f, const std::string& standard_name) {
  for (const auto& [name, var] : f.getVars()) {
    const auto sn = nc::text_att(var, "standard_name");
    if (sn && *sn == standard_name) return var;
  }
  return std::nullopt;
}

NcVar pick_variable(const NcFile& f, const std::string& path, const std::string& configured,
                    const std::string& setting, const char* standard_name, bool required, bool& found) {
  found = false;
  if (!configured.empty()) {
    NcVar var = f.getVar(configured);
    if (var.isNull()) {
      throw InputError(quote(path) + ": no variable " + quote(configured) + " (named by [currents] " + setting + ")");
    }
    found = true;
    return var;
  }
  if (auto var = find_by_standard_name(f, standard_name)) {
    found = true;
    return *var;
  }
  if (required) {
    throw InputError(quote(path) + ": no variable with standard_name " + quote(standard_name) +
                     " (CF-1.13 §3.3, standard name table); name it with [currents] " + setting);
  }
  return NcVar();
}

Decoding read_decoding(const NcVar& var, const std::string& path, const std::string& kind) {
  Decoding d;
  d.name = var.getName();
  d.present = true;
  const std::string where = quote(path) + ": variable " + quote(d.name);
  // CF-1.13 §8.1 packing.
  if (auto s = nc::num_att(var, "scale_factor")) {
    if (s->size() != 1 || !std::isfinite((*s)[0]) || (*s)[0] == 0) throw InputError(where + ": attribute scale_factor must be one non-zero number");
    d.scale = (*s)[0];
  }
  if (auto s = nc::num_att(var, "add_offset")) {
    if (s->size() != 1 || !std::isfinite((*s)[0])) throw InputError(where + ": attribute add_offset must be one number");
    d.offset = (*s)[0];
  }
  // CF-1.13 §2.5.1 missing data, compared against the packed values.
  if (auto s = nc::num_att(var, "_FillValue")) {
    d.missing.insert(d.missing.end(), s->begin(), s->end());
  } else {
    // NetCDF default fill values apply when no _FillValue is given (NetCDF User Guide, "Attribute conventions").
    switch (var.getType().getId()) {
      case NC_SHORT: d.missing.push_back(NC_FILL_SHORT); break;
      case NC_INT: d.missing.push_back(NC_FILL_INT); break;
      case NC_FLOAT: d.missing.push_back(static_cast<double>(NC_FILL_FLOAT)); break;
      case NC_DOUBLE: d.missing.push_back(NC_FILL_DOUBLE); break;
      default: break;
    }
  }
  if (auto s = nc::num_att(var, "missing_value")) d.missing.insert(d.missing.end(), s->begin(), s->end());
  if (auto s = nc::num_att(var, "valid_range")) {
    if (s->size() != 2 || (*s)[0] > (*s)[1]) throw InputError(where + ": attribute valid_range must be two numbers, min <= max");
    d.valid_min = (*s)[0];
    d.valid_max = (*s)[1];
  }
  if (auto s = nc::num_att(var, "valid_min"); s && !s->empty()) d.valid_min = (*s)[0];
  if (auto s = nc::num_att(var, "valid_max"); s && !s->empty()) d.valid_max = (*s)[0];

  const auto units = nc::text_att(var, "units");
  if (!units) throw InputError(where + ": no units attribute (expected " +
                               (kind == "velocity" ? std::string("m s-1 or cm s-1") : kind) + ")");
  const std::string u = nc::lower(*units);
  if (kind == "velocity") {
    if (u == "m s-1" || u == "m/s" || u == "m s^-1" || u == "m s**-1" || u == "m.s-1" || u == "meter second-1" ||
        u == "metre second-1" || u == "meters/second" || u == "metres/second") {
      d.factor = 1;
    } else if (u == "cm s-1" || u == "cm/s" || u == "cm s^-1" || u == "cm.s-1") {
      d.factor = 0.01;
    } else {
      throw InputError(where + ": units " + quote(*units) + " are not a velocity unit cullcast knows (expected m s-1, m/s, cm s-1 or cm/s)");
    }
  } else if (kind == "temperature") {
    if (u == "k" || u == "kelvin") d.shift = -273.15;
    else if (u == "degc" || u == "degree_c" || u == "degrees_c" || u == "celsius" || u == "deg_c" || u == "degree_celsius" || u == "degrees_celsius") d.shift = 0;
    else throw InputError(where + ": units " + quote(*units) + " are not a temperature unit (expected K or degC)");
  } else {
    if (u == "kg m-3" || u == "kg/m3" || u == "kg m^-3") d.factor = 1e6;  // 1 kg m-3 = 1e6 mg m-3
    else if (u == "mg m-3" || u == "mg/m3" || u == "mg m^-3" || u == "ug/l" || u == "ug l-1" || u == "µg/l" || u == "mg/m^3") d.factor = 1;
    else throw InputError(where + ": units " + quote(*units) + " are not a mass concentration (expected kg m-3 or mg m-3)");
  }
  return d;
}

std::vector<double> read_all(const NcVar& var, const std::string& path) {
  size_t n = 1;
  for (const auto& d : var.getDims()) n *= d.getSize();
  std::vector<double> v(n);
  try {
    if (n) var.getVar(v.data());
  } catch (const NcException& e) {
    throw InputError("cannot read variable " + quote(var.getName()) + " in " + quote(path) + ": " + nc::why(e));
  }
  if (auto fill = nc::num_att(var, "_FillValue")) {
    for (size_t i = 0; i < n; ++i)
      for (double f : *fill)
        if (v[i] == f) throw InputError(quote(path) + ": coordinate variable " + quote(var.getName()) + " has a missing value at index " + std::to_string(i) + " (CF-1.13 §2.5.1: coordinates must not be missing)");
  }
  for (size_t i = 0; i < n; ++i)
    if (!std::isfinite(v[i])) throw InputError(quote(path) + ": coordinate variable " + quote(var.getName()) + " has a non-finite value at index " + std::to_string(i));
  return v;
}

void require_strictly_monotonic(const std::vector<double>& v, const std::string& path, const std::string& name,
                                bool& descending) {
  descending = v.size() > 1 && v[1] < v[0];
  for (size_t i = 1; i < v.size(); ++i) {
    const bool ok = descending ? v[i] < v[i - 1] : v[i] > v[i - 1];
    if (!ok) {
      throw InputError(quote(path) + ": coordinate " + quote(name) + " is not strictly monotonic at index " +
                       std::to_string(i) + " (" + fmt(v[i - 1]) + " then " + fmt(v[i]) +
                       "); coordinate variables must be strictly monotonic (CF-1.13 §1.3, NUG)");
    }
  }
}

NcVar coordinate_for(const NcFile& f, const netCDF::NcDim& dim) {
  NcVar var = f.getVar(dim.getName());
  if (!var.isNull() && var.getDimCount() == 1 && var.getDim(0).getName() == dim.getName()) return var;
  return NcVar();
}

// Finds 2-D longitude/latitude arrays over (ydim, xdim): first in the
// variable's `coordinates` attribute (CF-1.13 §5.2), then among all variables.
bool find_2d_coordinates(const NcFile& f, const NcVar& data, const std::string& ydim, const std::string& xdim,
                         NcVar& lon, NcVar& lat) {
  std::vector<NcVar> candidates;
  if (auto coords = nc::text_att(data, "coordinates")) {
    std::istringstream in(*coords);
    std::string name;
    while (in >> name) {
      NcVar v = f.getVar(name);
      if (!v.isNull()) candidates.push_back(v);
    }
  }
  for (const auto& [name, var] : f.getVars()) candidates.push_back(var);
  for (const NcVar& v : candidates) {
    if (v.getDimCount() != 2 || v.getDim(0).getName() != ydim || v.getDim(1).getName() != xdim) continue;
    const auto units = nc::text_att(v, "units");
    const auto sn = nc::text_att(v, "standard_name");
    if (lon.isNull() && ((units && is_lon_units(*units)) || (sn && *sn == "longitude"))) lon = v;
    if (lat.isNull() && ((units && is_lat_units(*units)) || (sn && *sn == "latitude"))) lat = v;
  }
  return !lon.isNull() && !lat.isNull();
}

Discovered discover(const std::string& path, const study::CurrentsSettings& settings) {
  Discovered out;
  out.info.path = path;
  std::unique_ptr<NcFile> fp;
  try {
    fp = std::make_unique<NcFile>(path, NcFile::read);
  } catch (const NcException& e) {
    throw InputError("cannot open currents file " + quote(path) +
                     ": not a readable NetCDF file (truncated, damaged or another format): " + nc::why(e));
  }
  const NcFile& f = *fp;
  bool found = false;
  NcVar u = pick_variable(f, path, settings.u_variable, "u_variable", kStdU, true, found);
  NcVar v = pick_variable(f, path, settings.v_variable, "v_variable", kStdV, true, found);
  NcVar w = pick_variable(f, path, settings.w_variable, "w_variable", kStdW, false, found);
  NcVar t = pick_variable(f, path, settings.temperature_variable, "temperature_variable", kStdT, false, found);
  NcVar c = pick_variable(f, path, settings.chlorophyll_variable, "chlorophyll_variable", kStdChl, false, found);

  const std::string uwhere = quote(path) + ": variable " + quote(u.getName());
  const auto dims = u.getDims();
  if (describe_dims(v) != describe_dims(u)) {
    throw InputError(quote(path) + ": velocity variables " + quote(u.getName()) + " " + describe_dims(u) + " and " +
                     quote(v.getName()) + " " + describe_dims(v) + " must have the same dimensions");
  }
  auto same_dims_or_drop = [&](NcVar& x, const std::string& setting_value, const char* what) {
    if (x.isNull()) return;
    if (describe_dims(x) != describe_dims(u)) {
      if (!setting_value.empty()) {
        throw InputError(quote(path) + ": " + what + " variable " + quote(x.getName()) + " has dimensions " +
                         describe_dims(x) + ", expected " + describe_dims(u) + " like the velocities");
      }
      x = NcVar();  // discovered by standard name but on another grid: not used
    }
  };
  same_dims_or_drop(w, settings.w_variable.empty() ? std::string() : "w", "vertical velocity");
  if (!w.isNull() && describe_dims(w) != describe_dims(u)) w = NcVar();
  same_dims_or_drop(t, settings.temperature_variable, "temperature");
  same_dims_or_drop(c, settings.chlorophyll_variable, "chlorophyll");

  // --- time: the first dimension, CF-1.13 §4.4
  NcVar time;
  if (!dims.empty()) {
    NcVar cand = coordinate_for(f, dims[0]);
    const auto units = cand.isNull() ? std::nullopt : nc::text_att(cand, "units");
    if (!cand.isNull() && units && units->find(" since ") != std::string::npos) time = cand;
  }
  if (time.isNull()) {
    for (size_t i = 1; i < dims.size(); ++i) {
      NcVar cand = coordinate_for(f, dims[i]);
      const auto units = cand.isNull() ? std::nullopt : nc::text_att(cand, "units");
      if (units && units->find(" since ") != std::string::npos) {
        throw InputError(uwhere + " " + describe_dims(u) + ": time " + quote(dims[i].getName()) +
                         " must be the first dimension (CF-1.13 §2.4 order T, Z, Y, X)");
      }
    }
    throw InputError(uwhere + " " + describe_dims(u) +
                     ": no time axis; expected a first dimension with a coordinate variable whose units are "
                     "'<unit> since <date>' (CF-1.13 §4.4)");
  }
  if (dims.size() != 3 && dims.size() != 4) {
    throw InputError(uwhere + " has dimensions " + describe_dims(u) +
                     ", expected (time, lat, lon) or (time, depth, lat, lon) (CF-1.13 §2.4)");
  }
  out.info.time_name = time.getName();
  out.time_units = *nc::text_att(time, "units");
  if (auto cal = nc::text_att(time, "calendar")) {
    out.calendar_name = *cal;
    out.has_calendar_att = true;
  }
  out.info.times_s = read_all(time, path);  // raw values for now; converted by the caller

  // --- horizontal: last two dimensions
  Geometry& g = out.geo;
  const auto& ydim = dims[dims.size() - 2];
  const auto& xdim = dims[dims.size() - 1];
  g.nx = static_cast<std::ptrdiff_t>(xdim.getSize());
  g.ny = static_cast<std::ptrdiff_t>(ydim.getSize());
  g.dims_text = describe_dims(u);
  if (g.nx < 2 || g.ny < 2) throw InputError(uwhere + ": the grid needs at least 2x2 nodes, found " + std::to_string(g.ny) + "x" + std::to_string(g.nx));
  NcVar xc = coordinate_for(f, xdim), yc = coordinate_for(f, ydim);
  auto units_of = [](const NcVar& x) { return x.isNull() ? std::string() : nc::text_att(x, "units").value_or(""); };
  auto sn_of = [](const NcVar& x) { return x.isNull() ? std::string() : nc::text_att(x, "standard_name").value_or(""); };
  const bool x_is_lon = !xc.isNull() && (is_lon_units(units_of(xc)) || sn_of(xc) == "longitude");
  const bool y_is_lat = !yc.isNull() && (is_lat_units(units_of(yc)) || sn_of(yc) == "latitude");
  const bool x_is_lat = !xc.isNull() && (is_lat_units(units_of(xc)) || sn_of(xc) == "latitude");
  if (x_is_lat) {
    throw InputError(uwhere + " " + describe_dims(u) + ": latitude is the last dimension; expected (..., lat, lon)");
  }
  if (x_is_lon && y_is_lat) {
    g.kind = GridKind::regular;
    g.raw_lon = read_all(xc, path);
    g.raw_lat = read_all(yc, path);
    // Longitudes: unwrap steps into (-180, 180] so 170..180,-180..-170 is one run (CF-1.13 §4.1 allows any range).
    std::vector<double> lon = g.raw_lon;
    for (size_t i = 1; i < lon.size(); ++i) {
      double d = lon[i] - lon[i - 1];
      d -= 360.0 * std::floor((d + 180.0) / 360.0);
      lon[i] = lon[i - 1] + d;
    }
    require_strictly_monotonic(lon, path, xc.getName(), g.flip_x);
    require_strictly_monotonic(g.raw_lat, path, yc.getName(), g.flip_y);
    if (g.flip_x) std::reverse(lon.begin(), lon.end());
    g.lon = lon;
    g.lat = g.raw_lat;
    if (g.flip_y) std::reverse(g.lat.begin(), g.lat.end());
    if (g.lat.front() < -90 || g.lat.back() > 90) throw InputError(quote(path) + ": latitude " + quote(yc.getName()) + " outside -90..90");
    if (g.lon.back() - g.lon.front() >= 360.0) throw InputError(quote(path) + ": longitude " + quote(xc.getName()) + " spans 360 degrees or more; global wrapping grids are not supported");
    out.geo.lon = g.lon;
  } else {
    NcVar lon2, lat2;
    if (!find_2d_coordinates(f, u, ydim.getName(), xdim.getName(), lon2, lat2)) {
      throw InputError(uwhere + " " + describe_dims(u) + ": cannot find its longitude and latitude: neither 1-D coordinate variables " +
                       quote(xdim.getName()) + "/" + quote(ydim.getName()) + " with units degrees_east/degrees_north (CF-1.13 §4.1, §4.2) nor 2-D arrays over (" +
                       ydim.getName() + ", " + xdim.getName() + ") named in its coordinates attribute (CF-1.13 §5.2)");
    }
    g.kind = GridKind::curvilinear;
    g.raw_lon = read_all(lon2, path);
    g.raw_lat = read_all(lat2, path);
    g.lon2 = g.raw_lon;
    g.lat2 = g.raw_lat;
  }

  // --- depth, CF-1.13 §4.3
  if (dims.size() == 4) {
    g.has_depth_dim = true;
    const auto& zdim = dims[1];
    g.nz = static_cast<std::ptrdiff_t>(zdim.getSize());
    NcVar zc = coordinate_for(f, zdim);
    if (zc.isNull()) throw InputError(uwhere + " " + describe_dims(u) + ": dimension " + quote(zdim.getName()) + " has no coordinate variable (expected depth levels, CF-1.13 §4.3)");
    const std::string where = quote(path) + ": vertical coordinate " + quote(zc.getName());
    const std::string positive = nc::lower(nc::text_att(zc, "positive").value_or(""));
    const std::string sn = sn_of(zc);
    double sign = 0;
    if (positive == "down") sign = 1;
    else if (positive == "up") sign = -1;
    else if (positive.empty() && sn == "depth") sign = 1;
    else if (positive.empty() && (sn == "height" || sn == "altitude")) sign = -1;
    else if (!positive.empty()) throw InputError(where + ": attribute positive is " + quote(positive) + ", expected 'up' or 'down' (CF-1.13 §4.3)");
    else throw InputError(where + ": no attribute positive (CF-1.13 §4.3 requires positive = \"up\" or \"down\")");
    const std::string zu = nc::lower(units_of(zc));
    if (!(zu == "m" || zu == "meter" || zu == "meters" || zu == "metre" || zu == "metres")) {
      throw InputError(where + ": units " + quote(units_of(zc)) + ", expected m");
    }
    g.raw_depth = read_all(zc, path);
    std::vector<double> depth = g.raw_depth;
    for (double& d : depth) d *= sign;
    require_strictly_monotonic(depth, path, zc.getName(), g.flip_z);
    if (g.flip_z) std::reverse(depth.begin(), depth.end());
    g.depth = depth;
  } else {
    g.nz = 1;
  }

  out.info.u = read_decoding(u, path, "velocity");
  out.info.v = read_decoding(v, path, "velocity");
  if (!w.isNull()) out.info.w = read_decoding(w, path, "velocity");
  if (!t.isNull()) out.info.temp = read_decoding(t, path, "temperature");
  if (!c.isNull()) out.info.chl = read_decoding(c, path, "chlorophyll");

  // Truncated files: classic files can open fine and fail on the last record.
  if (!out.info.times_s.empty()) {
    std::vector<size_t> start(dims.size()), count(dims.size(), 1);
    for (size_t i = 0; i < dims.size(); ++i) start[i] = dims[i].getSize() - 1;
    for (const NcVar* x : {&u, &v}) {
      double probe = 0;
      try {
        x->getVar(start, count, &probe);
      } catch (const NcException& e) {
        throw InputError("cannot read variable " + quote(x->getName()) + " (last time index) in " + quote(path) +
                         ": file truncated or damaged: " + nc::why(e));
      }
    }
  }
  return out;
}

bool same_values(const std::vector<double>& a, const std::vector<double>& b, double tol, size_t& where) {
  if (a.size() != b.size()) { where = static_cast<size_t>(-1); return false; }
  for (size_t i = 0; i < a.size(); ++i) {
    if (std::fabs(a[i] - b[i]) > tol) { where = i; return false; }
  }
  return true;
}

void compare_grids(const Geometry& a, const std::string& pa, const Geometry& b, const std::string& pb) {
  auto fail = [&](const std::string& what) {
    throw InputError("currents files " + quote(pa) + " and " + quote(pb) + " have different grids: " + what +
                     "; all files must share one grid");
  };
  if (a.kind != b.kind) fail("one is regular, the other curvilinear");
  if (a.nx != b.nx || a.ny != b.ny || a.nz != b.nz) {
    fail("sizes (depth x lat x lon) " + std::to_string(a.nz) + "x" + std::to_string(a.ny) + "x" + std::to_string(a.nx) +
         " vs " + std::to_string(b.nz) + "x" + std::to_string(b.ny) + "x" + std::to_string(b.nx));
  }
  size_t where = 0;
  if (!same_values(a.raw_lon, b.raw_lon, 1e-6, where)) fail("longitude " + std::to_string(where) + " is " + fmt(a.raw_lon[where]) + " vs " + fmt(b.raw_lon[where]));
  if (!same_values(a.raw_lat, b.raw_lat, 1e-6, where)) fail("latitude " + std::to_string(where) + " is " + fmt(a.raw_lat[where]) + " vs " + fmt(b.raw_lat[where]));
  if (!same_values(a.depth, b.depth, 1e-3, where)) fail("depth level " + std::to_string(where) + " is " + fmt(a.depth[where]) + " vs " + fmt(b.depth[where]));
}

double spacing_m(double lon1, double lat1, double lon2, double lat2) {
  // Equirectangular approximation on a sphere (adequate for node spacings of a few km).
  const double x = (lon2 - lon1) * kDeg * std::cos(0.5 * (lat1 + lat2) * kDeg);
  const double y = (lat2 - lat1) * kDeg;
  return kEarthRadius_m * std::hypot(x, y);
}

}  // namespace

// ------------------------------------------------------------------ opening

CurrentField::CurrentField() : impl_(std::make_unique<Impl>()) {}
CurrentField::CurrentField(CurrentField&&) noexcept = default;
CurrentField& CurrentField::operator=(CurrentField&&) noexcept = default;
CurrentField::~CurrentField() = default;

CurrentField CurrentField::open_files(const std::vector<std::string>& files) {
  study::CurrentsSettings s;
  for (const auto& f : files) s.files.emplace_back(f);
  return open(s);
}

CurrentField CurrentField::open(const study::CurrentsSettings& settings) {
  const std::lock_guard<std::recursive_mutex> lock(netcdf_mutex());
  if (settings.files.empty()) throw InputError("[currents] files: no currents files given");
  CurrentField field;
  Impl& m = *field.impl_;
  m.frames_ahead = std::max(0, settings.frames_ahead);

  std::vector<Discovered> found;
  for (const auto& p : settings.files) found.push_back(discover(p.string(), settings));

  // Calendar: the setting overrides the files (CF-1.13 §4.4.1; default standard).
  std::optional<Calendar> override;
  if (!settings.calendar.empty()) {
    try {
      override = Calendar::from_name(settings.calendar);
    } catch (const std::invalid_argument& e) {
      throw InputError("[currents] calendar: " + std::string(e.what()));
    }
  }
  for (size_t f = 0; f < found.size(); ++f) {
    Discovered& d = found[f];
    const std::string where = quote(d.info.path) + ": time variable " + quote(d.info.time_name);
    Calendar cal;
    if (override) {
      cal = *override;
    } else if (d.has_calendar_att) {
      try {
        cal = Calendar::from_name(d.calendar_name);
      } catch (const std::invalid_argument& e) {
        throw InputError(where + ", attribute calendar: " + e.what() + "; or set [currents] calendar");
      }
    }
    if (f == 0) {
      m.calendar = cal;
    } else if (cal.kind() != m.calendar.kind()) {
      throw InputError(where + ": calendar " + cal.name() + " differs from " + m.calendar.name() + " in " +
                       quote(found[0].info.path));
    }
    TimeUnits tu;
    try {
      tu = parse_time_units(d.time_units, m.calendar);
    } catch (const std::invalid_argument& e) {
      throw InputError(where + ", attribute units: " + e.what());
    }
    for (double& t : d.info.times_s) {
      const double raw = t;
      t = tu.reference_s + t * tu.unit_s;
      try {
        (void)m.calendar.to_civil(t);  // refuses times beyond the calendar's supported years
      } catch (const std::invalid_argument& e) {
        throw InputError(where + ": time value " + std::to_string(raw) + " " + d.time_units + ": " + e.what());
      }
    }
    bool descending = false;
    for (size_t i = 1; i < d.info.times_s.size(); ++i) {
      if (!(d.info.times_s[i] > d.info.times_s[i - 1])) {
        throw InputError(where + ": times are not strictly increasing at index " + std::to_string(i) + " (" +
                         format_iso8601(m.calendar.to_civil(d.info.times_s[i - 1])) + " then " +
                         format_iso8601(m.calendar.to_civil(d.info.times_s[i])) + ")");
      }
    }
    (void)descending;
    if (f > 0) compare_grids(found[0].geo, found[0].info.path, d.geo, d.info.path);
    const bool has_w = d.info.w.present, has_t = d.info.temp.present, has_c = d.info.chl.present;
    if (f == 0) {
      m.has_w = has_w;
      m.has_temp = has_t;
      m.has_chl = has_c;
    } else {
      if (has_w != m.has_w) throw InputError(quote(d.info.path) + ": vertical velocity is " + (has_w ? "present" : "absent") + " but " + (m.has_w ? "present" : "absent") + " in " + quote(found[0].info.path));
      m.has_temp = m.has_temp && has_t;
      m.has_chl = m.has_chl && has_c;
    }
  }
  m.geo = found[0].geo;
  for (auto& d : found) m.files.push_back(std::move(d.info));

  // Frames of every file, sorted by time; duplicates checked below.
  std::vector<FrameRef> all;
  for (std::uint32_t f = 0; f < m.files.size(); ++f)
    for (std::uint32_t i = 0; i < m.files[f].times_s.size(); ++i) all.push_back({m.files[f].times_s[i], f, i});
  if (all.empty()) throw InputError("currents files hold no time steps (time dimension of length 0)");
  std::stable_sort(all.begin(), all.end(), [](const FrameRef& a, const FrameRef& b) { return a.t_s < b.t_s; });

  if (m.geo.kind == GridKind::curvilinear) {
    try {
      m.locator = std::make_unique<CurvilinearLocator>(m.geo.lon2, m.geo.lat2, m.geo.nx, m.geo.ny);
    } catch (const std::invalid_argument& e) {
      throw InputError(quote(m.files[0].path) + ": 2-D longitude/latitude: " + e.what());
    }
  }

  // De-duplicate identical frames; refuse conflicting ones.
  m.frames.clear();
  Frame fa, fb;
  for (const FrameRef& r : all) {
    if (!m.frames.empty() && std::fabs(r.t_s - m.frames.back().t_s) < 1e-3) {
      m.frames.push_back(r);
      const size_t n = m.frames.size();
      m.decode(n - 2, fa, false);
      m.decode(n - 1, fb, false);
      m.frames.pop_back();
      if (fa.vel != fb.vel || fa.wet != fb.wet) {
        const FrameRef& p = m.frames.back();
        throw InputError("currents files " + quote(m.files[p.file].path) + " (time index " + std::to_string(p.index) + ") and " +
                         quote(m.files[r.file].path) + " (time index " + std::to_string(r.index) + ") both hold time " +
                         m.format(r.t_s) + " with different velocities; overlapping files must agree");
      }
      continue;  // identical duplicate: keep the first
    }
    m.frames.push_back(r);
  }
  for (const auto& r : m.frames) m.times.push_back(r.t_s);
  {
    std::vector<bool> seen(m.files.size(), false);
    for (const auto& r : m.frames)
      if (!seen[r.file]) { seen[r.file] = true; m.file_paths.push_back(m.files[r.file].path); }
  }

  // Typical step (median) and gaps.
  if (m.times.size() > 1) {
    std::vector<double> d;
    for (size_t i = 1; i < m.times.size(); ++i) d.push_back(m.times[i] - m.times[i - 1]);
    std::vector<double> sorted = d;
    std::nth_element(sorted.begin(), sorted.begin() + sorted.size() / 2, sorted.end());
    m.step_s = sorted[sorted.size() / 2];
    for (size_t i = 0; i < d.size(); ++i)
      if (d[i] > 1.5 * m.step_s) m.gaps.push_back({m.times[i], m.times[i + 1]});
  }

  // Land mask from the first frame (CF-1.13 §2.5.1 missing values mark land).
  Frame first;
  m.decode(0, first, false);
  m.mask = first.wet;

  // Summary and local spacing.
  GridSummary& s = m.summary;
  const Geometry& g = m.geo;
  s.kind = g.kind;
  s.nx = static_cast<size_t>(g.nx);
  s.ny = static_cast<size_t>(g.ny);
  s.nz = static_cast<size_t>(g.nz);
  if (g.has_depth_dim) s.depths_m = g.depth;
  auto node_lon = [&](std::ptrdiff_t j, std::ptrdiff_t i) {
    return g.kind == GridKind::regular ? g.lon[i] : m.locator->lon()[j * g.nx + i];
  };
  auto node_lat = [&](std::ptrdiff_t j, std::ptrdiff_t i) {
    return g.kind == GridKind::regular ? g.lat[j] : m.locator->lat()[j * g.nx + i];
  };
  if (g.kind == GridKind::regular) {
    s.lon_min = g.lon.front(); s.lon_max = g.lon.back(); s.lat_min = g.lat.front(); s.lat_max = g.lat.back();
  } else {
    s.lon_min = m.locator->lon_min(); s.lon_max = m.locator->lon_max();
    s.lat_min = m.locator->lat_min(); s.lat_max = m.locator->lat_max();
  }
  m.cell_dx_m.assign(static_cast<size_t>(g.nx * g.ny), 0);
  m.cell_dy_m.assign(static_cast<size_t>(g.nx * g.ny), 0);
  double min_sp = kInf, sum_sp = 0;
  size_t count_sp = 0;
  for (std::ptrdiff_t j = 0; j < g.ny; ++j)
    for (std::ptrdiff_t i = 0; i < g.nx; ++i) {
      const std::ptrdiff_t i2 = i + 1 < g.nx ? i + 1 : i - 1, j2 = j + 1 < g.ny ? j + 1 : j - 1;
      const double dx = spacing_m(node_lon(j, i), node_lat(j, i), node_lon(j, i2), node_lat(j, i2));
      const double dy = spacing_m(node_lon(j, i), node_lat(j, i), node_lon(j2, i), node_lat(j2, i));
      m.cell_dx_m[j * g.nx + i] = dx;
      m.cell_dy_m[j * g.nx + i] = dy;
      min_sp = std::min({min_sp, dx, dy});
      sum_sp += dx + dy;
      count_sp += 2;
    }
  s.min_spacing_m = min_sp;
  s.mean_spacing_m = sum_sp / static_cast<double>(count_sp);
  size_t dry = 0;
  for (std::ptrdiff_t n = 0; n < g.nx * g.ny; ++n) dry += m.mask[n] == 0;
  s.land_fraction = static_cast<double>(dry) / static_cast<double>(g.nx * g.ny);

  m.names.u = m.files[0].u.name;
  m.names.v = m.files[0].v.name;
  if (m.has_w) m.names.w = m.files[0].w.name;
  if (m.has_temp) m.names.temperature = m.files[0].temp.name;
  if (m.has_chl) m.names.chlorophyll = m.files[0].chl.name;
  m.names.time = m.files[0].time_name;

  // Static parts of the hot sampler.
  FlowSampler& h = field.hot_;
  h.nx = g.nx;
  h.ny = g.ny;
  h.nz = g.nz;
  h.mask = m.mask.data();
  h.channels = m.has_w ? 6 : 4;
  h.depth = g.depth.empty() ? nullptr : m.geo.depth.data();
  if (g.kind == GridKind::curvilinear) {
    h.curvilinear = true;
    h.locator = m.locator.get();
  } else {
    auto axis = [](const std::vector<double>& v, bool& uniform, double& inv) {
      const double d = (v.back() - v.front()) / static_cast<double>(v.size() - 1);
      uniform = true;
      for (size_t i = 1; i < v.size(); ++i)
        if (std::fabs((v[i] - v[i - 1]) - d) > 1e-9 * std::max(1.0, std::fabs(d)) + 1e-6 * std::fabs(d)) uniform = false;
      inv = 1.0 / d;
    };
    h.lon = m.geo.lon.data();
    h.lat = m.geo.lat.data();
    h.lon_first = g.lon.front(); h.lon_last = g.lon.back();
    h.lat_first = g.lat.front(); h.lat_last = g.lat.back();
    axis(g.lon, h.lon_uniform, h.inv_dlon);
    axis(g.lat, h.lat_uniform, h.inv_dlat);
  }
  return field;
}

// ---------------------------------------------------------------- accessors

const GridSummary& CurrentField::grid() const { return impl_->summary; }
const Calendar& CurrentField::calendar() const { return impl_->calendar; }
double CurrentField::time_begin_s() const { return impl_->times.front(); }
double CurrentField::time_end_s() const { return impl_->times.back(); }
double CurrentField::frame_step_s() const { return impl_->step_s; }
std::size_t CurrentField::frame_count() const { return impl_->times.size(); }
const std::vector<TimeGap>& CurrentField::gaps() const { return impl_->gaps; }
const std::vector<double>& CurrentField::frame_times_s() const { return impl_->times; }

const TimeGap* CurrentField::gap_within(double t0_s, double t1_s) const {
  if (t1_s < t0_s) std::swap(t0_s, t1_s);
  for (const TimeGap& g : impl_->gaps) {
    if (g.from_s < t1_s && g.to_s > t0_s) return &g;  // gaps are few and sorted
  }
  return nullptr;
}

double CurrentField::stretch_end_s(double t_s) const {
  for (const TimeGap& g : impl_->gaps) {
    if (g.to_s > t_s) return std::max(g.from_s, std::min(t_s, g.to_s));  // inside a gap: no room
  }
  return impl_->times.back();
}
const std::vector<std::string>& CurrentField::files() const { return impl_->file_paths; }
const VariableNames& CurrentField::variables() const { return impl_->names; }
std::string CurrentField::format_time(double t_s) const { return impl_->format(t_s); }

int CurrentField::limit_depth(double deepest_m) {
  Impl& m = *impl_;
  Geometry& g = m.geo;
  if (!g.has_depth_dim || g.nz <= 1 || !(deepest_m < kInf)) return static_cast<int>(g.nz);
  std::ptrdiff_t keep = 1;
  while (keep < g.nz && g.depth[static_cast<std::size_t>(keep - 1)] < deepest_m) ++keep;
  if (keep == g.nz) return static_cast<int>(g.nz);
  drop_loaded_frames();  // they hold every level
  // Internal levels run from the surface down; a file listing them from the
  // bottom up holds the kept ones at the end of its range.
  if (g.flip_z) g.z_first += g.nz - keep;
  g.nz = keep;
  g.depth.resize(static_cast<std::size_t>(keep));
  m.mask.resize(static_cast<std::size_t>(g.nx * g.ny * keep));
  m.summary.nz = static_cast<std::size_t>(keep);
  m.summary.depths_m = g.depth;
  hot_.nz = keep;
  hot_.mask = m.mask.data();
  hot_.depth = g.depth.data();
  return static_cast<int>(keep);
}

std::size_t CurrentField::frame_bytes() const {
  const Impl& m = *impl_;
  std::size_t bytes = 0;
  for (const Block& b : m.blocks) bytes += (b.vel.size() + b.temp.size() + b.chl.size()) * sizeof(float);
  bytes += (m.last.vel.size() + m.last.temp.size() + m.last.chl.size()) * sizeof(float) + m.last.wet.size();
  if (m.ahead) {
    // The interval being decoded: counted at its finished size (its buffers
    // are the decoder thread's until a prepare() takes them over) — one
    // block and its two frames.
    const std::size_t n = m.nodes();
    const std::size_t scalars = (m.use_temp ? 1 : 0) + (m.use_chl ? 1 : 0);
    const std::size_t block = (n * static_cast<std::size_t>(m.has_w ? 6 : 4) + 2 * n * scalars) * sizeof(float);
    const std::size_t frame = (n * static_cast<std::size_t>(m.vel_channels()) + n * scalars) * sizeof(float) + n;
    bytes += block + 2 * frame;
  }
  return bytes;
}

bool CurrentField::horizontal_slice(double t_s, double depth_m, std::vector<float>& uv,
                                    const float* row_scale) const {
  const FlowSampler& s = hot_;
  double a = 0;
  const TimeBlock* blk = s.find_block(t_s, a);
  if (blk == nullptr) return false;
  std::ptrdiff_t k = 0;
  double fz = 0;
  s.locate_depth(depth_m, k, fz);
  const std::size_t nodes = static_cast<std::size_t>(s.nx * s.ny);
  uv.resize(2 * nodes);
  const std::ptrdiff_t c = s.channels;
  const float af = static_cast<float>(a), bf = static_cast<float>(fz);
  const float* top = blk->data + k * static_cast<std::ptrdiff_t>(nodes) * c;
  const float* below = fz > 0.0 ? top + static_cast<std::ptrdiff_t>(nodes) * c : top;
  // Called up to three times per drift step on the whole grid: threads over
  // the rows and vector lanes along them (each node independent, so the same
  // bits for any thread count), with the channel count fixed per loop so it
  // vectorises; the optional row factors in the same pass.
  float* out = uv.data();
  const std::ptrdiff_t nx = s.nx, ny = s.ny;
  auto blend = [&](auto channels, auto scaled) {
    constexpr std::ptrdiff_t kC = decltype(channels)::value;
    constexpr bool kScaled = decltype(scaled)::value;
#pragma omp parallel for schedule(static) if (nx * ny > 65536)
    for (std::ptrdiff_t j = 0; j < ny; ++j) {
      const float east = kScaled ? row_scale[2 * j] : 1.0f, north = kScaled ? row_scale[2 * j + 1] : 1.0f;
      const float* p = top + j * nx * kC;
      const float* q = below + j * nx * kC;
      float* o = out + 2 * j * nx;
#pragma omp simd
      for (std::ptrdiff_t i = 0; i < nx; ++i) {
        const float u0 = p[i * kC] + af * p[i * kC + 2], v0 = p[i * kC + 1] + af * p[i * kC + 3];
        const float u1 = q[i * kC] + af * q[i * kC + 2], v1 = q[i * kC + 1] + af * q[i * kC + 3];
        float u = u0 + bf * (u1 - u0), v = v0 + bf * (v1 - v0);
        if constexpr (kScaled) {
          u *= east;
          v *= north;
        }
        o[2 * i] = u;
        o[2 * i + 1] = v;
      }
    }
  };
  // A block holds 4 floats per node (u and v, then their changes over the
  // interval), or 6 with vertical velocity (FlowSampler::channels).
  using Four = std::integral_constant<std::ptrdiff_t, 4>;
  using Six = std::integral_constant<std::ptrdiff_t, 6>;
  if (row_scale != nullptr) {
    if (c == 6) blend(Six{}, std::true_type{}); else blend(Four{}, std::true_type{});
  } else {
    if (c == 6) blend(Six{}, std::false_type{}); else blend(Four{}, std::false_type{});
  }
  return true;
}

bool CurrentField::slice_key(double t_s, double depth_m, SliceKey& key) const noexcept {
  double a = 0;
  const TimeBlock* blk = hot_.find_block(t_s, a);
  if (blk == nullptr) return false;
  key = SliceKey{blk->t0_s, blk->t1_s, a, depth_m};
  return true;
}

SampleStatus CurrentField::status(double lon, double lat) const noexcept {
  CellHit h;
  if (!hot_.locate(lon, lat, h)) return SampleStatus::outside;
  return hot_.nearest_wet(h, 0, 0.0) ? SampleStatus::water : SampleStatus::land;
}

bool CurrentField::has_scalar(ScalarKind kind) const {
  return kind == ScalarKind::temperature ? impl_->has_temp : impl_->has_chl;
}

void CurrentField::enable_scalar(ScalarKind kind) {
  Impl& m = *impl_;
  if (!has_scalar(kind)) {
    throw InputError(std::string("currents files have no ") +
                     (kind == ScalarKind::temperature ? "variable with standard_name sea_water_temperature (set [currents] temperature_variable)"
                                                      : "variable with standard_name mass_concentration_of_chlorophyll_a_in_sea_water (set [currents] chlorophyll_variable)"));
  }
  bool& flag = kind == ScalarKind::temperature ? m.use_temp : m.use_chl;
  if (flag) return;
  drop_loaded_frames();  // decoded without the scalar
  flag = true;
}

void CurrentField::drop_loaded_frames() {
  Impl& m = *impl_;
  m.discard_ahead();
  m.blocks.clear();
  m.hot_blocks.clear();
  m.last = Frame{};
  m.last_index = static_cast<std::size_t>(-1);
  hot_.blocks = nullptr;
  hot_.block_count = 0;
}

// ---------------------------------------------------------------- streaming

void CurrentField::prepare(double t0_s, double t1_s) {
  Impl& m = *impl_;
  if (t1_s < t0_s) std::swap(t0_s, t1_s);
  const size_t n = m.times.size();
  size_t a = 0, end = 0;  // intervals a .. end-1 (frames a .. end)
  size_t needed_end = 1;  // intervals a .. needed_end-1 hold [t0, t1]; the rest is read-ahead
  if (n == 1) {
    // One frame: a steady field, valid at any time.
    a = 0;
    end = 0;
  } else {
    const double eps = 1e-6 * m.step_s;
    if (!(t0_s >= m.times.front() - eps && t1_s <= m.times.back() + eps)) {
      throw InputError("currents cover " + m.format(m.times.front()) + " .. " + m.format(m.times.back()) +
                       " but the simulation needs " + m.format(t0_s) + " .. " + m.format(t1_s));
    }
    a = static_cast<size_t>(std::upper_bound(m.times.begin(), m.times.end(), t0_s + eps) - m.times.begin());
    a = std::min(a == 0 ? 0 : a - 1, n - 2);
    size_t b = static_cast<size_t>(std::lower_bound(m.times.begin(), m.times.end(), t1_s - eps) - m.times.begin());
    b = std::clamp(b, a + 1, n - 1);
    needed_end = b;
    end = std::min(n - 1, b + static_cast<size_t>(m.frames_ahead));
  }
  const size_t last_interval = n == 1 ? 0 : end - 1;
  // Moving back in time: start the window afresh.
  if (!m.blocks.empty() && m.blocks.front().k > a) {
    while (!m.blocks.empty()) {
      m.spare.push_back(std::move(m.blocks.back()));
      m.blocks.pop_back();
    }
  }
  // Drop intervals outside the window (keep their storage for reuse).
  while (!m.blocks.empty() && (m.blocks.front().k < a || m.blocks.front().k > last_interval)) {
    m.spare.push_back(std::move(m.blocks.front()));
    m.blocks.pop_front();
  }
  while (!m.blocks.empty() && m.blocks.back().k > last_interval) {
    m.spare.push_back(std::move(m.blocks.back()));
    m.blocks.pop_back();
  }
  const bool scalars = m.use_temp || m.use_chl;
  const bool forward = t0_s >= m.last_prepare_t0;
  m.last_prepare_t0 = t0_s;
  bool changed = m.hot_blocks.empty();
  // The interval being decoded in the background: adopt it when it is
  // needed now, let it run when it is needed later, else drop it.
  if (m.ahead) {
    const size_t k = m.ahead->k;
    const bool fits = forward && k >= a && k <= last_interval &&
                      (m.blocks.empty() ? k == a : m.blocks.back().k + 1 == k);
    if (!fits) {
      m.discard_ahead();
    } else if (k < needed_end) {
      try {
        m.ahead->done.get();  // its error, if any, is this call's (the interval is needed)
      } catch (...) {
        m.discard_ahead();  // a later prepare() reads the interval itself (and meets the error again)
        throw;
      }
      m.blocks.push_back(std::move(m.ahead->block));
      m.last = std::move(m.ahead->second);
      m.last_index = k + 1;
      m.ahead.reset();
      changed = true;
    }
  }
  if (m.spare.size() > 2) m.spare.resize(2);
  size_t next = m.blocks.empty() ? a : m.blocks.back().k + 1;
  // Moving forward with read-ahead: the last interval of the window (one not
  // needed yet) goes to a background thread, or waits as pending work.
  const bool read_behind = forward && n > 1 && last_interval >= needed_end && !m.ahead && next <= last_interval;
  const size_t sync_end = m.ahead ? m.ahead->k : (read_behind ? last_interval : last_interval + 1);
  for (; next < sync_end; ++next) {
    Block blk;
    if (!m.spare.empty()) { blk = std::move(m.spare.back()); m.spare.pop_back(); }
    blk.k = next;
    if (n == 1) {
      m.decode(0, m.last, scalars);
      m.last_index = 0;
      m.build_block(m.last, m.last, blk);
    } else {
      if (m.last_index != next) { m.decode(next, m.last, scalars); m.last_index = next; }
      Frame second;
      m.decode(next + 1, second, scalars);
      m.build_block(m.last, second, blk);
      m.last = std::move(second);
      m.last_index = next + 1;
    }
    m.blocks.push_back(std::move(blk));
    changed = true;
  }
  if (read_behind) {
    auto job = std::make_unique<Impl::Ahead>();
    job->k = last_interval;
    if (!m.spare.empty()) { job->block = std::move(m.spare.back()); m.spare.pop_back(); }
    job->block.k = last_interval;
    if (m.last_index == last_interval) {
      job->first = std::move(m.last);
      job->have_first = true;
    }
    m.last = Frame{};
    m.last_index = static_cast<std::size_t>(-1);
    Impl::Ahead* j = job.get();
    Impl* impl = &m;
    const auto launch = background_reads() ? std::launch::async : std::launch::deferred;  // deferred: read_pending()
    job->done = std::async(launch, [impl, j, scalars] {
      // HDF5 keeps its error settings per thread: NetCDF switched the
      // printing of its internal (expected) errors off on the main thread
      // only. Without this, probing for optional attributes would print
      // HDF5 diagnostics to stderr.
      H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr);
      if (!j->have_first) impl->decode(j->k, j->first, scalars);
      impl->decode(j->k + 1, j->second, scalars);
      impl->build_block(j->first, j->second, j->block);
    });
    m.ahead = std::move(job);
  }
  if (changed || m.hot_blocks.size() != m.blocks.size()) {
    m.hot_blocks.clear();
    for (const Block& b : m.blocks) {
      TimeBlock tb;
      tb.data = b.vel.data();
      if (n == 1) {
        tb.t0_s = tb.t1_s = m.times[0];
        tb.inv_dt = 0;
      } else {
        tb.t0_s = m.times[b.k];
        tb.t1_s = m.times[b.k + 1];
        tb.inv_dt = 1.0 / (tb.t1_s - tb.t0_s);
      }
      m.hot_blocks.push_back(tb);
    }
  }
  hot_.blocks = m.hot_blocks.data();
  hot_.block_count = m.hot_blocks.size();
}

double CurrentField::sample_scalar(ScalarKind kind, double t_s, double lon, double lat, double depth_m) const noexcept {
  const Impl& m = *impl_;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  if ((kind == ScalarKind::temperature && !m.use_temp) || (kind == ScalarKind::chlorophyll && !m.use_chl)) return nan;
  double a = 0;
  const TimeBlock* tb = hot_.find_block(t_s, a);
  CellHit h;
  if (tb == nullptr || !hot_.locate(lon, lat, h)) return nan;
  const Block& blk = m.blocks[static_cast<size_t>(tb - hot_.blocks)];
  const std::vector<float>& data = kind == ScalarKind::temperature ? blk.temp : blk.chl;
  std::ptrdiff_t k = 0;
  double fz = 0;
  hot_.locate_depth(depth_m, k, fz);
  double sum = 0, wsum = 0;
  for (int dk = 0; dk < 2; ++dk) {
    const double wz = dk == 0 ? 1.0 - fz : fz;
    if (wz == 0.0) continue;
    for (int dj = 0; dj < 2; ++dj)
      for (int di = 0; di < 2; ++di) {
        const double w = wz * (di ? h.fx : 1.0 - h.fx) * (dj ? h.fy : 1.0 - h.fy);
        if (w == 0.0) continue;
        const size_t node = static_cast<size_t>(((k + dk) * hot_.ny + h.j + dj) * hot_.nx + h.i + di);
        const float base = data[2 * node];
        if (std::isnan(base)) continue;
        sum += w * (base + a * data[2 * node + 1]);
        wsum += w;
      }
  }
  return wsum > 0 ? sum / wsum : nan;
}

bool CurrentField::scalar_slice(ScalarKind kind, double t_s, double depth_m, std::vector<float>& out) const {
  const Impl& m = *impl_;
  if ((kind == ScalarKind::temperature && !m.use_temp) || (kind == ScalarKind::chlorophyll && !m.use_chl)) return false;
  double a = 0;
  const TimeBlock* tb = hot_.find_block(t_s, a);
  if (tb == nullptr) return false;
  const Block& blk = m.blocks[static_cast<size_t>(tb - hot_.blocks)];
  const std::vector<float>& data = kind == ScalarKind::temperature ? blk.temp : blk.chl;
  std::ptrdiff_t k = 0;
  double fz = 0;
  hot_.locate_depth(depth_m, k, fz);
  const std::ptrdiff_t plane = hot_.nx * hot_.ny;
  out.resize(static_cast<size_t>(2 * plane));
  float* dst = out.data();
  const float* src = data.data();
#pragma omp parallel for schedule(static) if (plane > 65536)
  for (std::ptrdiff_t n = 0; n < plane; ++n) {
    double sum = 0, wsum = 0;
    for (int dk = 0; dk < 2; ++dk) {  // the same terms, in the same order, as sample_scalar()
      const double wz = dk == 0 ? 1.0 - fz : fz;
      if (wz == 0.0) continue;
      const float* node = src + 2 * ((k + dk) * plane + n);
      if (std::isnan(node[0])) continue;
      sum += wz * (node[0] + a * node[1]);
      wsum += wz;
    }
    dst[2 * n] = static_cast<float>(sum);
    dst[2 * n + 1] = static_cast<float>(wsum);
  }
  return true;
}

void CurrentField::settle() {
  Impl& m = *impl_;
  if (m.ahead) m.ahead->join();
}

bool CurrentField::read_pending() {
  Impl& m = *impl_;
  if (!m.ahead || !m.ahead->pending()) return false;
  m.ahead->done.wait();  // runs the deferred decoding here; its error stays in it
  return true;
}

bool CurrentField::background_reads() const {
  return impl_->background_reads.value_or(static_cast<unsigned>(omp_get_max_threads()) < usable_cpus());
}

void CurrentField::set_background_reads(bool on) {
  Impl& m = *impl_;
  m.discard_ahead();
  m.background_reads = on;
}

FrameScan CurrentField::scan_frame(std::size_t index, std::vector<float>* speeds) {
  Impl& m = *impl_;
  settle();  // the decoder's file and buffer are shared
  if (index >= m.times.size()) throw std::out_of_range("scan_frame: frame index out of range");
  Frame f;
  m.decode(index, f, false);
  FrameScan out;
  out.time_s = m.times[index];
  out.courant_dt_s = kInf;
  if (speeds) speeds->clear();
  const int c = m.vel_channels();
  const size_t plane = static_cast<size_t>(m.geo.nx * m.geo.ny);
  for (size_t n = 0; n < f.wet.size(); ++n) {
    if (!f.wet[n]) continue;
    ++out.wet_nodes;
    const double u = f.vel[n * c], v = f.vel[n * c + 1];
    const double sp = std::hypot(u, v);
    out.max_speed_m_s = std::max(out.max_speed_m_s, sp);
    if (speeds) speeds->push_back(static_cast<float>(sp));
    double dx = m.cell_dx_m[n % plane], dy = m.cell_dy_m[n % plane];
    if (m.geo.kind == GridKind::curvilinear) dx = dy = std::min(dx, dy);  // axes not east/north
    const double rate = std::fabs(u) / dx + std::fabs(v) / dy;          // CFL sum in 2-D
    if (rate > 0) out.courant_dt_s = std::min(out.courant_dt_s, 1.0 / rate);
  }
  return out;
}

}  // namespace cullcast::currents
