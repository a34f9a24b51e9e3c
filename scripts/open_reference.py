#!/usr/bin/env python3
"""Outside reference for levelplan's density-matrix (Lindblad) dynamics.

Writes tests/fixtures/open/<name>.yaml (levelplan schemes using the
"Open systems" keys of scheme contract v2: decays_to, dephasing,
fields.<id>.linewidth, initial: {mixture: ...}) and <name>.json (the
reference result of each scheme), the steady-state and transient check
schemes tests/fixtures/open/obe_*.yaml, and tests/fixtures/open/analytic.json
(closed forms of the optical Bloch equations with their sources). The Rust
test tests/physics/open_reference.rs reads these files; it never runs Python.

All schemes are invented and illustrative: no real species, no measured data.

Set-up (pinned versions; the script refuses other versions unless
--allow-other-versions is given, and records the versions in every fixture):

    python3 -m venv /tmp/qv
    /tmp/qv/bin/pip install qutip==5.3.1 numpy==2.4.6 scipy==1.17.1 sympy==1.14.0
    /tmp/qv/bin/python scripts/open_reference.py            # writes the fixtures
    /tmp/qv/bin/python scripts/open_reference.py --check    # recomputes, compares, writes nothing
    /tmp/qv/bin/python scripts/open_reference.py --against-v1 target/release/levelplan
        # conventions check: the schemes without their v2 keys against levelplan v1

Model (the conventions of docs/physics.md and docs/scheme-format.md, and the
"Open systems" section of scheme contract v2). Everything is SI, angular
frequencies (rad/s), times in s:

* Frame: the rotating frame of the drive graph. Starting from the most
  populated initial level (frame detuning 0), a drive of field L on a -> b
  (E_b > E_a, laser tuned Delta_L = omega_L - omega_ab from it) gives
  delta_b = delta_a - Delta_L (and delta_a = delta_b + Delta_L walking down);
  level k carries n_kL photons of laser L in its frame phase. Levels no
  drive reaches have delta = 0.
* H = sum_k delta_k |k><k| + sum_drives (Omega/2) f(t) (|b><a| + |a><b|)
  (RWA; the drive phase is absorbed by the frame, so the coupling is real).
  Omega = 2 pi x the `rabi` value; f the envelope (rectangular: 1 on
  [start, start + duration); gaussian: exp(-(t - c)^2 / (2 sigma^2)) with
  sigma = fwhm / (2 sqrt(ln 2)), fwhm of the intensity |f|^2).
* Decay of level e (Gamma = 1/lifetime or 2 pi x linewidth): jump operators
  sqrt(Gamma b_k) |k><e| for every k in decays_to, and the remainder
  sqrt(Gamma (1 - sum b)) |lost><e| into an extra sink level `lost`, whose
  population is the lost population. A level with a lifetime and no
  decays_to loses everything to the sink (the v1 meaning).
* dephasing of level k (gamma, rad/s; "X MHz" means gamma = 2 pi X 1e6 s^-1):
  sqrt(2 gamma) |k><k|, so rho_jk decays at gamma_j + gamma_k.
* laser linewidth FWHM_L (Hz, cyclic): sqrt(2 pi FWHM_L) sum_k n_kL |k><k|,
  so rho_jk decays at pi (n_jL - n_kL)^2 FWHM_L (phase diffusion;
  D[sqrt(c) N] rho_jk = -(c/2)(n_j - n_k)^2 rho_jk, common practice).
* Initial state: a level id (pure), or a mixture (diagonal rho).
* Outputs: populations rho_kk (window end and samples); lost = rho of the
  sink; settled populations: the window-end populations relaxed through the
  decays_to branching (levels taken from the highest energy down, exact:
  with the drives off, populations evolve by rate equations only);
  scattered photons: Gamma_k * integral of rho_kk dt over the window, per
  level and summed.

Two independent computations are made and must agree (else the script
stops): qutip's mesolve (the reference written to the fixtures; populations
at a dense grid, photon integrals by Simpson's rule per segment), and a
hand-built Liouvillian in numpy (column-stacked vec(rho)), propagated by
scipy.linalg.expm on piecewise-constant segments, with the photon integrals
from the augmented block matrix [[L, 0], [1, 0]] (C. Van Loan, IEEE Trans.
Autom. Control 23, 395 (1978)), or by scipy's DOP853 where an envelope varies.
"""
import argparse
import dataclasses
import json
import math
import platform
import sys
from dataclasses import dataclass, field as dc_field
from pathlib import Path

PINNED = {"qutip": "5.3.1", "numpy": "2.4.6", "scipy": "1.17.1", "sympy": "1.14.0"}

# qutip mesolve settings (tighter than the atol 1e-12 / rtol 1e-10 asked).
QUTIP_OPTIONS = {"method": "adams", "atol": 1e-13, "rtol": 1e-11, "nsteps": 10**8}
# The independent scipy check where an envelope varies.
SCIPY_IVP = {"method": "DOP853", "atol": 1e-14, "rtol": 1e-12}
# Required agreement of the two computations (populations, absolute; photon
# counts, absolute per photon scale).
AGREE_POP = 1e-9
AGREE_PHOTONS = 1e-8

TWO_PI = 2.0 * math.pi
ROOT = Path(__file__).resolve().parent.parent
OUT = ROOT / "tests" / "fixtures" / "open"

# --------------------------------------------------------------------------
# Quantities: every number of a scheme is written once, as the string that
# goes into the YAML; the model reads it back here.

UNITS = {
    "THz": ("freq", 1e12), "GHz": ("freq", 1e9), "MHz": ("freq", 1e6),
    "kHz": ("freq", 1e3), "Hz": ("freq", 1.0),
    "s": ("time", 1.0), "ms": ("time", 1e-3), "us": ("time", 1e-6),
    "ns": ("time", 1e-9), "ps": ("time", 1e-12),
    "s^-1": ("rate", 1.0),
}


def qty(text, kind):
    value, unit = text.split()
    k, scale = UNITS[unit]
    if k != kind and not (kind == "dephasing" and k in ("freq", "rate")):
        raise ValueError(f"{text!r} is not a {kind}")
    if kind == "dephasing":
        return float(value) * scale * (TWO_PI if k == "freq" else 1.0)
    return float(value) * scale


def cyc(text):
    """A cyclic frequency string -> angular frequency (rad/s)."""
    return TWO_PI * qty(text, "freq")


# --------------------------------------------------------------------------
# Schemes


@dataclass
class Level:
    id: str
    energy: str
    lifetime: str = None
    linewidth: str = None
    decays_to: dict = None
    dephasing: str = None
    label: str = None

    def gamma(self):
        if self.lifetime:
            return 1.0 / qty(self.lifetime, "time")
        if self.linewidth:
            return cyc(self.linewidth)
        return 0.0

    def energy_hz(self):
        return qty(self.energy, "freq")


@dataclass
class Field:
    id: str
    to: tuple
    detuning: str
    rabi: str
    envelope: dict
    linewidth: str = None

    def f(self, t):
        e = self.envelope
        if e["shape"] == "rectangular":
            s = qty(e["start"], "time")
            d = qty(e["duration"], "time")
            return 1.0 if s <= t < s + d else 0.0
        c = qty(e["center"], "time")
        sigma = qty(e["fwhm"], "time") / (2.0 * math.sqrt(math.log(2.0)))
        return math.exp(-((t - c) ** 2) / (2.0 * sigma**2))

    def edges(self):
        e = self.envelope
        if e["shape"] == "rectangular":
            s = qty(e["start"], "time")
            return [s, s + qty(e["duration"], "time")]
        return []

    def constant(self):
        return self.envelope["shape"] == "rectangular"


@dataclass
class Scheme:
    name: str
    title: str
    comment: str
    levels: list
    initial: object  # a level id, or ("mixture", {id: p})
    targets: list
    couplings: list  # (a, b, [field ids])
    fields: list
    window: tuple  # (start, end) strings
    samples: list = dc_field(default_factory=list)  # times, strings
    readout: str = None
    solver_extra: dict = dc_field(default_factory=dict)
    check: dict = None  # analytic check this scheme serves (obe_*)

    def level(self, i):
        return next(lv for lv in self.levels if lv.id == i)


SAFETY = (
    "# Laser safety: real beams can injure eyes and skin; follow your local rules\n"
    "# (IEC 60825-1 / ANSI Z136.1) and your institution's laser safety officer.\n"
)


def yaml_text(s):
    out = ["# Illustrative, invented scenario -- not data of any real species.", "#"]
    out += ["# " + line if line else "#" for line in s.comment.strip().split("\n")]
    out += [
        "#",
        "# Generated by scripts/open_reference.py together with the reference",
        f"# {s.name}.json beside this file (do not edit by hand; rerun the script).",
    ]
    out.append(SAFETY.rstrip("\n"))
    out.append("")
    out.append(f'title: "{s.title}"')
    out.append("")
    out.append("levels:")
    for lv in s.levels:
        out.append(f"  {lv.id}:")
        out.append(f'    energy: "{lv.energy}"')
        if lv.lifetime:
            out.append(f'    lifetime: "{lv.lifetime}"')
        if lv.linewidth:
            out.append(f'    linewidth: "{lv.linewidth}"')
        if lv.decays_to:
            items = ", ".join(f"{k}: {v}" for k, v in lv.decays_to.items())
            out.append(f"    decays_to: {{ {items} }}")
        if lv.dephasing:
            out.append(f'    dephasing: "{lv.dephasing}"')
        if lv.label:
            out.append(f'    label: "{lv.label}"')
    out.append("")
    if isinstance(s.initial, str):
        out.append(f"initial: {s.initial}")
    else:
        kind, mix = s.initial
        items = ", ".join(f"{k}: {v}" for k, v in mix.items())
        out.append(f"initial: {{ {kind}: {{ {items} }} }}")
    out.append(f"targets: [{', '.join(s.targets)}]")
    out.append("")
    out.append("couplings:")
    for a, b, fl in s.couplings:
        out.append(f"  - between: [{a}, {b}]")
        out.append("    dipole: 1.0")
        out.append(f"    fields: [{', '.join(fl)}]")
    out.append("")
    out.append("fields:")
    for f in s.fields:
        out.append(f"  {f.id}:")
        out.append(f'    tuned: {{ to: [{f.to[0]}, {f.to[1]}], detuning: "{f.detuning}" }}')
        out.append(f'    rabi: {{ on: [{f.to[0]}, {f.to[1]}], value: "{f.rabi}" }}')
        if f.linewidth:
            out.append(f'    linewidth: "{f.linewidth}"')
        env = ", ".join(
            f"{k}: {v}" if k == "shape" else f'{k}: "{v}"' for k, v in f.envelope.items()
        )
        out.append(f"    envelope: {{ {env} }}")
    out.append("")
    out.append(f'window: {{ start: "{s.window[0]}", end: "{s.window[1]}" }}')
    if s.readout:
        out.append(f"readout: {s.readout}")
    out.append("")
    out.append("solver:")
    for k, v in s.solver_extra.items():
        out.append(f"  {k}: {v}")
    out.append("  rtol: 1e-10")
    out.append("  atol: 1e-12")
    return "\n".join(out) + "\n"


def schemes():
    """The five open-system fixtures (invented numbers), and scheme c again
    with readout: settled."""
    a = Scheme(
        name="a_two_level_steady",
        title="two-level approach to the steady state (invented)",
        comment=(
            "A closed two-level system: e decays only to g (decays_to), driven on\n"
            "resonance at Omega/2pi = 6 MHz with Gamma/2pi = 4 MHz for 400 ns, about\n"
            "ten lifetimes: the damped Rabi oscillation settles towards the optical\n"
            "Bloch steady state rho_ee = (s/2)/(1 + s), s = 2 Omega^2/Gamma^2 = 4.5."
        ),
        levels=[
            Level("g", "0 THz"),
            Level("e", "431.2 THz", linewidth="4 MHz", decays_to={"g": 1}),
        ],
        initial="g",
        targets=["e"],
        couplings=[("g", "e", ["drive"])],
        fields=[
            Field("drive", ("g", "e"), "0 MHz", "6 MHz",
                  {"shape": "rectangular", "start": "0 ns", "duration": "400 ns"}),
        ],
        window=("0 ns", "400 ns"),
        samples=["10 ns", "25 ns", "50 ns", "75 ns", "100 ns", "150 ns",
                 "200 ns", "250 ns", "300 ns", "400 ns"],
    )
    b = Scheme(
        name="b_lambda_pumping",
        title="Lambda optical pumping g1 -> g2 (invented)",
        comment=(
            "A Lambda system: e decays half to g1 and half to g2 (decays_to), a\n"
            "1 us square pulse drives g1 -> e 3 MHz red of resonance at\n"
            "Omega/2pi = 3 MHz; g2 (6.8 GHz above g1) is not driven, so\n"
            "population is optically pumped into it. e is still populated at the\n"
            "window end: the settled populations give it back to g1 and g2."
        ),
        levels=[
            Level("g1", "0 THz"),
            Level("g2", "6.8 GHz"),
            Level("e", "377.1 THz", lifetime="30 ns", decays_to={"g1": 0.5, "g2": 0.5}),
        ],
        initial="g1",
        targets=["g2"],
        couplings=[("g1", "e", ["pump"])],
        fields=[
            Field("pump", ("g1", "e"), "-3 MHz", "3 MHz",
                  {"shape": "rectangular", "start": "0 us", "duration": "1 us"}),
        ],
        window=("0 us", "1 us"),
        samples=["50 ns", "100 ns", "200 ns", "300 ns", "400 ns", "500 ns",
                 "600 ns", "700 ns", "850 ns", "1 us"],
    )
    c = Scheme(
        name="c_dephasing_partial_decay",
        title="two-level with pure dephasing and an open decay (invented)",
        comment=(
            "A two-level system whose upper level e returns 70 % of its decay to g\n"
            "(decays_to g: 0.7); the other 30 % leaves the scheme (lost). e also\n"
            "has a pure dephasing of gamma = 2 pi x 1.5 MHz (rho_eg decays at\n"
            "Gamma/2 + gamma). A 300 ns square pulse 2 MHz blue of resonance at\n"
            "Omega/2pi = 8 MHz, then 100 ns of free decay inside the window."
        ),
        levels=[
            Level("g", "0 THz"),
            Level("e", "352.4 THz", lifetime="50 ns", decays_to={"g": 0.7},
                  dephasing="1.5 MHz"),
        ],
        initial="g",
        targets=["e"],
        couplings=[("g", "e", ["drive"])],
        fields=[
            Field("drive", ("g", "e"), "+2 MHz", "8 MHz",
                  {"shape": "rectangular", "start": "0 ns", "duration": "300 ns"}),
        ],
        window=("0 ns", "400 ns"),
        samples=["20 ns", "50 ns", "80 ns", "120 ns", "160 ns", "200 ns",
                 "250 ns", "300 ns", "350 ns", "400 ns"],
    )
    d = Scheme(
        name="d_laser_linewidth_gaussian",
        title="two-level driven by a laser with a 300 kHz linewidth (invented)",
        comment=(
            "A Gaussian pulse (intensity FWHM 400 ns, centre 1.2 us, peak\n"
            "Omega/2pi = 2.5 MHz, 0.5 MHz blue) from a laser whose line is a\n"
            "Lorentzian of FWHM 300 kHz: in the phase-diffusion model rho_eg\n"
            "decays at an extra pi x 300 kHz. e (lifetime 800 ns) decays to g.\n"
            "The window spans the centre +- 5 sigma."
        ),
        levels=[
            Level("g", "0 THz"),
            Level("e", "405.9 THz", lifetime="800 ns", decays_to={"g": 1}),
        ],
        initial="g",
        targets=["e"],
        couplings=[("g", "e", ["laser"])],
        fields=[
            Field("laser", ("g", "e"), "+0.5 MHz", "2.5 MHz",
                  {"shape": "gaussian", "center": "1.2 us", "fwhm": "400 ns"},
                  linewidth="300 kHz"),
        ],
        window=("0 us", "2.4 us"),
        samples=["0.6 us", "0.8 us", "0.9 us", "1 us", "1.1 us", "1.2 us",
                 "1.3 us", "1.4 us", "1.6 us", "2.4 us"],
    )
    e = Scheme(
        name="e_ladder_mixture_cascade",
        title="ladder g - e1 - e2 from a mixture, cascade decay (invented)",
        comment=(
            "A ladder g - e1 - e2 starting from the incoherent mixture 70 % g, 30 %\n"
            "e1. The first field (20 MHz blue of g -> e1, Omega/2pi = 15 MHz) is on\n"
            "from 0 to 500 ns, the second (20 MHz red of e1 -> e2, so on two-photon\n"
            "resonance, Omega/2pi = 10 MHz) from 100 to 400 ns. e2 decays to e1\n"
            "(80 %; 20 % leaves the scheme), e1 decays to g: a cascade."
        ),
        levels=[
            Level("g", "0 THz"),
            Level("e1", "390.2 THz", lifetime="25 ns", decays_to={"g": 1}),
            Level("e2", "771.6 THz", lifetime="120 ns", decays_to={"e1": 0.8}),
        ],
        initial=("mixture", {"g": 0.7, "e1": 0.3}),
        targets=["e2"],
        couplings=[("g", "e1", ["first"]), ("e1", "e2", ["second"])],
        fields=[
            Field("first", ("g", "e1"), "+20 MHz", "15 MHz",
                  {"shape": "rectangular", "start": "0 ns", "duration": "500 ns"}),
            Field("second", ("e1", "e2"), "-20 MHz", "10 MHz",
                  {"shape": "rectangular", "start": "100 ns", "duration": "300 ns"}),
        ],
        window=("0 ns", "600 ns"),
        samples=["50 ns", "100 ns", "150 ns", "200 ns", "300 ns", "400 ns",
                 "450 ns", "500 ns", "550 ns", "600 ns"],
        solver_extra={"dynamics": "density_matrix"},
    )
    c_settled = dataclasses.replace(
        c,
        name="c_dephasing_partial_decay_settled",
        title="two-level with pure dephasing and an open decay, settled readout (invented)",
        comment=c.comment + (
            "\nreadout: settled -- final populations are judged after the window, drives\n"
            "off, once e has decayed (70 % of it to g, 30 % lost)."),
        readout="settled",
    )
    return [a, b, c, c_settled, d, e]


# --------------------------------------------------------------------------
# Optical Bloch check schemes (units of Gamma; Gamma/2pi = 1 MHz)

LOUDON = ("R. Loudon, The Quantum Theory of Light, 3rd ed., Oxford University "
          "Press 2000, sec. 2.8 (optical Bloch steady state; from memory)")
ALLEN_EBERLY = ("L. Allen and J. H. Eberly, Optical Resonance and Two-Level Atoms, "
                "Wiley 1975 (steady state with T2 < 2 T1; from memory)")
TORREY = "H. C. Torrey, Phys. Rev. 76, 1059 (1949) (resonant transient; from memory)"

STEADY_CASES = [
    # (name, Omega/Gamma, Delta/Gamma, gamma_phi/Gamma, value given in the brief)
    ("obe_resonant_omega1", 1.0, 0.0, 0.0, 1.0 / 3.0),
    ("obe_detuned_omega2", 2.0, 0.5, 0.0, 0.4),
    ("obe_weak_red", 0.3, -1.0, 0.0, 0.017374517375),
    ("obe_dephased_a", 2.0, 0.5, 0.7, 0.369799691834),
    ("obe_dephased_b", 5.0, 3.0, 2.0, 0.401929260450),
]
STEADY_WINDOW_US = 10  # 62.8 lifetimes: transients below e^{-31}
TORREY_OMEGA = 3.0  # Omega/Gamma of the transient checks
TORREY_GAMMA_T = [0.25, 0.5, 1.0, 1.7, 2.5, 4.0]  # Gamma t of the checks
TORREY_SCHEME_GAMMA_T = 1.7  # the window end of the transient scheme
TORREY_READOUT_GAMMA_T = 2.5  # readout inside a longer window


def fmt_num(x):
    r = repr(float(x))
    return r[:-2] if r.endswith(".0") else r


def obe_scheme(name, om, de, gp, t_end, readout=None, note=""):
    lv_e = Level("e", "400 THz", linewidth="1 MHz", decays_to={"g": 1},
                 dephasing=(f"{fmt_num(gp)} MHz" if gp else None))
    sign = "+" if de > 0 else ""
    return Scheme(
        name=name,
        title=f"optical Bloch check {name} (invented)",
        comment=(
            "Closed two-level system, Gamma/2pi = 1 MHz (e decays only to g), driven\n"
            f"by a square pulse at Omega = {fmt_num(om)} Gamma, Delta = {fmt_num(de)} Gamma"
            + (f", extra\ndephasing gamma = {fmt_num(gp)} Gamma on e" if gp else "")
            + ".\n" + note
        ),
        levels=[Level("g", "0 THz"), lv_e],
        initial="g",
        targets=["e"],
        couplings=[("g", "e", ["drive"])],
        fields=[
            Field("drive", ("g", "e"), f"{sign}{fmt_num(de)} MHz", f"{fmt_num(om)} MHz",
                  {"shape": "rectangular", "start": "0 ns", "duration": t_end}),
        ],
        window=("0 ns", t_end),
        readout=readout,
    )


def torrey_time_ns(gamma_t):
    """Gamma t -> t in ns for Gamma = 2 pi x 1 MHz, as a short exact decimal."""
    return gamma_t / (TWO_PI * 1e6) * 1e9


# --------------------------------------------------------------------------
# Model


class Model:
    def __init__(self, s: Scheme):
        import numpy as np

        self.s = s
        self.ids = [lv.id for lv in s.levels] + ["lost"]
        self.n = len(self.ids)
        self.idx = {k: i for i, k in enumerate(self.ids)}
        self.t0 = qty(s.window[0], "time")
        self.t1 = qty(s.window[1], "time")
        n = self.n
        # Frame: delta_k and photon numbers n_kL from the drive graph.
        if isinstance(s.initial, str):
            pops = {s.initial: 1.0}
            root = s.initial
        else:
            pops = dict(s.initial[1])
            root = max(pops, key=lambda k: pops[k])
        delta = {root: 0.0}
        nph = {root: {f.id: 0 for f in s.fields}}
        pending = list(s.fields)
        while pending:
            progress = False
            for f in list(pending):
                a, b = f.to
                la, lb = s.level(a), s.level(b)
                if la.energy_hz() > lb.energy_hz():
                    a, b = b, a
                dl = cyc(f.detuning)
                if a in delta and b not in delta:
                    delta[b] = delta[a] - dl
                    nph[b] = dict(nph[a]); nph[b][f.id] += 1
                elif b in delta and a not in delta:
                    delta[a] = delta[b] + dl
                    nph[a] = dict(nph[b]); nph[a][f.id] -= 1
                elif a in delta and b in delta:
                    raise ValueError("loops are not used in these fixtures")
                else:
                    continue
                pending.remove(f)
                progress = True
            if not progress:
                raise ValueError("drives not connected to the initial level")
        for lv in s.levels:
            delta.setdefault(lv.id, 0.0)
            nph.setdefault(lv.id, {f.id: 0 for f in s.fields})
        self.delta = delta
        self.nph = nph
        h0 = np.zeros((n, n))
        for k, d in delta.items():
            h0[self.idx[k], self.idx[k]] = d
        self.h0 = h0
        self.drives = []  # (field, matrix Omega/2 (|b><a| + h.c.))
        for f in s.fields:
            a, b = f.to
            m = np.zeros((n, n))
            om = cyc(f.rabi)
            m[self.idx[a], self.idx[b]] = m[self.idx[b], self.idx[a]] = om / 2.0
            self.drives.append((f, m))
        # Collapse operators, with a label for the record.
        cops = []
        self.gamma = {}
        for lv in s.levels:
            g = lv.gamma()
            self.gamma[lv.id] = g
            if g > 0:
                branches = dict(lv.decays_to or {})
                rest = 1.0 - sum(branches.values())
                if rest > 1e-12:
                    branches["lost"] = rest
                for k, frac in branches.items():
                    m = np.zeros((n, n))
                    m[self.idx[k], self.idx[lv.id]] = math.sqrt(g * frac)
                    cops.append((f"sqrt(Gamma_{lv.id} * {frac!r}) |{k}><{lv.id}|",
                                 g * frac, m))
            if lv.dephasing:
                gam = qty(lv.dephasing, "dephasing")
                m = np.zeros((n, n))
                m[self.idx[lv.id], self.idx[lv.id]] = math.sqrt(2.0 * gam)
                cops.append((f"sqrt(2 * {gam!r}) |{lv.id}><{lv.id}|", 2.0 * gam, m))
        for f in s.fields:
            if f.linewidth:
                fw = qty(f.linewidth, "freq")
                m = np.zeros((n, n))
                for lv in s.levels:
                    m[self.idx[lv.id], self.idx[lv.id]] = math.sqrt(TWO_PI * fw) * nph[lv.id][f.id]
                cops.append((f"sqrt(2 pi * {fw!r}) * sum_k n_k,{f.id} |k><k|",
                             TWO_PI * fw, m))
        self.cops = cops
        rho0 = np.zeros((n, n), dtype=complex)
        for k, p in pops.items():
            rho0[self.idx[k], self.idx[k]] = p
        self.rho0 = rho0
        # Segments: cut at every rectangular edge inside the window.
        cuts = {self.t0, self.t1}
        for f in s.fields:
            for t in f.edges():
                if self.t0 < t < self.t1:
                    cuts.add(t)
        self.cuts = sorted(cuts)
        self.samples = [qty(x, "time") for x in s.samples]

    def constant_in(self, t_a, t_b):
        return all(f.constant() for f, _ in self.drives)

    def ham_parts(self, t_a, t_b):
        """Constant part of H on [t_a, t_b] and the time-dependent terms."""
        h = self.h0.copy()
        tdep = []
        mid = 0.5 * (t_a + t_b)
        for f, m in self.drives:
            if f.constant():
                h = h + f.f(mid) * m
            else:
                tdep.append((f, m))
        return h, tdep

    def record(self):
        """The exact model, SI, for the fixture."""
        lv = []
        for level in self.s.levels:
            lv.append({
                "id": level.id,
                "energy_hz": level.energy_hz(),
                "gamma_per_s": self.gamma[level.id],
                "decays_to": level.decays_to or {},
                "dephasing_gamma_per_s": (qty(level.dephasing, "dephasing")
                                          if level.dephasing else 0.0),
                "frame_detuning_rad_per_s": self.delta[level.id],
                "laser_photon_numbers": self.nph[level.id],
            })
        fields = []
        for f, _ in self.drives:
            e = dict(f.envelope)
            env = {"shape": e["shape"]}
            if e["shape"] == "rectangular":
                env["start_s"] = qty(e["start"], "time")
                env["duration_s"] = qty(e["duration"], "time")
                env["f"] = "1 on [start, start + duration), else 0"
            else:
                env["center_s"] = qty(e["center"], "time")
                env["fwhm_intensity_s"] = qty(e["fwhm"], "time")
                env["sigma_s"] = qty(e["fwhm"], "time") / (2 * math.sqrt(math.log(2)))
                env["f"] = "exp(-(t - center)^2 / (2 sigma^2)), sigma = fwhm / (2 sqrt(ln 2))"
            fields.append({
                "id": f.id,
                "drives": list(f.to),
                "omega_rad_per_s": cyc(f.rabi),
                "detuning_rad_per_s": cyc(f.detuning),
                "linewidth_fwhm_hz": qty(f.linewidth, "freq") if f.linewidth else 0.0,
                "envelope": env,
            })
        return {
            "basis": self.ids,
            "hamiltonian": ("H = sum_k delta_k |k><k| + sum_fields (Omega/2) f(t) "
                            "(|b><a| + |a><b|), rad/s, rotating frame of the drive graph, RWA"),
            "master_equation": ("d rho/dt = -i [H, rho] + sum_c (C rho C^dag - "
                                "{C^dag C, rho}/2)"),
            "levels": lv,
            "fields": fields,
            "collapse_operators": [{"operator": lab, "rate_per_s": r} for lab, r, _ in self.cops],
            "initial_rho_diagonal": {k: float(self.rho0[i, i].real)
                                     for i, k in enumerate(self.ids)},
            "window_s": [self.t0, self.t1],
            "segment_cuts_s": self.cuts,
        }


# --------------------------------------------------------------------------
# qutip: the reference


def envelope_of(f):
    def env(t):
        return f.f(t)
    return env


def solve_qutip(m: Model, points=2001):
    import numpy as np
    import qutip
    from scipy.integrate import simpson

    n = m.n
    cops = [qutip.Qobj(c) for _, _, c in m.cops]
    rho = qutip.Qobj(m.rho0)
    wanted = sorted(set(m.samples) | {m.t1})
    at = {}
    integral = np.zeros(n)
    for t_a, t_b in zip(m.cuts[:-1], m.cuts[1:]):
        h, tdep = m.ham_parts(t_a, t_b)
        opts = dict(QUTIP_OPTIONS)
        if tdep:
            terms = [qutip.Qobj(h)]
            for f, mat in tdep:
                terms.append([qutip.Qobj(mat), qutip.coefficient(envelope_of(f))])
            ham = qutip.QobjEvo(terms)
            sig = min(qty(f.envelope["fwhm"], "time") for f, _ in tdep) / 2.355
            opts["max_step"] = sig / 50.0
        else:
            ham = qutip.Qobj(h)
        # One mesolve per stretch between sample times, on a uniform grid
        # (Simpson's rule needs one).
        stops = [t_a] + [t for t in wanted if t_a < t < t_b] + [t_b]
        for u0, u1 in zip(stops[:-1], stops[1:]):
            tl = np.linspace(u0, u1, points)
            res = qutip.mesolve(ham, rho, tl, c_ops=cops, options=opts)
            pops = np.array([[st.full()[k, k].real for k in range(n)] for st in res.states])
            integral += simpson(pops, x=tl, axis=0)
            rho = res.states[-1]
            if u1 in wanted:
                at[u1] = pops[-1]
    return {t: at[t] for t in wanted}, integral, rho.full()


# --------------------------------------------------------------------------
# numpy/scipy: the independent check


def liouvillian(h, cops):
    import numpy as np

    n = h.shape[0]
    eye = np.eye(n)
    lv = -1j * (np.kron(eye, h) - np.kron(h.T, eye))
    for _, _, c in cops:
        cdc = c.conj().T @ c
        lv = lv + np.kron(c.conj(), c) - 0.5 * np.kron(eye, cdc) - 0.5 * np.kron(cdc.T, eye)
    return lv


def solve_numpy(m: Model):
    import numpy as np
    from scipy.integrate import solve_ivp
    from scipy.linalg import expm

    n = m.n
    n2 = n * n
    diag = [k * n + k for k in range(n)]  # vec index of rho_kk (column stacking)
    v = m.rho0.reshape(-1, order="F").astype(complex)
    acc = np.zeros(n2, dtype=complex)
    wanted = sorted(set(m.samples) | {m.t1})
    at = {}
    for t_a, t_b in zip(m.cuts[:-1], m.cuts[1:]):
        h, tdep = m.ham_parts(t_a, t_b)
        stops = [t_a] + [t for t in wanted if t_a < t < t_b] + [t_b]
        if not tdep:
            lv = liouvillian(h, m.cops)
            big = np.zeros((2 * n2, 2 * n2), dtype=complex)
            big[:n2, :n2] = lv
            big[n2:, :n2] = np.eye(n2)
            for u0, u1 in zip(stops[:-1], stops[1:]):
                e = expm(big * (u1 - u0))
                y = e @ np.concatenate([v, np.zeros(n2)])
                v = y[:n2]
                acc = acc + y[n2:]
                if u1 in wanted:
                    at[u1] = v[diag].real.copy()
        else:
            lv0 = liouvillian(h, m.cops)
            lts = [(f, liouvillian(mat, []) ) for f, mat in tdep]

            def rhs(t, y, lv0=lv0, lts=lts):
                lmat = lv0 + sum(f.f(t) * lt for f, lt in lts)
                return np.concatenate([lmat @ y[:n2], y[:n2]])

            sig = min(qty(f.envelope["fwhm"], "time") for f, _ in tdep) / 2.355
            for u0, u1 in zip(stops[:-1], stops[1:]):
                sol = solve_ivp(rhs, (u0, u1), np.concatenate([v, np.zeros(n2)]),
                                max_step=sig / 50.0, **SCIPY_IVP)
                y = sol.y[:, -1]
                v = y[:n2]
                acc = acc + y[n2:]
                if u1 in wanted:
                    at[u1] = v[diag].real.copy()
    if m.t1 not in at:
        at[m.t1] = v[diag].real.copy()
    return {t: at[t] for t in wanted}, acc[diag].real, v.reshape(n, n, order="F")


# --------------------------------------------------------------------------
# Derived quantities


def settle(m: Model, pops):
    """Window-end populations relaxed through decays_to (exact rate equations
    with the drives off: each decaying level empties completely into its
    branches; levels are taken from the highest energy down, and every branch
    goes lower, so one pass is exact)."""
    p = {k: float(pops[m.idx[k]]) for k in m.ids}
    order = sorted(m.s.levels, key=lambda lv: -lv.energy_hz())
    for lv in order:
        if m.gamma[lv.id] <= 0:
            continue
        x = p[lv.id]
        p[lv.id] = 0.0
        br = dict(lv.decays_to or {})
        for k, frac in br.items():
            p[k] += x * frac
        p["lost"] += x * (1.0 - sum(br.values()))
    return p


def versions():
    import numpy
    import qutip
    import scipy
    import sympy

    return {
        "qutip": qutip.__version__,
        "numpy": numpy.__version__,
        "scipy": scipy.__version__,
        "sympy": sympy.__version__,
        "python": platform.python_version(),
    }


def reference(s: Scheme):
    import numpy as np

    m = Model(s)
    q_at, q_int, q_rho = solve_qutip(m)
    n_at, n_int, n_rho = solve_numpy(m)
    d_pop = max(float(np.max(abs(q_at[t] - n_at[t]))) for t in q_at)
    d_rho = float(np.max(abs(q_rho - n_rho)))
    photons_q = {k: m.gamma[k] * float(q_int[m.idx[k]]) for k in m.ids if k != "lost"}
    photons_n = {k: m.gamma[k] * float(n_int[m.idx[k]]) for k in m.ids if k != "lost"}
    d_ph = max(abs(photons_q[k] - photons_n[k]) for k in photons_q)
    if d_pop > AGREE_POP or d_rho > AGREE_POP or d_ph > AGREE_PHOTONS:
        raise SystemExit(f"{s.name}: qutip and numpy disagree: populations {d_pop:.3e}, "
                         f"rho {d_rho:.3e}, photons {d_ph:.3e}")
    end = q_at[m.t1]
    herm = float(np.max(abs(q_rho - q_rho.conj().T)))
    trace = float(abs(np.trace(q_rho) - 1))
    final = {k: float(end[m.idx[k]]) for k in m.ids if k != "lost"}
    settled = settle(m, end)
    out = {
        "scheme": f"{s.name}.yaml",
        "title": s.title,
        "illustrative": "invented numbers, no real species",
        "tolerance_abs": 1e-6,
        "dynamics": "density_matrix",
        "readout": s.readout or "window_end",
        # At the readout: the window end, or (readout: settled) relaxed.
        "final_population": ({k: settled[k] for k in final} if s.readout == "settled"
                             else final),
        "lost_population": (settled["lost"] if s.readout == "settled"
                            else float(end[m.idx["lost"]])),
        "window_end_population": final,
        "window_end_lost_population": float(end[m.idx["lost"]]),
        "settled_population": {k: settled[k] for k in m.ids if k != "lost"},
        "settled_lost_population": settled["lost"],
        "scattered_photons": sum(photons_q.values()),
        "scattered_photons_per_level": photons_q,
        "samples": [
            {"t_s": t, "population": {k: float(q_at[t][m.idx[k]]) for k in m.ids if k != "lost"},
             "lost_population": float(q_at[t][m.idx["lost"]])}
            for t in sorted(q_at)
        ],
        "model": m.record(),
        "metadata": {
            "generator": "scripts/open_reference.py",
            "versions": versions(),
            "pinned": PINNED,
            "reference_solver": {
                "name": "qutip.mesolve", **QUTIP_OPTIONS,
                "note": ("one mesolve per segment between rectangular edges; a time-dependent "
                         "envelope with max_step = sigma/50; photon integrals by "
                         "scipy.integrate.simpson on 2001 uniform points between consecutive sample times and segment cuts"),
            },
            "independent_check": {
                "name": ("hand-built Liouvillian (numpy), scipy.linalg.expm per segment with "
                         "the augmented block matrix for the integrals; scipy solve_ivp "
                         "where an envelope varies"),
                "solve_ivp": SCIPY_IVP,
                "max_abs_population_difference": d_pop,
                "max_abs_rho_difference_at_window_end": d_rho,
                "max_abs_photon_difference": d_ph,
            },
            "window_end_trace_error": trace,
            "window_end_hermiticity_error": herm,
        },
    }
    return out


# --------------------------------------------------------------------------
# Analytic checks


def rho_ee_obe(om, de, gp=0.0, gamma=1.0):
    """Steady state of the driven, damped two-level system (rates in any
    common unit): rho_ee = (Omega^2 g_perp/Gamma / 2) /
    (Delta^2 + g_perp^2 + Omega^2 g_perp/Gamma), g_perp = Gamma/2 + gamma_phi."""
    gperp = gamma / 2.0 + gp
    x = om * om * gperp / gamma
    return (x / 2.0) / (de * de + gperp * gperp + x)


def rho_ee_loudon(om, de, gamma=1.0):
    s = 2.0 * om * om / (gamma * gamma)
    return (s / 2.0) / (1.0 + s + (2.0 * de / gamma) ** 2)


def rho_ee_torrey(om, t, gamma=1.0):
    lam = math.sqrt(om * om - gamma * gamma / 16.0)
    pre = (om * om / 2.0) / (gamma * gamma / 2.0 + om * om)
    return pre * (1.0 - math.exp(-0.75 * gamma * t)
                  * (math.cos(lam * t) + 0.75 * gamma / lam * math.sin(lam * t)))


def sympy_steady_state():
    """The Lindblad steady state of a two-level system, solved symbolically,
    against the closed form (exact identity, or the script stops)."""
    import sympy as sp

    G, W, D, P = sp.symbols("Gamma Omega Delta gamma_phi", positive=True)
    ree, x, y = sp.symbols("r_ee x y", real=True)
    # basis (g, e); H = -Delta |e><e| + Omega/2 (|e><g| + |g><e|)
    H = sp.Matrix([[0, W / 2], [W / 2, -D]])
    rho = sp.Matrix([[1 - ree, x - sp.I * y], [x + sp.I * y, ree]])
    C1 = sp.Matrix([[0, sp.sqrt(G)], [0, 0]])          # sqrt(Gamma) |g><e|
    C2 = sp.Matrix([[0, 0], [0, sp.sqrt(2 * P)]])      # sqrt(2 gamma_phi) |e><e|
    dr = -sp.I * (H * rho - rho * H)
    for c in (C1, C2):
        dr += c * rho * c.H - (c.H * c * rho + rho * c.H * c) / 2
    eqs = [sp.re(sp.expand(dr[1, 1])), sp.re(sp.expand(dr[1, 0])), sp.im(sp.expand(dr[1, 0]))]
    sol = sp.solve(eqs, [ree, x, y], dict=True)[0]
    gperp = G / 2 + P
    closed = (W**2 * gperp / G / 2) / (D**2 + gperp**2 + W**2 * gperp / G)
    diff = sp.simplify(sol[ree] - closed)
    loud = sp.simplify(closed.subs(P, 0)
                       - (W**2 / G**2) / (1 + 2 * W**2 / G**2 + (2 * D / G) ** 2))
    if diff != 0 or loud != 0:
        raise SystemExit(f"sympy: steady state differs from the closed form: {diff}, {loud}")
    return str(sp.simplify(sol[ree]))


def sympy_torrey():
    """Torrey's resonant solution satisfies the resonant Bloch equations: the
    closed form's value, slope and curvature at t = 0 (0, 0, Omega^2/2) and
    its exponents -3 Gamma/4 +- i lambda, the roots of
    s^2 + 3 Gamma s / 2 + Gamma^2/2 + Omega^2 (the v-w block), make it exact
    for every Omega > Gamma/4, not only for Omega >> Gamma/4."""
    import sympy as sp

    G, W, t, s = sp.symbols("Gamma Omega t s", positive=True)
    lam = sp.sqrt(W**2 - G**2 / 16)
    f = (W**2 / 2) / (G**2 / 2 + W**2) * (
        1 - sp.exp(-3 * G * t / 4) * (sp.cos(lam * t) + 3 * G / (4 * lam) * sp.sin(lam * t)))
    checks = [
        sp.simplify(f.subs(t, 0)),
        sp.simplify(sp.diff(f, t).subs(t, 0)),
        sp.simplify(sp.diff(f, t, 2).subs(t, 0) - W**2 / 2),
    ]
    # d^3 f + (3G/2) d^2 f + (G^2/2 + W^2) d f = 0 (w obeys the v-w block plus a constant)
    ode = sp.diff(f, t, 3) + 3 * G / 2 * sp.diff(f, t, 2) + (G**2 / 2 + W**2) * sp.diff(f, t)
    checks.append(sp.simplify(sp.expand(ode.rewrite(sp.exp))))
    if any(c != 0 for c in checks):
        raise SystemExit(f"sympy: Torrey's form fails its checks: {checks}")
    return "value 0, slope 0, curvature Omega^2/2 at t=0; third-order ODE satisfied"


def qutip_two_level(om, de, gp, times, gamma):
    """rho_ee(t) of the resonance-fluorescence two-level model in qutip, with
    Gamma in rad/s (Omega, Delta, gamma_phi in units of Gamma)."""
    import numpy as np
    import qutip

    g = qutip.basis(2, 0)
    e = qutip.basis(2, 1)
    H = gamma * (-de * e * e.dag() + om / 2 * (e * g.dag() + g * e.dag()))
    cops = [math.sqrt(gamma) * g * e.dag()]
    if gp:
        cops.append(math.sqrt(2 * gp * gamma) * e * e.dag())
    tl = np.concatenate([[0.0], times])
    res = qutip.mesolve(H, g * g.dag(), tl, c_ops=cops, options=QUTIP_OPTIONS)
    return [float(st.full()[1, 1].real) for st in res.states[1:]]


def analytic():
    gamma = TWO_PI * 1e6
    t_end = STEADY_WINDOW_US * 1e-6
    steady = []
    checks = []
    obe = []
    for name, om, de, gp, given in STEADY_CASES:
        val = rho_ee_obe(om, de, gp)
        if abs(val - given) > 5e-12:
            raise SystemExit(f"{name}: closed form {val} is not the given {given}")
        if gp == 0:
            lo = rho_ee_loudon(om, de)
            if abs(lo - val) > 1e-15:
                raise SystemExit(f"{name}: the two closed forms differ")
        q = qutip_two_level(om, de, gp, [t_end], gamma)[0]
        if abs(q - val) > 1e-8:
            raise SystemExit(f"{name}: qutip {q} vs closed form {val}")
        src = LOUDON if gp == 0 else ALLEN_EBERLY + "; reduces to " + LOUDON
        steady.append({
            "omega_over_gamma": om, "delta_over_gamma": de, "gamma_phi_over_gamma": gp,
            "rho_ee": val, "value_given": given,
            "qutip_rho_ee_after_window": q, "qutip_minus_closed_form": q - val,
            "source": src,
        })
        obe.append(obe_scheme(name, om, de, gp, f"{STEADY_WINDOW_US} us",
                              note=("A square pulse of 62.8 lifetimes: the final population\n"
                                    "of e is the steady state to better than 1e-12.")))
        checks.append({
            "scheme": f"{name}.yaml", "level": "e", "final_population": val,
            "kind": "steady_state",
            "omega_over_gamma": om, "delta_over_gamma": de, "gamma_phi_over_gamma": gp,
            "source": src,
        })
    times = [gt / gamma for gt in TORREY_GAMMA_T]
    q = qutip_two_level(TORREY_OMEGA, 0.0, 0.0, times, gamma)
    pts = []
    for gt, t, qv in zip(TORREY_GAMMA_T, times, q):
        cv = rho_ee_torrey(TORREY_OMEGA, gt)
        if abs(qv - cv) > 1e-8:
            raise SystemExit(f"Torrey at Gamma t = {gt}: qutip {qv} vs {cv}")
        pts.append({"gamma_t": gt, "t_s": t, "rho_ee_closed_form": cv, "rho_ee_qutip": qv,
                    "qutip_minus_closed_form": qv - cv})
    # Transient schemes: window end at Gamma t = 1.7, and a readout inside a window.
    for name, gt, readout, t_end_s in [
        ("obe_torrey_window_end", TORREY_SCHEME_GAMMA_T, None, None),
        ("obe_torrey_readout", TORREY_READOUT_GAMMA_T, "readout", 1e-6),
    ]:
        t_ns = torrey_time_ns(gt)
        t_text = f"{t_ns:.6f} ns"
        t_exact = float(t_text.split()[0]) * 1e-9
        val = rho_ee_torrey(TORREY_OMEGA, gamma * t_exact)
        if readout:
            sch = obe_scheme(name, TORREY_OMEGA, 0.0, 0.0, "1 us", readout=f'"{t_text}"',
                             note=("Readout at a time inside the window, during the\n"
                                   "damped Rabi oscillation (Torrey's transient)."))
        else:
            sch = obe_scheme(name, TORREY_OMEGA, 0.0, 0.0, t_text,
                             note=("The window ends during the damped Rabi oscillation\n"
                                   "(Torrey's transient)."))
        qv = qutip_two_level(TORREY_OMEGA, 0.0, 0.0, [t_exact], gamma)[0]
        if abs(qv - val) > 1e-8:
            raise SystemExit(f"{name}: qutip {qv} vs Torrey {val}")
        obe.append(sch)
        checks.append({
            "scheme": f"{name}.yaml", "level": "e", "final_population": val,
            "kind": "torrey_transient", "omega_over_gamma": TORREY_OMEGA,
            "delta_over_gamma": 0.0, "gamma_phi_over_gamma": 0.0,
            "t_s": t_exact, "gamma_per_s": gamma, "gamma_t": gamma * t_exact,
            "readout": "time" if readout else "window_end",
            "qutip_rho_ee": qv, "source": TORREY,
        })
    doc = {
        "description": ("Closed-form checks of the driven, damped two-level system (optical "
                        "Bloch equations), each verified against qutip here, and the levelplan "
                        "schemes (obe_*.yaml) whose final population of e the Rust test "
                        "compares with them at 1e-6."),
        "conventions": ("H = -Delta |e><e| + (Omega/2)(|e><g| + |g><e|), decay sqrt(Gamma)|g><e|, "
                        "dephasing sqrt(2 gamma_phi)|e><e| (rho_eg decays at Gamma/2 + gamma_phi); "
                        "Omega, Delta, gamma_phi in units of Gamma; in the schemes Gamma/2pi = 1 MHz"),
        "formulas": {
            "steady_state_loudon": "rho_ee = (s/2) / (1 + s + (2 Delta/Gamma)^2), s = 2 Omega^2 / Gamma^2",
            "steady_state_dephasing": ("rho_ee = (Omega^2 g/Gamma / 2) / (Delta^2 + g^2 + "
                                       "Omega^2 g/Gamma), g = gamma_perp = Gamma/2 + gamma_phi"),
            "torrey": ("rho_ee(t) = (Omega^2/2)/(Gamma^2/2 + Omega^2) [1 - exp(-3 Gamma t/4) "
                       "(cos(lambda t) + 3 Gamma/(4 lambda) sin(lambda t))], "
                       "lambda = sqrt(Omega^2 - Gamma^2/16), resonant, from g at t = 0"),
        },
        "sources": {"steady_state_loudon": LOUDON, "steady_state_dephasing": ALLEN_EBERLY,
                    "torrey": TORREY},
        "sympy_verification": {
            "steady_state": ("Lindblad steady state solved symbolically equals the closed form "
                             "(and the dephasing form reduces to Loudon's at gamma_phi = 0): "
                             + sympy_steady_state()),
            "torrey": sympy_torrey() + (": so the form is exact for every Omega > Gamma/4 on "
                                        "resonance (common practice, no source)"),
        },
        "steady_state": steady,
        "torrey_transient": {"omega_over_gamma": TORREY_OMEGA, "gamma_per_s": gamma,
                             "points": pts, "source": TORREY},
        "levelplan_checks": checks,
        "tolerance_abs": 1e-6,
        "metadata": {"generator": "scripts/open_reference.py", "versions": versions(),
                     "pinned": PINNED, "qutip_options": QUTIP_OPTIONS,
                     "steady_window_s": t_end},
    }
    return doc, obe


# --------------------------------------------------------------------------


def v1_variant(s: Scheme):
    """The scheme without its contract-v2 keys: every decay leaves the scheme
    (amplitude damping), no dephasing, no laser linewidth, a pure initial
    state (the most populated level of a mixture), window-end readout. For a
    pure initial state whose every decay goes to the sink, the Lindblad
    populations are those of the no-jump (amplitude-damped) evolution, which
    levelplan v1 already computes: so this variant checks the frame,
    detuning signs, envelopes and Rabi conventions of this script against the
    binary as it is today."""
    import dataclasses

    levels = [dataclasses.replace(lv, decays_to=None, dephasing=None) for lv in s.levels]
    fields = [dataclasses.replace(f, linewidth=None) for f in s.fields]
    init = s.initial
    if not isinstance(init, str):
        init = max(init[1], key=lambda k: init[1][k])
    extra = {k: v for k, v in s.solver_extra.items() if k != "dynamics"}
    return dataclasses.replace(s, name=s.name + "_v1", levels=levels, fields=fields,
                               initial=init, readout=None, solver_extra=extra,
                               targets=[t for t in s.targets if t != init])


def against_v1(binary):
    """Runs the v1 variants through `binary vet --format json` and compares
    the final and lost populations with this script's model."""
    import subprocess
    import tempfile

    worst = 0.0
    for s in schemes():
        v = v1_variant(s)
        m = Model(v)
        at, _, _ = solve_qutip(m, points=201)
        end = at[m.t1]
        with tempfile.TemporaryDirectory() as d:
            path = Path(d) / f"{v.name}.yaml"
            path.write_text(yaml_text(v))
            out = subprocess.run([binary, "vet", str(path), "--format", "json"],
                                 capture_output=True, text=True)
        if out.returncode not in (0, 3):
            raise SystemExit(f"{v.name}: exit {out.returncode}\n{out.stderr}")
        rep = json.loads(out.stdout)
        diffs = {lv["id"]: lv["final_population"] - float(end[m.idx[lv["id"]]])
                 for lv in rep["levels"]}
        diffs["lost"] = rep["lost_population"] - float(end[m.idx["lost"]])
        d = max(abs(x) for x in diffs.values())
        worst = max(worst, d)
        print(f"{v.name}: largest |levelplan v1 - this model| = {d:.3e}  {diffs}")
    if worst > 1e-7:
        raise SystemExit(f"the v1 variants disagree with levelplan by {worst:.3e}")
    print(f"v1 variants agree with levelplan to {worst:.3e}")


def dump(obj):
    return json.dumps(obj, indent=2) + "\n"


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--check", action="store_true",
                    help="recompute and compare with the files; write nothing")
    ap.add_argument("--allow-other-versions", action="store_true")
    ap.add_argument("--against-v1", metavar="BINARY",
                    help=("check this script's conventions: solve the schemes without their "
                          "v2 keys (amplitude damping) and compare with `BINARY vet`; "
                          "write nothing"))
    args = ap.parse_args()
    if args.against_v1:
        return against_v1(args.against_v1)
    v = versions()
    bad = {k: (v[k], p) for k, p in PINNED.items() if v[k] != p}
    if bad and not args.allow_other_versions:
        raise SystemExit(f"versions differ from the pinned ones: {bad}")
    files = {}
    for s in schemes():
        files[f"{s.name}.yaml"] = yaml_text(s)
        files[f"{s.name}.json"] = dump(reference(s))
    doc, obe = analytic()
    for s in obe:
        files[f"{s.name}.yaml"] = yaml_text(s)
    files["analytic.json"] = dump(doc)
    if args.check:
        worst = 0.0
        for name, text in files.items():
            old = (OUT / name).read_text()
            if name.endswith(".yaml"):
                if old != text:
                    raise SystemExit(f"{name} differs")
            else:
                worst = max(worst, json_diff(json.loads(old), json.loads(text), name))
        print(f"{len(files)} files agree; largest numeric difference {worst:.3e}")
        return
    OUT.mkdir(parents=True, exist_ok=True)
    for name, text in files.items():
        (OUT / name).write_text(text)
        print("wrote", OUT / name)


def json_diff(a, b, where):
    """Largest numeric difference between two JSON trees of the same shape
    (version strings and solver statistics may differ)."""
    if isinstance(a, dict):
        return max([json_diff(a[k], b[k], f"{where}.{k}") for k in a if k in b] + [0.0])
    if isinstance(a, list):
        return max([json_diff(x, y, where) for x, y in zip(a, b)] + [0.0])
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and "metadata" not in where:
        return abs(a - b)
    return 0.0


if __name__ == "__main__":
    sys.exit(main())
