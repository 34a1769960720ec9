#!/usr/bin/python3
"""Crash-safe long runs: kill -9 a drift mid-run, resume it, and compare with
an uninterrupted run.

  kill_and_resume.py CULLCAST_EXE SOURCE_DIR

Steps (all on real files; currents from `cullcast demo-data`, the demo reef
layer):
  1. reference: `disperse` without checkpoints (2 threads);
  2. the same study with a checkpoint every 0.3 s, killed with SIGKILL once a
     checkpoint exists; nothing final may be in its outputs folder then;
  3. `--resume` (1 thread): exit 0, settlement.csv byte-identical to the
     reference and every variable of settlement.nc equal, checkpoint and
     stale temporary files gone;
  4. resuming with a changed --set is refused (exit 3, names the file).
"""
import os
import signal
import subprocess
import sys
import tempfile
import time

import netCDF4
import numpy as np

EXE, ROOT = os.path.abspath(sys.argv[1]), os.path.abspath(sys.argv[2])


def fail(msg):
    print("FAIL:", msg)
    sys.exit(1)


def run(args, **kw):
    return subprocess.run([EXE] + args, capture_output=True, text=True, **kw)


def main():
    with tempfile.TemporaryDirectory(prefix="cullcast-resume-") as work:
        cur = os.path.join(work, "currents")
        r = run(["demo-data", "--kind", "demo", "--seasons", "1", "--days", "4", "--days-per-file", "2", cur])
        if r.returncode != 0:
            fail("demo-data: " + r.stderr)
        scenario = os.path.join(work, "s.toml")
        with open(scenario, "w") as f:
            f.write(f"""[study]
name = "resume test"
seed = 77
[currents]
files = ["{cur}/*.nc"]
[reefs]
layer = "{ROOT}/scenarios/lantern-reach/reefs.geojson"
id = "id"
name = "name"
priority = "priority"
[[spawning]]
label = "one night"
start = "2026-12-01T12:00:00Z"
hours = 2.0
larvae_per_reef = 4000
[larvae]
precompetent_days = 0.5
competent_days = 2.5
mortality_per_day = 0.1
[motion]
dt_minutes = 15.0
kh_m2_s = 1.0
[outputs]
dir = "out"
settlement_csv = true
""")
        ref_dir, cut_dir = os.path.join(work, "ref"), os.path.join(work, "cut")
        env2 = dict(os.environ, OMP_NUM_THREADS="2")
        t0 = time.time()
        r = run(["disperse", scenario, "--quiet", "--checkpoint-minutes", "0", "--set", f"outputs.dir={ref_dir}"],
                env=env2)
        if r.returncode != 0:
            fail("reference run: " + r.stderr)
        print(f"reference run: {time.time() - t0:.1f} s")

        cut_args = ["disperse", scenario, "--quiet", "--checkpoint-minutes", "0.005", "--set", f"outputs.dir={cut_dir}"]
        proc = subprocess.Popen([EXE] + cut_args, env=env2, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        checkpoint = os.path.join(cut_dir, "drift.checkpoint")
        deadline = time.time() + 300
        while not os.path.exists(checkpoint):
            if proc.poll() is not None:
                fail("the run ended before writing a checkpoint: " + proc.stderr.read().decode())
            if time.time() > deadline:
                proc.kill()
                fail("no checkpoint after 300 s")
            time.sleep(0.05)
        time.sleep(0.5)  # a few more checkpoints, and the kill lands between them
        if proc.poll() is not None:
            fail("the run finished before it could be killed; make the study longer")
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait()
        print("killed with SIGKILL; outputs folder holds:", sorted(os.listdir(cut_dir)))
        for final in ("settlement.nc", "settlement.csv"):
            if os.path.exists(os.path.join(cut_dir, final)):
                fail(f"{final} exists after the kill (half-written output)")
        if not os.path.exists(checkpoint):
            fail("checkpoint gone after the kill")

        # A changed study is refused.
        changed = cut_args[:-2] + ["--set", f"outputs.dir={cut_dir}", "--set", "motion.kh_m2_s=2", "--resume"]
        r = run(changed)
        if r.returncode != 3 or "drift.checkpoint" not in r.stderr or "different study" not in r.stderr:
            fail(f"changed study not refused clearly: exit {r.returncode}, {r.stderr}")

        r = run(cut_args + ["--resume"], env=dict(os.environ, OMP_NUM_THREADS="1"))
        if r.returncode != 0:
            fail("resume: " + r.stderr)
        left = sorted(os.listdir(cut_dir))
        print("after resume:", left)
        if "drift.checkpoint" in left:
            fail("checkpoint not removed after a finished run")
        if any(".part-" in name for name in left):
            fail("stale temporary files left: " + str(left))
        with open(os.path.join(ref_dir, "settlement.csv"), "rb") as a, \
                open(os.path.join(cut_dir, "settlement.csv"), "rb") as b:
            ref_csv, cut_csv = a.read(), b.read()
        if ref_csv != cut_csv:
            fail("settlement.csv differs between the uninterrupted and the resumed run")
        lines = ref_csv.count(b"\n")
        with netCDF4.Dataset(os.path.join(ref_dir, "settlement.nc")) as a, \
                netCDF4.Dataset(os.path.join(cut_dir, "settlement.nc")) as b:
            if set(a.variables) != set(b.variables):
                fail("settlement.nc variables differ")
            for name in a.variables:
                x, y = a.variables[name][:], b.variables[name][:]
                if x.shape != y.shape or not np.array_equal(np.asarray(x), np.asarray(y)):
                    fail(f"settlement.nc variable {name} differs")
            records = len(a.dimensions["settlement"])
        if records < 100:
            fail(f"too few settlement records ({records}) for a meaningful comparison")
        print(f"PASS: resumed run identical to the uninterrupted one ({records} records, {lines} CSV lines)")


main()
