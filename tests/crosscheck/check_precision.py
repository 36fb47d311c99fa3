"""Check that the standard errors `pavestrat risk` reports are true of its estimates.

For each sampling (pseudo-random and Sobol'), `risk` runs on the demo's plan with SEEDS different
seeds and DRAWS draws each. Over the seeds, the estimates of the plan's mean NPV and P50 scatter;
their sample standard deviation (numpy.std, ddof=1) is what the reported standard error
(`se_mean`, `se_p50` of the `plan` row of risk.csv) claims to be. The check holds each
reported error (root mean square over the seeds) to within a factor of the observed scatter:
not below 0.6 of it (an error reported smaller than it is would make a result look surer than
it is) and not above 2.5 of it (an error so cautious it says nothing). With 24 seeds the observed
scatter is itself known to about ±15 %, and the reported one to about ±11 %.

Usage: python3 check_precision.py PATH/TO/pavestrat WORKDIR SEEDS DRAWS
Prints the figures and closes with "N passed, M failed"; exits 1 on any failure.
"""

import csv
import os
import subprocess
import sys

import numpy as np


def run(exe, *args, cwd):
    r = subprocess.run([exe, "-q", *args], cwd=cwd, capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit(f"pavestrat {' '.join(args)} failed ({r.returncode}):\n{r.stderr}")


def plan_row(path):
    with open(path, newline="") as f:
        return next(r for r in csv.DictReader(f) if r["kind"] == "plan")


def main():
    exe, work = os.path.abspath(sys.argv[1]), sys.argv[2]
    seeds, draws = int(sys.argv[3]), sys.argv[4]
    os.makedirs(work, exist_ok=True)
    run(exe, "plan", "--out", "res", "--time-limit", "3", cwd=work)
    passed = failed = 0
    for sampling in ["random", "sobol"]:
        est = {"mean": [], "p50": []}
        se = {"mean": [], "p50": []}
        for seed in range(1, seeds + 1):
            out = f"{sampling}-{seed}"
            run(exe, "risk", "--from", "res", "--draws", draws, "--seed", str(seed),
                "--sampling", sampling, "--out", out, cwd=work)
            row = plan_row(os.path.join(work, out, "risk.csv"))
            for k in est:
                est[k].append(float(row[k]))
                se[k].append(float(row[f"se_{k}"]))
        for k in est:
            observed = float(np.std(est[k], ddof=1))
            reported = float(np.sqrt(np.mean(np.square(se[k]))))
            ratio = reported / observed
            ok = 0.6 <= ratio <= 2.5
            print(f"{sampling:6} {k:4}: observed scatter {observed:,.0f}, reported SE {reported:,.0f}, "
                  f"ratio {ratio:.2f} {'ok' if ok else 'FAIL'}")
            if ok:
                passed += 1
            else:
                failed += 1
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
