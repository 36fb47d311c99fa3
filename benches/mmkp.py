#!/usr/bin/env python3
"""pavestrat select against SciPy's milp and the listed best known values on the standard
multiple-choice multidimensional knapsack instances (../shared/benchmarks/mmkp/, see its README
for the format and provenance; the instances are read from there, never copied here).

usage: benches/mmkp.py PAVESTRAT DATA_DIR SECONDS INSTANCE...
prints one Markdown table row per instance and time limit.
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
    exe, data, seconds = sys.argv[1], sys.argv[2], float(sys.argv[3])
    listed = {}
    with open(os.path.join(data, "listed_values.csv"), encoding="utf-8-sig") as f:
        for row in csv.reader(f):
            if len(row) >= 2:
                listed[row[0]] = float(row[1])
    for name in sys.argv[4:]:
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


if __name__ == "__main__":
    main()
