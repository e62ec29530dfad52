#!/usr/bin/env python3
"""Writes demo-targets.csv and demo-links.csv: the invented target list of the demo observatory
and the timing links between some of its targets.

Deterministic (fixed seed, Python's Mersenne Twister), standard library only. Run from this
folder:  python3 make_demo_targets.py  (writes both files here).

The demo plans 30 days from 2027-03-01. About nine tenths of the targets are drawn inside the
demo elongation band as seen at the middle of that month (112 to 138 degrees from the Sun,
well inside 97-153, so that most stay in the band for weeks); the rest are spread uniformly
over the sky and some of them are outside the band. Dwells are long (4 to 14 hours, deep
exposures), so that the month is well filled and the order matters. Priorities 1 (highest) to
3; a few targets carry a proposal window of one to two weeks. The Sun comes from the
low-precision formula of the sky model page, referred to J2000 axes. Ids, positions,
durations, instruments, priorities, windows and links are all invented.
"""

import datetime
import math
import random

SEED = 20270301
COUNT = 60
PLAN_START_JD = 2461465.5  # 2027-03-01 00:00 TT
PLAN_START = datetime.datetime(2027, 3, 1, tzinfo=datetime.timezone.utc)
MID_DAYS = 15.0
IN_BAND_SHARE = 0.9
BAND_DEG = (112.0, 138.0)
INSTRUMENTS = [("wide_imager", 0.5), ("slit_spectrograph", 0.3), ("fast_photometer", 0.2)]
PRIORITIES = [(1, 0.2), (2, 0.5), (3, 0.3)]
WINDOW_SHARE = 0.12


def sun_unit_vector(jd):
    n = jd - 2451545.0
    L = 280.460 + 0.9856474 * n
    g = math.radians(357.528 + 0.9856003 * n)
    lam = L + 1.915 * math.sin(g) + 0.020 * math.sin(2 * g)
    lam -= 1.396971 * n / 36525.0  # equinox of date -> J2000 axes
    lam = math.radians(lam)
    eps = math.radians(23.4392911)
    return (math.cos(lam), math.cos(eps) * math.sin(lam), math.sin(eps) * math.sin(lam))


def cross(a, b):
    return (a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0])


def normalize(v):
    r = math.sqrt(sum(c * c for c in v))
    return tuple(c / r for c in v)


def ra_dec(u):
    ra = math.degrees(math.atan2(u[1], u[0])) % 360.0
    dec = math.degrees(math.asin(max(-1.0, min(1.0, u[2]))))
    return ra, dec


def pick(rng, table):
    x = rng.random()
    acc = 0.0
    for value, w in table:
        acc += w
        if x < acc:
            return value
    return table[-1][0]


def utc(days):
    return (PLAN_START + datetime.timedelta(days=days)).strftime("%Y-%m-%dT%H:%M:%SZ")


def main():
    rng = random.Random(SEED)
    s = sun_unit_vector(PLAN_START_JD + MID_DAYS)
    # Two axes perpendicular to the Sun direction.
    e1 = normalize(cross(s, (0.0, 0.0, 1.0)))
    e2 = cross(s, e1)
    rows = []
    for i in range(1, COUNT + 1):
        if rng.random() < IN_BAND_SHARE:
            lo, hi = (math.cos(math.radians(x)) for x in BAND_DEG)
            c = rng.uniform(hi, lo)  # uniform in cos(elongation): uniform over the ring's area
            sn = math.sqrt(1.0 - c * c)
            phi = rng.uniform(0.0, 2.0 * math.pi)
            u = tuple(c * s[k] + sn * (math.cos(phi) * e1[k] + math.sin(phi) * e2[k]) for k in range(3))
        else:
            z = rng.uniform(-1.0, 1.0)
            phi = rng.uniform(0.0, 2.0 * math.pi)
            r = math.sqrt(1.0 - z * z)
            u = (r * math.cos(phi), r * math.sin(phi), z)
        ra, dec = ra_dec(u)
        ra = round(ra, 4) % 360.0
        duration = 600 * rng.randint(24, 84)  # 4 h to 14 h in whole 10 minutes
        inst = pick(rng, INSTRUMENTS)
        priority = pick(rng, PRIORITIES)
        window = ("", "")
        if rng.random() < WINDOW_SHARE:
            first = rng.randint(0, 16)
            window = (utc(first), utc(first + rng.randint(7, 14)))
        rows.append("LDS-%03d,%.4f,%.4f,%d,%s,%d,%s,%s" % (i, ra, dec, duration, inst, priority, *window))
    with open("demo-targets.csv", "w") as f:
        f.write("id,ra_deg,dec_deg,duration_s,instrument,priority,window_start,window_end\n")
        for r in rows:
            f.write(r + "\n")
    # A monitoring pair (the second look two to four days after the first), and a field
    # observed with two instruments back to back.
    with open("demo-links.csv", "w") as f:
        f.write("kind,first,second,min_lag_s,max_lag_s\n")
        f.write("after,LDS-004,LDS-017,%d,%d\n" % (2 * 86400, 4 * 86400))
        f.write("group,LDS-021,LDS-022,,\n")


if __name__ == "__main__":
    main()
