#!/usr/bin/env python3
"""What a careful physicist writes in a notebook: a detuning scan of the
five-level hyperfine-like case (tests/fixtures/hyperfine_levels_v1.yaml, invented numbers)
with scipy's solve_ivp (DOP853), a vectorised right-hand side, at the same
tolerances as levelplan. Used only to measure levelplan against it
(docs/performance.md); it is not part of the tool or its tests.

    pip install numpy scipy
    python3 scripts/notebook_scan.py --points 1001 --out notebook.csv
    python3 scripts/notebook_scan.py --compare notebook.csv levelplan.csv
"""
import argparse, csv, math, sys, time
import numpy as np
from scipy.integrate import solve_ivp

TWO_PI = 2 * math.pi
# Levels relative to e3 (THz values from the demo file), lifetimes 45 ns.
E_THZ = {"e0": 516.684120, "e1": 516.684192, "e2": 516.684349, "e3": 516.684616}
DIP = {"e0": 0.6, "e1": -1.1, "e2": 1.6, "e3": 2.4}  # ea0, signed
GAMMA = 1 / 45e-9
FWHM = 2.5e-9
SIGMA = FWHM / (2 * math.sqrt(math.log(2)))   # amplitude sigma from the intensity FWHM
TC = 15e-9
HALF = SIGMA * math.sqrt(-2 * math.log(1e-8))  # tails down to 1e-8
T0, T1 = TC - HALF, TC + HALF
OMEGA3 = math.pi / (SIGMA * math.sqrt(TWO_PI))  # area pi on g-e3
IDS = ["e0", "e1", "e2", "e3"]
OFFS = np.array([(E_THZ[k] - E_THZ["e3"]) * 1e12 * TWO_PI for k in IDS])
OMEGA = np.array([OMEGA3 * DIP[k] / DIP["e3"] for k in IDS])


def final_populations(detuning_hz, rtol, atol):
    delta = TWO_PI * detuning_hz
    diag = np.concatenate(([0.0 + 0j], OFFS - delta - 0.5j * GAMMA))
    def rhs(t, y):
        c = y[:5] + 1j * y[5:]
        f = math.exp(-0.5 * ((t - TC) / SIGMA) ** 2)
        d = diag * c
        half = 0.5 * f * OMEGA
        d[1:] += half * c[0]
        d[0] += np.dot(half, c[1:])
        d *= -1j
        return np.concatenate((d.real, d.imag))
    y0 = np.zeros(10); y0[0] = 1.0
    sol = solve_ivp(rhs, (T0, T1), y0, method="DOP853", rtol=rtol, atol=atol)
    c = sol.y[:5, -1] + 1j * sol.y[5:, -1]
    return np.abs(c) ** 2


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--points", type=int, default=1001)
    ap.add_argument("--lo", type=float, default=-400e6)
    ap.add_argument("--hi", type=float, default=400e6)
    ap.add_argument("--rtol", type=float, default=1e-10)
    ap.add_argument("--atol", type=float, default=1e-12)
    ap.add_argument("--out")
    ap.add_argument("--compare", nargs=2)
    a = ap.parse_args()
    if a.compare:
        return compare(*a.compare)
    dets = np.linspace(a.lo, a.hi, a.points)
    t = time.perf_counter()
    rows = [final_populations(d, a.rtol, a.atol) for d in dets]
    dt = time.perf_counter() - t
    print(f"{a.points} points in {dt:.2f} s ({dt / a.points * 1e3:.2f} ms per point)")
    if a.out:
        with open(a.out, "w", newline="") as f:
            w = csv.writer(f)
            w.writerow(["detuning_mhz", "g"] + IDS)
            for d, p in zip(dets, rows):
                w.writerow([f"{d / 1e6:.9e}"] + [f"{x:.17e}" for x in p])


def read(path):
    rows = [r for r in csv.reader(l for l in open(path) if not l.startswith("#"))]
    return rows[0], [[float(x) if x else float("nan") for x in r] for r in rows[1:]]


def compare(notebook, ours):
    hn, rn = read(notebook)
    ho, ro = read(ours)
    # levelplan's scan CSV: the varied value first, then P(<id>) columns.
    cols = [ho.index(c) for c in ho if c.startswith("P(")]
    worst = 0.0
    for a, b in zip(rn, ro):
        if abs(a[0] - b[0]) > 1e-6:
            sys.exit(f"grids differ: {a[0]} vs {b[0]}")
        worst = max(worst, max(abs(x - b[c]) for x, c in zip(a[1:], cols)))
    print(f"{len(rn)} points, largest population difference {worst:.2e}")


if __name__ == "__main__":
    main()
