"""Cross-check `pavestrat plan` against SciPy's MILP on seeded synthetic networks.

Reference library: SciPy (`scipy.optimize.milp`, which runs HiGHS), from PyPI. For each network
drawn by `pavestrat init --sections N --seed S`, pavestrat plans it with `--out`, and this script
re-solves the same selection from the files pavestrat wrote — `candidates.csv` (one row per
candidate: `npv`, `pv_agency_cost`, `cost:<line>` per budget line, `use:<line>` per target line),
`budget_use.csv` (limits) and `target_use.csv` (at_most × length_km) — as a 0/1 programme:

    maximise Σ npv·x   subject to   Σ_k x[s,k] = 1 per section,
    Σ cost:<line>·x ≤ limit per budget line,  Σ use:<line>·x ≤ at_most·length_km per target line.

Checks, per network:
- pavestrat's plan value is no more than SciPy's optimum when SciPy proved it (it cannot beat
  the optimum), and never more than SciPy's dual bound;
- pavestrat's bound is no less than SciPy's optimum (its certificate holds);
- pavestrat's value is within its reported gap of SciPy's optimum.
A tolerance of 1e-7 relative (plus a cent per section) covers rounding: pavestrat writes money to
the cent and keeps a cent's margin below each limit.

SciPy is given a time limit too (default 120 s); when it stops there, its best plan and dual
bound bracket the optimum and the checks use whichever side is valid.

Usage: python3 check_plan.py PATH/TO/pavestrat WORKDIR SIZES SEEDS [TIME_LIMIT [SCIPY_LIMIT]]
  e.g. check_plan.py target/release/pavestrat /tmp/x 60,150,300 1,2,3
Prints one line per network and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import json
import os
import subprocess
import sys

import numpy as np
from scipy.optimize import Bounds, LinearConstraint, milp
from scipy.sparse import csr_matrix


def read_csv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def check(exe, work, n, seed, time_limit, scipy_limit):
    net = os.path.join(work, f"net-{n}-{seed}")
    out = os.path.join(work, f"plan-{n}-{seed}")
    subprocess.run([exe, "init", net, "--sections", str(n), "--seed", str(seed), "--quiet", "--force"], check=True)
    subprocess.run(
        [exe, "plan", "--scenario", os.path.join(net, "scenario.toml"), "--out", out, "--candidates", "--quiet",
         "--time-limit", str(time_limit)],
        check=True,
    )
    summary = json.load(open(os.path.join(out, "summary.json")))
    cands = read_csv(os.path.join(out, "candidates.csv"))
    budget = read_csv(os.path.join(out, "budget_use.csv"))
    targets = read_csv(os.path.join(out, "target_use.csv"))

    rows = [("cost:" + b["line"], float(b["limit"])) for b in budget]
    rows += [("use:" + t["line"], float(t["at_most"]) * float(t["length_km"])) for t in targets]
    sections = []
    index = {}
    for c in cands:
        if c["section_id"] not in index:
            index[c["section_id"]] = len(sections)
            sections.append(c["section_id"])
    nv = len(cands)
    value = np.array([float(c["npv"]) for c in cands])
    data, ri, ci = [], [], []
    for k, c in enumerate(cands):
        data.append(1.0)
        ri.append(index[c["section_id"]])
        ci.append(k)
    one = csr_matrix((data, (ri, ci)), shape=(len(sections), nv))
    data, ri, ci = [], [], []
    for j, (col, _) in enumerate(rows):
        for k, c in enumerate(cands):
            x = float(c[col])
            if x != 0.0:
                data.append(x)
                ri.append(j)
                ci.append(k)
    a = csr_matrix((data, (ri, ci)), shape=(len(rows), nv))
    limits = np.array([lim for _, lim in rows])
    res = milp(
        c=-value,
        integrality=np.ones(nv),
        bounds=Bounds(0, 1),
        constraints=[LinearConstraint(one, 1, 1), LinearConstraint(a, -np.inf, limits)],
        options={"mip_rel_gap": 1e-7, "time_limit": scipy_limit},
    )
    if res.x is None:
        return False, f"n={n} seed={seed}: SciPy found no plan ({res.message})"
    # SciPy's best plan and its dual bound: equal when it proved optimality, otherwise the
    # optimum lies between them.
    opt = -res.fun
    scipy_bound = -res.mip_dual_bound if getattr(res, "mip_dual_bound", None) is not None else opt
    ours, bound, gap = summary["objective"], summary["bound"], summary["gap"]
    tol = 1e-7 * abs(opt) + 0.01 * n
    problems = []
    if res.status == 0 and ours > opt + tol:
        problems.append(f"plan {ours} above SciPy's optimum {opt}")
    if ours > scipy_bound + tol:
        problems.append(f"plan {ours} above SciPy's bound {scipy_bound}")
    if bound < opt - tol:
        problems.append(f"bound {bound} below SciPy's optimum {opt}")
    if ours < opt - gap * abs(bound) - tol:
        problems.append(f"plan {ours} not within its gap {gap} of SciPy's optimum {opt}")
    line = (f"n={n} seed={seed}: pavestrat {ours:.2f} (bound {bound:.2f}, gap {gap:.2e}, "
            f"{summary['status']}, {summary['method']}); SciPy {opt:.2f} (status {res.status})")
    if problems:
        return False, line + " — " + "; ".join(problems)
    return True, line


def main():
    exe, work = sys.argv[1], sys.argv[2]
    sizes = [int(x) for x in sys.argv[3].split(",")]
    seeds = [int(x) for x in sys.argv[4].split(",")]
    time_limit = sys.argv[5] if len(sys.argv) > 5 else "5"
    scipy_limit = float(sys.argv[6]) if len(sys.argv) > 6 else 120.0
    os.makedirs(work, exist_ok=True)
    passed = failed = 0
    for n in sizes:
        for s in seeds:
            ok, line = check(exe, work, n, s, time_limit, scipy_limit)
            print(("ok   " if ok else "FAIL ") + line, flush=True)
            passed += ok
            failed += not ok
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
