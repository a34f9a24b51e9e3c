#!/usr/bin/env bash
# Seed the fuzz corpora (fuzz/corpus/<target>/, not committed) from the demo
# schemes and the YAML snippets of the tests: every raw string literal
# (r#"..."#) of tests/scheme/scheme_errors.rs, tests/scheme/scheme_robustness.rs and
# tests/regressions/regressions.rs, and the BASE scheme of tests/scheme/scheme_errors.rs with each
# with("from", "to") replacement applied. Needs bash and python3.
#
# Usage: scripts/fuzz-seed.sh            (from the repository root)
set -euo pipefail
cd "$(dirname "$0")/.."
for target in scheme_parse inspect_path vet_small; do
  mkdir -p "fuzz/corpus/$target"
done
python3 - <<'PY'
import hashlib, pathlib, re

root = pathlib.Path(".")
seeds = []
for p in sorted(root.glob("level_schemes/*.yaml")):
    seeds.append(p.read_bytes())

def rust_str(lit):
    """Decode the body of a plain Rust string literal (the escapes used in the tests)."""
    out, i = [], 0
    while i < len(lit):
        c = lit[i]
        if c == "\\" and i + 1 < len(lit):
            n = lit[i + 1]
            if n == "n": out.append("\n"); i += 2; continue
            if n == "t": out.append("\t"); i += 2; continue
            if n in "\"\\'": out.append(n); i += 2; continue
            if n == "\n":  # line continuation: skip the newline and leading blanks
                i += 2
                while i < len(lit) and lit[i] in " \t": i += 1
                continue
            if n == "x": out.append(chr(int(lit[i + 2:i + 4], 16))); i += 4; continue
        out.append(c); i += 1
    return "".join(out)

raw = re.compile(r'r#"(.*?)"#', re.S)
plain = r'"((?:[^"\\]|\\.)*)"'
pair = re.compile(r'with\(\s*' + plain + r'\s*,\s*' + plain + r'\s*,?\s*\)', re.S)
for name in ["tests/scheme/scheme_errors.rs", "tests/scheme/scheme_robustness.rs", "tests/regressions/regressions.rs"]:
    src = (root / name).read_text()
    bodies = raw.findall(src)
    seeds += [b.encode() for b in bodies]
    if name == "tests/scheme/scheme_errors.rs":
        base = bodies[0]
        for a, b in pair.findall(src):
            a, b = rust_str(a), rust_str(b)
            if base.count(a) == 1:
                seeds.append(base.replace(a, b, 1).encode())
    # Plain string schemes (with "\n" escapes) such as those of scheme_robustness.rs.
    for s in re.findall(plain, src):
        if "levels:" in s and "\\n" in s:
            seeds.append(rust_str(s).encode())

n = 0
for target in ["scheme_parse", "inspect_path", "vet_small"]:
    d = root / "fuzz" / "corpus" / target
    for s in seeds:
        f = d / hashlib.sha1(s).hexdigest()
        if not f.exists():
            f.write_bytes(s)
            n += 1
print(f"{len(seeds)} seeds ({n} new files) in fuzz/corpus/{{scheme_parse,inspect_path,vet_small}}")
PY
