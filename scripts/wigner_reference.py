#!/usr/bin/env python3
"""Outside reference for levelplan's exact angular-momentum algebra.

Writes tests/fixtures/wigner/wigner.json: Wigner 3j and 6j symbols and
Clebsch-Gordan coefficients computed by sympy (sympy.physics.wigner, exact
arithmetic), each as an exact signed square root of a rational number and as
a float. The Rust unit tests in src/atom/angular/tests/fixtures.rs read the
file (include_str!); they never run Python.

Set-up (pinned version; the script refuses another sympy unless
--allow-other-versions is given, and records the version in the fixture):

    python3 -m venv /tmp/qv
    /tmp/qv/bin/pip install sympy==1.14.0
    /tmp/qv/bin/python scripts/wigner_reference.py            # writes the fixture
    /tmp/qv/bin/python scripts/wigner_reference.py --check    # recomputes, compares, writes nothing

Arguments are written DOUBLED (two_j = 2j, two_m = 2m) as in the Rust API, so
half-integers are exact integers. The cases are drawn with a fixed seed:
small, medium and large angular momenta (2j up to 80, i.e. j up to 40, where
a floating-point factorial formula has lost most of its digits), and zeros
from the selection rules sympy itself returns zero for (m sum, triangle,
|m| > j, j - m not an integer). Combinations sympy refuses (a triangle with a
half-integer perimeter) are not in the fixture; the Rust tests check those
zeros by the definition.

Each entry: {"two": [six doubled arguments in the order of the Rust function],
"negative": bool, "square": "p/q" (the exact square of the value, in lowest
terms; "0/1" for zero), "value": float (sympy's value rounded to double)}.
The Clebsch-Gordan order is (two_j1, two_m1, two_j2, two_m2, two_j, two_m),
<j1 m1; j2 m2 | j m>, Condon-Shortley phases (sympy's clebsch_gordan).
"""

import argparse
import json
import platform
import random
import sys
from pathlib import Path

PINNED = {"sympy": "1.14.0"}
SEED = 20261205
OUT = Path(__file__).resolve().parent.parent / "tests" / "fixtures" / "wigner" / "wigner.json"


def half(two):
    import sympy as sp

    return sp.Rational(two, 2)


def exact_entry(two, value):
    """The fixture entry of one sympy value (a signed square root of a rational)."""
    import sympy as sp

    square = sp.expand(value**2)
    if not square.is_Rational:
        raise SystemExit(f"square of {value} for {two} is not rational: {square}")
    negative = bool(value < 0)
    return {
        "two": list(two),
        "negative": negative,
        "square": f"{square.p}/{square.q}",
        "value": float(sp.N(value, 40)),
    }


def triangle_pairs(rng, max_two):
    """Random (two_a, two_b, two_c) fulfilling the triangle rule."""
    while True:
        a = rng.randint(0, max_two)
        b = rng.randint(0, max_two)
        c = rng.randrange(abs(a - b), a + b + 1, 2)
        if c <= max_two:
            return a, b, c


def random_m(rng, two_j):
    return rng.randrange(-two_j, two_j + 1, 2)


def three_j_cases(rng):
    cases = []
    for count, max_two in ((140, 8), (60, 30), (45, 80)):
        n = 0
        while n < count:
            a, b, c = triangle_pairs(rng, max_two)
            ma, mb = random_m(rng, a), random_m(rng, b)
            mc = -ma - mb
            if abs(mc) > c:
                continue
            cases.append((a, b, c, ma, mb, mc))
            n += 1
    # zeros sympy returns: m sum, triangle, |m| > j, j - m not an integer
    cases += [
        (2, 2, 2, 2, 0, 0),
        (1, 1, 2, 1, 1, 0),
        (2, 2, 6, 0, 0, 0),
        (1, 3, 8, 1, -1, 0),
        (2, 2, 2, 4, -2, -2),
        (3, 3, 0, 5, -5, 0),
        (2, 2, 2, 1, -1, 0),
        (4, 2, 2, 3, -1, -2),
        (0, 0, 0, 0, 0, 0),
        (60, 60, 80, 0, 0, 0),
        (61, 59, 80, 1, -1, 0),
        (2, 2, 4, 0, 0, 0),
        (2, 4, 2, 0, 0, 0),
        (2, 2, 2, 0, 0, 0),
        (80, 80, 80, 0, 0, 0),
    ]
    return cases


def is_triangle(a, b, c):
    return (a + b + c) % 2 == 0 and abs(a - b) <= c <= a + b


def six_j_cases(rng):
    cases = []
    for count, max_two in ((110, 8), (45, 30), (30, 80)):
        n = 0
        while n < count:
            j1, j2, j3 = triangle_pairs(rng, max_two)
            j4, j5, j6 = (rng.randint(0, max_two) for _ in range(3))
            # {j1 j2 j3; j4 j5 j6}: (j1 j5 j6), (j4 j2 j6), (j4 j5 j3) triangles too
            if is_triangle(j1, j5, j6) and is_triangle(j4, j2, j6) and is_triangle(j4, j5, j3):
                cases.append((j1, j2, j3, j4, j5, j6))
                n += 1
    # zeros: one of the four triangles broken (integer perimeters)
    cases += [
        (2, 2, 6, 2, 2, 2),
        (2, 2, 2, 2, 2, 6),
        (2, 2, 2, 6, 2, 2),
        (4, 4, 0, 2, 2, 8),
        (1, 1, 2, 1, 1, 6),
        (2, 2, 2, 2, 8, 6),
        (40, 40, 80, 2, 2, 82),
        (0, 0, 0, 0, 0, 0),
    ]
    return cases


def cg_cases(rng):
    cases = []
    for count, max_two in ((90, 8), (40, 80)):
        n = 0
        while n < count:
            a, b, c = triangle_pairs(rng, max_two)
            ma, mb = random_m(rng, a), random_m(rng, b)
            if abs(ma + mb) > c:
                continue
            cases.append((a, ma, b, mb, c, ma + mb))
            n += 1
    cases += [
        (1, 1, 1, 1, 2, 0),
        (2, 0, 2, 0, 2, 0),
        (1, 1, 1, -1, 4, 0),
        (3, 5, 1, 1, 4, 6),
        (2, 2, 2, 0, 2, 0),
        (0, 0, 0, 0, 0, 0),
    ]
    return cases


def compute():
    import sympy as sp
    from sympy.physics.wigner import clebsch_gordan, wigner_3j, wigner_6j

    rng = random.Random(SEED)
    three = [exact_entry(t, wigner_3j(*map(half, t))) for t in three_j_cases(rng)]
    six = [exact_entry(t, wigner_6j(*map(half, t))) for t in six_j_cases(rng)]
    cg = [exact_entry(t, clebsch_gordan(*(half(t[i]) for i in (0, 2, 4, 1, 3, 5)))) for t in cg_cases(rng)]
    return {
        "generator": "scripts/wigner_reference.py",
        "library": "sympy.physics.wigner (wigner_3j, wigner_6j, clebsch_gordan)",
        "versions": {"sympy": sp.__version__, "python": platform.python_version()},
        "seed": SEED,
        "arguments": "doubled: two_j = 2j, two_m = 2m",
        "three_j": three,
        "six_j": six,
        "clebsch_gordan": cg,
    }


def to_text(data):
    """JSON with one entry per line (diffs stay readable)."""
    lines = ["{"]
    for key, value in data.items():
        if isinstance(value, list):
            body = ",\n".join("  " + json.dumps(entry) for entry in value)
            lines.append(f" {json.dumps(key)}: [\n{body}\n ],")
        else:
            lines.append(f" {json.dumps(key)}: {json.dumps(value)},")
    lines[-1] = lines[-1].rstrip(",")
    lines.append("}")
    return "\n".join(lines) + "\n"


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="recompute and compare; write nothing")
    parser.add_argument("--allow-other-versions", action="store_true")
    args = parser.parse_args()

    import sympy as sp

    if sp.__version__ != PINNED["sympy"] and not args.allow_other_versions:
        sys.exit(f"sympy {sp.__version__} found, {PINNED['sympy']} pinned (--allow-other-versions to go on)")
    data = compute()
    text = to_text(data)
    if args.check:
        old = json.loads(OUT.read_text())
        new = json.loads(text)
        for key in ("three_j", "six_j", "clebsch_gordan"):
            if old[key] != new[key]:
                sys.exit(f"{OUT}: {key} differs from a fresh computation")
        print(f"{OUT}: matches ({', '.join(f'{len(new[k])} {k}' for k in ('three_j', 'six_j', 'clebsch_gordan'))})")
        return
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(text)
    print(f"wrote {OUT}: {len(data['three_j'])} 3j, {len(data['six_j'])} 6j, {len(data['clebsch_gordan'])} CG")


if __name__ == "__main__":
    main()
