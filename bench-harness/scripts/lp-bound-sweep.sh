#!/usr/bin/env bash
# The root LP bound (`wend bound --lp`) of every symmetric TSPLIB instance of a folder with MIN
# to MAX nodes, against its optimum from optima.txt beside the folder (or OPTIMA): one CSV line
# per instance with the subtour bound, the bound with blossoms, each one's gap to the optimum
# in per cent, the cuts and the seconds.
#
#   cargo build --release -p wend-bench
#   bench-harness/scripts/lp-bound-sweep.sh ../shared/tsplib/tsp 1 1000 600 > bench-out/cuts/lp-1000.csv
set -euo pipefail
dir=${1:?folder of .tsp files}
min=${2:?smallest number of nodes}
max=${3:?largest number of nodes}
seconds=${4:?seconds per instance}
wend=${WEND:-target/release/wend}
optima=${OPTIMA:-$dir/../optima.txt}
echo "instance,nodes,optimum,subtour_bound,subtour_gap_percent,lp_bound,lp_gap_percent,cuts,blossoms,complete,seconds"
for f in "$dir"/*.tsp; do
  n=$(grep -m1 -E '^ *DIMENSION' "$f" | tr -dc '0-9')
  [ -n "$n" ] && [ "$n" -ge "$min" ] && [ "$n" -le "$max" ] || continue
  name=$(basename "$f" .tsp)
  opt=$(awk -v k="$name" '$1 == k { print $NF }' "$optima")
  if out=$("$wend" bound --lp "$f" --time-limit "$seconds" --json 2>/dev/null); then
    printf '%s' "$out" | python3 -c '
import json, sys
d = json.load(sys.stdin)
opt = float(sys.argv[1]) if sys.argv[1] else None
st = d["families"][0]["bound_after"]
lp = d["lagrangian_value"]
gap = lambda b: "" if (opt is None or b is None) else "%.3f" % (100 * (opt - b) / opt)
print(",".join(str(x) for x in [d["instance"], d["nodes"], sys.argv[1], "" if st is None else "%.2f" % st,
      gap(st), "%.2f" % lp, gap(lp), d["families"][0]["cuts_added"] + d["families"][1]["cuts_added"],
      d["families"][1]["cuts_added"], d["complete"], "%.2f" % d["seconds"]]))
' "$opt"
  else
    echo "$name,$n,$opt,failed,,,,,,,"
  fi
done
