#!/usr/bin/env python3
"""Write the reference fixtures of the sky model's tests (sky/src/fixtures/).

The reference library is astropy (PyPI package `astropy`): `get_sun` for the Sun's
geocentric direction (GCRS, J2000 axes) and distance, `SkyCoord.separation` for angular
separations. The Rust tests read the CSV files this script writes with `include_str!`, so CI
never needs astropy. Run from the repository root:

    python3 -m venv /tmp/astro && /tmp/astro/bin/pip install astropy
    /tmp/astro/bin/python sky/scripts/sky_fixtures.py

Each file records the astropy version that made it and this script's path.
"""

import os

import astropy
import astropy.units as u
from astropy.coordinates import SkyCoord, get_sun
from astropy.time import Time
from astropy.utils import iers

# Nothing here needs Earth-orientation tables (GCRS has no Earth rotation); never download.
iers.conf.auto_download = False

SCRIPT = "sky/scripts/sky_fixtures.py"
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "src", "sky", "fixtures")

# Epochs in Terrestrial Time, spread over 1995-2035 and over the seasons.
EPOCHS_TT = [
    "1995-01-15T00:00:00",
    "1998-04-03T06:00:00",
    "2001-07-21T12:00:00",
    "2004-10-09T18:00:00",
    "2008-12-28T00:00:00",
    "2012-03-20T03:00:00",
    "2015-06-08T09:00:00",
    "2018-09-23T15:00:00",
    "2021-11-30T21:00:00",
    "2025-02-17T00:00:00",
    "2027-05-07T12:00:00",
    "2029-08-25T06:00:00",
    "2032-01-01T00:00:00",
    "2035-12-21T18:00:00",
]

# Pairs (ra1, dec1, ra2, dec2) in degrees: ordinary ones, exactly 0 and 180 degrees apart,
# near-antipodal, at the poles and across RA = 0.
PAIRS = [
    (10.0, 20.0, 10.0, 20.0),        # the same point: 0
    (123.4, -56.7, 123.4, -56.7),    # the same point: 0
    (10.0, 90.0, 200.0, 90.0),       # the north pole under two RAs: 0
    (0.0, 0.0, 180.0, 0.0),          # antipodes on the equator: 180
    (45.0, 30.0, 225.0, -30.0),      # antipodes: 180
    (0.0, 90.0, 77.0, -90.0),        # pole to pole: 180
    (45.0, 30.0, 225.0, -29.999999), # near-antipodal (1e-6 deg short)
    (45.0, 30.0, 225.001, -30.0),    # near-antipodal
    (300.0, -10.0, 120.0, 9.9),      # near-antipodal (0.1 deg short)
    (359.9, 0.0, 0.1, 0.0),          # across RA = 0: 0.2
    (10.0, 20.0, 10.0000001, 20.0),  # tiny separation
    (0.0, 0.0, 90.0, 0.0),           # 90
    (83.63, 22.01, 201.37, -43.02),  # ordinary
    (266.4, -29.0, 101.3, -16.7),    # ordinary
    (150.0, 2.2, 150.5, 2.7),        # ordinary, small
    (5.0, -89.5, 185.0, -89.5),      # across the south pole: 1
]


def header(f, what):
    f.write(f"# {what}\n")
    f.write(f"# made by {SCRIPT} with astropy {astropy.__version__}\n")


def main():
    os.makedirs(OUT, exist_ok=True)
    with open(os.path.join(OUT, "sun_astropy.csv"), "w") as f:
        header(f, "astropy get_sun: geocentric Sun, GCRS (J2000 axes); jd is a Julian date in TT")
        f.write("jd_tt,ra_deg,dec_deg,distance_au\n")
        for iso in EPOCHS_TT:
            t = Time(iso, scale="tt")
            sun = get_sun(t)
            f.write(
                f"{t.jd:.6f},{sun.ra.deg:.10f},{sun.dec.deg:.10f},"
                f"{sun.distance.to(u.au).value:.10f}\n"
            )
    with open(os.path.join(OUT, "separation_astropy.csv"), "w") as f:
        header(f, "astropy SkyCoord.separation (ICRS), degrees")
        f.write("ra1_deg,dec1_deg,ra2_deg,dec2_deg,separation_deg\n")
        for ra1, dec1, ra2, dec2 in PAIRS:
            a = SkyCoord(ra=ra1 * u.deg, dec=dec1 * u.deg, frame="icrs")
            b = SkyCoord(ra=ra2 * u.deg, dec=dec2 * u.deg, frame="icrs")
            f.write(f"{ra1!r},{dec1!r},{ra2!r},{dec2!r},{a.separation(b).deg:.15f}\n")


if __name__ == "__main__":
    main()
