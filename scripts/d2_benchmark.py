#!/usr/bin/env python3
"""Speed benchmark of levelplan's density-matrix solver against qutip's
mesolve on a 24-level D2-like scheme (hyperfine-Zeeman sublevels).

Writes level_schemes/bench/d2_sublevels_24.yaml (an INVENTED alkali-like
species, illustrative numbers only), then solves it twice, side by side:

  (a) `levelplan vet <file> --format json` (the release binary; wall clock of
      the whole process: start, parse, solve, estimate, report), best of N;
  (b) qutip.mesolve of the same Hamiltonian and collapse operators in the
      same rotating frame at the same rtol/atol, timed around the call,
      best of N, per integration method (adams is mesolve's default); each
      call runs in a forked child that is killed after --timeout seconds
      (reported as "did not finish"). The operators are stored as qutip CSR
      (what qutip's own operator constructors give); --qutip-data dense
      keeps qutip.Qobj(ndarray)'s dense storage, whose Liouvillian product
      costs about 12 ms here against 4 us for CSR;
  (c) a reference without step control: the window is one constant
      generator (a rectangular pulse that fills it), so rho(T) = exp(L T)
      rho(0), by scipy.sparse.linalg.expm_multiply;

compares the final populations (largest absolute difference between the
tools and of each against the reference) and prints the speed ratio.
--rtol/--atol set both tools' tolerances (levelplan reads them from a
temporary copy of the scheme; the checked-in file keeps the defaults).
levelplan's time is split by also timing `inspect` (start-up and parse)
and `evolve --samples 2` (parse and one propagation, no estimate).
Everything is pinned to one core (--cpu, default 0, through
sched_setaffinity, inherited by the child processes) unless --all-cores.

Set-up (pinned versions, as scripts/open_reference.py; the script refuses
other versions unless --allow-other-versions is given):

    python3 -m venv /tmp/qv
    /tmp/qv/bin/pip install qutip==5.3.1 numpy==2.4.6 scipy==1.17.1 sympy==1.14.0
    cargo build --release
    /tmp/qv/bin/python scripts/d2_benchmark.py                 # write, run, compare
    /tmp/qv/bin/python scripts/d2_benchmark.py --rtol 1e-6 --atol 1e-8 --timeout 600
    /tmp/qv/bin/python scripts/d2_benchmark.py --write-only    # only the YAML
    /tmp/qv/bin/python scripts/d2_benchmark.py --check         # the YAML is up to date

The invented species (ground J = 1/2, excited J = 3/2, nuclear spin
I = 3/2; every number below is made up for this benchmark):

* ground hyperfine splitting F=2 - F=1: GROUND_SPLITTING_MHZ;
* excited F' = 0..3 at the invented offsets EXCITED_F_MHZ;
* D2-like line centre NU0_MHZ (401.5 THz, no real alkali line);
* linear Zeeman shifts g_F m_F mu_B B at the bias field B = BIAS_GAUSS,
  g_F from the Lande formula with g_J = 2 (ground), 4/3 (excited), g_I = 0
  (common practice, no source), mu_B / h = 1.39962449 MHz/G (CODATA 2018);
* every excited sublevel has the lifetime LIFETIME;
* relative dipoles <F m| e r_q |F' m'> (signed) from Clebsch-Gordan
  coefficients and 6j symbols (sympy.physics.wigner), in the convention of
  D. A. Steck, "Rubidium 87 D Line Data" (from memory):
      (-1)^(F' + J + 1 + I) sqrt((2F' + 1)(2J + 1)) {J J' 1; F' F I}
      x <F m | F' m'; 1 q>,   q = m - m';
* one sigma+ laser (a 1 us square pulse) tuned to resonance with the
  stretched line |F=2, m=2> -> |F'=3, m'=3>, at the Rabi frequency RABI on
  that line (about Gamma); every sigma+ pair (m' = m + 1) is a coupling with
  its relative dipole, so the other lines get Omega scaled by the dipole
  ratio;
* decays_to of every excited sublevel: the branching fractions
  |d|^2 / sum |d|^2 over all three polarisations (they sum to 1: the line
  is closed). Each route is incoherent (its own jump operator): that is
  what the scheme keys of version 2 express; the coherent decay between
  sublevels of equal m is left out, in levelplan and in the qutip model
  alike.
* initial state: an equal mixture of the five F=2 ground sublevels.

The qutip model (the conventions of docs/physics.md): in the rotating frame
of the laser, ground level k has the frame energy delta_k = omega_k -
omega_ref and excited level k delta_k = omega_k - omega_ref - omega_L;
H = sum_k delta_k |k><k| + sum_pairs (Omega_k / 2) (|e><g| + |g><e|) with
Omega_k = Omega d_k / d_ref; collapse operators sqrt(Gamma b_eg) |g><e|.
Populations do not depend on the frame. levelplan picks its own frame (a
spanning tree of the drives); with one laser every loop of drives is on its
multi-photon resonance, so its frame Hamiltonian is this one up to phases.
"""
import argparse
import json
import math
import os
import statistics
import subprocess
import sys
import time
from fractions import Fraction
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from open_reference import PINNED, SAFETY, versions  # noqa: E402

ROOT = Path(__file__).resolve().parent.parent
SCHEME = ROOT / "level_schemes" / "bench" / "d2_sublevels_24.yaml"
BINARY = ROOT / "target" / "release" / "levelplan"

# The invented species (see the module docstring).
I_NUC = Fraction(3, 2)
J_G, J_E = Fraction(1, 2), Fraction(3, 2)
GROUND_SPLITTING_MHZ = Fraction("1130")
EXCITED_F_MHZ = {0: Fraction("-131.5"), 1: Fraction("-78.25"),
                 2: Fraction("12.5"), 3: Fraction("165.75")}
NU0_MHZ = Fraction(401_500_000)
BIAS_GAUSS = Fraction("1.5")
MU_B_MHZ_PER_G = Fraction("1.39962449")
LIFETIME = "26 ns"
RABI = "6 MHz"
PULSE = "1 us"

# Tolerances: levelplan's defaults, given explicitly in the file; qutip gets
# the same numbers.
RTOL = 1e-10
ATOL = 1e-12
# qutip's mesolve methods tried (the first is qutip's default; diag, one
# eigendecomposition of the Liouvillian, is left to --methods: 31 s here).
QUTIP_METHODS = ["adams", "bdf", "lsoda", "dop853", "vern7", "vern9"]

TWO_PI = 2.0 * math.pi


def g_f(j, f, g_j):
    """Lande g_F with g_I = 0 (common practice, no source)."""
    if f == 0:
        return Fraction(0)
    return g_j * (f * (f + 1) - I_NUC * (I_NUC + 1) + j * (j + 1)) / (2 * f * (f + 1))


def sublevels():
    """(id, F, m, energy in MHz as a Fraction, ground?) in file order."""
    out = []
    lo = -GROUND_SPLITTING_MHZ * Fraction(5, 8)  # centroid at 0 (2F+1 weights)
    for f, base in [(1, lo), (2, lo + GROUND_SPLITTING_MHZ)]:
        for m in range(-f, f + 1):
            z = g_f(J_G, f, 2) * m * MU_B_MHZ_PER_G * BIAS_GAUSS
            out.append((f"g{f}_m{m:+d}" if m else f"g{f}_m0", f, m, base + z, True))
    for f in range(4):
        for m in range(-f, f + 1):
            z = g_f(J_E, f, Fraction(4, 3)) * m * MU_B_MHZ_PER_G * BIAS_GAUSS
            e = NU0_MHZ + EXCITED_F_MHZ[f] + z
            out.append((f"e{f}_m{m:+d}" if m else f"e{f}_m0", f, m, e, False))
    return out


def dipole(fg, mg, fe, me):
    """<F m| e r_q |F' m'> / <J||e r||J'>, q = m - m' (Steck's convention,
    from memory), as a float; 0 where forbidden."""
    from sympy import S, sqrt
    from sympy.physics.wigner import clebsch_gordan, wigner_6j

    q = mg - me
    if abs(q) > 1 or abs(fg - fe) > 1:
        return 0.0
    six = wigner_6j(J_G, J_E, 1, fe, fg, I_NUC)
    cg = clebsch_gordan(S(fe), 1, S(fg), S(me), S(q), S(mg))
    sign = (-1) ** int(fe + J_G + 1 + I_NUC)
    return float(sign * sqrt((2 * fe + 1) * (2 * J_G + 1)) * six * cg)


def mhz_text(x):
    """An exact decimal text of a Fraction of MHz (the energies have finite
    decimal expansions by construction)."""
    d = Fraction(x)
    scale = 10**12
    n = d * scale
    if n.denominator != 1:
        raise ValueError(f"{x} has no short decimal form")
    sign = "-" if n < 0 else ""
    n = abs(n.numerator)
    whole, frac = divmod(n, scale)
    s = f"{whole}.{frac:012d}".rstrip("0").rstrip(".")
    return f"{sign}{s} MHz"


def build():
    """The scheme as plain data: levels (id, energy text, F, m, ground?),
    couplings (ground id, excited id, relative dipole), branching per
    excited id."""
    lv = sublevels()
    ground = [x for x in lv if x[4]]
    excited = [x for x in lv if not x[4]]
    couplings = []
    for gid, fg, mg, _, _ in ground:
        for eid, fe, me, _, _ in excited:
            if me == mg + 1:
                d = dipole(fg, mg, fe, me)
                if abs(d) > 1e-12:
                    couplings.append((gid, eid, d))
    branching = {}
    for eid, fe, me, _, _ in excited:
        w = {gid: dipole(fg, mg, fe, me) ** 2 for gid, fg, mg, _, _ in ground}
        total = sum(w.values())
        if abs(total - 0.5) > 1e-12:
            raise SystemExit(f"{eid}: sum of |d|^2 is {total}, not (2J+1)/(2J'+1) = 1/2")
        branching[eid] = {k: v / total for k, v in w.items() if v > 1e-15}
    ref = ("g2_m+2", "e3_m+3")
    d_ref = next(d for g, e, d in couplings if (g, e) == ref)
    if max(abs(d) for _, _, d in couplings) > abs(d_ref) + 1e-15:
        raise SystemExit("the stretched line is not the strongest")
    return lv, couplings, branching, ref


def yaml_text(lv, couplings, branching, ref, rtol=RTOL, atol=ATOL):
    hdr = f"""# Illustrative, invented scenario -- not data of any real species.
#
# A benchmark scheme: the 24 hyperfine-Zeeman sublevels of the D2-like line
# of an invented alkali-like atom (ground J = 1/2, excited J = 3/2, nuclear
# spin I = 3/2: 8 ground + 16 excited sublevels). Invented numbers: ground
# splitting F=2 - F=1 of {GROUND_SPLITTING_MHZ} MHz, excited F' = 0..3 at
# {', '.join(f'{float(v):+g}' for v in EXCITED_F_MHZ.values())} MHz from a line centre of 401.5 THz, linear
# Zeeman shifts g_F m_F mu_B B at a bias of {BIAS_GAUSS} G (Lande g_F with g_J = 2
# and 4/3, g_I = 0), lifetime {LIFETIME} for every excited sublevel.
#
# One sigma+ laser, a {PULSE} square pulse, on resonance with the stretched
# line g2_m+2 -> e3_m+3 at Omega/2pi = {RABI} (about Gamma/2pi = 6.1 MHz).
# Every sigma+ pair (m' = m + 1) is a coupling with its signed relative
# dipole (Clebsch-Gordan and 6j, D. A. Steck's convention for the D lines,
# from memory); decays_to gives each excited sublevel's branching over all
# three polarisations (|d|^2 normalised; they sum to 1, the line is closed).
# Each decay route is incoherent (one jump operator per pair): that is what
# the version 2 keys express; the coherent decay between sublevels of equal
# m is left out. Starting from an equal mixture of the five F=2 sublevels,
# the laser pumps the atoms towards g2_m+2 and a few percent off-resonantly
# into F=1. readout: settled judges where the atoms end up once the excited
# sublevels have decayed (the question of a pumping plan).
#
# Generated by scripts/d2_benchmark.py (do not edit by hand; rerun it), which
# also times this scheme against qutip's mesolve; docs/performance.md.
#
{SAFETY.rstrip()}

title: "24 D2-like sublevels, sigma+ pumping (invented, benchmark)"

levels:
"""
    out = [hdr.rstrip("\n")]
    for lid, _, _, e, is_ground in lv:
        out.append(f"  {lid}:")
        out.append(f'    energy: "{mhz_text(e)}"')
        if not is_ground:
            out.append(f'    lifetime: "{LIFETIME}"')
            items = ", ".join(f"{k}: {v!r}" for k, v in branching[lid].items())
            out.append(f"    decays_to: {{ {items} }}")
    f2 = [lid for lid, f, _, _, g in lv if g and f == 2]
    out.append("")
    items = ", ".join(f"{k}: 0.2" for k in f2)
    out.append(f"initial: {{ mixture: {{ {items} }} }}")
    out.append("targets: []")
    out.append("readout: settled")
    out.append("")
    out.append("couplings:")
    for g, e, d in couplings:
        out.append(f"  - between: [{g}, {e}]")
        out.append(f"    dipole: {d!r}")
    out.append("")
    out.append("fields:")
    out.append("  sigma_plus:")
    out.append(f'    tuned: {{ to: [{ref[0]}, {ref[1]}], detuning: "0 MHz" }}')
    out.append(f'    rabi: {{ on: [{ref[0]}, {ref[1]}], value: "{RABI}" }}')
    out.append(f'    envelope: {{ shape: rectangular, start: "0 us", duration: "{PULSE}" }}')
    out.append("")
    out.append(f'window: {{ start: "0 us", end: "{PULSE}" }}')
    out.append("")
    out.append("solver:")
    out.append("  dynamics: density_matrix")
    out.append(f"  rtol: {rtol!r}")
    out.append(f"  atol: {atol!r}")
    return "\n".join(out) + "\n"


def qutip_model(lv, couplings, branching, ref):
    """H (rad/s), collapse operators and rho0 of the scheme in the laser's
    rotating frame (see the module docstring)."""
    import numpy as np
    import qutip

    idx = {x[0]: i for i, x in enumerate(lv)}
    energy = {x[0]: x[3] for x in lv}
    n = len(lv)
    # omega_L - omega_ref for the excited levels, exact in MHz (detuning 0).
    laser_minus_ref = energy[ref[1]] - energy[ref[0]]
    h = np.zeros((n, n))
    for lid, _, _, e, is_ground in lv:
        rel = e - energy[ref[0]] - (0 if is_ground else laser_minus_ref)
        h[idx[lid], idx[lid]] = TWO_PI * 1e6 * float(rel)
    omega = TWO_PI * 1e6 * float(Fraction(RABI.split()[0]))
    d_ref = next(d for g, e, d in couplings if (g, e) == ref)
    for g, e, d in couplings:
        h[idx[e], idx[g]] = h[idx[g], idx[e]] = 0.5 * omega * d / d_ref
    gamma = 1.0 / (float(LIFETIME.split()[0]) * 1e-9)
    cops = []
    for eid, br in branching.items():
        for gid, b in br.items():
            c = np.zeros((n, n))
            c[idx[gid], idx[eid]] = math.sqrt(gamma * b)
            cops.append(qutip.Qobj(c))
    rho0 = np.zeros((n, n))
    for lid, f, _, _, is_ground in lv:
        if is_ground and f == 2:
            rho0[idx[lid], idx[lid]] = 0.2
    return qutip.Qobj(h), cops, qutip.Qobj(rho0)


def settle(pops, branching):
    """Window-end populations relaxed through the branching (every excited
    sublevel decays straight to the ground sublevels, so one pass is exact)."""
    out = dict(pops)
    for eid, br in branching.items():
        for gid, b in br.items():
            out[gid] += b * pops[eid]
        out[eid] = 0.0
    return out


def best_of(runs, f):
    times = []
    value = None
    for _ in range(runs):
        t0 = time.perf_counter()
        value = f()
        times.append(time.perf_counter() - t0)
    return min(times), times, value


def run_levelplan(binary, scheme, runs, command="vet"):
    """Wall clock of one levelplan process (best of runs). command: vet
    (everything; returns its JSON), inspect (start-up, parse, drive table; no
    propagation) or evolve (parse and one propagation, two samples, no
    estimate)."""
    argv = {"vet": ["vet", str(scheme), "--format", "json"],
            "inspect": ["inspect", str(scheme), "--format", "json"],
            "evolve": ["evolve", str(scheme), "--samples", "2"]}[command]

    def once():
        out = subprocess.run([str(binary), *argv], capture_output=True, text=True)
        if out.returncode not in (0, 3):
            raise SystemExit(f"levelplan {command} exit {out.returncode}\n{out.stderr}")
        return json.loads(out.stdout) if command == "vet" else None
    return best_of(runs, once)


def reference_populations(model, t_end):
    """The window-end populations without a step-size controller: the
    generator is constant over the whole window (one rectangular pulse that
    fills it), so rho(T) = exp(L T) rho(0), by scipy's expm_multiply on
    qutip's sparse Liouvillian (column-stacked rho)."""
    import numpy as np
    import qutip
    from scipy.sparse import csr_matrix
    from scipy.sparse.linalg import expm_multiply

    h, cops, rho0 = model
    lv = qutip.liouvillian(h, cops).to("csr").data.as_scipy()
    v0 = qutip.operator_to_vector(rho0).full().ravel().astype(complex)
    v = expm_multiply(csr_matrix(lv) * t_end, v0)
    n = rho0.shape[0]
    return np.real(np.diag(v.reshape(n, n, order="F")))


def _qutip_child(model, opts, t_end, conn):
    """One timed mesolve in a forked child (so that a run past the timeout
    can be killed); sends (seconds, populations) through conn."""
    import numpy as np
    import qutip

    h, cops, rho0 = model
    t0 = time.perf_counter()
    res = qutip.mesolve(h, rho0, [0.0, t_end], c_ops=cops, options=opts)
    dt = time.perf_counter() - t0
    conn.send((dt, np.real(np.diag(res.states[-1].full())).tolist()))
    conn.close()


def run_qutip(model, method, runs, rtol, atol, timeout):
    """Best of runs mesolve calls of one method, each in a child process
    killed after timeout seconds. Returns (best, times, populations) or
    (None, times, None) when a run did not finish."""
    import multiprocessing as mp

    t_end = float(Fraction(PULSE.split()[0])) * 1e-6
    opts = {"method": method, "progress_bar": False}
    if method != "diag":  # diag: one eigendecomposition of L, no tolerances
        opts.update({"atol": atol, "rtol": rtol, "nsteps": 10**9})
    ctx = mp.get_context("fork")
    times, pops = [], None
    for _ in range(runs):
        parent, child = ctx.Pipe(duplex=False)
        proc = ctx.Process(target=_qutip_child, args=(model, opts, t_end, child))
        proc.start()
        child.close()
        ready = parent.poll(timeout)
        if not ready:
            proc.kill()
            proc.join()
            return None, times, None
        dt, pops = parent.recv()
        proc.join()
        times.append(dt)
    return min(times), times, pops


def scheme_with_tolerances(data, rtol, atol):
    """The checked-in scheme when the tolerances are its own, otherwise a
    temporary copy with the solver tolerances changed (the same text
    otherwise, written by the same function)."""
    if (rtol, atol) == (RTOL, ATOL):
        return SCHEME
    import tempfile

    tmp = Path(tempfile.mkdtemp(prefix="d2_benchmark_")) / f"d2_sublevels_24_rtol{rtol:g}.yaml"
    tmp.write_text(yaml_text(*data, rtol=rtol, atol=atol))
    return tmp


def measure_levelplan(args, scheme, ids):
    t_lp, all_lp, rep = run_levelplan(args.binary, scheme, args.runs)
    lp = {x["id"]: x["window_end_population"] for x in rep["levels"]}
    lp_settled = {x["id"]: x["settled_population"] for x in rep["levels"]}
    t_in, _, _ = run_levelplan(args.binary, scheme, args.runs, "inspect")
    t_ev, _, _ = run_levelplan(args.binary, scheme, args.runs, "evolve")
    sol = rep["solver"]
    print(f"levelplan vet: best {t_lp:.3f} s of {[round(t, 3) for t in all_lp]} "
          f"(rtol {sol['rtol']:g}, atol {sol['atol']:g}, {sol['method']}, {sol['steps']} steps, "
          f"{sol['evaluations']} evaluations, norm error {rep['norm_error']:.2e}); "
          f"split: inspect (start-up, parse) {t_in:.3f} s, evolve --samples 2 "
          f"(parse + propagation) {t_ev:.3f} s")
    return {"best_s": t_lp, "times_s": all_lp, "solver": sol, "norm_error": rep["norm_error"],
            "inspect_best_s": t_in, "evolve_best_s": t_ev,
            "populations": [lp[k] for k in ids]}, lp, lp_settled


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--write-only", action="store_true", help="write the YAML, run nothing")
    ap.add_argument("--check", action="store_true",
                    help="fail if the YAML on disk differs from what this script writes")
    ap.add_argument("--binary", default=str(BINARY))
    ap.add_argument("--runs", type=int, default=3, help="best of N (levelplan)")
    ap.add_argument("--qutip-runs", type=int, default=3, help="best of N (each qutip method)")
    ap.add_argument("--methods", default=",".join(QUTIP_METHODS),
                    help="qutip mesolve methods, comma-separated (the first is the reference "
                         "of the printed ratio; 'diag' takes no tolerances)")
    ap.add_argument("--rtol", type=float, default=RTOL,
                    help="relative tolerance of both tools (levelplan: solver.rtol of a "
                         "temporary copy of the scheme)")
    ap.add_argument("--atol", type=float, default=ATOL, help="absolute tolerance of both tools")
    ap.add_argument("--timeout", type=float, default=600.0,
                    help="seconds one qutip run may take before it is killed and reported "
                         "as not finished")
    ap.add_argument("--qutip-data", choices=["csr", "dense"], default="csr",
                    help="qutip's storage of H and the collapse operators (dense is "
                         "qutip.Qobj(ndarray)'s default and far slower here)")
    ap.add_argument("--rounds", type=int, default=1,
                    help="repeat the levelplan and qutip timings this many times, interleaved; "
                         "best and median over all rounds")
    ap.add_argument("--all-cores", action="store_true", help="do not pin to CPU 0")
    ap.add_argument("--cpu", type=int, default=0, help="the core to pin to")
    ap.add_argument("--json", metavar="FILE", help="also write the measurements to FILE")
    ap.add_argument("--allow-other-versions", action="store_true")
    args = ap.parse_args()

    v = versions()
    bad = {k: (v[k], p) for k, p in PINNED.items() if v[k] != p}
    if bad and not args.allow_other_versions:
        raise SystemExit(f"versions differ from the pinned ones: {bad}")
    data = build()
    text = yaml_text(*data)
    if args.check:
        if SCHEME.read_text() != text:
            raise SystemExit(f"{SCHEME} differs from what the script writes")
        print(f"{SCHEME.relative_to(ROOT)} is up to date")
        return
    SCHEME.parent.mkdir(parents=True, exist_ok=True)
    SCHEME.write_text(text)
    print("wrote", SCHEME.relative_to(ROOT))
    if args.write_only:
        return
    scheme = scheme_with_tolerances(data, args.rtol, args.atol)
    if scheme != SCHEME:
        print("timing", scheme, f"(rtol {args.rtol:g}, atol {args.atol:g})")

    if not args.all_cores and hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {args.cpu})  # inherited by every child process
    cores = sorted(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else None
    lv = data[0]
    ids = [x[0] for x in lv]

    lp_doc, lp, lp_settled = measure_levelplan(args, scheme, ids)
    h, cops, rho0 = qutip_model(*data)
    model = (h.to(args.qutip_data), [c.to(args.qutip_data) for c in cops], rho0)
    t_end = float(Fraction(PULSE.split()[0])) * 1e-6
    ref_pops = reference_populations(model, t_end)
    err_lp = max(abs(lp[k] - ref_pops[i]) for i, k in enumerate(ids))
    print(f"reference exp(L T) rho0 (scipy expm_multiply): max |levelplan - reference| {err_lp:.2e}")
    methods = args.methods.split(",")
    runs = {m: run_qutip(model, m, args.qutip_runs, args.rtol, args.atol, args.timeout)
            for m in methods}
    for _ in range(args.rounds - 1):  # interleaved: a shared machine's load drifts
        lp_doc["times_s"] += run_levelplan(args.binary, scheme, args.runs)[1]
        for m in methods:
            if runs[m][0] is not None:
                t_q, all_q, pops = run_qutip(model, m, args.qutip_runs, args.rtol, args.atol,
                                             args.timeout)
                times = runs[m][1] + all_q
                runs[m] = (None, times, None) if t_q is None else (min(times), times, pops)
    lp_doc["best_s"] = min(lp_doc["times_s"])
    print(f"levelplan vet over {args.rounds} round(s): best {lp_doc['best_s']:.3f} s, median "
          f"{statistics.median(lp_doc['times_s']):.3f} s of "
          f"{[round(t, 3) for t in lp_doc['times_s']]}")
    results = {}
    for method in methods:
        t_q, all_q, pops = runs[method]
        if t_q is None:
            results[method] = {"best_s": None, "times_s": all_q,
                               "note": f"did not finish in {args.timeout:g} s"}
            print(f"qutip mesolve ({method}): did not finish in {args.timeout:g} s "
                  f"(finished runs: {[round(t, 3) for t in all_q]})")
            continue
        q = {k: float(pops[i]) for i, k in enumerate(ids)}
        diff = max(abs(lp[k] - q[k]) for k in ids)
        err_q = max(abs(q[k] - ref_pops[i]) for i, k in enumerate(ids))
        q_settled = settle(q, data[2])
        diff_s = max(abs(lp_settled[k] - q_settled[k]) for k in ids)
        results[method] = {"best_s": t_q, "times_s": all_q, "ratio": t_q / lp_doc["best_s"],
                           "median_ratio": (statistics.median(all_q)
                                            / statistics.median(lp_doc["times_s"])),
                           "max_abs_window_end_population_difference": diff,
                           "max_abs_settled_population_difference": diff_s,
                           "max_abs_error_against_reference": err_q}
        print(f"qutip mesolve ({method}): best {t_q:.3f} s, median {statistics.median(all_q):.3f} s "
              f"of {[round(t, 3) for t in all_q]}, "
              f"max |levelplan - qutip| window end {diff:.2e}, settled {diff_s:.2e}, "
              f"max |qutip - reference| {err_q:.2e}, ratio {t_q / lp_doc['best_s']:.1f}x (best), "
              f"{statistics.median(all_q) / statistics.median(lp_doc['times_s']):.1f}x (median)")
    first = args.methods.split(",")[0]
    if results[first].get("ratio") is not None:
        print(f"\nspeed ratio against mesolve ({first}): {results[first]['ratio']:.1f}x; "
              f"levelplan vet {lp_doc['best_s']:.3f} s on cores {cores}")
    print("settled populations (levelplan):",
          {k: round(lp_settled[k], 6) for k in ids if lp_settled[k] > 1e-5})
    if args.json:
        Path(args.json).write_text(json.dumps({
            "scheme": str(SCHEME.relative_to(ROOT)), "levelplan": lp_doc,
            "reference": {"method": "scipy.sparse.linalg.expm_multiply of the Liouvillian",
                          "populations": list(map(float, ref_pops)),
                          "max_abs_levelplan_error": err_lp},
            "qutip": results, "qutip_data": args.qutip_data, "rtol": args.rtol,
            "atol": args.atol, "timeout_s": args.timeout, "cores": cores, "versions": v,
        }, indent=2) + "\n")


if __name__ == "__main__":
    sys.exit(main())
