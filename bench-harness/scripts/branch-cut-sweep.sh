#!/usr/bin/env bash
# Proofs by `wend solve --exact` (branch and cut above the dynamic programme's range; METHOD
# names another, e.g. METHOD=branch-and-bound) over every TSPLIB instance of a folder (.tsp and
# .atsp) with MIN to MAX nodes, each with a limit of SECONDS; one CSV line per instance: name,
# nodes, method, proven, length, lower bound, the gap the bound proves (per cent of the bound),
# the published optimum from optima.txt beside the folder (or OPTIMA), subproblems (nodes of
# the tree) and seconds (wall clock of the whole command). JOBS instances run at a time
# (default 1), each with THREADS threads (default: the command's own).
#
#   cargo build --release -p wend-bench
#   bench-harness/scripts/branch-cut-sweep.sh ../shared/tsplib/tsp 1 200 60 > bench-out/cuts/exact-200.csv
#   JOBS=2 THREADS=1 bench-harness/scripts/branch-cut-sweep.sh ../shared/tsplib/tsp 201 1000 600
set -euo pipefail
dir=${1:?folder of .tsp or .atsp files}
min=${2:?smallest number of nodes}
max=${3:?largest number of nodes}
export LIMIT=${4:?seconds per instance}
export WEND=${WEND:-target/release/wend}
export METHOD=${METHOD:-}
export THREADS=${THREADS:-}
export OPTIMA=${OPTIMA:-$dir/../optima.txt}
jobs=${JOBS:-1}

one() {
  f=$1
  n=$(grep -m1 -E '^ *DIMENSION' "$f" | tr -dc '0-9')
  name=$(basename "$f"); name=${name%.*}
  opt=$(awk -v k="$name" '$1 == k { print $NF }' "$OPTIMA" 2>/dev/null || true)
  args=(solve "$f" --exact --time-limit "$LIMIT" --json)
  [ -n "$METHOD" ] && [ "$n" -gt 16 ] && args+=(--exact-method "$METHOD")
  [ -n "$THREADS" ] && args+=(--threads "$THREADS")
  began=$(date +%s.%N)
  if out=$("$WEND" "${args[@]}" 2>/dev/null); then
    ended=$(date +%s.%N)
    printf '%s' "$out" | python3 -c '
import json, sys
d = json.load(sys.stdin)
lb, length = d.get("lower_bound"), d["length"]
gap = "" if not lb else "%.3f" % (100 * (length - lb) / lb)
print(",".join(str(x) for x in [d["instance"], d["nodes"], d.get("exact_method"), d.get("proven_optimal"),
      length, lb, gap, sys.argv[3], d.get("subproblems"), "%.2f" % (float(sys.argv[1]) - float(sys.argv[2]))]))
' "$ended" "$began" "$opt"
  else
    echo "$name,$n,failed,,,,,$opt,,"
  fi
}
export -f one

echo "instance,nodes,method,proven_optimal,length,lower_bound,gap_percent,optimum,subproblems,seconds"
"$(dirname "$0")/instances-in-range.sh" "$dir" "$min" "$max" | xargs -P "$jobs" -I{} bash -c 'one "$1"' _ {}
