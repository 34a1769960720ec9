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
  queue-2, queue-3
            `mpirun -np 2|3 cullcast disperse` with CULLCAST_MPI_STATIC_SHARE=0.2:
            80 % of the estimated cost goes through rank 0's queue. The queue
            line must account for every queued batch, a helper rank must have
            taken some, and settlement.nc and settlement.csv must equal the
            single-process run's, bit for bit.
  queue-rank-fails
            `mpirun -np 3 cullcast run` where rank 1 fails on receiving its
            first queued chunk (test-only CULLCAST_TEST_FAIL_QUEUED=1): the job
            stops (no hang), stderr names rank 1 and the cause, the exit code
            is non-zero, and the output folder holds no settlement, connectivity
            or temporary file; only the killed rank 0's lock is left, which the
            next run reports as stale and replaces.

The study is the invented demo archipelago (scenarios/lantern-reach.toml, 50
reefs and its aggregations, 3 spawning nights) with short larval lives and
few larvae per reef; its currents come from `cullcast demo-data`.
"""
import os
import re
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


def run(cmd, threads, cwd, timeout=300, extra_env=None):
    env = dict(os.environ, OMP_NUM_THREADS=str(threads))
    # The queue's settings come from the test alone, not the caller's shell.
    for name in ("CULLCAST_MPI_STATIC_SHARE", "CULLCAST_TEST_FAIL_QUEUED"):
        env.pop(name, None)
    env.update(extra_env or {})
    return subprocess.run(cmd, capture_output=True, text=True, cwd=cwd, env=env, timeout=timeout)


def mpirun(mpiexec, n, unbound=False):
    # As root in CI; more ranks than cores on small machines. Unbound: every
    # rank may run on every processor (as docs/scaling.md suggests for threads).
    return [mpiexec, "--allow-run-as-root", "--oversubscribe"] + (["--bind-to", "none"] if unbound else []) + \
        ["-np", str(n)]


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
    two = run(mpirun(mpiexec, 2, unbound=True) + base + out_set("lantern-reach/out-2"), 1, tmp)
    check(two, "mpirun -np 2 --bind-to none")
    if "2 MPI ranks" not in two.stdout or two.stdout.count("Drift finished") != 1:
        print("rank 0 alone should print the summary, with the split:\n" + two.stdout)
        return 1
    failures = []
    # Two unbound ranks of one thread each leave no processor spare on a
    # 2-processor machine, though each sees both: no rank may start a
    # background frame decoder there.
    if len(os.sched_getaffinity(0)) <= 2 and "spare processor" in two.stdout:
        failures.append("2 ranks x 1 thread on <= 2 processors reported a spare processor:\n" + two.stdout)
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


def queue_counts(stdout, ranks):
    """Rank 0's summary lines: (statically split, queued) batch counts from the
    split line, and batches per rank from the queue line."""
    split = re.search(r"(\d+) release batches \(event x source\), (\d+) split by cost, (\d+) queued on rank 0",
                      stdout)
    line = re.search(r"queue: (\d+) of (\d+) batches .* in (\d+) chunks:(.*)", stdout)
    if not split or not line:
        return None
    per_rank = {int(r): (int(b), int(c)) for r, b, c in
                re.findall(r"rank (\d+) (\d+) batches / (\d+) chunks", line.group(4))}
    if sorted(per_rank) != list(range(ranks)):
        return None
    return int(split.group(1)), int(split.group(3)), int(line.group(1)), int(line.group(3)), per_rank


def case_queue(exe, mpiexec, root, tmp, ranks):
    scenario = make_study(exe, root, tmp)
    base = [exe, "disperse", scenario] + SHRINK
    one = run(base + out_set("lantern-reach/out-1") + ["-q"], 1, tmp)
    check(one, "single process")
    many = run(mpirun(mpiexec, ranks) + base + out_set("lantern-reach/out-n"), 1, tmp,
               extra_env={"CULLCAST_MPI_STATIC_SHARE": "0.2"})
    check(many, f"mpirun -np {ranks} with the queue")
    print(many.stdout)
    failures = []
    counts = queue_counts(many.stdout, ranks)
    if counts is None:
        print("rank 0 should print the split and a queue line for every rank:\n" + many.stdout)
        return 1
    total, queued, handed_out, chunks, per_rank = counts
    # 54 sources x 3 nights; 20 % static leaves most batches to the queue.
    if total != 162 or not 0.7 * total < queued < total:
        failures.append(f"{queued} of {total} batches queued; expected about 80 %")
    if handed_out != queued or sum(b for b, _ in per_rank.values()) != queued:
        failures.append(f"the queue handed out {handed_out} (per rank {per_rank}) of {queued} queued batches")
    if sum(c for _, c in per_rank.values()) != chunks or chunks < ranks:
        failures.append(f"{chunks} chunks, per rank {per_rank}")
    if not any(per_rank[r][0] > 0 for r in range(1, ranks)):
        failures.append(f"no helper rank took a queued batch: {per_rank}")
    ref = os.path.join(tmp, "lantern-reach", "out-1")
    got = os.path.join(tmp, "lantern-reach", "out-n")
    problems, records = same_netcdf(os.path.join(ref, "settlement.nc"), os.path.join(got, "settlement.nc"))
    failures += problems
    with open(os.path.join(ref, "settlement.csv"), "rb") as f, open(os.path.join(got, "settlement.csv"), "rb") as g:
        if f.read() != g.read():
            failures.append("settlement.csv differs")
    if records < 100:
        failures.append(f"only {records} settlement records: the comparison would prove little")
    print(f"{records} records compared; queued batches per rank (batches, chunks): {per_rank}")
    for f in failures:
        print(f)
    return 1 if failures else 0


def case_queue_rank_fails(exe, mpiexec, root, tmp):
    scenario = make_study(exe, root, tmp)
    out = os.path.join(tmp, "lantern-reach", "out-fail")
    three = run(mpirun(mpiexec, 3) + [exe, "run", scenario] + SHRINK + out_set("lantern-reach/out-fail"), 1, tmp,
                timeout=120, extra_env={"CULLCAST_MPI_STATIC_SHARE": "0.2", "CULLCAST_TEST_FAIL_QUEUED": "1"})
    failures = []
    if three.returncode == 0:
        failures.append("exit code 0")
    if "cullcast: rank 1 of 3: failed: injected failure (CULLCAST_TEST_FAIL_QUEUED" not in three.stderr:
        failures.append("stderr lacks the rank and the cause:\n" + three.stderr)
    if "Drift finished" in three.stdout:
        failures.append("rank 0 reported a finished drift:\n" + three.stdout)
    left = sorted(os.listdir(out)) if os.path.isdir(out) else []
    # MPI_Abort kills rank 0 before it can remove its lock; nothing else may be there.
    if [n for n in left if n != ".cullcast.lock"]:
        failures.append(f"partial outputs left: {left}")
    # The next run into the same folder replaces the dead run's lock.
    again = run([exe, "disperse", scenario] + SHRINK + out_set("lantern-reach/out-fail"), 1, tmp)
    check(again, "the run after the failed one")
    if ".cullcast.lock" in left and "stale" not in again.stderr:
        failures.append("the next run did not report the dead run's lock:\n" + again.stderr)
    print(f"failed job left {left}; stderr:\n{three.stderr}")
    for f in failures:
        print(f)
    return 1 if failures else 0


def main():
    exe, mpiexec, root, case = sys.argv[1:5]
    cases = {"disperse": case_disperse, "run": case_run, "rank-fails": case_rank_fails,
             "queue-2": lambda *a: case_queue(*a, 2), "queue-3": lambda *a: case_queue(*a, 3),
             "queue-rank-fails": case_queue_rank_fails}
    with tempfile.TemporaryDirectory(prefix="cullcast-mpi-") as tmp:
        return cases[case](exe, mpiexec, root, tmp)


if __name__ == "__main__":
    sys.exit(main())
