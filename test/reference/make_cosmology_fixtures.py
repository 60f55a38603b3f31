#!/usr/bin/python3
"""Fixture for test/cosmology/distances.test.ts: flat Lambda-CDM distances from astropy.

Run with Debian's python3-astropy (5.2.1):  /usr/bin/python3 test/reference/make_cosmology_fixtures.py
Writes test/reference/cosmology/flat_lcdm_astropy.json. No radiation (Tcmb0 = 0), as in
src/cosmology/distances.ts. Inverses with astropy.cosmology.z_at_value.

Also writes test/reference/cosmology/frames_astropy.json: radial velocities of seeded random
directions (numpy default_rng(20261201)) in astropy's LSR frame (Schoenrich et al. 2010 solar
motion, a first-order vector addition) and Galactocentric frame (v4.0 defaults), for galaxies at
1000 Mpc with no proper motion.
"""
import json
import os

import astropy
import numpy as np
from astropy import units as u
from astropy.coordinates import LSR, Galactocentric, SkyCoord, galactocentric_frame_defaults
from astropy.cosmology import FlatLambdaCDM, z_at_value

MODELS = [(70.0, 0.3), (67.4, 0.315), (73.0, 0.25), (100.0, 1.0), (50.0, 0.05)]
ZS = [float(z) for z in np.geomspace(0.001, 1.0, 31)] + [0.0, 2.0, 3.0]

out = {
    "source": f"astropy {astropy.__version__} FlatLambdaCDM(H0, Om0, Tcmb0=0)",
    "script": "test/reference/make_cosmology_fixtures.py",
    "models": [],
}
for h0, om in MODELS:
    c = FlatLambdaCDM(H0=h0, Om0=om, Tcmb0=0)
    rows = []
    for z in ZS:
        rows.append({
            "z": z,
            "dc": float(c.comoving_distance(z).to_value(u.Mpc)),
            "dl": float(c.luminosity_distance(z).to_value(u.Mpc)),
            "da": float(c.angular_diameter_distance(z).to_value(u.Mpc)),
            "mu": float(c.distmod(z).value) if z > 0 else None,
        })
    inv = []
    for d in [10.0, 100.0, 500.0, 2000.0]:
        inv.append({
            "d": d,
            "z_dl": float(z_at_value(c.luminosity_distance, d * u.Mpc, zmin=1e-8, zmax=5, ztol=1e-13, maxfun=2000)),
            "z_dc": float(z_at_value(c.comoving_distance, d * u.Mpc, zmin=1e-8, zmax=5, ztol=1e-13, maxfun=2000)),
        })
    out["models"].append({"h0": h0, "omegaM": om, "rows": rows, "inverse": inv})

path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "cosmology", "flat_lcdm_astropy.json")
os.makedirs(os.path.dirname(path), exist_ok=True)
with open(path + ".tmp", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
os.replace(path + ".tmp", path)
print("wrote", path)

rng = np.random.default_rng(20261201)
n = 24
ra = rng.uniform(0, 360, n)
dec = np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
cz = rng.uniform(300, 20000, n)
c = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, distance=1000 * u.Mpc, pm_ra_cosdec=np.zeros(n) * u.mas / u.yr,
             pm_dec=np.zeros(n) * u.mas / u.yr, radial_velocity=cz * u.km / u.s, frame="icrs")
lsr = c.transform_to(LSR()).radial_velocity.to_value(u.km / u.s)
with galactocentric_frame_defaults.set("v4.0"):
    g = c.transform_to(Galactocentric())
    pos = g.cartesian.xyz.to_value(u.kpc)
    vel = g.velocity.d_xyz.to_value(u.km / u.s)
    gsr = (pos * vel).sum(axis=0) / np.linalg.norm(pos, axis=0)
    vsun = [float(x) for x in g.galcen_v_sun.d_xyz.to_value(u.km / u.s)]
frames = {
    "source": f"astropy {astropy.__version__} LSR (v_bary default) and Galactocentric (defaults v4.0, v_sun {vsun})",
    "script": "test/reference/make_cosmology_fixtures.py",
    "rows": [
        {"ra": float(ra[i]), "dec": float(dec[i]), "cz_helio": float(cz[i]), "v_lsr": float(lsr[i]), "v_gsr": float(gsr[i])}
        for i in range(n)
    ],
}
path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "cosmology", "frames_astropy.json")
with open(path + ".tmp", "w") as f:
    json.dump(frames, f, indent=1)
    f.write("\n")
os.replace(path + ".tmp", path)
print("wrote", path)
