"""Cross-check `pavestrat appraise` against numpy-financial, from its own yearly flows.

For a seeded synthetic network (`pavestrat init --sections N --seed S`), `appraise --section …
--out` writes each strategy's yearly agency and road-user costs (`yearly.csv`) beside its
indicators (`appraisal.csv`). This script rebuilds every strategy's flows against the section's
base from `yearly.csv` and recomputes, with numpy-financial 1.0.0 (PyPI `numpy-financial`):
- PV of agency cost and PV of user cost: `npf.npv(r, flows)` (base-year flows undiscounted, the
  same convention as pavestrat's end-of-year default); the residual value row (the year after the
  period) is a negative agency cost;
- NPV of the strategy against the base: `npf.npv(r, benefit − cost)`, benefit = user cost saved,
  cost = agency cost added;
- IRR where pavestrat reports a unique one: numpy's polynomial roots hold a rate within 1e-6 of
  it, and `npf.npv` changes sign within 1e-6 either side of it (it is written with six decimals);
- FYRR: the first full year's net benefit over the leading years' net outlay (definition in the
  README; common practice, from memory).

Tolerances come from `yearly.csv` writing money to the cent: a PV may differ by up to half a
cent a flow (6 flows × 31 years), so 2 units plus 1e-9 relative.

Usage: python3 check_appraisal.py PATH/TO/pavestrat WORKDIR [SECTIONS] [SEED]
Prints one line per failure and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import math
import os
import subprocess
import sys
from collections import defaultdict

import numpy as np
import numpy_financial as npf


def run(binary, *args):
    subprocess.run([binary, *args, "--quiet"], check=True)


def rates_of(values, lo=-0.99, hi=10.0):
    v = np.array(values, dtype=float)
    nz = np.nonzero(v)[0]
    if len(nz) < 2:
        return []
    v = v[nz[0]: nz[-1] + 1]
    out = []
    for z in np.roots(v[::-1]):
        if abs(z.imag) <= 1e-7 * max(1.0, abs(z)) and z.real > 0:
            r = 1.0 / z.real - 1.0
            if lo < r <= hi:
                out.append(r)
    return sorted(out)


def fyrr(net):
    start = next((i for i, v in enumerate(net) if v != 0.0), None)
    if start is None:
        return None
    k = start
    while k < len(net) and net[k] < 0.0:
        k += 1
    if k == start or k >= len(net):
        return None
    return net[k] / -sum(net[start:k])


def main():
    binary, work = sys.argv[1], sys.argv[2]
    sections = int(sys.argv[3]) if len(sys.argv) > 3 else 60
    seed = sys.argv[4] if len(sys.argv) > 4 else "1"
    scen_dir = os.path.join(work, "scenario")
    out = os.path.join(work, "out")
    run(binary, "init", scen_dir, "--sections", str(sections), "--seed", seed, "--force")
    with open(os.path.join(scen_dir, "network.csv")) as f:
        ids = [r["section_id"] for r in csv.DictReader(f)]
    run(binary, "appraise", "--scenario", os.path.join(scen_dir, "scenario.toml"),
        "--section", *ids, "--out", out)
    rate = None
    with open(os.path.join(scen_dir, "scenario.toml")) as f:
        for line in f:
            if line.strip().startswith("discount_rate"):
                rate = float(line.split("=")[1].split("#")[0])
    agency = defaultdict(list)
    users = defaultdict(list)
    capital = defaultdict(list)
    with open(os.path.join(out, "yearly.csv")) as f:
        for r in csv.DictReader(f):
            key = (r["section_id"], r["strategy"])
            money = {k: float(r[k]) for k in
                     ["capital", "routine", "operating", "time", "crashes", "work_zone_delay", "residual"]}
            agency[key].append(money["capital"] + money["routine"] - money["residual"])
            capital[key].append(money["capital"])
            users[key].append(money["operating"] + money["time"] + money["crashes"] + money["work_zone_delay"])
    passed = failed = 0

    def check(ok, what):
        nonlocal passed, failed
        if ok:
            passed += 1
        else:
            failed += 1
            print("FAIL", what)

    with open(os.path.join(out, "appraisal.csv")) as f:
        rows = list(csv.DictReader(f))
    for r in rows:
        key = (r["section_id"], r["strategy"])
        base = (r["section_id"], "base")
        a, u = agency[key], users[key]
        pv_a, pv_u = npf.npv(rate, a), npf.npv(rate, u)
        gross = abs(pv_a) + abs(pv_u)
        tol = 2.0 + 1e-9 * gross
        check(abs(pv_a - float(r["pv_agency_cost"])) <= tol, f"{key} pv_agency_cost {r['pv_agency_cost']} vs {pv_a}")
        check(abs(pv_u - float(r["pv_user_cost"])) <= tol, f"{key} pv_user_cost {r['pv_user_cost']} vs {pv_u}")
        net = [(ub - us) - (as_ - ab) for us, ub, as_, ab in zip(u, users[base], a, agency[base])]
        npv = npf.npv(rate, net)
        check(abs(npv - float(r["npv"])) <= tol, f"{key} npv {r['npv']} vs {npv}")
        if r["irr_status"] == "unique":
            irr = float(r["irr"])
            ref = rates_of(net)
            check(any(abs(x - irr) <= 1e-6 for x in ref), f"{key} irr {irr} not among numpy's roots {ref}")
            # The IRR is written with six decimals: NPV changes sign across it within 1e-6.
            lo, hi = npf.npv(irr - 1e-6, net), npf.npv(irr + 1e-6, net)
            check(lo * hi <= 0.0, f"{key} npv does not change sign across irr {irr}: {lo}, {hi}")
        # Capital ratios: NPV per unit of PV capital added against the base, and 1 + that.
        d_cap = npf.npv(rate, capital[key]) - npf.npv(rate, capital[base])
        if d_cap > 1e-9:
            for col, want_r in (("npv_per_capital", npv / d_cap), ("bcr_capital", 1.0 + npv / d_cap)):
                got_r = r[col]
                check(got_r != "" and abs(float(got_r) - want_r) <= 1e-6 * max(1.0, abs(want_r)) + tol / d_cap,
                      f"{key} {col} {got_r} vs {want_r}")
        else:
            check(r["npv_per_capital"] == "" and r["bcr_capital"] == "", f"{key} capital ratios without capital")
        want = fyrr(net)
        got = r["fyrr"]
        if want is None or not math.isfinite(want):
            check(got == "", f"{key} fyrr {got!r}, expected none")
        else:
            check(got != "" and abs(float(got) - want) <= 1e-6 * max(1.0, abs(want)), f"{key} fyrr {got} vs {want}")
    print(f"appraisal cross-check: {len(rows)} strategies on {sections} sections")
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
