#!/usr/bin/env bash
# The root LP bound (`wend bound --lp`) of every TSPLIB instance of a folder (.tsp and .atsp)
# with MIN to MAX nodes, against its optimum from optima.txt beside the folder (or OPTIMA): one
# CSV line per instance with the bound after each cut family (subtour cuts; + blossoms;
# + combs), each one's gap to the optimum in per cent, the share of the subtour bound's gap the
# blossoms and the combs closed, the cuts of each family, and the seconds. JOBS instances run
# at a time (default 1).
#
#   cargo build --release -p wend-bench
#   bench-harness/scripts/lp-bound-sweep.sh ../shared/tsplib/tsp 1 1000 600 > bench-out/cuts/lp-1000.csv
set -euo pipefail
dir=${1:?folder of .tsp or .atsp files}
min=${2:?smallest number of nodes}
max=${3:?largest number of nodes}
export LIMIT=${4:?seconds per instance}
export WEND=${WEND:-target/release/wend}
export OPTIMA=${OPTIMA:-$dir/../optima.txt}
jobs=${JOBS:-1}

one() {
  f=$1
  n=$(grep -m1 -E '^ *DIMENSION' "$f" | tr -dc '0-9')
  name=$(basename "$f"); name=${name%.*}
  opt=$(awk -v k="$name" '$1 == k { print $NF }' "$OPTIMA" 2>/dev/null || true)
  if out=$("$WEND" bound --lp "$f" --time-limit "$LIMIT" --json 2>/dev/null); then
    printf '%s' "$out" | python3 -c '
import json, sys
d = json.load(sys.stdin)
opt = float(sys.argv[1]) if sys.argv[1] else None
fam = {f["family"]: f for f in d["families"]}
st, bl = fam["subtour"]["bound_after"], fam["blossom"]["bound_after"]
lp = d["lagrangian_value"]
gap = lambda b: "" if (opt is None or b is None) else "%.3f" % (100 * (opt - b) / opt)
def closed(a, b):
    if opt is None or a is None or b is None or opt - st <= 1e-9:
        return ""
    return "%.1f" % (100 * (b - a) / (opt - st))
f2 = lambda b: "" if b is None else "%.2f" % b
print(",".join(str(x) for x in [d["instance"], d["nodes"], sys.argv[1], f2(st), gap(st), f2(bl), gap(bl),
      f2(lp), gap(lp), closed(st, bl), closed(bl, lp), fam["subtour"]["cuts_added"], fam["blossom"]["cuts_added"],
      fam["comb"]["cuts_added"], d["complete"], "%.2f" % d["seconds"]]))
' "$opt"
  else
    echo "$name,$n,$opt,failed,,,,,,,,,,,,"
  fi
}
export -f one

echo "instance,nodes,optimum,subtour_bound,subtour_gap_percent,blossom_bound,blossom_gap_percent,lp_bound,lp_gap_percent,closed_by_blossoms_percent,closed_by_combs_percent,subtour_cuts,blossoms,combs,complete,seconds"
"$(dirname "$0")/instances-in-range.sh" "$dir" "$min" "$max" | xargs -P "$jobs" -I{} bash -c 'one "$1"' _ {}
