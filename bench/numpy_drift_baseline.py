#!/usr/bin/python3
"""A straightforward vectorised NumPy implementation of cullcast's core drift step.

Baseline for the speed comparison of issue 5 (bench/bench_compare.py runs it
side by side with bench/bench_drift_file.cpp on the same input). It follows
include/cullcast/drift/drift_step.hpp without its extras (2-D, constant Kh,
constant hazard, weight mortality, land rule "hold", infinite settlement rate):

- currents: CF-NetCDF on a regular lon/lat grid, read with netCDF4's automatic
  masking and scaling (scale_factor, add_offset, _FillValue); variables found
  by their CF standard names; the first depth level when the files have depth
  (particles at 0 m, as cullcast samples a depth at or above the first level);
  frames with equal times in two files are kept once;
- sampling: bilinear in space, linear in time between frames, masked nodes as
  velocity 0, zero velocity outside the grid (as CurrentField::sample);
  longitudes wrapped into [lon_first, lon_first + 360);
- advection: classical RK4 in lon/lat on a sphere of radius 6371000 m,
  degrees per metre taken at each stage's latitude;
- random walk: Gaussian steps of standard deviation sqrt(2 Kh dt) metres per
  axis after advection (NumPy's own generator; the comparison is of speed and
  of statistics, not of bits);
- boundaries: outside the grid at the end of a step -> lost; the node nearest
  to the end point masked (mask of the first frame) -> the step is undone;
- biology: ageing, weight *= exp(-m dt), settlement when competent
  (precompetent <= age <= max age) and over a reef, death when age >= max age.

Simplification (documented in docs/performance.md): the reef look-up is a
raster of reef indices (int32, -1 = no reef) sampled by cullcast's ReefLookup
at the centres of cells 8 times finer than the currents grid (about 170 m on
the demo grid), written by bench_drift_file --write-reef-raster. A point is on
the reef of the raster cell that holds it, so near a reef's edge the two sides
may disagree within half a raster cell; cullcast's own look-up is exact.

Particles are kept as arrays of the particles still drifting; finished ones are
dropped each step by boolean indexing (no Python loop over particles).

Usage:
  numpy_drift_baseline.py --currents F.nc[,G.nc] --reef-raster R.bin --particles P.bin
      [--steps 144] [--dt 600] [--kh 1] [--precompetent-days 0] [--competent-days 40]
      [--mortality-per-day 0.1] [--seed 42] [--out FINAL.bin]
Prints one line "RESULT side=numpy ..." (same keys as bench_drift_file).
"""
import argparse
import sys
import time

import cftime
import netCDF4
import numpy as np

EARTH_RADIUS_M = 6371000.0  # sphere, as cullcast's EarthModel::sphere(6371000)
DEG = np.pi / 180.0
DAY_S = 86400.0

# Fate codes as in include/cullcast/drift/particles.hpp
DRIFTING, SETTLED, DIED, STRANDED, LOST = 1, 2, 3, 4, 5


def _by_standard_name(ds, name):
    for var in ds.variables.values():
        if getattr(var, "standard_name", None) == name:
            return var
    raise SystemExit(f"{ds.filepath()}: no variable with standard_name '{name}'")


class Currents:
    """Every frame of the files in memory, masked nodes filled with 0."""

    def __init__(self, paths):
        times, us, vs = [], [], []
        lon = lat = None
        for path in paths:
            with netCDF4.Dataset(path) as ds:
                ds.set_auto_maskandscale(True)
                tvar = _by_standard_name(ds, "time")
                dates = cftime.num2date(tvar[:], tvar.units, getattr(tvar, "calendar", "standard"))
                t = cftime.date2num(dates, "seconds since 1970-01-01 00:00:00",
                                    getattr(tvar, "calendar", "standard"))
                uvar = _by_standard_name(ds, "eastward_sea_water_velocity")
                vvar = _by_standard_name(ds, "northward_sea_water_velocity")
                u, v = uvar[:], vvar[:]
                if u.ndim == 4:  # (time, depth, lat, lon): the first level
                    u, v = u[:, 0], v[:, 0]
                lon = np.asarray(_by_standard_name(ds, "longitude")[:], dtype=np.float64)
                lat = np.asarray(_by_standard_name(ds, "latitude")[:], dtype=np.float64)
                times.append(np.asarray(t, dtype=np.float64))
                us.append(u)
                vs.append(v)
        t = np.concatenate(times)
        u = np.ma.concatenate(us)
        v = np.ma.concatenate(vs)
        t, first = np.unique(t, return_index=True)  # sorted; equal times kept once
        u, v = u[first], v[first]
        self.wet = ~(np.ma.getmaskarray(u[0]) | np.ma.getmaskarray(v[0]))  # land from the first frame
        self.u = np.ma.filled(u, 0.0).astype(np.float64)
        self.v = np.ma.filled(v, 0.0).astype(np.float64)
        self.t = t
        self.lon0, self.lat0 = lon[0], lat[0]
        self.lon1, self.lat1 = lon[-1], lat[-1]
        self.nx, self.ny = lon.size, lat.size
        self.inv_dlon = (self.nx - 1) / (self.lon1 - self.lon0)
        self.inv_dlat = (self.ny - 1) / (self.lat1 - self.lat0)
        self._cache = {}

    def frame_at(self, t):
        """u, v on the grid at time t (seconds since 1970), linear between frames."""
        if t not in self._cache:
            if len(self._cache) > 8:
                self._cache.clear()
            k = int(np.clip(np.searchsorted(self.t, t, side="right") - 1, 0, self.t.size - 2))
            a = (t - self.t[k]) / (self.t[k + 1] - self.t[k])
            if not -1e-9 <= a <= 1 + 1e-9:
                raise SystemExit(f"time {t} s is outside the currents' span")
            uu = (self.u[k] + a * (self.u[k + 1] - self.u[k])).ravel()
            vv = (self.v[k] + a * (self.v[k + 1] - self.v[k])).ravel()
            self._cache[t] = (uu, vv)
        return self._cache[t]

    def locate(self, lon, lat):
        """Cell indices, fractions and an inside flag for arrays of positions."""
        lon = self.lon0 + np.mod(lon - self.lon0, 360.0)
        inside = (lon >= self.lon0) & (lon <= self.lon1) & (lat >= self.lat0) & (lat <= self.lat1)
        gx = (lon - self.lon0) * self.inv_dlon
        gy = (lat - self.lat0) * self.inv_dlat
        i = np.clip(gx, 0, self.nx - 2).astype(np.intp)  # clipped only to keep indices valid
        j = np.clip(gy, 0, self.ny - 2).astype(np.intp)
        return i, j, gx - i, gy - j, inside

    def sample(self, t, lon, lat):
        uu, vv = self.frame_at(t)
        i, j, fx, fy, inside = self.locate(lon, lat)
        n00 = j * self.nx + i
        n01 = n00 + self.nx
        w00 = (1 - fx) * (1 - fy)
        w10 = fx * (1 - fy)
        w01 = (1 - fx) * fy
        w11 = fx * fy
        u = w00 * uu[n00] + w10 * uu[n00 + 1] + w01 * uu[n01] + w11 * uu[n01 + 1]
        v = w00 * vv[n00] + w10 * vv[n00 + 1] + w01 * vv[n01] + w11 * vv[n01 + 1]
        u[~inside] = 0.0
        v[~inside] = 0.0
        return u, v

    def status(self, lon, lat):
        """(outside, land) flags; land = the nearest node is masked."""
        i, j, fx, fy, inside = self.locate(lon, lat)
        land = ~self.wet[j + (fy > 0.5), i + (fx > 0.5)]
        return ~inside, inside & land


class ReefRaster:
    def __init__(self, path):
        with open(path, "rb") as f:
            head = np.frombuffer(f.read(32), dtype="<f8")
            nx, ny = np.frombuffer(f.read(16), dtype="<i8")
            self.cells = np.frombuffer(f.read(), dtype="<i4").reshape(int(ny), int(nx))
        self.lon0, self.lat0, self.dlon, self.dlat = head
        self.nx, self.ny = int(nx), int(ny)

    def reef_at(self, lon, lat):
        ix = np.floor((lon - self.lon0) / self.dlon).astype(np.intp)
        iy = np.floor((lat - self.lat0) / self.dlat).astype(np.intp)
        ok = (ix >= 0) & (ix < self.nx) & (iy >= 0) & (iy < self.ny)
        reef = np.full(lon.shape, -1, dtype=np.int32)
        reef[ok] = self.cells[iy[ok], ix[ok]]
        return reef


def run(cur, reefs, lon0, lat0, steps, dt, kh, precompetent_days, competent_days, mortality_per_day, seed):
    """Drifts all particles; returns final lon, lat, weight, fate, particle-steps, tallies."""
    n = lon0.size
    rng = np.random.default_rng(seed)
    north = 1.0 / (EARTH_RADIUS_M * DEG)  # degrees per metre northward
    walk = np.sqrt(2.0 * kh * dt)          # metres, one standard deviation
    survive = np.exp(-mortality_per_day / DAY_S * dt)
    pre_s = precompetent_days * DAY_S
    max_age_s = (precompetent_days + competent_days) * DAY_S
    start_s = cur.t[0]

    out_lon, out_lat = lon0.copy(), lat0.copy()
    out_w = np.ones(n)
    out_fate = np.full(n, DRIFTING, dtype=np.uint8)
    ids = np.arange(n)
    x, y, w = lon0.copy(), lat0.copy(), np.ones(n)
    tally = dict(particle_steps=0, settled=0, died=0, lost=0, land_contacts=0)

    def rate(t, px, py):
        u, v = cur.sample(t, px, py)
        return u * north / np.cos(py * DEG), v * north

    for step in range(steps):
        if x.size == 0:
            break
        tally["particle_steps"] += x.size
        t0 = start_s + step * dt
        h = 0.5 * dt
        k1x, k1y = rate(t0, x, y)
        k2x, k2y = rate(t0 + h, x + h * k1x, y + h * k1y)
        k3x, k3y = rate(t0 + h, x + h * k2x, y + h * k2y)
        k4x, k4y = rate(t0 + dt, x + dt * k3x, y + dt * k3y)
        nx_ = x + dt / 6.0 * (k1x + 2 * k2x + 2 * k3x + k4x)
        ny_ = y + dt / 6.0 * (k1y + 2 * k2y + 2 * k3y + k4y)
        if walk > 0:
            z = rng.standard_normal((2, x.size))
            nx_ += z[0] * walk * north / np.cos(ny_ * DEG)
            ny_ += z[1] * walk * north
        outside, land = cur.status(nx_, ny_)
        tally["land_contacts"] += int(np.count_nonzero(land))
        nx_ = np.where(land, x, nx_)  # hold: the step is undone
        ny_ = np.where(land, y, ny_)
        w = np.where(outside, w, w * survive)  # the lost leave before ageing
        age1 = (step + 1) * dt  # everyone released at the first frame
        fate = np.full(x.size, DRIFTING, dtype=np.uint8)
        fate[outside] = LOST
        if pre_s <= age1 <= max_age_s:
            reef = reefs.reef_at(nx_, ny_)
            fate[~outside & (reef >= 0)] = SETTLED
        if age1 >= max_age_s:
            fate[fate == DRIFTING] = DIED
        x, y = nx_, ny_
        done = fate != DRIFTING
        if np.any(done):
            gone = ids[done]
            out_lon[gone], out_lat[gone], out_w[gone], out_fate[gone] = x[done], y[done], w[done], fate[done]
            tally["settled"] += int(np.count_nonzero(fate == SETTLED))
            tally["died"] += int(np.count_nonzero(fate == DIED))
            tally["lost"] += int(np.count_nonzero(fate == LOST))
            keep = ~done
            x, y, w, ids = x[keep], y[keep], w[keep], ids[keep]
    out_lon[ids], out_lat[ids], out_w[ids] = x, y, w
    return out_lon, out_lat, out_w, out_fate, tally


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--currents", required=True, help="comma-separated NetCDF files")
    ap.add_argument("--reef-raster", required=True)
    ap.add_argument("--particles", required=True, help="float64 lon, lat pairs")
    ap.add_argument("--steps", type=int, default=144)
    ap.add_argument("--dt", type=float, default=600.0, help="seconds")
    ap.add_argument("--kh", type=float, default=1.0, help="m2/s")
    ap.add_argument("--precompetent-days", type=float, default=0.0)
    ap.add_argument("--competent-days", type=float, default=40.0)
    ap.add_argument("--mortality-per-day", type=float, default=0.1)
    ap.add_argument("--seed", type=int, default=42)
    ap.add_argument("--out", help="final lon, lat, weight (float64) and fate (uint8) arrays")
    a = ap.parse_args(argv)
    wall0 = time.perf_counter()
    cur = Currents([p for p in a.currents.split(",") if p])
    reefs = ReefRaster(a.reef_raster)
    pairs = np.fromfile(a.particles, dtype="<f8").reshape(-1, 2)
    lon0, lat0 = pairs[:, 0].copy(), pairs[:, 1].copy()
    t0 = time.perf_counter()
    c0 = time.process_time()
    lon, lat, w, fate, tally = run(cur, reefs, lon0, lat0, a.steps, a.dt, a.kh, a.precompetent_days,
                                   a.competent_days, a.mortality_per_day, a.seed)
    step_s = time.perf_counter() - t0
    step_cpu_s = time.process_time() - c0
    if a.out:
        with open(a.out, "wb") as f:
            for arr in (lon, lat, w):
                f.write(arr.astype("<f8").tobytes())
            f.write(fate.astype(np.uint8).tobytes())
    wall = time.perf_counter() - wall0
    print(f"RESULT side=numpy threads=1 particles={lon0.size} steps={a.steps} "
          f"particle_steps={tally['particle_steps']} step_s={step_s:.4f} step_cpu_s={step_cpu_s:.4f} prepare_s=0 wall_s={wall:.4f} "
          f"step_rate={tally['particle_steps'] / step_s:.4g} settled={tally['settled']} died={tally['died']} "
          f"lost={tally['lost']} land_contacts={tally['land_contacts']} "
          f"drifting={int(np.count_nonzero(fate == DRIFTING))}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
