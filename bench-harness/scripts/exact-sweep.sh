#!/usr/bin/env bash
# `wend solve --exact --time-limit T` on every TSPLIB symmetric instance of ../shared with MIN to
# MAX nodes: proven or not, length, bound, subproblems and seconds, against the published optimum.
# Usage: [THREADS=N] [RAW=FILE] bench-harness/scripts/exact-sweep.sh [SECONDS] [MIN] [MAX]
# (from the repository root; RAW keeps the JSON lines of the runs)
set -euo pipefail
limit=${1:-60}
min=${2:-1}
max=${3:-100}
shared=${SHARED:-../shared/tsplib}
wend=${WEND:-target/release/wend}
[ -d "$shared/tsp" ] || { echo "no $shared/tsp: nothing to run" >&2; exit 0; }
[ -x "$wend" ] || cargo build --release -p wend-bench
out=$(mktemp)
for f in "$shared"/tsp/*.tsp; do
  n=$(grep -m1 -E '^DIMENSION' "$f" | tr -dc '0-9')
  if [ "$n" -ge "$min" ] && [ "$n" -le "$max" ]; then
    if line=$("$wend" solve "$f" --exact --time-limit "$limit" ${THREADS:+--threads "$THREADS"} --json 2>"$out.err"); then
      echo "$line"
    else
      echo "#refused $(tail -n1 "$out.err")"
    fi
  fi
done > "$out"
python3 - "$out" "$shared/optima.txt" <<'PY'
import json, os, sys
optima = {}
for line in open(sys.argv[2]):
    p = line.split('#')[0].split(':')
    if len(p) == 2:
        optima[p[0].strip()] = int(p[1])
rows = []
for line in open(sys.argv[1]):
    if line.startswith('#refused '):
        print('refused:', line[9:].strip())
    else:
        r = json.loads(line)
        r['instance'] = os.path.splitext(os.path.basename(r['file']))[0]
        rows.append(r)
print("| instance | nodes | optimum | length | lower bound | proven | method | subproblems | seconds |")
print("|---|---:|---:|---:|---:|---|---|---:|---:|")
proven = 0
for r in sorted(rows, key=lambda r: (r['nodes'], r['instance'])):
    opt = optima[r['instance']]
    assert r['lower_bound'] is None or r['lower_bound'] <= opt <= r['length'], r
    if r['proven_optimal']:
        assert r['length'] == opt, r
        proven += 1
    print(f"| {r['instance']} | {r['nodes']} | {opt} | {r['length']} | {r['lower_bound']} | "
          f"{'yes' if r['proven_optimal'] else 'no'} | {r['exact_method']} | {r['subproblems']} | {r['seconds']:.2f} |")
print()
print(f"proven optimal: {proven} of {len(rows)}")
PY
[ -n "${RAW:-}" ] && cp "$out" "$RAW"
rm -f "$out" "$out.err"
