#!/usr/bin/env bash
# Proofs by `wend solve --exact --exact-method METHOD` (default branch-and-cut; instances of up
# to 16 nodes go to the dynamic programme) over every symmetric TSPLIB instance of a folder with
# MIN to MAX nodes, each with a limit of SECONDS; one CSV line per instance: name, nodes,
# method, proven, length, lower bound, subproblems, seconds (wall clock of the whole command).
#
#   cargo build --release -p wend-bench
#   bench-harness/scripts/branch-cut-sweep.sh ../shared/tsplib/tsp 1 200 60 > bench-out/cuts/exact-200.csv
set -euo pipefail
dir=${1:?folder of .tsp files}
min=${2:?smallest number of nodes}
max=${3:?largest number of nodes}
seconds=${4:?seconds per instance}
wend=${WEND:-target/release/wend}
method=${METHOD:-branch-and-cut}
echo "instance,nodes,method,proven_optimal,length,lower_bound,subproblems,seconds"
for f in "$dir"/*.tsp; do
  n=$(grep -m1 -E '^ *DIMENSION' "$f" | tr -dc '0-9')
  [ -n "$n" ] && [ "$n" -ge "$min" ] && [ "$n" -le "$max" ] || continue
  began=$(date +%s.%N)
  m=$method
  [ "$n" -le 16 ] && m=dynamic-programme
  if out=$("$wend" solve "$f" --exact --exact-method "$m" --time-limit "$seconds" --json 2>/dev/null); then
    ended=$(date +%s.%N)
    printf '%s' "$out" | python3 -c '
import json, sys
d = json.load(sys.stdin)
print(",".join(str(x) for x in [d["instance"], d["nodes"], d.get("exact_method"), d.get("proven_optimal"),
      d["length"], d.get("lower_bound"), d.get("subproblems"), "%.2f" % (float(sys.argv[1]) - float(sys.argv[2]))]))
' "$ended" "$began"
  else
    echo "$(basename "$f" .tsp),$n,failed,,,,,"
  fi
done
