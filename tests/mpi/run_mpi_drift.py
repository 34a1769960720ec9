#!/usr/bin/env python3
"""Distributed drift under a real MPI launcher (built with -DCULLCAST_MPI=ON).

    run_mpi_drift.py CULLCAST_EXE MPIEXEC ROOT CASE

Cases:
  disperse  `mpirun -np 2 cullcast disperse` against single-process runs with
            1 and 2 OpenMP threads: settlement.nc (every variable, with
            python3-netcdf4) and settlement.csv must be identical, bit for bit.
  run       `mpirun -np 2 cullcast run` (disperse -> connect -> prioritise ->
            brief on rank 0) against one process: connectivity.csv identical.
  rank-fails  rank 0 cannot create the output folder while rank 1 drifts: the
            job stops (no hang) with the cause named, non-zero exit, no outputs.

The study is the invented demo archipelago (scenarios/lantern-reach.toml, 50
reefs and its aggregations, 3 spawning nights) with short larval lives and
few larvae per reef; its currents come from `cullcast demo-data`.
"""
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
import netCDF4

SHRINK = [
    "--set", "larvae.precompetent_days=1",
    "--set", "larvae.competent_days=2",
    "--set", "spawning.1.larvae_per_reef=40",
    "--set", "spawning.2.larvae_per_reef=40",
    "--set", "spawning.3.larvae_per_reef=40",
]


def run(cmd, threads, cwd, timeout=300):
    env = dict(os.environ, OMP_NUM_THREADS=str(threads))
    return subprocess.run(cmd, capture_output=True, text=True, cwd=cwd, env=env, timeout=timeout)


def mpirun(mpiexec, n):
    # As root in CI; more ranks than cores on small machines.
    return [mpiexec, "--allow-run-as-root", "--oversubscribe", "-np", str(n)]


def make_study(exe, root, tmp):
    shutil.copytree(os.path.join(root, "scenarios", "lantern-reach"), os.path.join(tmp, "lantern-reach"),
                    ignore=shutil.ignore_patterns("currents", "out"))
    shutil.copy(os.path.join(root, "scenarios", "lantern-reach.toml"), tmp)
    # Events on 2, 4 and 6 December plus 3 days of larval life: 10 days of currents.
    made = run([exe, "-q", "demo-data", "--days", "10", "--days-per-file", "5",
                os.path.join(tmp, "lantern-reach", "currents")], 2, tmp)
    if made.returncode != 0:
        raise SystemExit("demo-data failed: " + made.stderr)
    return os.path.join(tmp, "lantern-reach.toml")


def out_set(name):
    return ["--set", f"outputs.dir=\"{name}\""]


def check(proc, what):
    if proc.returncode != 0:
        print(f"{what} failed ({proc.returncode}):\n{proc.stdout}\n{proc.stderr}")
        raise SystemExit(1)


def same_netcdf(a, b):
    """Every variable and attribute identical (values and types)."""
    problems = []
    with netCDF4.Dataset(a) as x, netCDF4.Dataset(b) as y:
        if set(x.variables) != set(y.variables):
            return [f"variables differ: {sorted(x.variables)} vs {sorted(y.variables)}"], 0
        for name in x.variables:
            u, v = x.variables[name], y.variables[name]
            if u.dtype != v.dtype or u.shape != v.shape:
                problems.append(f"{name}: {u.dtype}{u.shape} vs {v.dtype}{v.shape}")
                continue
            p, q = np.asarray(u[:]), np.asarray(v[:])
            if p.dtype.kind == "f":
                same = p.tobytes() == q.tobytes()  # bit for bit, not approximately
            else:
                same = np.array_equal(p, q)
            if not same:
                problems.append(f"{name}: values differ")
        for attr in x.ncattrs():
            if str(x.getncattr(attr)) != str(y.getncattr(attr)):
                problems.append(f"global attribute {attr} differs")
        records = len(x.dimensions["settlement"])
    return problems, records


def case_disperse(exe, mpiexec, root, tmp):
    scenario = make_study(exe, root, tmp)
    base = [exe, "disperse", scenario] + SHRINK
    one = run(base + out_set("lantern-reach/out-1") + ["-q"], 2, tmp)
    check(one, "single process, 2 threads")
    one_t1 = run(base + out_set("lantern-reach/out-1t1") + ["-q"], 1, tmp)
    check(one_t1, "single process, 1 thread")
    two = run(mpirun(mpiexec, 2) + base + out_set("lantern-reach/out-2"), 1, tmp)
    check(two, "mpirun -np 2")
    if "2 MPI ranks" not in two.stdout or two.stdout.count("Drift finished") != 1:
        print("rank 0 alone should print the summary, with the split:\n" + two.stdout)
        return 1
    failures = []
    ref = os.path.join(tmp, "lantern-reach", "out-1")
    for other in ("out-1t1", "out-2"):
        got = os.path.join(tmp, "lantern-reach", other)
        problems, records = same_netcdf(os.path.join(ref, "settlement.nc"), os.path.join(got, "settlement.nc"))
        failures += [f"{other}: {p}" for p in problems]
        with open(os.path.join(ref, "settlement.csv"), "rb") as f, open(os.path.join(got, "settlement.csv"), "rb") as g:
            if f.read() != g.read():
                failures.append(f"{other}: settlement.csv differs")
        if records < 100:
            failures.append(f"only {records} settlement records: the comparison would prove little")
        leftovers = [n for n in os.listdir(got) if n not in ("settlement.nc", "settlement.csv")]
        if leftovers:
            failures.append(f"{other}: unexpected files {leftovers}")
    print(f"{records} records compared")
    for f in failures:
        print(f)
    return 1 if failures else 0


def case_run(exe, mpiexec, root, tmp):
    scenario = make_study(exe, root, tmp)
    base = [exe, "-q", "run", scenario] + SHRINK
    one = run(base + out_set("lantern-reach/out-1"), 2, tmp)
    check(one, "single-process run")
    two = run(mpirun(mpiexec, 2) + base + out_set("lantern-reach/out-2"), 1, tmp)
    check(two, "mpirun -np 2 run")
    failures = []
    for name in ("connectivity.csv", "settlement.csv"):
        with open(os.path.join(tmp, "lantern-reach", "out-1", name), "rb") as f, \
                open(os.path.join(tmp, "lantern-reach", "out-2", name), "rb") as g:
            if f.read() != g.read():
                failures.append(f"{name} differs between 1 process and 2 ranks")
    listing1 = sorted(os.listdir(os.path.join(tmp, "lantern-reach", "out-1")))
    listing2 = sorted(os.listdir(os.path.join(tmp, "lantern-reach", "out-2")))
    if listing1 != listing2:
        failures.append(f"outputs differ: {listing1} vs {listing2}")
    for f in failures:
        print(f)
    return 1 if failures else 0


def case_rank_fails(exe, mpiexec, root, tmp):
    scenario = make_study(exe, root, tmp)
    blocked = os.path.join(tmp, "lantern-reach", "blocked")
    with open(blocked, "w") as f:  # a file where the output folder should go: only rank 0 writes
        f.write("not a folder\n")
    two = run(mpirun(mpiexec, 2) + [exe, "disperse", scenario] + SHRINK + out_set("lantern-reach/blocked"), 1,
              tmp, timeout=120)
    failures = []
    if two.returncode == 0:
        failures.append("exit code 0")
    # Rank 0 finds the folder unusable either when it takes the output lock
    # (before MPI starts: a plain error) or while the ranks drift (the rank
    # is named); either way the job stops with the cause.
    named = "cullcast: rank 0 of 2: failed:" in two.stderr or "cannot create output folder" in two.stderr
    if not named or "blocked" not in two.stderr:
        failures.append("stderr lacks the rank and the cause:\n" + two.stderr)
    if [n for n in os.listdir(os.path.join(tmp, "lantern-reach")) if n.startswith("blocked") and n != "blocked"]:
        failures.append("partial outputs left beside the blocked folder")
    for f in failures:
        print(f)
    return 1 if failures else 0


def main():
    exe, mpiexec, root, case = sys.argv[1:5]
    cases = {"disperse": case_disperse, "run": case_run, "rank-fails": case_rank_fails}
    with tempfile.TemporaryDirectory(prefix="cullcast-mpi-") as tmp:
        return cases[case](exe, mpiexec, root, tmp)


if __name__ == "__main__":
    sys.exit(main())
