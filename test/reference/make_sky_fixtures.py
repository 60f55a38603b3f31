#!/usr/bin/python3
"""Sky fixtures for test/sky: angular separations, position angles and ICRS -> Galactic /
supergalactic positions computed with Debian's python3-astropy (5.2.1).

Run from the repository root:  /usr/bin/python3 test/reference/make_sky_fixtures.py
Writes test/reference/sky/separation.json and test/reference/sky/frames.json (seeded, reproducible).
Positions are random test points, not catalogue rows.
"""
import json
import os

import astropy
import numpy as np
import astropy.units as u
from astropy.coordinates import SkyCoord, Galactic, Supergalactic

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "sky")
rng = np.random.default_rng(20261201)


def uniform_sphere(n):
    ra = rng.uniform(0.0, 360.0, n)
    dec = np.degrees(np.arcsin(rng.uniform(-1.0, 1.0, n)))
    return ra, dec


def offset(ra, dec, pa_deg, sep_deg):
    c = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
    o = c.directional_offset_by(pa_deg * u.deg, sep_deg * u.deg)
    return o.ra.deg, o.dec.deg


def pairs():
    groups = {}
    # 1. Tiny separations: 1e-6 .. 1e-2 arcsec at random places and position angles.
    n = 150
    ra, dec = uniform_sphere(n)
    sep = 10 ** rng.uniform(-6, -2, n) / 3600.0
    ra2, dec2 = offset(ra, dec, rng.uniform(0, 360, n), sep)
    groups["below_0.01_arcsec"] = (ra, dec, ra2, dec2)
    # 2. Near 180 degrees: antipode of point 1 moved by 1e-6 .. 1 deg.
    n = 100
    ra, dec = uniform_sphere(n)
    ara, adec = (ra + 180.0) % 360.0, -dec
    ra2, dec2 = offset(ara, adec, rng.uniform(0, 360, n), 10 ** rng.uniform(-6, 0, n))
    groups["near_180_deg"] = (ra, dec, ra2, dec2)
    # 3. At and near the poles (|dec| within 0.01 deg of 90, some exactly 90).
    n = 100
    ra = rng.uniform(0, 360, n)
    dec = np.where(rng.uniform(size=n) < 0.5, 1, -1) * (90.0 - 10 ** rng.uniform(-8, -2, n))
    dec[:10] = np.where(np.arange(10) < 5, 90.0, -90.0)
    ra2 = rng.uniform(0, 360, n)
    dec2 = np.sign(dec) * (90.0 - 10 ** rng.uniform(-8, 0.5, n))
    groups["poles"] = (ra, dec, ra2, dec2)
    # 4. Across the RA 0/360 seam.
    n = 100
    ra = rng.uniform(359.9, 360.0, n) % 360.0
    ra2 = rng.uniform(0.0, 0.1, n)
    dec = rng.uniform(-80, 80, n)
    dec2 = dec + rng.uniform(-0.05, 0.05, n)
    groups["ra_seam"] = (ra, dec, ra2, dec2)
    # 5. Anywhere.
    n = 100
    ra, dec = uniform_sphere(n)
    ra2, dec2 = uniform_sphere(n)
    groups["random"] = (ra, dec, ra2, dec2)
    out = []
    for name, (a1, d1, a2, d2) in groups.items():
        c1 = SkyCoord(np.asarray(a1) * u.deg, np.asarray(d1) * u.deg, frame="icrs")
        c2 = SkyCoord(np.asarray(a2) * u.deg, np.asarray(d2) * u.deg, frame="icrs")
        s = c1.separation(c2).deg
        p = c1.position_angle(c2).deg
        for i in range(len(s)):
            out.append({"kind": name, "ra1": float(c1.ra.deg[i]), "dec1": float(c1.dec.deg[i]),
                        "ra2": float(c2.ra.deg[i]), "dec2": float(c2.dec.deg[i]),
                        "sep_deg": float(s[i]), "pa_deg": float(p[i])})
    return out


def frames():
    n = 500
    ra, dec = uniform_sphere(n)
    ra = np.concatenate([ra, [0.0, 359.9999999, 180.0, 266.404994801, 192.85948, 0.0, 0.0]])
    dec = np.concatenate([dec, [0.0, 0.0, 89.9999999, -28.936173960, 27.12825, 90.0, -90.0]])
    c = SkyCoord(ra * u.deg, dec * u.deg, frame="icrs")
    g = c.transform_to(Galactic())
    sg = c.transform_to(Supergalactic())
    return [{"ra": float(ra[i]), "dec": float(dec[i]), "l": float(g.l.deg[i]), "b": float(g.b.deg[i]),
             "sgl": float(sg.sgl.deg[i]), "sgb": float(sg.sgb.deg[i])} for i in range(len(ra))]


def write(name, rows, what):
    head = {"generator": "test/reference/make_sky_fixtures.py", "library": f"astropy {astropy.__version__}",
            "numpy": np.__version__, "what": what, "rows": rows}
    with open(os.path.join(OUT, name), "w") as f:
        json.dump(head, f, indent=0)
        f.write("\n")


os.makedirs(OUT, exist_ok=True)
write("separation.json", pairs(), "SkyCoord.separation (deg) and position_angle (deg, east of north) of ICRS pairs")
write("frames.json", frames(), "ICRS -> Galactic (l, b) and -> Supergalactic (sgl, sgb), deg, by SkyCoord.transform_to")
