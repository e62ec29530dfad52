#!/usr/bin/env python3
"""Check a plan of `wend sky plan` against the elongation band with an outside reference.

For every row of plan.csv, the Sun's direction at start_utc and end_utc comes from astropy's
`get_sun` (PyPI package `astropy`; GCRS, J2000 axes, UTC times) and the target's from the
targets CSV; their separation (`SkyCoord.separation`) must lie inside the band, within a
tolerance (default 0.02 degrees: the plan's low-precision Sun agrees with astropy to better
than 0.01 degrees, and times are rounded to whole seconds). Prints the worst margin and exits
1 when a row is outside. Run from the repository root:

    python3 -m venv /tmp/astro && /tmp/astro/bin/pip install astropy
    wend sky plan --front --out /tmp/demo-plan
    /tmp/astro/bin/python sky/scripts/check_plan.py instances/sky/demo-targets.csv \
        /tmp/demo-plan/plan.csv /tmp/demo-plan/plan-[0-9].csv /tmp/demo-plan/plan-[0-9][0-9].csv \
        --band 97 153

Plans are planning proposals to be confirmed by the operations team's validated tools; this
check is one of the planner's own tests, not a substitute for them.
"""

import argparse
import csv
import sys

import astropy
import astropy.units as u
from astropy.coordinates import SkyCoord, get_sun
from astropy.time import Time
from astropy.utils import iers

iers.conf.auto_download = False


def rows(path):
    with open(path, newline="", encoding="utf-8-sig") as f:
        lines = [line for line in f if line.strip() and not line.startswith("#")]
    return list(csv.DictReader(lines))


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("targets")
    ap.add_argument("plans", nargs="+", help="plan.csv files (plan.csv, plan-K.csv of a front)")
    ap.add_argument("--band", nargs=2, type=float, default=[97.0, 153.0])
    ap.add_argument("--tolerance", type=float, default=0.02)
    args = ap.parse_args()
    lo, hi = args.band
    where = {r["id"].strip(): r for r in rows(args.targets)}
    plan = [r for path in args.plans for r in rows(path)]
    ids, times = [], []
    for r in plan:
        for key in ("start_utc", "end_utc"):
            ids.append(r.get("target") or r["id"])
            times.append(r[key].replace("Z", ""))
    t = Time(times, scale="utc", format="isot")
    sun = get_sun(t)
    tgt = SkyCoord(
        ra=[float(where[i]["ra_deg"]) for i in ids] * u.deg,
        dec=[float(where[i]["dec_deg"]) for i in ids] * u.deg,
        frame="icrs",
    )
    # GCRS shares the ICRS axes; compare directions on them.
    sun_dir = SkyCoord(ra=sun.ra, dec=sun.dec, frame="icrs")
    sep = tgt.separation(sun_dir).deg
    margin = [min(s - lo, hi - s) for s in sep]
    bad = [(ids[k], times[k], sep[k]) for k in range(len(sep)) if margin[k] < -args.tolerance]
    csv_e = []
    for r in plan:
        csv_e += [float(r["elongation_start_deg"]), float(r["elongation_end_deg"])]
    worst_diff = max((abs(a - b) for a, b in zip(sep, csv_e)), default=0.0)
    print(
        f"astropy {astropy.__version__}: {len(args.plans)} plans, {len(plan)} observations, {len(sep)} checks, "
        f"smallest margin to the band {min(margin, default=0.0):.4f} deg, "
        f"largest difference from the plan's elongations {worst_diff:.4f} deg, "
        f"{len(bad)} outside"
    )
    for b in bad:
        print(f"  outside: {b[0]} at {b[1]}: {b[2]:.4f} deg")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
