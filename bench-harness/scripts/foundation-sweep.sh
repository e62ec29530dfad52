#!/usr/bin/env bash
# Every TSPLIB symmetric instance of ../shared with 100-1000 nodes, one run each with
# `wend solve --time-limit T`, gap to the published optimum, and the mean gap.
# Usage: [METHOD=2opt] bench-harness/scripts/foundation-sweep.sh [SECONDS] [SEED]   (from the repository root)
set -euo pipefail
limit=${1:-2}
seed=${2:-0}
shared=${SHARED:-../shared/tsplib}
wend=${WEND:-target/release/wend}
[ -d "$shared/tsp" ] || { echo "no $shared/tsp: nothing to run" >&2; exit 0; }
[ -x "$wend" ] || cargo build --release -p wend-bench
out=$(mktemp)
for f in "$shared"/tsp/*.tsp; do
  n=$(grep -m1 -E '^DIMENSION' "$f" | tr -dc '0-9')
  if [ "$n" -ge 100 ] && [ "$n" -le 1000 ]; then
    if "$wend" solve "$f" --method "${METHOD:-2opt}" --time-limit "$limit" --seed "$seed" --json --tour-out "$out.tour" 2>"$out.err"; then
      # The tour written must be valid and have the reported length.
      "$wend" measure "$f" "$out.tour" --json | sed 's/^/#measure /'
    else
      echo "#refused $(tail -n1 "$out.err")"
    fi
  fi
done > "$out"
python3 - "$out" "$shared/optima.txt" <<'PY'
import json, sys
runs, measured = [], []
for line in open(sys.argv[1]):
    if line.startswith('#refused '):
        print('refused:', line[9:].strip())
    elif line.startswith('#measure '):
        measured.append(json.loads(line[9:]))
    else:
        runs.append(json.loads(line))
opt = {}
for line in open(sys.argv[2]):
    if ':' in line and not line.startswith('#'):
        k, v = line.split(':'); opt[k.strip()] = int(v)
gaps = []
print(f"{'instance':<10} {'nodes':>5} {'optimum':>9} {'length':>9} {'gap %':>6} {'runs':>8}")
for r, m in zip(runs, measured):
    assert m['length'] == r['length'], (r, m)
    o = opt[r['instance']]
    g = 100.0 * (r['length'] - o) / o
    gaps.append(g)
    print(f"{r['instance']:<10} {r['nodes']:>5} {o:>9} {r['length']:>9} {g:>6.2f} {r['runs']:>8}")
print(f"\n{len(gaps)} instances, every tour valid; mean gap {sum(gaps)/len(gaps):.2f} %, worst {max(gaps):.2f} %")
PY
rm -f "$out" "$out.tour" "$out.err"
