#!/usr/bin/env python3
"""Outside reference for levelplan's coherent decay channels (jump operators
summed over several level pairs, as generated from angular momentum).

Writes tests/fixtures/channels/<name>.json: the parameters of a small
invented scheme (two ground levels g1, g2 and two close upper levels e1, e2
driven from g1 by one laser; the upper levels decay through two coherent
channels L1 = a1 |g1><e1| + a2 |g1><e2| and L2 = b1 |g2><e1| + b2 |g2><e2|;
what the channels leave of e1's decay rate leaves the scheme) and qutip's
`mesolve` result: populations and lost population at the window end, and
the settled populations after a long drive-free relaxation. The Rust test
tests/physics/decay_channels.rs builds the same model through the library's
ModelBuilder and compares at 1e-6. No Python runs in the tests.

All numbers are invented and illustrative.

Set-up (pinned versions; other versions are refused unless
--allow-other-versions is given; the versions are recorded in the fixture):

    python3 -m venv /tmp/qv
    /tmp/qv/bin/pip install qutip==5.3.1 numpy==2.4.6 scipy==1.17.1
    /tmp/qv/bin/python scripts/channels_reference.py

Conventions (docs/physics.md): rotating frame of the laser, with g1 and g2
at frame energy 0 and e1, e2 at -Delta_1 = -(omega_L - omega_e1) and
-(Delta_1 - delta_12); H = sum -Delta_k |e_k><e_k| + (Omega_k / 2)(|e_k><g1| + h.c.).
A fifth level "lost" collects what leaves the scheme (sqrt(Gamma_e1 - a1^2 -
b1^2) |lost><e1|), so that lost = rho_lost,lost.
"""

import argparse
import json
import math
import os
import sys

PINNED = {"qutip": "5.3.1", "numpy": "2.4.6", "scipy": "1.17.1"}
OUT = os.path.join(os.path.dirname(__file__), "..", "tests", "fixtures", "channels")
TWO_PI = 2.0 * math.pi


def versions(allow_other):
    import numpy
    import qutip
    import scipy

    have = {"qutip": qutip.__version__, "numpy": numpy.__version__, "scipy": scipy.__version__}
    if have != PINNED and not allow_other:
        sys.exit(f"versions {have} differ from the pinned {PINNED} (--allow-other-versions)")
    return have


def scenario(name, gamma_mhz, split_mhz, delta_mhz, rabi_mhz, a, b, duration_us):
    """a, b: fractions of Gamma carried by each term, with their signs."""
    gamma = TWO_PI * gamma_mhz * 1e6
    return {
        "name": name,
        "gamma_per_s": gamma,
        "split_rad_per_s": TWO_PI * split_mhz * 1e6,
        "delta_rad_per_s": TWO_PI * delta_mhz * 1e6,
        "rabi_rad_per_s": [TWO_PI * r * 1e6 for r in rabi_mhz],
        "a_per_sqrt_s": [math.copysign(math.sqrt(abs(f) * gamma), f) for f in a],
        "b_per_sqrt_s": [math.copysign(math.sqrt(abs(f) * gamma), f) for f in b],
        "duration_s": duration_us * 1e-6,
    }


SCENARIOS = [
    # Close upper levels (10 MHz apart, Gamma 6 MHz): the cross terms matter.
    scenario("close_upper_levels", 6.0, 10.0, 3.0, [5.0, 4.0], [0.6, -0.5], [0.3, 0.5], 0.3),
    # Same, resonant on e1 with a stronger drive and opposite signs.
    scenario("strong_drive_opposite_signs", 6.0, 25.0, 0.0, [12.0, -7.0], [-0.4, 0.6], [0.6, 0.4], 0.2),
]


def solve(s):
    import numpy as np
    import qutip as qt

    g1, g2, e1, e2, lost = (qt.basis(5, k) for k in range(5))
    d1 = s["delta_rad_per_s"]
    d2 = d1 - s["split_rad_per_s"]
    r1, r2 = s["rabi_rad_per_s"]
    h = -d1 * e1 * e1.dag() - d2 * e2 * e2.dag()
    h += 0.5 * r1 * (e1 * g1.dag() + g1 * e1.dag()) + 0.5 * r2 * (e2 * g1.dag() + g1 * e2.dag())
    a1, a2 = s["a_per_sqrt_s"]
    b1, b2 = s["b_per_sqrt_s"]
    gamma = s["gamma_per_s"]
    c_ops = [
        a1 * g1 * e1.dag() + a2 * g1 * e2.dag(),
        b1 * g2 * e1.dag() + b2 * g2 * e2.dag(),
    ]
    rest1 = gamma - a1 * a1 - b1 * b1
    rest2 = gamma - a2 * a2 - b2 * b2
    for rest, e in ((rest1, e1), (rest2, e2)):
        if rest > 1e-9 * gamma:
            c_ops.append(math.sqrt(rest) * lost * e.dag())
    opts = {"atol": 1e-12, "rtol": 1e-10, "nsteps": 10**7}
    t = s["duration_s"]
    rho0 = g1 * g1.dag()
    r = qt.mesolve(h, rho0, np.linspace(0.0, t, 401), c_ops=c_ops, options=opts)
    end = r.states[-1]
    h_off = -d1 * e1 * e1.dag() - d2 * e2 * e2.dag()
    tail = 60.0 / gamma
    r2_ = qt.mesolve(h_off, end, np.linspace(0.0, tail, 201), c_ops=c_ops, options=opts)
    settled = r2_.states[-1]
    pops = lambda rho: [float(np.real(rho[k, k])) for k in range(4)]
    return {
        "levels": ["g1", "g2", "e1", "e2"],
        "window_end_populations": pops(end),
        "window_end_lost": float(np.real(end[4, 4])),
        "settled_populations": pops(settled),
        "settled_lost": float(np.real(settled[4, 4])),
        "settle_time_s": tail,
    }


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--allow-other-versions", action="store_true")
    args = ap.parse_args()
    have = versions(args.allow_other_versions)
    os.makedirs(OUT, exist_ok=True)
    for s in SCENARIOS:
        fx = dict(s)
        fx["reference"] = solve(s)
        fx["metadata"] = {
            "script": "scripts/channels_reference.py",
            "library": "qutip mesolve",
            "versions": have,
            "rtol": 1e-10,
            "atol": 1e-12,
            "note": "invented, illustrative numbers",
        }
        path = os.path.join(OUT, s["name"] + ".json")
        with open(path, "w") as f:
            json.dump(fx, f, indent=1)
            f.write("\n")
        print("wrote", path)


if __name__ == "__main__":
    main()
