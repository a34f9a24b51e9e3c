#!/usr/bin/env bash
# Time the 1001-point detuning scan of the hyperfine-like demo on 1 and 2
# threads (best of 3 each) and compare it with the notebook loop
# (scripts/notebook_scan.py). See docs/performance.md.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=target/release/levelplan
out=$(mktemp -d)
for jobs in 1 2; do
  best=999
  for _ in 1 2 3; do
    s=$(date +%s.%N)
    "$bin" scan level_schemes/hyperfine_manifold.yaml \
      --vary fields.probe.tuned.detuning=-400MHz..400MHz:1001 \
      --jobs "$jobs" --out "$out/scan_$jobs.csv"
    e=$(date +%s.%N)
    best=$(python3 -c "print(min($best, $e - $s))")
  done
  echo "levelplan, $jobs thread(s): best of 3 = ${best} s"
done
cmp "$out/scan_1.csv" "$out/scan_2.csv" && echo "1 and 2 threads: byte-identical output"
if python3 -c "import scipy" 2>/dev/null; then
  python3 scripts/notebook_scan.py --points 1001 --out "$out/notebook.csv"
  python3 scripts/notebook_scan.py --compare "$out/notebook.csv" "$out/scan_1.csv"
else
  echo "scipy not installed: pip install numpy scipy to run the notebook comparison"
fi
