#!/usr/bin/env python3
"""Writes demo-targets.csv: the invented target list of the demo observatory.

Deterministic (fixed seed, Python's Mersenne Twister), standard library only. Run from this
folder:  python3 make_demo_targets.py > demo-targets.csv

About three quarters of the targets are drawn inside the demo elongation band (102 to 148
degrees from the Sun, a little inside 97-153 so that their dwells fit) as seen on the
plan's start date, 2027-03-01; the rest are spread uniformly over the sky and many of them
are outside the band. The Sun comes from the low-precision formula of the sky model page,
referred to J2000 axes. Ids, positions, durations and instruments are all invented.
"""

import math
import random

SEED = 20270301
COUNT = 72
PLAN_START_JD = 2461465.5  # 2027-03-01 00:00 TT
IN_BAND_SHARE = 0.75
BAND_DEG = (102.0, 148.0)
INSTRUMENTS = [("wide_imager", 0.5), ("slit_spectrograph", 0.3), ("fast_photometer", 0.2)]


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


def main():
    rng = random.Random(SEED)
    s = sun_unit_vector(PLAN_START_JD)
    # Two axes perpendicular to the Sun direction.
    e1 = normalize(cross(s, (0.0, 0.0, 1.0)))
    e2 = cross(s, e1)
    print("# Demo target list of the Lantern Deep-Sky Observatory (invented data).")
    print("# Plans are planning proposals to be confirmed by the operations team's validated tools.")
    print("# Written by make_demo_targets.py (seed %d); do not edit by hand." % SEED)
    print("id,ra_deg,dec_deg,duration_s,instrument")
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
        duration = 60 * rng.randint(10, 120)  # 10 min to 2 h in whole minutes
        x = rng.random()
        acc = 0.0
        inst = INSTRUMENTS[-1][0]
        for name, w in INSTRUMENTS:
            acc += w
            if x < acc:
                inst = name
                break
        print("LDS-%03d,%.4f,%.4f,%d,%s" % (i, ra, dec, duration, inst))


if __name__ == "__main__":
    main()
