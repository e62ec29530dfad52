#!/usr/bin/env bash
# The time-window acceptance sweep: `wend bench` on every instance of ../shared/tsptw/{dumas,gendreau}
# (the constrained search, SEEDS seeds, SECONDS each, known values from ../shared/tsptw/optima.txt)
# into OUT, then per set: runs, feasibility rate, mean gap on the instances with a known value and
# the share of those runs at the known value. Gaps and the share are over the feasible runs; an
# infeasible run counts against the feasibility rate only. A sweep cut short continues when run again.
# Usage: [JOBS=N] [SHARED=DIR] [WEND=BINARY] bench-harness/scripts/tsptw-sweep.sh [OUT] [SECONDS] [SEEDS] [INSTANCE...]
# (from the repository root; INSTANCE files or folders replace the two sets, e.g. for a quick check)
set -euo pipefail
out=${1:-bench-out/tsptw}
limit=${2:-10}
seeds=${3:-5}
shift $(( $# < 3 ? $# : 3 ))
shared=${SHARED:-../shared/tsptw}
wend=${WEND:-target/release/wend}
if [ $# -gt 0 ]; then
  instances=("$@")
else
  [ -d "$shared/dumas" ] || { echo "no $shared/dumas: nothing to run" >&2; exit 0; }
  instances=("$shared/dumas" "$shared/gendreau")
fi
[ -x "$wend" ] || cargo build --release -p wend-bench
known=()
[ -f "$shared/optima.txt" ] && known=(--known-lengths "$shared/optima.txt")
"$wend" bench --instances "${instances[@]}" --seeds "$seeds" --time-limit "$limit" \
  --jobs "${JOBS:-1}" "${known[@]}" --out "$out"
python3 - "$out/runs.jsonl" <<'PY'
import json, os, sys
sets = {}
for line in open(sys.argv[1]):
    if line.strip():
        r = json.loads(line)
        if 'objective' not in r:
            continue  # a problem without constraints
        name = os.path.basename(os.path.dirname(r['file'])) or '.'
        sets.setdefault(name, []).append(r)
print("| set | runs | feasible | instances with a known value | mean gap % | at the known value |")
print("|---|---:|---:|---:|---:|---:|")
for name, rs in sorted(sets.items()):
    feasible = [r for r in rs if r['feasible']]
    known = [r for r in rs if r['optimum'] is not None]
    gaps = [r['gap_percent'] for r in feasible if r['gap_percent'] is not None]
    at = sum(1 for r in feasible if r['optimum'] is not None and r['length'] == r['optimum'])
    insts = len({r['instance'] for r in known})
    rate = f"{100 * len(feasible) / len(rs):.1f}% ({len(feasible)}/{len(rs)})"
    mean = f"{sum(gaps) / len(gaps):.3f}" if gaps else "–"
    share = f"{100 * at / len(gaps):.1f}% ({at}/{len(gaps)})" if gaps else "–"
    print(f"| {name} | {len(rs)} | {rate} | {insts} | {mean} | {share} |")
PY
