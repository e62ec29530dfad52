#!/usr/bin/env python3
"""Time each method's run took to come within a gap of the optimum, from runs.jsonl files.

Usage: time_to_gap.py GAP_PERCENT BASELINE METHOD RUNS.jsonl [RUNS.jsonl ...]

For every instance with a known optimum and one run of each of the two methods (the first seed
found), prints the seconds at which the run's improvement trace first came within GAP_PERCENT of
the optimum, and the ratio baseline / method. A run that never got there counts as its whole
duration, marked ">", and its ratio as a lower bound.
"""
import json
import sys


def first_time(run, gap):
    limit = run["optimum"] * (1 + gap / 100.0)
    for seconds, length in run["trace"]:
        if length <= limit:
            return seconds, True
    return run["seconds"], False


def main():
    if len(sys.argv) < 5:
        sys.exit(__doc__)
    gap, base, method = float(sys.argv[1]), sys.argv[2], sys.argv[3]
    runs = {}
    for path in sys.argv[4:]:
        with open(path) as f:
            for line in f:
                r = json.loads(line)
                if r.get("optimum"):
                    runs.setdefault((r["instance"], r["method"]), r)
    names = sorted({i for i, _ in runs}, key=lambda i: (runs.get((i, method)) or runs[(i, base)])["nodes"])
    print(f"| instance | nodes | {base} s to {gap:g} % | {method} s to {gap:g} % | ratio |")
    print("|---|--:|--:|--:|--:|")
    ratios = []
    for name in names:
        b, m = runs.get((name, base)), runs.get((name, method))
        if not b or not m:
            continue
        tb, ok_b = first_time(b, gap)
        tm, ok_m = first_time(m, gap)
        if not ok_m:
            print(f"| {name} | {m['nodes']} | {'' if ok_b else '>'}{tb:.3f} | >{tm:.3f} | – |")
            continue
        ratio = tb / max(tm, 1e-6)
        ratios.append((ratio, ok_b))
        mark = "" if ok_b else ">"
        print(f"| {name} | {m['nodes']} | {mark}{tb:.3f} | {tm:.3f} | {mark}{ratio:.0f} |")
    if ratios:
        rs = sorted(r for r, _ in ratios)
        geo = 1.0
        for r in rs:
            geo *= r
        geo **= 1.0 / len(rs)
        lower = sum(1 for _, ok in ratios if not ok)
        print()
        print(f"{len(rs)} instances: median ratio {rs[len(rs) // 2]:.0f}, geometric mean {geo:.0f}"
              f" ({lower} of them lower bounds: the baseline never reached the gap)")


if __name__ == "__main__":
    main()
