#!/usr/bin/env bash
# The time-window acceptance sweep: `wend bench` on every instance of ../shared/tsptw/{dumas,gendreau}
# (the constrained search, SEEDS seeds, SECONDS each, known values from ../shared/tsptw/optima.txt)
# into OUT, then per set: runs, feasibility rate, mean gap on the instances with a known value and
# the share of those runs at the known value. Gaps and the share are over the feasible runs; an
# infeasible run counts against the feasibility rate only. Instances with a known value run into
# OUT/known with --until-known (a run ends when it reaches the known value, which it cannot
# beat); the others run their whole SECONDS into OUT/other. A sweep cut short continues when run
# again.
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
  given=("$@")
else
  [ -d "$shared/dumas" ] || { echo "no $shared/dumas: nothing to run" >&2; exit 0; }
  given=("$shared/dumas" "$shared/gendreau")
fi
[ -x "$wend" ] || cargo build --release -p wend-bench
known_files=()
other_files=()
for g in "${given[@]}"; do
  if [ -d "$g" ]; then files=("$g"/*.txt); else files=("$g"); fi
  for f in "${files[@]}"; do
    # The optima list names an instance by its folder and file name without .txt.
    key="$(basename "$(dirname "$f")")/$(basename "$f" .txt)"
    if [ -f "$shared/optima.txt" ] && grep -q "^$key " "$shared/optima.txt"; then
      known_files+=("$f")
    else
      other_files+=("$f")
    fi
  done
done
echo "${#known_files[@]} instances with a known value, ${#other_files[@]} without" >&2
common=(--seeds "$seeds" --time-limit "$limit" --jobs "${JOBS:-1}")
[ -f "$shared/optima.txt" ] && common+=(--known-lengths "$shared/optima.txt")
if [ ${#known_files[@]} -gt 0 ]; then
  "$wend" bench --instances "${known_files[@]}" "${common[@]}" --until-known --out "$out/known"
fi
if [ ${#other_files[@]} -gt 0 ]; then
  "$wend" bench --instances "${other_files[@]}" "${common[@]}" --out "$out/other"
fi
cat "$out"/known/runs.jsonl "$out"/other/runs.jsonl 2>/dev/null > "$out/runs.jsonl"
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
