"""Cross-check `pavestrat cashflow --format json` against numpy-financial on seeded random streams.

Reference library: numpy-financial 1.0.0 (PyPI `numpy-financial`), with numpy's polynomial roots
for the full set of rates. Conventions matched (numpy-financial documentation):
- `npf.npv(r, values)` does not discount the first value; pavestrat's default base year is the
  stream's first year, which is the same convention.
- `npf.irr` returns the one real rate nearest zero, or nan. pavestrat reports every rate in
  (-99 %, 1000 %]; the full set is taken here from `np.roots` on the same polynomial.
- `npf.mirr(values, r, r)`: finance and reinvestment at the discount rate.

Checks, per stream:
- NPV, PV(benefits), PV(costs) equal to 1e-9 relative (relative to the larger of |NPV| and 1e-6
  of the discounted gross flows, so that a stream whose NPV cancels to near zero is not held to
  digits no float sum carries);
- where numpy finds exactly one rate: pavestrat says `unique` and equals it within 1e-7;
- where numpy-financial finds none: pavestrat says `none`;
- where several exist: pavestrat says `multiple`, lists each, and NPV is ~0 at each;
- MIRR equal to 1e-9 relative where numpy-financial defines it.

Usage: python3 numpy_financial.py PATH/TO/pavestrat [COUNT] [SEED]
Prints one line per failure and closes with "N passed, M failed"; exits 1 on any failure.
"""

import json
import math
import subprocess
import sys

import numpy as np
import numpy_financial as npf

LO, HI = -0.99, 10.0


def real_rates(values):
    """All rates in (LO, HI] at which NPV is zero, from numpy's polynomial roots."""
    v = np.array(values, dtype=float)
    nz = np.nonzero(v)[0]
    if len(nz) < 2:
        return []
    v = v[nz[0]: nz[-1] + 1]
    roots = np.roots(v[::-1])  # polynomial in x = 1/(1+r), highest power first
    out = []
    for z in roots:
        if abs(z.imag) <= 1e-7 * max(1.0, abs(z)) and z.real > 0:
            r = 1.0 / z.real - 1.0
            if LO < r <= HI:
                out.append(r)
    out.sort()
    dedup = []
    for r in out:
        if not dedup or abs(r - dedup[-1]) > 1e-6:
            dedup.append(r)
    return dedup


def gen(rng, kind):
    """One stream of net values (rounded to cents, as money is written)."""
    if kind == "investment":
        n_out = int(rng.integers(1, 4))
        n_in = int(rng.integers(3, 38))
        out = -rng.uniform(100, 50000, n_out)
        ret = rng.uniform(0, 1, n_in) * rng.uniform(10, 9000)
        v = np.concatenate([out, ret])
    elif kind == "losing":
        out = -rng.uniform(1000, 5000, 1)
        ret = rng.uniform(0, 1, int(rng.integers(2, 20))) * 150
        v = np.concatenate([out, ret])
    elif kind == "random":
        v = rng.normal(0, 1000, int(rng.integers(2, 31)))
        v[rng.uniform(size=len(v)) < 0.15] = 0.0
    elif kind == "two_rates":
        r1 = rng.uniform(-0.3, 0.8)
        r2 = r1 + rng.uniform(0.03, 0.9)
        base = np.array([-1.0, 2.0 + r1 + r2, -(1 + r1) * (1 + r2)])
        # Multiplying by a polynomial with positive coefficients adds no positive root.
        pos = rng.uniform(0.1, 1.0, int(rng.integers(1, 12)))
        v = np.convolve(base, pos) * rng.uniform(100, 5000)
    elif kind == "one_sign":
        v = rng.uniform(1, 1000, int(rng.integers(2, 20))) * (1 if rng.uniform() < 0.5 else -1)
    else:  # "no_rate": sign changes but NPV never reaches zero
        a = rng.uniform(50, 150)
        v = np.array([-a, rng.uniform(0.1, 0.9) * a, -a])
    return [round(float(x), 2) for x in v]


def main():
    binary = sys.argv[1]
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 1200
    seed = int(sys.argv[3]) if len(sys.argv) > 3 else 20261202
    rng = np.random.default_rng(seed)
    kinds = ["investment", "investment", "losing", "random", "random", "two_rates", "one_sign", "no_rate"]
    passed = failed = 0
    tally = {"unique": 0, "multiple": 0, "none": 0}
    for i in range(count):
        kind = kinds[i % len(kinds)]
        values = gen(rng, kind)
        rate = float(round(rng.uniform(0.0, 0.15), 4))
        first = int(rng.integers(1990, 2040))
        lines = ["year,benefit,cost"]
        for t, x in enumerate(values):
            b, c = (x, 0.0) if x >= 0 else (0.0, -x)
            lines.append(f"{first + t},{b:.2f},{c:.2f}")
        csv = "\n".join(lines) + "\n"
        res = subprocess.run([binary, "cashflow", "-", "--rate", repr(rate), "--format", "json"],
                             input=csv.encode(), capture_output=True)
        problems = []
        if res.returncode != 0:
            problems.append(f"exit {res.returncode}: {res.stderr.decode()[:300]}")
        else:
            got = json.loads(res.stdout)
            v = np.array(values)
            gross = float(np.sum(np.abs(v) / (1 + rate) ** np.arange(len(v))))
            want_npv = npf.npv(rate, v)
            want_b = npf.npv(rate, np.where(v > 0, v, 0.0))
            want_c = -npf.npv(rate, np.where(v < 0, v, 0.0))
            for key, want in [("npv", want_npv), ("pv_benefits", want_b), ("pv_costs", want_c)]:
                tol = 1e-9 * max(abs(want), 1e-6 * gross)
                if abs(got[key] - want) > tol:
                    problems.append(f"{key} {got[key]!r} vs numpy-financial {want!r}")
            ref = npf.irr(v)
            rates = real_rates(values)
            status, irr = got["irr_status"], got["irr"]
            tally[status] = tally.get(status, 0) + 1
            if math.isnan(ref):
                if status != "none":
                    problems.append(f"numpy-financial finds no rate, pavestrat says {status} {irr}")
            elif len(rates) == 1:
                if status != "unique" or abs(irr[0] - rates[0]) > 1e-7 * max(1.0, abs(rates[0])):
                    problems.append(f"one rate {rates[0]!r} (npf.irr {ref!r}); pavestrat {status} {irr}")
            elif len(rates) >= 2:
                if status != "multiple" or len(irr) != len(rates):
                    problems.append(f"rates {rates}; pavestrat {status} {irr}")
                else:
                    for a, b in zip(irr, rates):
                        if abs(a - b) > 1e-6 * max(1.0, abs(b)):
                            problems.append(f"rate {a!r} vs numpy root {b!r}")
                        t = np.arange(len(v))
                        npv_at = float(np.sum(v / (1 + a) ** t))
                        scale = float(np.sum(np.abs(v) / (1 + a) ** t))
                        if abs(npv_at) > 1e-8 * scale:
                            problems.append(f"NPV {npv_at!r} at reported rate {a!r}")
            else:
                # numpy-financial's one rate lies outside (-99 %, 1000 %]: pavestrat must say none.
                if status != "none":
                    problems.append(f"rate {ref!r} is out of range, pavestrat says {status} {irr}")
            want_m = npf.mirr(v, rate, rate)
            got_m = got["mirr"]
            if math.isnan(want_m):
                if got_m is not None:
                    problems.append(f"mirr {got_m!r} where numpy-financial has none")
            elif got_m is None or abs(got_m - want_m) > 1e-9 * max(1.0, abs(want_m)):
                problems.append(f"mirr {got_m!r} vs numpy-financial {want_m!r}")
        if problems:
            failed += 1
            print(f"FAIL stream {i} ({kind}) rate {rate} values {values}: " + "; ".join(problems))
        else:
            passed += 1
    print(f"cross-check against numpy-financial {npf.__version__}: irr statuses {tally}")
    print(f"{passed} passed, {failed} failed")
    sys.exit(1 if failed else 0)


if __name__ == "__main__":
    main()
