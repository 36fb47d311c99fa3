"""Cross-check the statistics of `pavestrat risk` against numpy.

Reference library: numpy (`numpy.mean`, `numpy.std(ddof=1)`, `numpy.percentile` with its default
linear interpolation, `numpy.argmax`), from PyPI. pavestrat plans the demo (or a synthetic
network), runs `risk --out DIR`, and this script reads the raw results pavestrat kept
(`risk_slice.bin`: a magic line, a JSON header with the layout, then draws × width little-endian
float64: every strategy's NPV, the plan's NPV, each budget line's spending) and recomputes every
row of `risk.csv` from them:
- `strategy` rows: mean, sd, P10/P50/P90 of NPV, the share of draws with NPV > 0, and the share in
  which the strategy is its section's best (numpy.argmax: the first of equal maxima);
- the `plan` row: the same statistics of the plan's NPV;
- `budget` rows: the statistics of each line's spending and the share of draws above the limit;
- on every row, the standard errors `se_mean,se_p10,se_p50,se_p90`: the draws split into 8
  groups by draw number mod 8, the statistic on each group (numpy), and numpy.std(ddof=1) of the
  8 values over √8 (empty when a group has fewer than two draws).
Money in risk.csv is written to the cent, so amounts must agree within a cent (plus 1e-9
relative); shares exactly to their 6 decimals. It also checks that `risk_draws.csv` holds the
same plan NPVs to the cent.

Usage: python3 check_risk.py PATH/TO/pavestrat WORKDIR DRAWS SEED [SECTIONS] [SAMPLING]
(SECTIONS 0 for the demo; SAMPLING random or sobol.)
Prints what it checked and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import json
import os
import subprocess
import sys

import numpy as np

MAGIC = b"PAVESTRAT-RISK-SLICE 1\n"


def read_csv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def run(exe, *args, cwd):
    r = subprocess.run([exe, "-q", *args], cwd=cwd, capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit(f"pavestrat {' '.join(args)} failed ({r.returncode}):\n{r.stderr}")


def main():
    exe, work, draws, seed = os.path.abspath(sys.argv[1]), sys.argv[2], sys.argv[3], sys.argv[4]
    sections = sys.argv[5] if len(sys.argv) > 5 and sys.argv[5] != "0" else None
    sampling = sys.argv[6] if len(sys.argv) > 6 else "random"
    os.makedirs(work, exist_ok=True)
    scen = []
    if sections:
        run(exe, "init", "net", "--sections", sections, "--seed", seed, cwd=work)
        scen = ["--scenario", "net/scenario.toml"]
    run(exe, "plan", *scen, "--out", "res", "--time-limit", "3", cwd=work)
    run(exe, "risk", *scen, "--from", "res", "--draws", draws, "--seed", seed,
        "--sampling", sampling, "--out", "res", "--keep-raw", cwd=work)
    out = os.path.join(work, "res")
    blob = open(os.path.join(out, "risk_slice.bin"), "rb").read()
    assert blob.startswith(MAGIC), "risk_slice.bin starts with its magic line"
    rest = blob[len(MAGIC):]
    nl = rest.index(b"\n")
    head = json.loads(rest[:nl])
    layout = head["layout"]
    n = head["draws"]
    first = head["first"]
    assert head.get("sampling", "random") == sampling, "the slice records its sampling"
    width = sum(len(s) for s in layout["strategies"]) + 1 + len(layout["lines"])
    values = np.frombuffer(rest[nl + 1:], dtype="<f8").reshape(n, width)
    rows = read_csv(os.path.join(out, "risk.csv"))

    passed = failed = 0

    def money(got, want, what):
        nonlocal passed, failed
        if abs(float(got) - want) <= 0.0051 + 1e-9 * abs(want):
            passed += 1
        else:
            failed += 1
            print(f"FAIL {what}: risk.csv {got}, numpy {want:.4f}")

    def share(got, want, what):
        nonlocal passed, failed
        if got == f"{want:.6f}":
            passed += 1
        else:
            failed += 1
            print(f"FAIL {what}: risk.csv {got}, numpy {want:.6f}")

    group = (first + np.arange(n)) % 8

    def stats(row, col, what):
        nonlocal passed, failed
        money(row["mean"], float(np.mean(col)), what + " mean")
        money(row["sd"], float(np.std(col, ddof=1)) if len(col) > 1 else 0.0, what + " sd")
        for q, key in [(10, "p10"), (50, "p50"), (90, "p90")]:
            money(row[key], float(np.percentile(col, q)), f"{what} {key}")
        parts = [col[group == r] for r in range(8)]
        for key, f in [("se_mean", np.mean), ("se_p10", lambda x: np.percentile(x, 10)),
                       ("se_p50", lambda x: np.percentile(x, 50)),
                       ("se_p90", lambda x: np.percentile(x, 90))]:
            if min(len(p) for p in parts) < 2:
                if row[key] == "":
                    passed += 1
                else:
                    failed += 1
                    print(f"FAIL {what} {key}: {row[key]} where too few draws leave it empty")
                continue
            vals = np.array([float(f(p)) for p in parts])
            money(row[key], float(np.std(vals, ddof=1) / np.sqrt(8.0)), f"{what} {key}")

    strategy_rows = [r for r in rows if r["kind"] == "strategy"]
    at = 0
    k = 0
    for g, names in enumerate(layout["strategies"]):
        block = values[:, at:at + len(names)]
        best = np.argmax(block, axis=1)
        for i, name in enumerate(names):
            row = strategy_rows[k]
            k += 1
            what = f"{layout['sections'][g]} {name}"
            assert row["section_id"] == layout["sections"][g] and row["strategy"] == name, what
            col = block[:, i]
            stats(row, col, what)
            share(row["prob_positive"], float(np.mean(col > 0.0)), what + " P(NPV>0)")
            share(row["prob_best"], float(np.mean(best == i)), what + " P(best)")
            if row["in_plan"] == ("true" if layout["plan"][g] == i else "false"):
                passed += 1
            else:
                failed += 1
                print(f"FAIL {what}: in_plan {row['in_plan']}, the plan's index {layout['plan'][g]}")
        at += len(names)
    plan = next(r for r in rows if r["kind"] == "plan")
    stats(plan, values[:, at], "plan")
    share(plan["prob_positive"], float(np.mean(values[:, at] > 0.0)), "plan P(NPV>0)")
    budget = [r for r in rows if r["kind"] == "budget"]
    for j, line in enumerate(layout["lines"]):
        col = values[:, at + 1 + j]
        limit = layout["limits"][j]
        stats(budget[j], col, line)
        share(budget[j]["prob_over"], float(np.mean(col > limit + 0.005)), line + " P(over)")
    draws_csv = read_csv(os.path.join(out, "risk_draws.csv"))
    for d, r in enumerate(draws_csv):
        money(r["plan_npv"], float(values[d, at]), f"draw {d} plan NPV")
    print(f"risk cross-check ({sampling} sampling): {n} draws, {len(strategy_rows)} strategies, "
          f"{len(layout['lines'])} budget lines")
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
