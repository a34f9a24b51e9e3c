#!/usr/bin/env bash
# Time the 1001-point detuning scan of the hyperfine-like demo on 1 and 2
# threads and compare it with the notebook loop (scripts/notebook_scan.py).
# See docs/performance.md.
#
# The 1- and 2-thread runs alternate in ROUNDS rounds (default 15) so that a
# slow spell of a shared machine hits both alike; the script prints the
# median and best time of each and the median of the per-round ratios.
# Usage: scripts/measure_scan.sh [ROUNDS]
set -euo pipefail
cd "$(dirname "$0")/.."
rounds=${1:-15}
cargo build --release --quiet
bin=target/release/levelplan
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
times="$out/times.txt"
for _ in $(seq "$rounds"); do
  line=""
  for jobs in 1 2; do
    s=$(date +%s.%N)
    "$bin" scan tests/fixtures/hyperfine_levels_v1.yaml \
      --vary fields.probe.tuned.detuning=-400MHz..400MHz:1001 \
      --jobs "$jobs" --out "$out/scan_$jobs.csv"
    e=$(date +%s.%N)
    line="$line $s $e"
  done
  echo "$line" >>"$times"
done
python3 - "$times" <<'EOF'
import statistics, sys
rows = [[float(v) for v in line.split()] for line in open(sys.argv[1])]
t1 = [r[1] - r[0] for r in rows]
t2 = [r[3] - r[2] for r in rows]
print(f"{len(rows)} rounds")
for jobs, t in ((1, t1), (2, t2)):
    print(f"levelplan, {jobs} thread(s): median {statistics.median(t):.4f} s, best {min(t):.4f} s")
ratio = statistics.median(a / b for a, b in zip(t1, t2))
print(f"2-thread speed-up: median of per-round ratios {ratio:.3f}")
EOF
cmp "$out/scan_1.csv" "$out/scan_2.csv" && echo "1 and 2 threads: byte-identical output"
if python3 -c "import scipy" 2>/dev/null; then
  python3 scripts/notebook_scan.py --points 1001 --out "$out/notebook.csv"
  python3 scripts/notebook_scan.py --compare "$out/notebook.csv" "$out/scan_1.csv"
else
  echo "scipy not installed: pip install numpy scipy to run the notebook comparison"
fi
