#!/usr/bin/env bash
# The exact programme on the time-window sets: `wend solve FILE --exact --time-limit SECONDS` on
# every instance of ../shared/tsptw/{dumas,gendreau} with at most 64 stops (the programme's limit),
# one JSON answer per instance in OUT, then:
#   - OUT/exact.csv: instance, nodes (the depot included), outcome (optimal, infeasible, time limit, memory), value,
#     seconds, labels, the value of optima.txt;
#   - a table per set and size: instances, proven optimal, equal to optima.txt, proven
#     infeasible, stopped by the time limit or the memory ceiling;
#   - with the runs of the heuristic sweep (bench-harness/scripts/tsptw-sweep.sh) in SWEEP: on
#     every instance with a proven value, the heuristic runs' mean gap against it and whether any
#     run is shorter than it (which would be a bug of one of the two).
# Usage: [JOBS=N] [SHARED=DIR] [WEND=BINARY] [SWEEP=DIR] bench-harness/scripts/tsptw-exact.sh [OUT] [SECONDS]
set -euo pipefail
out=${1:-bench-out/tsptw-exact}
limit=${2:-60}
shared=${SHARED:-../shared/tsptw}
wend=${WEND:-target/release/wend}
sweep=${SWEEP:-bench-out/tsptw}
[ -d "$shared/dumas" ] || { echo "no $shared/dumas: nothing to run" >&2; exit 0; }
[ -x "$wend" ] || cargo build --release -p wend-bench
mkdir -p "$out"
list="$out/instances.txt"
: > "$list"
for f in "$shared"/dumas/*.txt "$shared"/gendreau/*.txt; do
  n=$(head -n 1 "$f" | tr -d '[:space:]')
  [ "$n" -le 64 ] && echo "$f" >> "$list"
done
echo "$(wc -l < "$list") instances with at most 64 stops, ${limit} s each" >&2
export wend limit out
# One instance: its JSON (also printed when no order was found, exit code 3) and its stderr.
xargs -P "${JOBS:-1}" -I{} sh -c '
  f="$1"; key="$(basename "$(dirname "$f")")_$(basename "$f" .txt)"
  [ -s "$out/$key.json" ] && exit 0
  "$wend" solve "$f" --exact --time-limit "$limit" --json > "$out/$key.part" 2> "$out/$key.err" || true
  mv "$out/$key.part" "$out/$key.json"
' _ {} < "$list"
# The assignment bound of every instance (travel costs, windows ignored; a fraction of a second).
if [ ! -s "$out/bounds.csv" ]; then
  for f in "$shared"/dumas/*.txt "$shared"/gendreau/*.txt; do
    key="$(basename "$(dirname "$f")")/$(basename "$f" .txt)"
    b=$("$wend" solve "$f" --bound --runs 1 --iterations 1 --json 2>/dev/null \
      | python3 -c 'import json, sys; print(json.load(sys.stdin)["lower_bound"])' || echo "")
    echo "$key,$b"
  done > "$out/bounds.part"
  mv "$out/bounds.part" "$out/bounds.csv"
fi
python3 - "$out" "$list" "$shared/optima.txt" "$sweep/runs.jsonl" <<'PY'
import csv, json, os, sys
out, listing, optima_path, runs_path = sys.argv[1:5]
known = {}
if os.path.exists(optima_path):
    for line in open(optima_path):
        parts = line.split()
        if len(parts) == 2 and not line.startswith('#'):
            known[parts[0]] = int(parts[1])
rows = []
for f in open(listing).read().split():
    setname, stem = os.path.basename(os.path.dirname(f)), os.path.basename(f)[:-4]
    key = f"{setname}/{stem}"
    text = open(os.path.join(out, f"{setname}_{stem}.json")).read().strip()
    err = open(os.path.join(out, f"{setname}_{stem}.err")).read().strip()
    stops = int(open(f).readline())
    if text:
        v = json.loads(text)
        if v['proven_optimal']:
            outcome, value = 'optimal', v['travel_cost']
        elif v['proven_infeasible']:
            outcome, value = 'infeasible', None
        else:
            outcome, value = 'time limit', None
        seconds, labels = v['seconds'], v['iterations']
    else:
        outcome = 'memory' if 'memory' in err else 'error: ' + err
        value, seconds, labels = None, None, None
    rows.append(dict(set=setname, instance=key, nodes=stops, outcome=outcome, value=value,
                     seconds=seconds, labels=labels, known=known.get(key)))
with open(os.path.join(out, 'exact.csv'), 'w', newline='') as fh:
    w = csv.DictWriter(fh, fieldnames=list(rows[0]))
    w.writeheader()
    w.writerows(rows)
print("| set | nodes | instances | proven optimal | equal to optima.txt | proven infeasible | time limit | memory ceiling | slowest proof s |")
print("|---|---:|---:|---:|---:|---:|---:|---:|---:|")
groups = {}
for r in rows:
    groups.setdefault((r['set'], r['nodes']), []).append(r)
for (s, n), rs in sorted(groups.items()):
    opt = [r for r in rs if r['outcome'] == 'optimal']
    eq = sum(1 for r in opt if r['known'] == r['value'])
    withknown = sum(1 for r in opt if r['known'] is not None)
    slow = max((r['seconds'] for r in opt), default=None)
    count = lambda o: sum(1 for r in rs if r['outcome'] == o)
    print(f"| {s} | {n} | {len(rs)} | {len(opt)} | {eq} of {withknown} | {count('infeasible')} "
          f"| {count('time limit')} | {count('memory')} | {'–' if slow is None else f'{slow:.2f}'} |")
odd = [r for r in rows if r['outcome'].startswith('error')]
for r in odd:
    print(f"{r['instance']}: {r['outcome']}")
if os.path.exists(runs_path):
    proven = {r['instance']: r['value'] for r in rows if r['outcome'] == 'optimal'}
    by = {}
    for line in open(runs_path):
        if line.strip():
            r = json.loads(line)
            key = f"{os.path.basename(os.path.dirname(r['file']))}/{r['instance']}"
            if key in proven:
                by.setdefault(key, []).append(r)
    fresh = [k for k in by if k not in known]
    gaps, shorter, infeasible = [], [], 0
    for k, rs in by.items():
        for r in rs:
            if not r['feasible']:
                infeasible += 1
                continue
            gaps.append(100 * (r['length'] - proven[k]) / proven[k])
            if r['length'] < proven[k]:
                shorter.append((k, r['seed'], r['length'], proven[k]))
    print(f"\nheuristic runs on {len(by)} instances with a proven value ({len(fresh)} of them not in "
          f"optima.txt): {len(gaps)} feasible, {infeasible} infeasible, mean gap "
          f"{sum(gaps) / max(len(gaps), 1):.3f} %, {len(shorter)} shorter than the proven value")
    fg = [100 * (r['length'] - proven[k]) / proven[k] for k in fresh for r in by[k] if r['feasible']]
    if fg:
        print(f"on the {len(fresh)} not in optima.txt: mean gap {sum(fg) / len(fg):.3f} % over {len(fg)} runs")
    for s in shorter:
        print("SHORTER THAN PROVEN:", s)
    # The rest: no value in optima.txt and none proven here; best of the runs and the bound.
    bounds = {}
    for line in open(os.path.join(out, 'bounds.csv')):
        k, _, b = line.strip().partition(',')
        bounds[k] = int(b) if b not in ('', 'None') else None
    rest = {}
    for line in open(runs_path):
        if line.strip():
            r = json.loads(line)
            key = f"{os.path.basename(os.path.dirname(r['file']))}/{r['instance']}"
            if key not in known and key not in proven:
                rest.setdefault(key, []).append(r)
    table = []
    for k, rs in sorted(rest.items()):
        lengths = [r['length'] for r in rs if r['feasible']]
        best = min(lengths) if lengths else None
        b = bounds.get(k)
        table.append(dict(instance=k, nodes=rs[0]['nodes'], runs=len(rs), feasible=len(lengths),
                          best=best, worst=max(lengths) if lengths else None, bound=b,
                          best_over_bound_percent=None if best is None or not b
                          else round(100 * (best - b) / b, 2)))
    if table:
        with open(os.path.join(out, 'open.csv'), 'w', newline='') as fh:
            w = csv.DictWriter(fh, fieldnames=list(table[0]))
            w.writeheader()
            w.writerows(table)
        print(f"\n{len(table)} instances with neither a value in optima.txt nor a proof "
              f"(best and bound of each in {out}/open.csv):")
        print("| set | nodes | instances | runs feasible | runs at their instance's best | best over bound % (mean) |")
        print("|---|---:|---:|---:|---:|---:|")
        g = {}
        for t in table:
            g.setdefault((t['instance'].split('/')[0], t['nodes']), []).append(t)
        for (s, n), ts in sorted(g.items()):
            at = sum(1 for t in ts for r in rest[t['instance']] if r['feasible'] and r['length'] == t['best'])
            ratios = [t['best_over_bound_percent'] for t in ts if t['best_over_bound_percent'] is not None]
            mean = f"{sum(ratios) / len(ratios):.1f}" if ratios else "–"
            print(f"| {s} | {n} | {len(ts)} | {sum(t['feasible'] for t in ts)} of {sum(t['runs'] for t in ts)} "
                  f"| {at} | {mean} |")
PY
