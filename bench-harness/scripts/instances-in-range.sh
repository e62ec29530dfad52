#!/usr/bin/env bash
# Prints, one per line, the TSPLIB files (.tsp and .atsp) of folder DIR whose DIMENSION is
# MIN to MAX; the sweep scripts of this folder read their instances from it.
#
#   bench-harness/scripts/instances-in-range.sh ../shared/tsplib/tsp 201 1000
set -euo pipefail
dir=${1:?folder of .tsp or .atsp files}
min=${2:?smallest number of nodes}
max=${3:?largest number of nodes}
for f in "$dir"/*.tsp "$dir"/*.atsp; do
  [ -e "$f" ] || continue
  n=$(grep -m1 -E '^ *DIMENSION' "$f" | tr -dc '0-9')
  if [ -n "$n" ] && [ "$n" -ge "$min" ] && [ "$n" -le "$max" ]; then
    printf '%s\n' "$f"
  fi
done
