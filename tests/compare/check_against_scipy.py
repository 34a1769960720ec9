#!/usr/bin/python3
"""Cross-check of `cullcast compare` against Debian's python3-scipy.

Writes pairs of run folders with random particle counts and cull rankings
(the columns of docs/formats.md), runs `cullcast compare`, and checks every
number it reports:

* per-link z and p-value: scipy.stats.chi2_contingency(table, correction=False)
  on the 2x2 table (settled, not settled) x (run A, run B); the pooled
  two-proportion z statistic satisfies z^2 = Pearson's X^2 and both give the
  same two-sided p-value (Agresti 2013, Categorical Data Analysis, 3rd ed.,
  ch. 2-3; from memory);
* Kendall's tau-b of the cull rankings: scipy.stats.kendalltau (variant 'b',
  its default; Kendall 1945, Biometrika 33:239-251);
* Benjamini-Hochberg q-values: re-derived here with numpy from the step-up
  definition (Benjamini & Hochberg 1995, J. R. Stat. Soc. B 57:289-300);
  scipy 1.10 has no implementation of it.

Usage: check_against_scipy.py CULLCAST_EXE
"""
import csv
import math
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

HEADER = ("source_id,sink_id,event,released,settled,probability,settlers,wilson_low,wilson_high,"
          "mean,sd,cv,min,max,q0.05,q0.5,q0.95\n")


def write_run(folder, links, released, reefs, plan):
    os.makedirs(folder, exist_ok=True)
    with open(os.path.join(folder, "connectivity.csv"), "w") as f:
        f.write(HEADER)
        for (s, t), x in links.items():
            p = 0.3 * x / released
            f.write(f"{s},{t},all,{released},{p * released},{p},{x},0,1,{p},0,0,{p},{p},{p},{p},{p}\n")
    with open(os.path.join(folder, "reef_metrics.csv"), "w") as f:
        f.write("reef_id,export_strength,import_strength,role\n")
        for r in reefs:
            f.write(f"{r},1,1,exchange\n")
    with open(os.path.join(folder, "cull_ranking.csv"), "w") as f:
        f.write("rank,reef_id,effort,recruits_averted_pct,cumulative_pct\n")
        for i, r in enumerate(plan):
            f.write(f"{i + 1},{r},1,5,{5 * (i + 1)}\n")


def close(a, b, rel=1e-9, abs_=1e-14):
    return abs(a - b) <= max(rel * max(abs(a), abs(b)), abs_)


def main():
    exe = sys.argv[1]
    rng = np.random.default_rng(20261202)
    failures = []
    checked_links = checked_tau = 0
    with tempfile.TemporaryDirectory(prefix="cullcast-scipy-") as tmp:
        for trial in range(6):
            reefs = [f"R-{i:02d}" for i in range(25)]
            na, nb = int(rng.integers(200, 900)), int(rng.integers(200, 900))
            links_a, links_b = {}, {}
            for s in reefs:  # every source keeps at least one link, so its release count is known
                sinks = rng.choice(reefs, size=6, replace=False)
                for k, t in enumerate(sinks):
                    p = rng.uniform(0.001, 0.2)
                    xa, xb = int(rng.binomial(na, p)), int(rng.binomial(nb, p * rng.choice([1, 1, 1.5, 0.5])))
                    if k == 0:
                        xa, xb = max(xa, 1), max(xb, 1)
                    if xa:
                        links_a[(s, str(t))] = xa
                    if xb:
                        links_b[(s, str(t))] = xb
            plan_a = list(rng.choice(reefs, size=int(rng.integers(3, 10)), replace=False))
            plan_b = list(rng.choice(reefs, size=int(rng.integers(3, 10)), replace=False))
            if trial == 0:
                plan_b = list(plan_a)  # identical plans: tau must be 1
            a, b, out = (os.path.join(tmp, f"{trial}-{n}") for n in ("a", "b", "out"))
            write_run(a, links_a, na, reefs, plan_a)
            write_run(b, links_b, nb, reefs, plan_b)
            done = subprocess.run([exe, "-q", "compare", a, b, "--out", out], capture_output=True, text=True)
            if done.returncode != 0:
                print(done.stderr)
                return 1
            rows = list(csv.DictReader(open(os.path.join(out, "comparison_links.csv"))))
            ps, qs = [], []
            for r in rows:
                xa, xb = int(r["settlers_a"]), int(r["settlers_b"])
                key = (r["source_id"], r["sink_id"])
                assert links_a.get(key, 0) == xa and links_b.get(key, 0) == xb, key
                table = np.array([[xa, na - xa], [xb, nb - xb]])
                chi2, p, dof, expected = stats.chi2_contingency(table, correction=False)
                z, pv = float(r["z"]), float(r["p_value"])
                if not close(z * z, chi2):
                    failures.append(f"{key}: z^2 {z * z} vs scipy chi2 {chi2}")
                if not close(pv, p):
                    failures.append(f"{key}: p {pv} vs scipy {p}")
                if (xb / nb - xa / na) * z < 0:
                    failures.append(f"{key}: sign of z {z}")
                if not close(float(r["min_expected"]), expected.min()):
                    failures.append(f"{key}: min expected {r['min_expected']} vs scipy {expected.min()}")
                if (r["significant"] == "true") != (p < 0.05):
                    failures.append(f"{key}: significant flag")
                ps.append(p)
                qs.append(float(r["q_value"]))
                checked_links += 1
            # Benjamini-Hochberg step-up, re-derived
            ps, qs = np.array(ps), np.array(qs)
            order = np.argsort(ps, kind="stable")
            m = len(ps)
            adjusted = np.minimum.accumulate((ps[order] * m / np.arange(1, m + 1))[::-1])[::-1]
            expect_q = np.empty(m)
            expect_q[order] = np.minimum(adjusted, 1)
            if not np.allclose(qs, expect_q, rtol=1e-9, atol=1e-15):
                failures.append(f"trial {trial}: Benjamini-Hochberg q-values differ")
            # Kendall's tau-b over reefs in either plan; outside a plan = its size + 1 (tied)
            union = list(dict.fromkeys(plan_a + plan_b))
            ra = [plan_a.index(r) + 1 if r in plan_a else len(plan_a) + 1 for r in union]
            rb = [plan_b.index(r) + 1 if r in plan_b else len(plan_b) + 1 for r in union]
            expect_tau = stats.kendalltau(ra, rb).statistic  # variant='b' is the default
            summary = dict(csv.reader(open(os.path.join(out, "comparison_summary.csv"))))
            tau = float(summary["kendall_tau_b"])
            if not close(tau, expect_tau, rel=1e-12, abs_=1e-12):
                failures.append(f"trial {trial}: tau-b {tau} vs scipy {expect_tau}")
            if trial == 0 and tau != 1.0:
                failures.append("identical plans: tau-b is not 1")
            checked_tau += 1
    for f in failures:
        print("FAIL:", f)
    print(f"checked {checked_links} link tests and {checked_tau} tau-b values against scipy {stats.__name__} "
          f"(scipy {__import__('scipy').__version__}): {len(failures)} failure(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
