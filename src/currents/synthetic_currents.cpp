// Synthetic currents. The double gyre follows Shadden, Lekien & Marsden (2005),
// "Definition and properties of Lagrangian coherent structures from finite-time
// Lyapunov exponents in two-dimensional aperiodic flows", Physica D 212:271-304.
// The "Lantern Reach" field is invented (no real place or data).
#include "cullcast/currents/synthetic_currents.hpp"

#include <cmath>
#include <cstdint>
#include <netcdf>
#include <numbers>
#include <stdexcept>

#include "cullcast/base/atomic_file.hpp"
#include "cullcast/currents/calendar.hpp"

namespace cullcast::currents {
namespace {

using std::numbers::pi;
constexpr double kEarthRadius_m = 6371000.0;  // sphere (common practice)
constexpr double kDeg = pi / 180.0;
constexpr std::int16_t kFill = -32767;
constexpr double kVelScale = 1e-4;            // m/s per packed unit: +-3.27 m/s
constexpr double kM2Period_h = 12.4206;       // principal lunar semidiurnal tide (from memory)
constexpr double kS2Period_h = 12.0;          // principal solar semidiurnal tide

struct Point { double u = 0, v = 0; bool land = false; double temp_c = 0, chl_mg_m3 = 0; };

// A deterministic value in [-1, 1] for an integer (splitmix64 finaliser).
double hash_unit(std::uint64_t x) {
  x += 0x9E3779B97F4A7C15ull;
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ull;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBull;
  x ^= x >> 31;
  return static_cast<double>(x >> 11) / static_cast<double>(1ull << 53) * 2.0 - 1.0;
}

// Smooth day-to-day variation: cosine blend of one hashed value per day.
double daily(double t_days, std::uint64_t stream) {
  const double d = std::floor(t_days);
  const double a = hash_unit(stream * 1000003ull + static_cast<std::uint64_t>(d + 100000));
  const double b = hash_unit(stream * 1000003ull + static_cast<std::uint64_t>(d + 100001));
  const double w = 0.5 - 0.5 * std::cos(pi * (t_days - d));
  return a + (b - a) * w;
}

struct Box {
  double lon0, lat0, lat_mid;
  double x_m(double lon) const { return (lon - lon0) * kDeg * kEarthRadius_m * std::cos(lat_mid * kDeg); }
  double y_m(double lat) const { return (lat - lat0) * kDeg * kEarthRadius_m; }
};

// Gaussian eddy: azimuthal speed V (r/R) exp((1 - r^2/R^2)/2), peak V at r = R.
void add_eddy(double x, double y, double cx, double cy, double radius_m, double peak_m_s, double sign, Point& p) {
  const double dx = x - cx, dy = y - cy;
  const double r2 = (dx * dx + dy * dy) / (radius_m * radius_m);
  const double s = sign * peak_m_s * std::exp(0.5 * (1.0 - r2)) / radius_m;
  p.u += -s * dy;
  p.v += s * dx;
}

// The weather of one demo season. Season 0 is the first (December 2026)
// record; odd seasons have a south-westward drift, a counter-clockwise lagoon
// cell and eddies elsewhere, so the connectivity differs between years; every
// season draws its own day-to-day variation.
struct SeasonShape {
  double mean_m_s, swing_m_s, swing_period_d;  // shelf current: mean, wind-driven swing, its period
  double heading_deg;                          // shelf current heading, clockwise from north
  double gyre_m_s;                             // lagoon cell speed at 25 km; > 0 clockwise
  double e1x, e1y, e1_drift_m_d, e1_sign;      // eddy 1: start (box fractions), westward drift, sense
  double e2x, e2y, e2_drift_m_d, e2_sign;      // eddy 2
};

SeasonShape season_shape(int season) {
  if (season % 2 == 0) return {0.025, 0.12, 6.1, 315.0, 0.07, 0.25, 0.3, 2000.0, 1.0, 0.75, 0.75, 1500.0, -1.0};
  return {0.035, 0.09, 4.3, 245.0, -0.05, 0.65, 0.55, -1800.0, -1.0, 0.2, 0.2, 1200.0, 1.0};
}

Point demo_point(double t_h, double lon, double lat, double depth_m, const SyntheticOptions& o) {
  Point p;
  const SeasonShape sh = season_shape(o.season);
  const std::uint64_t st = 100u * static_cast<std::uint64_t>(o.season);  // hash streams of this season
  const Box box{o.lon_min, o.lat_min, 0.5 * (o.lat_min + o.lat_max)};
  const double x = box.x_m(lon), y = box.y_m(lat);
  const double width = box.x_m(o.lon_max), height = box.y_m(o.lat_max);
  const double t_d = t_h / 24.0;
  // Islands (invented): centre lon, lat, radius m.
  struct Island { double lon, lat, r; };
  // The two islands of the demo reef layer (scenarios/lantern-reach/make_reefs.py keeps reefs clear of them).
  static constexpr Island islands[] = {{150.15, -20.20, 1800}, {150.42, -20.28, 1800}};
  double shelter = 1.0;
  for (const Island& is : islands) {
    const double d = std::hypot(x - box.x_m(is.lon), y - box.y_m(is.lat)) - is.r;
    if (d <= 0) { p.land = true; return p; }
    shelter *= 1.0 - std::exp(-(d * d) / (1500.0 * 1500.0));  // flow slackens near shores
  }
  const double decay = std::exp(-depth_m / 40.0);
  // Shelf current toward the north-west that slackens and reverses with the
  // weather (period ~6 days, varying by day), so larvae meander over the
  // weeks they drift instead of all leaving the region.
  const double mean = sh.mean_m_s * (1.0 + 0.5 * daily(t_d, st + 1));
  const double swing = sh.swing_m_s * std::sin(2 * pi * t_d / sh.swing_period_d + 1.5 * daily(t_d, st + 6));
  const double speed = mean + swing;
  const double heading = (sh.heading_deg + 25.0 * daily(t_d, st + 2)) * kDeg;  // clockwise from north
  // Weaker inshore (south) and stronger offshore (north).
  const double cross = 0.7 + 0.6 * (y / height);
  p.u += speed * cross * std::sin(heading) * decay;
  p.v += speed * cross * std::cos(heading) * decay;
  // A broad recirculation over the archipelago (wind-driven lagoon cell;
  // clockwise at 0.07 m/s at 25 km from its centre in even seasons,
  // counter-clockwise and weaker in odd ones): closed streamlines that hold larvae.
  {
    const double cx = 0.5 * width, cy = 0.5 * height;
    const double omega = sh.gyre_m_s / 25000.0;  // 1/s
    const double fade = std::exp(-((x - cx) * (x - cx) + (y - cy) * (y - cy)) / (2 * 30000.0 * 30000.0));
    p.u += omega * (y - cy) * fade * decay;
    p.v += -omega * (x - cx) * fade * decay;
  }
  // Tides: M2 + S2 ellipses, major axis NE-SW, phase travelling westward.
  const double phase = 2 * pi * (x / 400000.0);
  const double m2 = 2 * pi * t_h / kM2Period_h - phase, s2 = 2 * pi * t_h / kS2Period_h - phase;
  const double major = 0.22 * std::cos(m2) + 0.07 * std::cos(s2);
  const double minor = 0.07 * std::sin(m2) + 0.02 * std::sin(s2);
  const double axis = 45.0 * kDeg;
  p.u += (major * std::sin(axis) + minor * std::cos(axis)) * (0.85 + 0.15 * decay);
  p.v += (major * std::cos(axis) - minor * std::sin(axis)) * (0.85 + 0.15 * decay);
  // Two eddies drifting across the box (wrapping around).
  auto wrap = [](double v, double span) { return v - span * std::floor(v / span); };
  const double e1x = wrap(sh.e1x * width - sh.e1_drift_m_d * t_d, width),
               e1y = sh.e1y * height + 3000.0 * std::sin(2 * pi * t_d / 20.0);
  const double e2x = wrap(sh.e2x * width - sh.e2_drift_m_d * t_d, width),
               e2y = wrap(sh.e2y * height - 800.0 * t_d, height);
  add_eddy(x, y, e1x, e1y, 5000.0, 0.25 * (1 + 0.2 * daily(t_d, st + 3)), sh.e1_sign, p);
  add_eddy(x, y, e2x, e2y, 4000.0, 0.20, sh.e2_sign, p);
  p.u *= shelter;
  p.v *= shelter;
  // Scalars: warm surface with a daily cycle; chlorophyll higher near islands and inshore.
  p.temp_c = 27.8 + 0.4 * std::sin(2 * pi * (t_h - 9.0) / 24.0) * decay - 0.04 * depth_m + 0.3 * daily(t_d, st + 4);
  p.chl_mg_m3 = std::max(0.05, 0.35 + 0.3 * (1.0 - shelter) + 0.25 * (1.0 - y / height) + 0.1 * daily(t_d, st + 5));
  return p;
}

Point analytic_point(SyntheticKind kind, double t_h, double lon, double lat, const SyntheticOptions& o) {
  Point p;
  const Box box{o.lon_min, o.lat_min, 0.5 * (o.lat_min + o.lat_max)};
  const double x = box.x_m(lon), y = box.y_m(lat);
  if (kind == SyntheticKind::uniform) {
    p.u = 0.10;
    p.v = 0.05;
  } else if (kind == SyntheticKind::eddy) {
    const double omega = 2 * pi / (2.0 * 86400.0);  // rad/s: one turn in 2 days
    const double cx = 0.5 * box.x_m(o.lon_max), cy = 0.5 * box.y_m(o.lat_max);
    p.u = -omega * (y - cy);
    p.v = omega * (x - cx);
  } else {
    // Shadden, Lekien & Marsden (2005) eq. for the double gyre; A, eps, omega as published.
    const double A = 0.1, eps = 0.25, omega = 2 * pi / 10.0;
    const double L = box.y_m(o.lat_max);  // one length unit, m
    const double T = L / 1.0;             // one time unit, s (velocity unit 1 m/s)
    const double t = t_h * 3600.0 / T, xs = x / L, ys = y / L;
    const double a = eps * std::sin(omega * t), b = 1.0 - 2.0 * eps * std::sin(omega * t);
    const double f = a * xs * xs + b * xs, dfdx = 2.0 * a * xs + b;
    p.u = -pi * A * std::sin(pi * f) * std::cos(pi * ys);
    p.v = pi * A * std::cos(pi * f) * std::sin(pi * ys) * dfdx;
  }
  return p;
}

std::int16_t pack(double value, double scale, double offset) {
  const double q = std::round((value - offset) / scale);
  if (q < -32766 || q > 32767) throw std::runtime_error("synthetic value out of the packed range");
  return static_cast<std::int16_t>(q);
}

}  // namespace

SyntheticKind synthetic_kind_from_name(const std::string& name) {
  if (name == "demo") return SyntheticKind::demo;
  if (name == "uniform") return SyntheticKind::uniform;
  if (name == "eddy") return SyntheticKind::eddy;
  if (name == "double-gyre") return SyntheticKind::double_gyre;
  throw std::invalid_argument("unknown kind '" + name + "'; expected demo, uniform, eddy or double-gyre");
}

std::string synthetic_kind_name(SyntheticKind kind) {
  switch (kind) {
    case SyntheticKind::demo: return "demo";
    case SyntheticKind::uniform: return "uniform";
    case SyntheticKind::eddy: return "eddy";
    case SyntheticKind::double_gyre: return "double-gyre";
  }
  return "demo";
}

namespace {

// One continuous record of o.days from o.start, in o.season's weather.
void write_window(const std::filesystem::path& dir, SyntheticOptions o, std::vector<std::filesystem::path>& written) {
  using namespace netCDF;
  if (o.kind == SyntheticKind::double_gyre) {
    // 2:1 box in metres (Shadden et al. 2005 domain [0,2]x[0,1]).
    const double mid = 0.5 * (o.lat_min + o.lat_max);
    o.lon_max = o.lon_min + 2.0 * (o.lat_max - o.lat_min) / std::cos(mid * kDeg);
  }
  const bool demo = o.kind == SyntheticKind::demo;
  const size_t nx = static_cast<size_t>(std::llround((o.lon_max - o.lon_min) / o.spacing_deg)) + 1;
  const size_t ny = static_cast<size_t>(std::llround((o.lat_max - o.lat_min) / o.spacing_deg)) + 1;
  const std::vector<double> depths = demo ? std::vector<double>{0.0, 10.0, 25.0} : std::vector<double>{};
  const size_t nz = depths.empty() ? 1 : depths.size();
  std::vector<double> lon(nx), lat(ny);
  for (size_t i = 0; i < nx; ++i) lon[i] = o.lon_min + static_cast<double>(i) * o.spacing_deg;
  for (size_t j = 0; j < ny; ++j) lat[j] = o.lat_min + static_cast<double>(j) * o.spacing_deg;

  const size_t total = static_cast<size_t>(std::llround(o.days * 24.0 / o.step_hours)) + 1;
  const size_t per_file = std::max<size_t>(1, static_cast<size_t>(std::llround(o.days_per_file * 24.0 / o.step_hours)));
  const Calendar cal(CalendarKind::standard);
  const double start_s = cal.to_seconds(o.start);
  char units[64];
  std::snprintf(units, sizeof units, "hours since %04d-%02d-%02d %02d:%02d:%02d", o.start.year, o.start.month,
                o.start.day, o.start.hour, o.start.minute, static_cast<int>(o.start.second));
  const std::string prefix = o.file_prefix.empty() ? (demo ? std::string("lantern_reach") : synthetic_kind_name(o.kind))
                                                   : o.file_prefix;
  std::filesystem::create_directories(dir);
  std::vector<std::int16_t> ubuf(nz * ny * nx), vbuf(ubuf.size()), tbuf, cbuf;
  if (demo) { tbuf.resize(ubuf.size()); cbuf.resize(ubuf.size()); }

  for (size_t first = 0; first < total; first += per_file) {
    // The last frame of a file is repeated as the first of the next: the
    // reader de-duplicates identical frames and no interval is lost.
    const size_t count = std::min(total - first, per_file + (first + per_file < total ? 1 : 0));
    const CivilTime day = cal.to_civil(start_s + static_cast<double>(first) * o.step_hours * 3600.0);
    char stamp[32];
    std::snprintf(stamp, sizeof stamp, "%04d%02d%02d", day.year, day.month, day.day);
    std::string name = prefix + "_" + stamp;
    if (day.hour != 0 || day.minute != 0) {
      std::snprintf(stamp, sizeof stamp, "T%02d%02d", day.hour, day.minute);
      name += stamp;
    }
    AtomicFile out(dir / (name + ".nc"));
    {
      NcFile nc(out.temp_path().string(), NcFile::replace, o.compress ? NcFile::nc4classic : NcFile::classic64);
      nc.putAtt("Conventions", "CF-1.13");
      nc.putAtt("title", demo ? "Lantern Reach (invented archipelago) synthetic currents" : "synthetic currents: " + synthetic_kind_name(o.kind));
      nc.putAtt("source", "cullcast demo-data (formulas, no observations)");
      NcDim tdim = nc.addDim("time");  // unlimited
      NcDim zdim;
      if (!depths.empty()) zdim = nc.addDim("depth", nz);
      NcDim ydim = nc.addDim("lat", ny), xdim = nc.addDim("lon", nx);
      NcVar tv = nc.addVar("time", ncDouble, tdim);
      tv.putAtt("standard_name", "time");
      tv.putAtt("units", units);
      tv.putAtt("calendar", "standard");
      tv.putAtt("axis", "T");
      NcVar xv = nc.addVar("lon", ncDouble, xdim);
      xv.putAtt("standard_name", "longitude");
      xv.putAtt("units", "degrees_east");
      xv.putAtt("axis", "X");
      NcVar yv = nc.addVar("lat", ncDouble, ydim);
      yv.putAtt("standard_name", "latitude");
      yv.putAtt("units", "degrees_north");
      yv.putAtt("axis", "Y");
      NcVar zv;
      std::vector<NcDim> dims{tdim};
      if (!depths.empty()) {
        zv = nc.addVar("depth", ncDouble, zdim);
        zv.putAtt("standard_name", "depth");
        zv.putAtt("units", "m");
        zv.putAtt("positive", "down");
        zv.putAtt("axis", "Z");
        dims.push_back(zdim);
      }
      dims.push_back(ydim);
      dims.push_back(xdim);
      auto packed_var = [&](const char* vname, const char* standard_name, const char* vunits, double scale,
                            double offset) {
        NcVar v = nc.addVar(vname, ncShort, dims);
        v.putAtt("standard_name", standard_name);
        v.putAtt("units", vunits);
        v.putAtt("scale_factor", ncDouble, scale);
        v.putAtt("add_offset", ncDouble, offset);
        v.putAtt("_FillValue", ncShort, kFill);
        if (o.compress) {
          std::vector<size_t> chunk{1};
          if (!depths.empty()) chunk.push_back(nz);
          chunk.push_back(ny);
          chunk.push_back(nx);
          v.setChunking(NcVar::nc_CHUNKED, chunk);
          v.setCompression(true, true, 4);
        }
        return v;
      };
      NcVar uv = packed_var("u", "eastward_sea_water_velocity", "m s-1", kVelScale, 0.0);
      NcVar vv = packed_var("v", "northward_sea_water_velocity", "m s-1", kVelScale, 0.0);
      NcVar tempv, chlv;
      if (demo) {
        tempv = packed_var("temp", "sea_water_temperature", "degC", 0.001, 25.0);
        chlv = packed_var("chl", "mass_concentration_of_chlorophyll_a_in_sea_water", "mg m-3", 0.0002, 6.0);
      }
      nc.enddef();
      xv.putVar(lon.data());
      yv.putVar(lat.data());
      if (!depths.empty()) zv.putVar(depths.data());
      for (size_t k = 0; k < count; ++k) {
        const double t_h = static_cast<double>(first + k) * o.step_hours;
        tv.putVar({k}, {1}, &t_h);
        for (size_t z = 0; z < nz; ++z)
          for (size_t j = 0; j < ny; ++j)
            for (size_t i = 0; i < nx; ++i) {
              const size_t n = (z * ny + j) * nx + i;
              const Point p = demo ? demo_point(t_h, lon[i], lat[j], depths.empty() ? 0.0 : depths[z], o)
                                   : analytic_point(o.kind, t_h, lon[i], lat[j], o);
              ubuf[n] = p.land ? kFill : pack(p.u, kVelScale, 0.0);
              vbuf[n] = p.land ? kFill : pack(p.v, kVelScale, 0.0);
              if (demo) {
                tbuf[n] = p.land ? kFill : pack(p.temp_c, 0.001, 25.0);
                cbuf[n] = p.land ? kFill : pack(p.chl_mg_m3, 0.0002, 6.0);
              }
            }
        std::vector<size_t> start{k}, cnt{1};
        if (!depths.empty()) { start.push_back(0); cnt.push_back(nz); }
        start.push_back(0); start.push_back(0);
        cnt.push_back(ny); cnt.push_back(nx);
        uv.putVar(start, cnt, ubuf.data());
        vv.putVar(start, cnt, vbuf.data());
        if (demo) {
          tempv.putVar(start, cnt, tbuf.data());
          chlv.putVar(start, cnt, cbuf.data());
        }
      }
      nc.close();
    }
    out.commit();
    written.push_back(out.target());
    if (first + count >= total) break;
  }
}

}  // namespace

std::vector<std::filesystem::path> write_synthetic_currents(const std::filesystem::path& dir,
                                                            const SyntheticOptions& in) {
  if (!(in.days > 0) || !(in.step_hours > 0) || !(in.days_per_file > 0) || !(in.spacing_deg > 0)) {
    throw std::invalid_argument("days, days_per_file, step_hours and spacing must be positive");
  }
  if (in.seasons < 1 || in.season < 0) throw std::invalid_argument("seasons must be >= 1 and season >= 0");
  std::vector<std::filesystem::path> written;
  for (int k = 0; k < in.seasons; ++k) {
    // Season k: the same calendar window k years later, in its own weather.
    SyntheticOptions o = in;
    o.season = in.season + k;
    o.start.year = in.start.year + k;
    write_window(dir, o, written);
  }
  return written;
}

}  // namespace cullcast::currents
