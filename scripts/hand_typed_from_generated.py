#!/usr/bin/env python3
"""Write a generated sublevel scheme out as hand-typed levels (stdlib only).

Runs `levelplan inspect GENERATED --format json` and writes a scheme with
plain `levels:` and one coupling per driven sublevel pair, the same
physics typed by hand, with no `manifolds:` key:

* every generated level, in the same order and with the same id, at its
  energy `energy_hz` (E/h from the zero of the scheme) in Hz;
* every drive's pair as a coupling with the dipole the field sees: the
  generator's sqrt(p_q) <e| e r_q |g> (polarisation share included),
  recovered from the drive's peak Rabi frequency as
  d = hbar Omega / E0, E0 = sqrt(2 I / (c eps0)) (docs/scheme-format.md,
  "Rabi frequency" and "intensity"; CODATA 2018 values as in
  src/units/mod.rs), signed as the Rabi frequency is;
* the field with its carrier frequency, peak intensity and envelope; the
  initial state, targets, tolerance and detuning cutoff.

Only what the hand-typed format expresses exactly is accepted: one or more
fields with rectangular envelopes, no chirp, the rotating-wave
approximation, no decay (a generated decay is one coherent channel per
photon polarisation, which per-level `lifetime` or `decays_to` cannot
write). Anything else stops the script with a message.

Usage (from the repository root, after `cargo build --release`):

    python3 scripts/hand_typed_from_generated.py \
        level_schemes/bench/generated_d2_30ns.yaml \
        level_schemes/bench/hand_typed_d2_30ns.yaml

The numbers are written with Python's repr, the shortest decimal that reads
back to the same double, so the only differences from the generated model
are the roundings of the unit conversions when levelplan reads them (about
1e-16 relative).
"""
import json
import math
import subprocess
import sys
from pathlib import Path

H = 6.62607015e-34  # J s, exact (CODATA 2018)
HBAR = H / (2.0 * math.pi)
C = 299792458.0  # m/s, exact
EPS0 = 8.8541878128e-12  # F/m, CODATA 2018
E_CHARGE = 1.602176634e-19  # C, exact
A0 = 5.29177210903e-11  # m, CODATA 2018
EA0 = E_CHARGE * A0

ROOT = Path(__file__).resolve().parent.parent
BINARY = ROOT / "target" / "release" / "levelplan"


def fail(message):
    sys.exit(f"hand_typed_from_generated: {message}")


def inspect(generated):
    run = subprocess.run(
        [str(BINARY), "inspect", str(generated), "--format", "json"],
        capture_output=True,
        text=True,
        check=False,
    )
    if run.returncode != 0:
        fail(f"levelplan inspect exited {run.returncode}: {run.stderr.strip()}")
    return json.loads(run.stdout)


def level_lines(levels, tolerance):
    out = ["levels:"]
    for lv in levels:
        if lv["lifetime_s"] is not None:
            fail(f"level {lv['id']} decays; the hand-typed form cannot write a generated decay")
        extra = ""
        if lv["tolerance"] != tolerance:
            extra = f", tolerance: {lv['tolerance']!r}"
        out.append(f'  {lv["id"]}: {{ energy: "{lv["energy_hz"]!r} Hz"{extra} }}')
    return out


def initial_lines(levels):
    populated = [lv for lv in levels if lv["initial_population"] > 0.0]
    if len(populated) == 1 and populated[0]["initial_population"] == 1.0:
        return [f"initial: {populated[0]['id']}"]
    out = ["initial:"]
    out += [f"  {lv['id']}: {lv['initial_population']!r}" for lv in populated]
    return out


def coupling_lines(drives, fields):
    intensity = {f["id"]: f["peak_intensity_w_per_cm2"] * 1e4 for f in fields}
    out = ["couplings:"]
    for d in drives:
        if d["relative_dipole"]:
            fail("a relative dipole: the generated scheme must set intensities")
        e0 = math.sqrt(2.0 * intensity[d["field"]] / (C * EPS0))
        omega = 2.0 * math.pi * d["rabi_mhz"] * 1e6
        dipole = HBAR * omega / e0 / EA0
        out.append(f"  - between: [{d['lower']}, {d['upper']}]")
        out.append(f'    dipole: "{dipole!r} ea0"')
        out.append(f"    fields: [{d['field']}]")
    return out


def field_lines(fields, window):
    out = ["fields:"]
    for f in fields:
        if f["envelope"] != "rectangular":
            fail(f"field {f['id']}: only rectangular envelopes are written out")
        if f["chirp_hz_per_s"] != 0.0 or not f["rwa"]:
            fail(f"field {f['id']}: chirp or rwa: false is not written out")
        out += [
            f"  {f['id']}:",
            f'    frequency: "{f["frequency_hz"]!r} Hz"',
            f'    intensity: "{f["peak_intensity_w_per_cm2"]!r} W/cm^2"',
            f'    envelope: {{ shape: rectangular, start: "{window[0]!r} s", '
            f'duration: "{f["length_s"]!r} s" }}',
        ]
    return out


def hand_typed(report, generated):
    levels = report["levels"]
    targets = [lv["id"] for lv in levels if lv["role"] == "target"]
    header = [
        "# Illustrative, invented scenario -- not data of any real species.",
        f"# Written by scripts/hand_typed_from_generated.py from {generated.name}:",
        "# the same levels, couplings and field with every generated number",
        "# typed out (levels, not manifolds; each coupling's dipole is the",
        "# projection the field's polarisation sees). Do not edit by hand;",
        "# rerun the script. No decay: see the header of the generated file.",
        f"# generated_sha256: {report['provenance']['scheme_sha256']}",
        "#",
        "# Laser safety: real beams can injure eyes and skin; follow your local rules",
        "# (IEC 60825-1 / ANSI Z136.1) and your institution's laser safety officer.",
        "",
        f'title: "{report["title"]} (hand-typed)"',
        "",
    ]
    body = level_lines(levels, report["tolerance"])
    body += [""] + initial_lines(levels)
    body.append(f"targets: [{', '.join(targets)}]")
    body.append(f"tolerance: {report['tolerance']!r}")
    body += [""] + coupling_lines(report["drives"], report["fields"])
    body += [""] + field_lines(report["fields"], report["window_s"])
    body += [
        "",
        f"window: {{ start: \"{report['window_s'][0]!r} s\", end: \"{report['window_s'][1]!r} s\" }}",
        f"solver: {{ detuning_cutoff: \"{report['detuning_cutoff_mhz']!r} MHz\" }}",
    ]
    return "\n".join(header + body) + "\n"


def main():
    if len(sys.argv) != 3:
        fail("usage: hand_typed_from_generated.py GENERATED.yaml OUT.yaml")
    generated, out = Path(sys.argv[1]), Path(sys.argv[2])
    report = inspect(generated)
    Path(out).write_text(hand_typed(report, generated))
    print(f"wrote {out}: {len(report['levels'])} levels, {len(report['drives'])} couplings")


if __name__ == "__main__":
    main()
