#!/usr/bin/env python3
"""pavestrat select against SciPy's milp and the listed best known values on the standard
multiple-choice multidimensional knapsack instances (../shared/benchmarks/mmkp/, see its README
for the format and provenance; the instances are read from there, never copied here).

usage: benches/mmkp.py [--check AIM [--bound-only NAME,...]] PAVESTRAT DATA_DIR SECONDS INSTANCE...
prints one Markdown table row per instance and time limit. With --check, exits 1 when on any
instance pavestrat's plan is more than AIM percent below SciPy's at the same time limit, or its
bound is below a value some plan is known to reach (the listed best known, SciPy's plan, its own
plan): such a bound would be false. Instances named in --bound-only are checked for the bound
alone.
"""
import csv, json, os, subprocess, sys, tempfile, time

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, milp
from scipy.sparse import csr_matrix


def read(path):
    tok = open(path).read().split()
    pos = 0

    def nxt():
        nonlocal pos
        pos += 1
        return tok[pos - 1]

    n, m = int(nxt()), int(nxt())
    cap = [int(float(nxt())) for _ in range(m)]
    classes = []
    for _ in range(n):
        r = int(nxt())
        classes.append([(float(nxt()), [int(float(nxt())) for _ in range(m)]) for _ in range(r)])
    return cap, classes


def write_select(cap, classes, d):
    m = len(cap)
    with open(os.path.join(d, "c.csv"), "w") as f:
        f.write("section_id,strategy,npv," + ",".join(f"use:r{j}" for j in range(m)) + "\n")
        for g, items in enumerate(classes):
            for k, (v, w) in enumerate(items):
                f.write(f"c{g},i{k},{v:g}," + ",".join(str(x) for x in w) + "\n")
    with open(os.path.join(d, "l.csv"), "w") as f:
        f.write("row,limit\n" + "".join(f"use:r{j},{c}\n" for j, c in enumerate(cap)))


def run_select(exe, d, seconds):
    out = os.path.join(d, "o")
    t = time.time()
    p = subprocess.run([exe, "select", "-q", os.path.join(d, "c.csv"), "--limits",
                        os.path.join(d, "l.csv"), "--time-limit", str(seconds), "--gap", "0",
                        "--out", out], capture_output=True, text=True)
    wall = time.time() - t
    if p.returncode != 0:
        return None, None, "exit %d" % p.returncode, wall
    s = json.load(open(os.path.join(out, "summary.json")))
    subprocess.run(["rm", "-rf", out])
    return s["objective"], s["bound"], s["status"], wall


def run_scipy(cap, classes, seconds):
    vals, rows, cols, data = [], [], [], []
    n, m = len(classes), len(cap)
    col = 0
    for g, items in enumerate(classes):
        for v, w in items:
            vals.append(v)
            rows.append(g); cols.append(col); data.append(1.0)
            for j, x in enumerate(w):
                if x:
                    rows.append(n + j); cols.append(col); data.append(float(x))
            col += 1
    a = csr_matrix((data, (rows, cols)), shape=(n + m, col))
    lo = np.concatenate([np.ones(n), np.full(m, -np.inf)])
    hi = np.concatenate([np.ones(n), np.array(cap, dtype=float)])
    t = time.time()
    r = milp(-np.array(vals), constraints=LinearConstraint(a, lo, hi), integrality=np.ones(col),
             bounds=Bounds(0, 1), options={"time_limit": seconds, "disp": False})
    wall = time.time() - t
    if r.x is None:
        return None, None, wall
    bound = -getattr(r, "mip_dual_bound", float("nan"))
    return -r.fun, bound, wall


def main():
    args = sys.argv[1:]
    aim = None
    bound_only = set()
    if args[:1] == ["--check"]:
        aim, args = float(args[1]), args[2:]
        if args[:1] == ["--bound-only"]:
            bound_only, args = set(args[1].split(",")), args[2:]
    exe, data, seconds = args[0], args[1], float(args[2])
    failures = []
    listed = {}
    with open(os.path.join(data, "listed_values.csv"), encoding="utf-8-sig") as f:
        for row in csv.reader(f):
            if len(row) >= 2:
                listed[row[0]] = float(row[1])
    for name in args[3:]:
        cap, classes = read(os.path.join(data, name))
        with tempfile.TemporaryDirectory() as d:
            write_select(cap, classes, d)
            pv, pb, ps, pw = run_select(exe, d, seconds)
        sv, sb, sw = run_scipy(cap, classes, seconds)
        best = listed.get(name)
        fmt = lambda x: "—" if x is None else f"{x:.0f}"
        below = "—" if pv is None or sv is None else f"{(sv - pv) / sv * 100:.3f} %"
        valid = "—" if pb is None or best is None else ("yes" if pb >= best - 1e-6 else "NO")
        print(f"| {name} | {len(classes)}×{len(cap)} | {seconds:g} s | {fmt(best)} | {fmt(pv)} | "
              f"{fmt(pb)} | {ps} | {fmt(sv)} | {fmt(sb)} | {below} | {valid} |", flush=True)
        if aim is not None:
            if pv is None:
                failures.append(f"{name}: pavestrat gave no plan ({ps})")
                continue
            if name not in bound_only and sv is not None and (sv - pv) / sv * 100 > aim:
                failures.append(f"{name}: plan {pv:.0f} is {(sv - pv) / sv * 100:.3f} % below "
                                f"SciPy's {sv:.0f} (aim {aim} %)")
            reached = max(x for x in (best, sv, pv) if x is not None)
            if pb < reached - 1e-6 * max(1.0, abs(reached)):
                failures.append(f"{name}: bound {pb} is below {reached:.0f}, a value a plan "
                                f"reaches")
    for f in failures:
        print("FAIL", f, file=sys.stderr)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
