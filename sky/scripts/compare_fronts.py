#!/usr/bin/env python3
"""Compares two fronts of `wend sky plan --front --json` (their `archive_points`): how many
points of the second the first weakly dominates, both hypervolumes against 1.1 times the worst
values of both, and the first front's least propellant at the second's knee time.

Usage: compare_fronts.py A.json B.json   (standard library only)
"""
import json, sys
def load(p):
    d = json.load(open(p)); return [tuple(x) for x in d["archive_points"]], d
def hv(pts, ref):
    pts = sorted(p for p in pts if p[0] < ref[0] and p[1] < ref[1])
    area, best = 0.0, ref[1]
    stairs = []
    for p in pts:
        if not stairs or p[1] < stairs[-1][1]:
            stairs.append(p)
    for i, p in enumerate(stairs):
        nx = stairs[i + 1][0] if i + 1 < len(stairs) else ref[0]
        area += (nx - p[0]) * (ref[1] - p[1])
    return area
a, da = load(sys.argv[1]); b, db = load(sys.argv[2])
ref = (1.1 * max(p[0] for p in a + b), 1.1 * max(p[1] for p in a + b))
dominated = sum(1 for q in b if any(p[0] <= q[0] and p[1] <= q[1] for p in a))
print(f"A {sys.argv[1]}: {len(a)} points, B {sys.argv[2]}: {len(b)} points")
print(f"B points weakly dominated by A: {dominated}/{len(b)}")
print(f"hypervolume (h·g) against 1.1 x the worst of both: A {hv(a, ref)/3.6:.2f}, B {hv(b, ref)/3.6:.2f}, ratio A/B {hv(a, ref)/hv(b, ref):.4f}")
kb = db["front"][db["knee_plan"] - 1]
best = min((p for p in a if p[0] <= kb["elapsed_s"] + 1e-6), key=lambda p: p[1], default=None)
print(f"B's knee: {kb['elapsed_s']/3600:.3f} h, {kb['propellant_kg']*1000:.3f} g; least propellant of A at equal or less elapsed time: "
      + (f"{best[0]/3600:.3f} h, {best[1]*1000:.3f} g ({100*(1-best[1]/kb['propellant_kg']):.1f}% less)" if best else "none"))
