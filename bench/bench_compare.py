#!/usr/bin/python3
"""Side-by-side timing of cullcast's production drift step against the NumPy baseline.

Generates one input (the demo currents from `cullcast demo-data --kind demo`,
the reef layer scenarios/lantern-reach/reefs.geojson, N particles placed at
random over water in the reef area and sorted into spatial order), then runs
  - bench_drift_file (C++: drift::drift_step on currents::CurrentField and
    reefs::ReefLookup) with 1 and 2 threads, and
  - bench/numpy_drift_baseline.py (NumPy, one thread)
on the same particles for the same steps, `--repeats` times each (interleaved),
and prints the best particle-steps per second of each side and the ratio.

Then checks that the two agree:
  - Kh = 0 (both deterministic RK4): fates (same for >= 98 % of particles;
    the NumPy side's reef look-up is a raster) and final positions particle by
    particle (max and percentiles of the distance; differences come from float
    vs double velocities and bilinear weights, the exact vs rasterised reef
    look-up and, where a particle meets land, which step is held);
  - Kh > 0 (different random generators): mean displacement within 4 standard
    errors, displacement variance within 5 %, fate shares within 1 point.

Usage (from the repository root):
  /usr/bin/python3 bench/bench_compare.py [--build build-np] [--particles 200000]
      [--steps 144] [--repeats 3] [--kh 1] [--work /tmp/cullcast-np-bench]
"""
import argparse
import os
import platform
import re
import subprocess
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, HERE)
import numpy_drift_baseline as nb  # noqa: E402

R = nb.EARTH_RADIUS_M
DEG = nb.DEG


def run(cmd):
    res = subprocess.run(cmd, capture_output=True, text=True)
    if res.returncode != 0:
        sys.exit(f"failed ({res.returncode}): {' '.join(cmd)}\n{res.stdout}\n{res.stderr}")
    return res.stdout


def result(text):
    line = next(l for l in text.splitlines() if l.startswith("RESULT"))
    out = {}
    for k, v in re.findall(r"(\w+)=(\S+)", line):
        try:
            out[k] = float(v)
        except ValueError:
            out[k] = v
    return out


def read_final(path, n):
    raw = np.fromfile(path, dtype=np.uint8)
    f64 = np.frombuffer(raw[: 24 * n].tobytes(), dtype="<f8")
    return f64[:n], f64[n:2 * n], f64[2 * n:3 * n], raw[24 * n:24 * n + n]


def place_particles(cur, n, seed, path):
    """n positions over water in the reef area, in spatial order (rows south to north)."""
    rng = np.random.default_rng(seed)
    lon = np.empty(0)
    lat = np.empty(0)
    while lon.size < n:
        x = rng.uniform(150.0, 150.6, 2 * n)
        y = rng.uniform(-20.4, -20.0, 2 * n)
        outside, land = cur.status(x, y)
        ok = ~outside & ~land
        lon, lat = np.concatenate([lon, x[ok]]), np.concatenate([lat, y[ok]])
    lon, lat = lon[:n], lat[:n]
    row = np.floor((lat - cur.lat0) * cur.inv_dlat)
    order = np.lexsort((lon, row))
    lon, lat = lon[order], lat[order]
    np.stack([lon, lat], axis=1).astype("<f8").tofile(path)
    return lon, lat


def displacement_m(lon0, lat0, lon, lat):
    return (lon - lon0) * np.cos(lat0 * DEG) * R * DEG, (lat - lat0) * R * DEG


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--build", default=os.path.join(ROOT, "build-np"))
    ap.add_argument("--particles", type=int, default=200000)
    ap.add_argument("--steps", type=int, default=144, help="600 s steps (144 = one day)")
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--kh", type=float, default=1.0, help="m2/s for the timed runs")
    ap.add_argument("--raster-factor", type=int, default=32,
                    help="reef raster cells per currents-grid spacing (NumPy side's reef look-up)")
    ap.add_argument("--work", default="/tmp/cullcast-np-bench")
    a = ap.parse_args()

    os.makedirs(a.work, exist_ok=True)
    cur_dir = os.path.join(a.work, "currents")
    if not os.path.isdir(cur_dir) or not os.listdir(cur_dir):
        run([os.path.join(a.build, "cullcast"), "--quiet", "demo-data", "--kind", "demo", "--days", "3", "--seasons", "1", cur_dir])
    files = sorted(os.path.join(cur_dir, f) for f in os.listdir(cur_dir) if f.endswith(".nc"))
    currents = ",".join(files)
    reefs = os.path.join(ROOT, "scenarios", "lantern-reach", "reefs.geojson")
    raster = os.path.join(a.work, "reef_raster.bin")
    parts = os.path.join(a.work, "particles.bin")
    cxx = os.path.join(a.build, "bench_drift_file")
    py = [sys.executable, os.path.join(HERE, "numpy_drift_baseline.py")]

    cur = nb.Currents(files)
    lon0, lat0 = place_particles(cur, a.particles, 7, parts)
    print(run([cxx, "--currents", currents, "--reefs", reefs, "--write-reef-raster", raster,
               "--raster-factor", str(a.raster_factor)]).strip())
    print(f"grid {cur.nx} x {cur.ny}, {cur.t.size} frames; {a.particles} particles; {a.steps} steps of 600 s")

    common = ["--currents", currents, "--particles", parts, "--steps", str(a.steps)]
    best = {}
    for rep in range(a.repeats):
        for name, cmd in (("cxx1", [cxx, *common, "--reefs", reefs, "--kh", str(a.kh), "--threads", "1"]),
                          ("cxx2", [cxx, *common, "--reefs", reefs, "--kh", str(a.kh), "--threads", "2"]),
                          ("numpy", [*py, *common, "--reef-raster", raster, "--kh", str(a.kh)])):
            r = result(run(cmd))
            print(f"  run {rep + 1} {name:5s}: {r['step_rate'] / 1e6:7.3f} M particle-steps/s "
                  f"(CPU-time rate {r['particle_steps'] / r['step_cpu_s'] / 1e6:.3f} M/s; step loop {r['step_s']:.3f} s, frames {r['prepare_s']:.3f} s, whole program {r['wall_s']:.3f} s; "
                  f"settled {int(r['settled'])}, lost {int(r['lost'])}, land contacts {int(r['land_contacts'])})")
            if name not in best or r["step_rate"] > best[name]["step_rate"]:
                best[name] = r
    if a.repeats > 0:
        report_timing(best)
    return agreement(a, cxx, py, common, reefs, raster, lon0, lat0)


def report_timing(best):
    n_ps = best["numpy"]["particle_steps"]
    print("\nbest of each (drift step only; whole program includes reading the currents and particles):")
    for name in ("cxx1", "cxx2", "numpy"):
        r = best[name]
        print(f"  {name:5s}: {r['step_rate'] / 1e6:7.3f} M particle-steps/s, whole program "
              f"{r['particle_steps'] / r['wall_s'] / 1e6:7.3f} M particle-steps/s ({r['wall_s']:.3f} s, "
              f"{int(r['particle_steps'])} particle-steps)")
    cpu_rate = {k: best[k]["particle_steps"] / best[k]["step_cpu_s"] for k in best}
    print(f"  1-thread rate per CPU-second of the step loop (less sensitive to other jobs): C++ "
          f"{cpu_rate['cxx1'] / 1e6:.3f} M/s, NumPy {cpu_rate['numpy'] / 1e6:.3f} M/s, "
          f"ratio {cpu_rate['cxx1'] / cpu_rate['numpy']:.1f}x")
    for name in ("cxx1", "cxx2"):
        print(f"  speed-up {name} / numpy: step {best[name]['step_rate'] / best['numpy']['step_rate']:.1f}x, "
              f"whole program {best['numpy']['wall_s'] / best[name]['wall_s']:.1f}x")
    if abs(best["cxx1"]["particle_steps"] - n_ps) > 0.01 * n_ps:
        print(f"  note: particle-steps differ: C++ {int(best['cxx1']['particle_steps'])}, NumPy {int(n_ps)}")



def agreement(a, cxx, py, common, reefs, raster, lon0, lat0):
    ok = True
    print("\nagreement, Kh = 0 (deterministic):")
    c_out, n_out, c2_out = (os.path.join(a.work, f) for f in ("cxx_kh0.bin", "numpy_kh0.bin", "cxx2_kh0.bin"))
    run([cxx, *common, "--reefs", reefs, "--kh", "0", "--threads", "1", "--out", c_out])
    run([cxx, *common, "--reefs", reefs, "--kh", "0", "--threads", "2", "--out", c2_out])
    run([*py, *common, "--reef-raster", raster, "--kh", "0", "--out", n_out])
    n = a.particles
    cl, cb, cw, cf = read_final(c_out, n)
    nl, nbt, nw, nf = read_final(n_out, n)
    same_threads = open(c_out, "rb").read() == open(c2_out, "rb").read()
    print(f"  C++ 1 vs 2 threads bit-identical: {same_threads}")
    ok &= same_threads
    same_fate = cf == nf
    print(f"  same fate: {np.mean(same_fate) * 100:.3f} % of particles "
          f"(C++ settled/lost/drifting {np.sum(cf == 2)}/{np.sum(cf == 5)}/{np.sum(cf == 1)}, "
          f"NumPy {np.sum(nf == 2)}/{np.sum(nf == 5)}/{np.sum(nf == 1)})")
    both = (cf == 1) & (nf == 1)
    dx, dy = displacement_m(cl[both], cb[both], nl[both], nbt[both])
    dist = np.hypot(dx, dy)
    print(f"  final position, both drifting ({both.sum()}): max {dist.max():.3g} m, 99.9 % {np.quantile(dist, 0.999):.3g} m, "
          f"99 % {np.quantile(dist, 0.99):.3g} m, median {np.median(dist):.3g} m")
    cdx, cdy = displacement_m(lon0[both], lat0[both], cl[both], cb[both])
    ndx, ndy = displacement_m(lon0[both], lat0[both], nl[both], nbt[both])
    scale = np.mean(np.hypot(cdx, cdy))
    mdiff = np.hypot(cdx.mean() - ndx.mean(), cdy.mean() - ndy.mean())
    print(f"  mean displacement C++ ({cdx.mean():.2f}, {cdy.mean():.2f}) m, NumPy ({ndx.mean():.2f}, {ndy.mean():.2f}) m; "
          f"difference {mdiff:.3g} m = {mdiff / scale * 100:.3g} % of the mean distance {scale:.0f} m")
    k0cl, k0cb, k0c, k0nl, k0nb, k0n = cl, cb, cf, nl, nbt, nf
    wdiff = np.max(np.abs(cw[both] - nw[both]))
    print(f"  weight: max difference {wdiff:.3g}")
    ok &= bool(np.mean(same_fate) > 0.98 and mdiff < 1e-3 * scale and wdiff < 1e-12)

    print(f"\nagreement, Kh = {a.kh} m2/s (statistical):")
    c_out, n_out = os.path.join(a.work, "cxx_kh.bin"), os.path.join(a.work, "numpy_kh.bin")
    run([cxx, *common, "--reefs", reefs, "--kh", str(a.kh), "--threads", "2", "--out", c_out])
    run([*py, *common, "--reef-raster", raster, "--kh", str(a.kh), "--out", n_out])
    cl, cb, cw, cf = read_final(c_out, n)
    nl, nbt, nw, nf = read_final(n_out, n)
    for code, label in ((1, "drifting"), (2, "settled"), (5, "lost")):
        sc, sn = np.mean(cf == code) * 100, np.mean(nf == code) * 100
        print(f"  {label:8s}: C++ {sc:6.2f} %, NumPy {sn:6.2f} %")
        ok &= abs(sc - sn) < 1.0
    # The walk's own spread: each side's Kh > 0 end point minus its Kh = 0 end
    # point, over particles drifting in all four runs. Expected variance per
    # axis 2·Kh·t (Einstein 1905, Ann. Phys. 17:549–560) where shear is weak.
    all4 = (cf == 1) & (nf == 1) & (k0c == 1) & (k0n == 1)
    cdx, cdy = displacement_m(k0cl[all4], k0cb[all4], cl[all4], cb[all4])
    ndx, ndy = displacement_m(k0nl[all4], k0nb[all4], nl[all4], nbt[all4])
    expect = 2 * a.kh * a.steps * 600.0
    print(f"  walk spread (Kh run minus Kh = 0 run, {all4.sum()} particles drifting in all runs); "
          f"2·Kh·t = {expect:.0f} m2:")
    for axis, c, m in (("east", cdx, ndx), ("north", cdy, ndy)):
        se = np.sqrt(c.var() / c.size + m.var() / m.size)
        z = (c.mean() - m.mean()) / se
        vr = c.var() / m.var()
        print(f"    {axis:5s}: mean C++ {c.mean():7.2f} m, NumPy {m.mean():7.2f} m ({z:+.2f} standard errors); "
              f"variance C++ {c.var():.0f} m2, NumPy {m.var():.0f} m2, ratio {vr:.4f}")
        ok &= abs(z) < 4 and abs(vr - 1) < 0.05
    print(f"\nmachine: {platform.machine()}, {os.cpu_count()} logical CPUs, Python {platform.python_version()}, "
          f"NumPy {np.__version__}")
    print("AGREEMENT", "PASS" if ok else "FAIL")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
