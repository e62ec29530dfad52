#!/usr/bin/env python3
"""Per-instance comparison of one method against others, from runs.jsonl files.

    python3 bench-harness/scripts/compare.py --base 2opt DIR/runs.jsonl OTHER/runs.jsonl ...

For each instance and each other method: mean gap to the optimum of both, and the ratios
other/base of mean tour length and of mean wall time. Prints a Markdown table.
"""
import argparse
import json
from collections import defaultdict


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--base", required=True)
    ap.add_argument("files", nargs="+")
    a = ap.parse_args()
    runs = defaultdict(list)
    optimum = {}
    for f in a.files:
        for line in open(f):
            if line.strip():
                r = json.loads(line)
                runs[(r["instance"], r["method"])].append(r)
                if r.get("optimum"):
                    optimum[r["instance"]] = r["optimum"]
    mean = lambda xs: sum(xs) / len(xs)
    others = sorted({m for (_, m) in runs if m != a.base})
    print(f"| instance | method | gap % {a.base} | gap % method | length ratio | time ratio |")
    print("|---|---|--:|--:|--:|--:|")
    for inst in sorted({i for (i, _) in runs}):
        base = runs.get((inst, a.base))
        if not base:
            continue
        bl = mean([r["length"] for r in base])
        bt = mean([r["seconds"] for r in base])
        opt = optimum.get(inst)
        for m in others:
            rs = runs.get((inst, m))
            if not rs:
                continue
            ol = mean([r["length"] for r in rs])
            ot = mean([r["seconds"] for r in rs])
            g = lambda l: f"{100.0 * (l - opt) / opt:.2f}" if opt else "-"
            print(f"| {inst} | {m} | {g(bl)} | {g(ol)} | {ol / bl:.3f} | {ot / bt:.3f} |")


if __name__ == "__main__":
    main()
