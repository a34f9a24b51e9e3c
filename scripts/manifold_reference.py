#!/usr/bin/env python3
"""Outside reference for the dynamics levelplan generates from `manifolds:`.

Builds, independently of levelplan's code, the sublevel model of two
invented manifolds S (J = 1/2) and P (J' = 3/2) with I = 1/2: hyperfine +
Zeeman Hamiltonian in |J mJ I mI> diagonalised per m_F block with numpy,
each eigenvector labelled F by its largest overlap with the coupled state
|F mF> (sympy Clebsch-Gordan, J first); dipole elements by the convention
<J mJ| d_q |J' mJ'> = <J||d||J'> <J' mJ' 1 q|J mJ> (sympy CG), the
absorption element <e|d_q|g> = (-1)^q <g|d_{-q}|e> checked against the
Wigner-Eckart form with the upper state on the left; polarisation
eps = sum_q sqrt(p_q) e_q, so Omega_eg is proportional to
sqrt(p_q) <e|d_q|g>; RWA in the rotating frame of the one laser; decay by
three coherent jump operators L_q = c sum <g|d_q|e> |g><e| with c fixed so
that sum_q L_q^dag L_q = Gamma_branch on every upper sublevel (checked
numerically); what the coupling does not carry goes to a sink `lost`.
qutip mesolve gives the window-end populations; the settled populations
are the result of a drive-free tail of 40 lifetimes.

Frame / secular rule (src/solve/equations/channels.rs): scenario a drives
all three components from one sublevel, so every level is in one frame and
levelplan drops no jump term. Scenario b (pi light, unpolarised F = 1) has
one frame per m_F block; the terms levelplan drops join different blocks,
whose coherences stay zero (the initial mixture is diagonal and H and each
L_q shift m_F uniformly), so the full Lindblad equation here is the same
dynamics.

All constants are invented and illustrative. Pinned versions (recorded in
every fixture): python3 -m venv /tmp/qv; /tmp/qv/bin/pip install
qutip==5.3.1 numpy==2.4.6 scipy==1.17.1 sympy==1.14.0;
/tmp/qv/bin/python scripts/manifold_reference.py
"""
import json
import math
import sys
from pathlib import Path

PINNED = {"qutip": "5.3.1", "numpy": "2.4.6", "scipy": "1.17.1", "sympy": "1.14.0"}
OUT = Path(__file__).resolve().parent.parent / "tests" / "fixtures" / "manifolds"
TWO_PI = 2.0 * math.pi
# CODATA 2018 (the constants levelplan uses).
MU_B = 9.2740100783e-24
HBAR = 1.054571817e-34
OPTS = {"method": "adams", "atol": 1e-13, "rtol": 1e-11, "nsteps": 10**8}


def versions():
    import numpy, qutip, scipy, sympy
    have = {"qutip": qutip.__version__, "numpy": numpy.__version__,
            "scipy": scipy.__version__, "sympy": sympy.__version__}
    if have != PINNED and "--allow-other-versions" not in sys.argv:
        sys.exit(f"versions {have} differ from {PINNED}")
    return have


def cg(j1, m1, j2, m2, j, m):
    from sympy import Rational as R
    from sympy.physics.wigner import clebsch_gordan
    h = lambda x: R(x) / 2  # arguments doubled
    return float(clebsch_gordan(h(j1), h(j2), h(j), h(m1), h(m2), h(m)))


def half(two):
    return f"{two // 2}" if two % 2 == 0 else f"{two}/2"


def sub_id(name, two_f, two_m):
    return f"{name}_F{half(two_f)}_m{'+' if two_m > 0 else ''}{half(two_m)}"


def manifold(name, two_j, two_i, a_mhz, g_j, g_i, field_g):
    """Sublevels: list of (id, energy rad/s, {(2mJ, 2mI): amplitude})."""
    import numpy as np
    larmor = MU_B * field_g * 1e-4 / HBAR
    a = TWO_PI * a_mhz * 1e6
    out = []
    for two_mf in range(-(two_j + two_i), two_j + two_i + 1, 2):
        st = [(mj, two_mf - mj) for mj in range(-two_j, two_j + 1, 2) if abs(two_mf - mj) <= two_i]
        n = len(st)
        h = np.zeros((n, n))
        jj, ii = two_j / 2, two_i / 2
        for k, (mj, mi) in enumerate(st):
            h[k, k] = a * (mj / 2) * (mi / 2) + larmor * (g_j * mj / 2 + g_i * mi / 2)
            for l, (mj2, mi2) in enumerate(st):
                if mj2 == mj + 2 and mi2 == mi - 2:  # J+ I- / 2
                    v = a / 2 * math.sqrt(jj * (jj + 1) - (mj / 2) * (mj / 2 + 1)) \
                        * math.sqrt(ii * (ii + 1) - (mi / 2) * (mi / 2 - 1))
                    h[l, k] = h[k, l] = v
        w, v = np.linalg.eigh(h)
        fs = [f for f in range(abs(two_j - two_i), two_j + two_i + 1, 2) if f >= abs(two_mf)]
        coupled = {f: np.array([cg(two_j, mj, two_i, mi, f, two_mf) for mj, mi in st]) for f in fs}
        used = set()
        for k in range(n):
            vec = v[:, k]
            f = max(fs, key=lambda f: abs(vec @ coupled[f]))
            assert f not in used and abs(vec @ coupled[f]) > 0.9
            used.add(f)
            if vec @ coupled[f] < 0:
                vec = -vec
            out.append((sub_id(name, f, two_mf), w[k], dict(zip(st, vec))))
    return out


def dipole_blocks(two_j, lower, two_jp, upper):
    """D[q][g, e] = <g|d_q|e> / <J||d||J'> and A[q][e, g] = <e|d_q|g> / <J||d||J'>."""
    import numpy as np
    D = {q: np.zeros((len(lower), len(upper))) for q in (-1, 0, 1)}
    A = {q: np.zeros((len(upper), len(lower))) for q in (-1, 0, 1)}
    # Steck: <J'||d||J> = (-1)^{J'-J} sqrt((2J+1)/(2J'+1)) <J||d||J'>.
    back = (-1) ** ((two_jp - two_j) // 2) * math.sqrt((two_j + 1) / (two_jp + 1))
    for gi, (_, _, gc) in enumerate(lower):
        for ei, (_, _, ec) in enumerate(upper):
            for q in (-1, 0, 1):
                d = a_ = 0.0
                for (mj, mi), cgv in gc.items():
                    for (mjp, mip), cev in ec.items():
                        if mi != mip:
                            continue
                        d += cgv * cev * cg(two_jp, mjp, 2, 2 * q, two_j, mj)
                        a_ += cev * cgv * back * cg(two_j, mj, 2, 2 * q, two_jp, mjp)
                D[q][gi, ei], A[q][ei, gi] = d, a_
    for q in (-1, 0, 1):  # hermiticity: <e|d_q|g> = (-1)^q <g|d_-q|e>
        assert np.allclose(A[q], (-1) ** q * D[-q].T, atol=1e-12)
    return D, A


def run(sc):
    import numpy as np
    import qutip as qt
    lo = manifold("S", 1, sc["two_i"], sc["a_s"], sc["g_s"], sc["g_i"], sc["field"])
    up = manifold("P", 3, sc["two_i"], sc["a_p"], sc["g_p"], sc["g_i"], sc["field"])
    D, A = dipole_blocks(1, lo, 3, up)
    ng, ne = len(lo), len(up)
    n = ng + ne + 1
    ids = [s[0] for s in lo] + [s[0] for s in up]
    idx = {k: i for i, k in enumerate(ids)}
    gref, eref = sc["tuned"]
    delta = TWO_PI * sc["detuning_mhz"] * 1e6
    e_lo = {s[0]: s[1] for s in lo}
    e_up = {s[0]: s[1] for s in up}
    # Laser frame: upper sublevel at E_e - (E_eref - E_gref) - Delta.
    h0 = np.zeros((n, n), complex)
    for s in lo:
        h0[idx[s[0]], idx[s[0]]] = s[1]
    for s in up:
        h0[idx[s[0]], idx[s[0]]] = s[1] - (e_up[eref] - e_lo[gref]) - delta
    p = sc["pol"]
    omega = np.zeros((ne, ng))
    for q in (-1, 0, 1):
        omega += math.sqrt(p[q]) * A[q]
    r = omega[idx[sc["rabi_on"][1]] - ng, idx[sc["rabi_on"][0]]]
    omega *= TWO_PI * sc["rabi_mhz"] * 1e6 / r
    hd = np.zeros((n, n), complex)
    hd[ng:ng + ne, :ng] = omega / 2
    hd[:ng, ng:ng + ne] = omega.T / 2
    gamma = 1.0 / (sc["lifetime_ns"] * 1e-9)
    m = sum(D[q].T @ D[q] for q in (-1, 0, 1))
    assert np.allclose(m, m[0, 0] * np.eye(ne), atol=1e-12)
    c = math.sqrt(sc["fraction"] * gamma / m[0, 0])
    cops = []
    for q in (-1, 0, 1):
        L = np.zeros((n, n))
        L[:ng, ng:ng + ne] = c * D[q]
        cops.append(qt.Qobj(L))
    for e in range(ne):
        L = np.zeros((n, n))
        L[n - 1, ng + e] = math.sqrt((1 - sc["fraction"]) * gamma)
        cops.append(qt.Qobj(L))
    rho = np.zeros((n, n), complex)
    for k, w in sc["initial"].items():
        rho[idx[k], idx[k]] = w
    rho = qt.Qobj(rho)
    dur, end = sc["duration_ns"] * 1e-9, sc["window_ns"] * 1e-9
    r1 = qt.mesolve(qt.Qobj(h0 + hd), rho, np.linspace(0, dur, 201), c_ops=cops, options=OPTS)
    rho = r1.states[-1]
    if end > dur:
        rho = qt.mesolve(qt.Qobj(h0), rho, np.linspace(dur, end, 101), c_ops=cops, options=OPTS).states[-1]
    final = {k: float(rho.full()[idx[k], idx[k]].real) for k in ids}
    lost = float(rho.full()[n - 1, n - 1].real)
    tail = 40.0 / gamma
    rs = qt.mesolve(qt.Qobj(h0), rho, np.linspace(0, tail, 401), c_ops=cops, options=OPTS).states[-1]
    settled = {k: float(rs.full()[idx[k], idx[k]].real) for k in ids}
    return final, lost, settled, float(rs.full()[n - 1, n - 1].real)


def sixj(a, b, c, d, e, f):
    from sympy import Rational as R
    from sympy.physics.wigner import wigner_6j
    h = lambda x: R(x) / 2
    return float(wigner_6j(h(a), h(b), h(c), h(d), h(e), h(f)))


def run_hyperfine(sc):
    """F-level model (resolve: hyperfine, zero field): F -> F' couplings with
    the isotropic strength S_FF' / 3, S_FF' = (2F'+1)(2J+1){J J' 1; F' F I}^2,
    and incoherent decay F' -> F with branching (2F+1)(2J'+1){J J' 1; F' F I}^2
    (D. A. Steck, alkali D-line data, relative hyperfine strength factors)."""
    import numpy as np
    import qutip as qt
    two_j, two_jp, two_i = 1, 3, sc["two_i"]
    def levels(name, tj, a_mhz):
        out = []
        for f in range(abs(tj - two_i), tj + two_i + 1, 2):
            k = (f / 2) * (f / 2 + 1) - (two_i / 2) * (two_i / 2 + 1) - (tj / 2) * (tj / 2 + 1)
            out.append((f"{name}_F{half(f)}", f, TWO_PI * a_mhz * 1e6 * k / 2))
        return out
    lo, up = levels("S", two_j, sc["a_s"]), levels("P", two_jp, sc["a_p"])
    ids = [l[0] for l in lo] + [u[0] for u in up]
    idx = {k: i for i, k in enumerate(ids)}
    ng, ne = len(lo), len(up)
    n = ng + ne + 1
    S = np.zeros((ng, ne)); B = np.zeros((ng, ne))
    for a, (_, f, _) in enumerate(lo):
        for b, (_, fp, _) in enumerate(up):
            w = sixj(two_j, two_jp, 2, fp, f, two_i) ** 2
            S[a, b] = (fp + 1) * (two_j + 1) * w
            B[a, b] = (f + 1) * (two_jp + 1) * w
    assert np.allclose(S.sum(axis=1), 1) and np.allclose(B.sum(axis=0), 1)
    e = {l[0]: l[2] for l in lo + up}
    gref, eref = sc["tuned"]
    delta = TWO_PI * sc["detuning_mhz"] * 1e6
    h0 = np.zeros((n, n), complex)
    for k in ids:
        h0[idx[k], idx[k]] = e[k] if k.startswith("S") else e[k] - (e[eref] - e[gref]) - delta
    omega = np.sqrt(S / 3.0)
    ra, rb = idx[sc["rabi_on"][0]], idx[sc["rabi_on"][1]] - ng
    omega *= TWO_PI * sc["rabi_mhz"] * 1e6 / omega[ra, rb]
    hd = np.zeros((n, n), complex)
    hd[:ng, ng:ng + ne] = omega / 2
    hd[ng:ng + ne, :ng] = omega.T / 2
    gamma = 1.0 / (sc["lifetime_ns"] * 1e-9)
    cops = []
    for b in range(ne):
        for a in range(ng):
            L = np.zeros((n, n)); L[a, ng + b] = math.sqrt(sc["fraction"] * gamma * B[a, b])
            cops.append(qt.Qobj(L))
        L = np.zeros((n, n)); L[n - 1, ng + b] = math.sqrt((1 - sc["fraction"]) * gamma)
        cops.append(qt.Qobj(L))
    return ids, n, h0, hd, cops, gamma


def evolve(sc, ids, n, h0, hd, cops, gamma):
    import numpy as np
    import qutip as qt
    idx = {k: i for i, k in enumerate(ids)}
    rho = np.zeros((n, n), complex)
    for k, w in sc["initial"].items():
        rho[idx[k], idx[k]] = w
    rho = qt.Qobj(rho)
    dur, end = sc["duration_ns"] * 1e-9, sc["window_ns"] * 1e-9
    rho = qt.mesolve(qt.Qobj(h0 + hd), rho, np.linspace(0, dur, 201), c_ops=cops, options=OPTS).states[-1]
    if end > dur:
        rho = qt.mesolve(qt.Qobj(h0), rho, np.linspace(dur, end, 101), c_ops=cops, options=OPTS).states[-1]
    final = {k: float(rho.full()[idx[k], idx[k]].real) for k in ids}
    lost = float(rho.full()[n - 1, n - 1].real)
    rs = qt.mesolve(qt.Qobj(h0), rho, np.linspace(0, 40.0 / gamma, 401), c_ops=cops, options=OPTS).states[-1]
    settled = {k: float(rs.full()[idx[k], idx[k]].real) for k in ids}
    return final, lost, settled, float(rs.full()[n - 1, n - 1].real)


def yaml(sc):
    pol = sc["pol"]
    names = {1: "sigma+", 0: "pi", -1: "sigma-"}
    resolve = "\n    resolve: hyperfine" if sc.get("hyperfine") else ""
    pol_line = "" if sc.get("hyperfine") else "\n    polarization: "
    pol_text = "{ " + ", ".join(f"{names[q]}: {pol[q]}" for q in (1, 0, -1) if pol[q] > 0) + " }"
    init = ", ".join(f"{k}: {v}" for k, v in sc["initial"].items())
    frac = "true" if sc["fraction"] == 1 else sc["fraction"]
    return f"""# Illustrative, invented constants -- not data of any real species.
# {sc['comment']}
# Generated by scripts/manifold_reference.py with the reference {sc['name']}.json
# beside this file (do not edit by hand; rerun the script).
# Laser safety: real beams can injure eyes and skin; follow your local rules
# (IEC 60825-1 / ANSI Z136.1) and your institution's laser safety officer.
title: "{sc['title']} (illustrative)"
manifolds:
  S:
    energy: "0 MHz"
    J: 1/2
    I: {half(sc['two_i'])}
    hyperfine: {{ A: "{sc['a_s']} MHz" }}
    g_J: {sc['g_s']}
    g_I: {sc['g_i']}{resolve}
  P:
    energy: "391.7 THz"
    J: 3/2
    I: {half(sc['two_i'])}
    hyperfine: {{ A: "{sc['a_p']} MHz" }}
    g_J: {sc['g_p']}
    g_I: {sc['g_i']}{resolve}
    lifetime: "{sc['lifetime_ns']} ns"
{"" if sc.get("hyperfine") else 'magnetic_field: "' + str(sc['field']) + ' G"'}
couplings:
  - between: [S, P]
    from_lifetime: {frac}
fields:
  laser:
    tuned: {{ to: [{sc['tuned'][0]}, {sc['tuned'][1]}], detuning: "{sc['detuning_mhz']} MHz" }}{pol_line}{"" if sc.get("hyperfine") else pol_text}
    rabi: {{ on: [{sc['rabi_on'][0]}, {sc['rabi_on'][1]}], value: "{sc['rabi_mhz']} MHz" }}
    envelope: {{ shape: rectangular, start: "0 ns", duration: "{sc['duration_ns']} ns" }}
window: {{ start: "0 ns", end: "{sc['window_ns']} ns" }}
initial: {{ mixture: {{ {init} }} }}
targets: [{sc['target']}]
solver:
  dynamics: density_matrix
  rtol: 1e-10
  atol: 1e-12
"""


SCENARIOS = [
    dict(name="a_sigma_plus_impure", title="sigma+ pulse with a 3 % impurity at 3 G",
         comment="sigma+ (0.97) with pi 0.02 and sigma- 0.01 from S_F1_m0, 3 G, P decays fully to S.",
         two_i=1, a_s=80.0, a_p=15.0, g_s=2.0, g_p=1.33, g_i=-0.0005, field=3.0,
         lifetime_ns=30.0, fraction=1, tuned=("S_F1_m0", "P_F2_m+1"), detuning_mhz=-1.5,
         pol={1: 0.97, 0: 0.02, -1: 0.01}, rabi_on=("S_F1_m0", "P_F2_m+1"), rabi_mhz=6.0,
         duration_ns=150.0, window_ns=200.0, initial={"S_F1_m0": 1.0}, target="S_F1_m+1"),
    dict(name="b_pi_unpolarised", title="weak pi light on an unpolarised F = 1 at 2 G",
         comment="pi light on S_F1 (mixture over its sublevels), 80 % of P's decay to S, the rest lost.",
         two_i=1, a_s=80.0, a_p=15.0, g_s=2.0, g_p=1.33, g_i=-0.0005, field=2.0,
         lifetime_ns=30.0, fraction=0.8, tuned=("S_F1_m0", "P_F1_m0"), detuning_mhz=2.0,
         pol={1: 0.0, 0: 1.0, -1: 0.0}, rabi_on=("S_F1_m+1", "P_F1_m+1"), rabi_mhz=1.5,
         duration_ns=200.0, window_ns=250.0,
         initial={"S_F1_m-1": 0.3333333333333333, "S_F1_m0": 0.3333333333333334, "S_F1_m+1": 0.3333333333333333},
         target="S_F0_m0"),
    dict(name="c_hyperfine_levels", title="F-resolved line (resolve: hyperfine), no field",
         comment="resolve: hyperfine: F -> F' couplings with S_FF'/3, decay branched by F; 90 % of P's decay to S.",
         hyperfine=True, two_i=1, a_s=80.0, a_p=15.0, g_s=2.0, g_p=1.33, g_i=-0.0005, field=0.0,
         lifetime_ns=30.0, fraction=0.9, tuned=("S_F1", "P_F1"), detuning_mhz=5.0,
         pol={1: 0.0, 0: 1.0, -1: 0.0}, rabi_on=("S_F1", "P_F2"), rabi_mhz=8.0,
         duration_ns=120.0, window_ns=150.0, initial={"S_F1": 1.0}, target="S_F0"),
]


def main():
    vers = versions()
    OUT.mkdir(parents=True, exist_ok=True)
    for sc in SCENARIOS:
        if sc.get("hyperfine"):
            final, lost, settled, settled_lost = evolve(sc, *run_hyperfine(sc))
        else:
            final, lost, settled, settled_lost = run(sc)
        (OUT / f"{sc['name']}.yaml").write_text(yaml(sc))
        doc = {"scheme": f"{sc['name']}.yaml", "final_population": final, "lost_population": lost,
               "settled_population": settled, "settled_lost_population": settled_lost,
               "metadata": {"versions": vers, "qutip_options": OPTS,
                            "settled_by": "drive-free tail of 40 lifetimes",
                            "generator": "scripts/manifold_reference.py"}}
        (OUT / f"{sc['name']}.json").write_text(json.dumps(doc, indent=1, sort_keys=True) + "\n")
        print(sc["name"], "lost", lost, "sum", sum(final.values()) + lost)


if __name__ == "__main__":
    main()
