#!/usr/bin/env bash
# Held–Karp bound on every TSPLIB instance of ../shared with 2-D Euclidean distances
# (EDGE_WEIGHT_TYPE EUC_2D, CEIL_2D or ATT) and at most MAX nodes, `wend bound --time-limit T`
# each, gap below the published optimum, and the seconds the ascent took.
# Usage: bench-harness/scripts/bound-sweep.sh [SECONDS] [MAX]   (from the repository root)
set -euo pipefail
limit=${1:-10}
max=${2:-1000}
shared=${SHARED:-../shared/tsplib}
wend=${WEND:-target/release/wend}
[ -d "$shared/tsp" ] || { echo "no $shared/tsp: nothing to run" >&2; exit 0; }
[ -x "$wend" ] || cargo build --release -p wend-bench
out=$(mktemp)
for f in "$shared"/tsp/*.tsp; do
  n=$(grep -m1 -E '^DIMENSION' "$f" | tr -dc '0-9')
  kind=$(grep -m1 -E '^EDGE_WEIGHT_TYPE' "$f" | sed 's/.*: *//' | tr -d ' \r')
  case "$kind" in EUC_2D|CEIL_2D|ATT) ;; *) continue ;; esac
  if [ "$n" -le "$max" ]; then
    if line=$("$wend" bound "$f" --time-limit "$limit" --json 2>"$out.err"); then
      echo "#kind $(basename "$f" .tsp) $kind"
      echo "$line"
    else
      echo "#refused $(tail -n1 "$out.err")"
    fi
  fi
done > "$out"
python3 - "$out" "$shared/optima.txt" "$limit" <<'PY'
import json, os, sys
optima = {}
for line in open(sys.argv[2]):
    p = line.split('#')[0].split(':')
    if len(p) == 2:
        optima[p[0].strip()] = int(p[1])
kinds, rows = {}, []
for line in open(sys.argv[1]):
    if line.startswith('#refused '):
        print('refused:', line[9:].strip())
    elif line.startswith('#kind '):
        _, name, kind = line.split()
        kinds[name] = kind
    else:
        r = json.loads(line)
        r['instance'] = os.path.splitext(os.path.basename(r['file']))[0]
        rows.append(r)
print(f"| instance | nodes | distances | optimum | bound | below optimum (%) | 1-trees | seconds |")
print(f"|---|---:|---|---:|---:|---:|---:|---:|")
worst, over1, slow = 0.0, [], []
for r in rows:
    opt = optima.get(r['instance'])
    gap = 100.0 * (opt - r['lower_bound']) / opt
    worst = max(worst, gap)
    if gap > 1.0: over1.append(r['instance'])
    if r['seconds'] > float(sys.argv[3]) + 0.5: slow.append(r['instance'])
    assert r['lower_bound'] <= opt, r
    print(f"| {r['instance']} | {r['nodes']} | {kinds[r['instance']]} | {opt} | {r['lower_bound']} | {gap:.3f} | {r['iterations']} | {r['seconds']:.2f} |")
print()
print(f"{len(rows)} instances; worst gap {worst:.3f} %; above 1 %: {', '.join(over1) or 'none'}; over the time limit: {', '.join(slow) or 'none'}")
PY
[ -n "${RAW:-}" ] && cp "$out" "$RAW"
rm -f "$out" "$out.err"
