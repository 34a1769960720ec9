#include "cullcast/drift/grid_stepper.hpp"

#include <algorithm>
#include <cmath>

namespace cullcast::drift {
namespace {

constexpr double kRad = 3.14159265358979323846 / 180.0;

// The grid as the hot loop needs it (copied out of the FlowSampler once per step).
struct Grid {
  double lon0, lat0;          // first node, degrees
  double inv_dlon, inv_dlat;  // nodes per degree
  double gx_max, gy_max;      // last node index, as doubles
  std::ptrdiff_t nx, ny;
  const std::uint8_t* mask;   // top level, 1 = wet
  const double* row_sin;
  const double* row_cos;
  double dlat;                // degrees between rows
  // Earth model (earth_model.hpp): e², 1/(a·rad), and the factors of the
  // sphere's and the ellipsoid's north metric.
  double e2, inv_a_rad, north_sphere, north_ellipsoid;

  // Fractional node coordinates of a position; false outside the grid (also for NaN).
  bool cell(double lon, double lat, double& gx, double& gy) const noexcept {
    double x = lon - lon0;
    if (x < 0.0 || x >= 360.0) x -= 360.0 * std::floor(x / 360.0);
    gx = x * inv_dlon;
    gy = (lat - lat0) * inv_dlat;
    return gx <= gx_max && gy >= 0.0 && gy <= gy_max;
  }

  // Degrees per metre east and north at latitude `lat`, from the nearest
  // tabulated row by a Taylor step (|d| <= half a row, at most 1 degree: the
  // truncation error of the series below is under 1e-16 there), then the
  // Earth model's radii (earth_model.hpp) with one division.
  void metric(double lat, double& east, double& north) const noexcept {
    double r = (lat - lat0) * inv_dlat + 0.5;
    r = r >= 0.0 ? (r > gy_max ? gy_max : r) : 0.0;  // also NaN -> 0
    const auto j = static_cast<std::ptrdiff_t>(r);    // nearest row
    const double d = (lat - (lat0 + static_cast<double>(j) * dlat)) * kRad;
    double s, c;
    if (std::fabs(d) <= 0.0175) {
      const double d2 = d * d;
      const double cd = 1 - d2 * (0.5 - d2 * (1.0 / 24 - d2 * (1.0 / 720 - d2 * (1.0 / 40320))));
      const double sd = d * (1 - d2 * (1.0 / 6 - d2 * (1.0 / 120 - d2 * (1.0 / 5040 - d2 * (1.0 / 362880)))));
      s = row_sin[j] * cd + row_cos[j] * sd;
      c = row_cos[j] * cd - row_sin[j] * sd;
    } else {  // beyond the grid's rows (a particle on its way out)
      s = std::sin(lat * kRad);
      c = std::cos(lat * kRad);
    }
    if (e2 == 0.0) {  // sphere
      north = north_sphere;
      east = north_sphere / c;
      return;
    }
    const double w = 1.0 - e2 * s * s, root = std::sqrt(w);
    north = w * root * north_ellipsoid;
    east = root * inv_a_rad / c;
  }

  // Velocity at a position from one stage slice (m/s, or degrees/s when the
  // slice is folded): bilinear in space; 0 outside the grid, as
  // CurrentField::sample(). Returns the cell's row.
  std::ptrdiff_t velocity(const float* uv, double lon, double lat, double& u, double& v) const noexcept {
    double gx, gy;
    if (!cell(lon, lat, gx, gy)) {
      u = v = 0.0;
      return 0;
    }
    auto i = static_cast<std::ptrdiff_t>(gx), j = static_cast<std::ptrdiff_t>(gy);
    i = i > nx - 2 ? nx - 2 : i;
    j = j > ny - 2 ? ny - 2 : j;
    const double fx = gx - static_cast<double>(i), fy = gy - static_cast<double>(j);
    const float* p = uv + 2 * (j * nx + i);
    const float* q = p + 2 * nx;
    const double w00 = (1 - fx) * (1 - fy), w10 = fx * (1 - fy), w01 = (1 - fx) * fy, w11 = fx * fy;
    u = w00 * p[0] + w10 * p[2] + w01 * q[0] + w11 * q[2];
    v = w00 * p[1] + w10 * p[3] + w01 * q[1] + w11 * q[3];
    return j;
  }

  // Water, land or outside, as CurrentField::status(): the nearest node's mask.
  currents::SampleStatus status(double lon, double lat) const noexcept {
    double gx, gy;
    if (!cell(lon, lat, gx, gy)) return currents::SampleStatus::outside;
    auto i = static_cast<std::ptrdiff_t>(gx), j = static_cast<std::ptrdiff_t>(gy);
    i = i > nx - 2 ? nx - 2 : i;
    j = j > ny - 2 ? ny - 2 : j;
    const std::ptrdiff_t in = i + (gx - static_cast<double>(i) > 0.5 ? 1 : 0);
    const std::ptrdiff_t jn = j + (gy - static_cast<double>(j) > 0.5 ? 1 : 0);
    return mask[jn * nx + in] ? currents::SampleStatus::water : currents::SampleStatus::land;
  }
};

}  // namespace

bool GridStepper::applies(const currents::CurrentField& field, const ParticleSet& particles) {
  const currents::FlowSampler& s = field.sampler();
  if (s.curvilinear || !s.lon_uniform || !s.lat_uniform || s.nx < 2 || s.ny < 2) return false;
  if (s.inv_dlat <= 0.0 || 1.0 / s.inv_dlat > 2.0) return false;
  for (std::size_t i = 1; i < particles.size(); ++i) {
    if (particles.depth_m[i] != particles.depth_m[0]) return false;
  }
  return true;
}

GridStepper::GridStepper(const currents::CurrentField& field, const EarthModel& earth)
    : field_(field), earth_(earth) {
  const currents::FlowSampler& s = field.sampler();
  if (s.curvilinear || !s.lat_uniform || s.inv_dlat <= 0.0) return;  // applies() is false: no tables
  const double dlat = 1.0 / s.inv_dlat;
  row_sin_.resize(static_cast<std::size_t>(s.ny));
  row_cos_.resize(static_cast<std::size_t>(s.ny));
  for (std::ptrdiff_t j = 0; j < s.ny; ++j) {
    const double lat = (s.lat_first + static_cast<double>(j) * dlat) * kRad;
    row_sin_[static_cast<std::size_t>(j)] = std::sin(lat);
    row_cos_[static_cast<std::size_t>(j)] = std::cos(lat);
  }
  // Folding the metric into the slices interpolates u/cos(φ) bilinearly
  // instead of u; the relative difference is at most Δφ²·(1 + 2·tan²φ)/8
  // (second derivative of sec φ over one row, Δφ in radians). Fold only
  // when that is below 1e-7, far under the bilinear interpolation error of
  // the velocities themselves; coarser grids get the exact metric per stage.
  const double drow = dlat * kRad;
  double worst = 0;
  row_east_.resize(row_sin_.size());
  row_north_.resize(row_sin_.size());
  row_m_per_deg_lon_.resize(row_sin_.size());
  row_m_per_deg_lat_.resize(row_sin_.size());
  for (std::size_t j = 0; j < row_sin_.size(); ++j) {
    const double t = row_sin_[j] / row_cos_[j];
    worst = std::max(worst, drow * drow * (1 + 2 * t * t) / 8);
    earth.degrees_per_metre_at(row_sin_[j], row_cos_[j], row_east_[j], row_north_[j]);
    row_m_per_deg_lon_[j] = 1.0 / row_east_[j];
    row_m_per_deg_lat_[j] = 1.0 / row_north_[j];
  }
  folded_ = worst <= 1e-7;
}

StepTally GridStepper::step(ParticleSet& p, std::uint32_t step, const StepSettings& s, const LarvalClock& clock,
                            const reefs::ReefLookup& reefs, const CounterRandom& rng,
                            std::vector<std::uint8_t>& settled_now) {
  const double t0 = step * s.dt_s;  // seconds since the event start
  const double t0_model = s.event_start_s + t0;
  const double t1 = t0 + s.dt_s;
  const double depth = p.size() > 0 ? p.depth_m[0] : 0.0;
  // Stage times: every scheme uses the start, RK2 and RK4 the middle, RK4 the end.
  const int stages = s.scheme == Scheme::rk4 ? 3 : (s.scheme == Scheme::rk2 ? 2 : 1);
  const double stage_t[3] = {t0_model, t0_model + 0.5 * s.dt_s, t0_model + s.dt_s};
  for (int k = 0; k < stages; ++k) {
    std::vector<float>& uv = stage_uv_[k];
    if (!field_.horizontal_slice(stage_t[k], depth, uv)) {
      uv.assign(uv.size(), 0.0f);  // outside the prepared frames: still water
    }
    if (folded_) {  // m/s -> degrees/s with each row's metric
      const std::size_t nx = static_cast<std::size_t>(field_.sampler().nx);
      for (std::size_t j = 0; j < row_east_.size(); ++j) {
        const auto east = static_cast<float>(row_east_[j]), north = static_cast<float>(row_north_[j]);
        float* row = uv.data() + 2 * j * nx;
        for (std::size_t i = 0; i < nx; ++i) {
          row[2 * i] *= east;
          row[2 * i + 1] *= north;
        }
      }
    }
  }
  const bool folded = folded_;
  const double* m_per_deg_lon = row_m_per_deg_lon_.data();
  const double* m_per_deg_lat = row_m_per_deg_lat_.data();
  const currents::FlowSampler& fs = field_.sampler();
  const Grid g{fs.lon_first, fs.lat_first, fs.inv_dlon, fs.inv_dlat,
               static_cast<double>(fs.nx - 1), static_cast<double>(fs.ny - 1),
               fs.nx, fs.ny, fs.mask, row_sin_.data(), row_cos_.data(), 1.0 / fs.inv_dlat,
               earth_.eccentricity_squared(), 1.0 / (earth_.equatorial_radius_m() * kRad),
               1.0 / (earth_.equatorial_radius_m() * kRad),
               1.0 / (earth_.equatorial_radius_m() * (1.0 - earth_.eccentricity_squared()) * kRad)};
  const float* uv0 = stage_uv_[0].data();
  const float* uv_mid = stages > 1 ? stage_uv_[1].data() : uv0;
  const float* uv1 = stages > 2 ? stage_uv_[2].data() : uv0;
  const Scheme scheme = s.scheme;
  const double dt = s.dt_s, h = 0.5 * s.dt_s;
  const double walk = std::sqrt(2.0 * s.kh_m2_s * s.dt_s);  // metres, one standard deviation
  const double settle_p = clock.settle_probability(s.dt_s);
  const double constant_survive = clock.step_survival(0.0, s.dt_s);
  const bool constant_hazard = clock.constant_hazard();
  const std::int64_t n = static_cast<std::int64_t>(p.size());
  settled_now.assign(p.size(), 0);

  std::uint64_t particle_steps = 0, land_contacts = 0, released = 0, settled = 0, died = 0, stranded = 0,
                lost = 0;
  double max_speed = 0;

  // Particles go through the step in batches of kLanes: each RK stage, then
  // the random draws, run over the whole batch before the next, so the
  // processor overlaps the lanes' independent work instead of waiting on one
  // particle's chain of dependent stages. Per-particle results do not depend
  // on the batching (nor on the thread count).
  constexpr std::int64_t kLanes = 16;
  const std::int64_t batches = (n + kLanes - 1) / kLanes;

#pragma omp parallel for schedule(static) if (n > 4096) reduction(+ : particle_steps, land_contacts, released, \
                                                        settled, died, stranded, lost)           \
    reduction(max : max_speed)
  for (std::int64_t batch = 0; batch < batches; ++batch) {
    std::int64_t idx[kLanes];
    int m = 0;
    const std::int64_t end = std::min(n, (batch + 1) * kLanes);
    for (std::int64_t i = batch * kLanes; i < end; ++i) {
      Fate fate = p.fate[i];
      if (fate == Fate::waiting) {
        if (p.release_s[i] > t0) continue;
        p.fate[i] = Fate::drifting;
        p.release_s[i] = static_cast<float>(t0);
        ++released;
        fate = Fate::drifting;
      }
      if (fate == Fate::drifting) idx[m++] = i;
    }
    if (m == 0) continue;
    particle_steps += static_cast<std::uint64_t>(m);

    double lon0[kLanes], lat0[kLanes], lon[kLanes], lat[kLanes], speed[kLanes];
    double ka[kLanes], kb[kLanes], sum_a[kLanes], sum_b[kLanes], x[kLanes], y[kLanes];
    for (int l = 0; l < m; ++l) {
      lon0[l] = p.lon[idx[l]];
      lat0[l] = p.lat[idx[l]];
      speed[l] = 0;
    }
    // dx/dt (degrees per second) of every lane at (x, y) from one stage slice.
    auto rates = [&](const float* uv, const double* xs, const double* ys) noexcept {
      if (folded) {  // slices already in degrees per second
        for (int l = 0; l < m; ++l) {
          const std::ptrdiff_t j = g.velocity(uv, xs[l], ys[l], ka[l], kb[l]);
          const double sp = std::fabs(ka[l]) * m_per_deg_lon[j] + std::fabs(kb[l]) * m_per_deg_lat[j];
          speed[l] = sp > speed[l] ? sp : speed[l];
        }
        return;
      }
      for (int l = 0; l < m; ++l) {
        double u, v, east, north;
        g.velocity(uv, xs[l], ys[l], u, v);
        const double sp = std::fabs(u) + std::fabs(v);
        speed[l] = sp > speed[l] ? sp : speed[l];
        g.metric(ys[l], east, north);
        ka[l] = u * east;
        kb[l] = v * north;
      }
    };
    rates(uv0, lon0, lat0);
    if (scheme == Scheme::rk4) {
      for (int l = 0; l < m; ++l) {
        sum_a[l] = ka[l], sum_b[l] = kb[l];
        x[l] = lon0[l] + h * ka[l], y[l] = lat0[l] + h * kb[l];
      }
      rates(uv_mid, x, y);
      for (int l = 0; l < m; ++l) {
        sum_a[l] += 2 * ka[l], sum_b[l] += 2 * kb[l];
        x[l] = lon0[l] + h * ka[l], y[l] = lat0[l] + h * kb[l];
      }
      rates(uv_mid, x, y);
      for (int l = 0; l < m; ++l) {
        sum_a[l] += 2 * ka[l], sum_b[l] += 2 * kb[l];
        x[l] = lon0[l] + dt * ka[l], y[l] = lat0[l] + dt * kb[l];
      }
      rates(uv1, x, y);
      const double w = dt / 6.0;
      for (int l = 0; l < m; ++l) {
        lon[l] = lon0[l] + w * (sum_a[l] + ka[l]);
        lat[l] = lat0[l] + w * (sum_b[l] + kb[l]);
      }
    } else if (scheme == Scheme::rk2) {
      for (int l = 0; l < m; ++l) x[l] = lon0[l] + h * ka[l], y[l] = lat0[l] + h * kb[l];
      rates(uv_mid, x, y);
      for (int l = 0; l < m; ++l) lon[l] = lon0[l] + dt * ka[l], lat[l] = lat0[l] + dt * kb[l];
    } else {
      for (int l = 0; l < m; ++l) lon[l] = lon0[l] + dt * ka[l], lat[l] = lat0[l] + dt * kb[l];
    }
    for (int l = 0; l < m; ++l) max_speed = speed[l] > max_speed ? speed[l] : max_speed;
    if (walk > 0) {
      std::uint32_t source[kLanes], particle[kLanes];
      double z0[kLanes], z1[kLanes];
      for (int l = 0; l < m; ++l) source[l] = p.source[idx[l]], particle[l] = p.index[idx[l]];
      rng.normal2_batch(s.event, source, particle, m, step, Draw::diffusion, z0, z1);
      for (int l = 0; l < m; ++l) {
        double east, north;
        g.metric(lat[l], east, north);
        lon[l] += z0[l] * walk * east;
        lat[l] += z1[l] * walk * north;
      }
    }

    for (int l = 0; l < m; ++l) {
      const std::int64_t i = idx[l];
      const currents::SampleStatus where = g.status(lon[l], lat[l]);
      if (where == currents::SampleStatus::outside) {
        p.lon[i] = lon[l];
        p.lat[i] = lat[l];
        p.fate[i] = Fate::lost;
        ++lost;
        continue;
      }
      if (where == currents::SampleStatus::land) {
        ++land_contacts;
        if (s.land == LandRule::strand) {
          p.fate[i] = Fate::stranded;
          ++stranded;
          continue;
        }
        lon[l] = lon0[l];  // hold: the step is undone
        lat[l] = lat0[l];
      }
      p.lon[i] = lon[l];
      p.lat[i] = lat[l];

      const StreamId id{s.event, p.source[i], p.index[i]};
      const double age0 = t0 - p.release_s[i];
      const double age1 = t1 - p.release_s[i];
      const double survive = constant_hazard ? constant_survive : clock.step_survival(age0, age1);
      switch (end_step(p, i, id, step, survive, age1, lon[l], lat[l], settle_p, clock, reefs, rng)) {
        case StepEnd::died: ++died; break;
        case StepEnd::settled: settled_now[i] = 1; ++settled; break;
        case StepEnd::drifting: break;
      }
    }
  }

  return StepTally{particle_steps, land_contacts, released, settled, died, stranded, lost, max_speed};
}

}  // namespace cullcast::drift
