"""Times astropy's match_to_catalog_sky on the benchmark's CSV files (bench/crossmatch.bench.ts runs it).

usage: /usr/bin/python3 bench/crossmatch-astropy.py A.csv B.csv RADIUS_ARCSEC
Prints one JSON line: load, coords, match and total seconds (total = load + coords + match),
and the number of A rows with a B row within the radius.
"""
import json
import sys
import time

t_import = time.perf_counter()
import numpy as np
import astropy
import astropy.units as u
from astropy.coordinates import SkyCoord
t_import = time.perf_counter() - t_import

a_path, b_path, radius = sys.argv[1], sys.argv[2], float(sys.argv[3])
t0 = time.perf_counter()
a = np.loadtxt(a_path, delimiter=",", skiprows=1, usecols=(1, 2))
b = np.loadtxt(b_path, delimiter=",", skiprows=1, usecols=(1, 2))
t1 = time.perf_counter()
ca = SkyCoord(ra=a[:, 0] * u.deg, dec=a[:, 1] * u.deg, frame="icrs")
cb = SkyCoord(ra=b[:, 0] * u.deg, dec=b[:, 1] * u.deg, frame="icrs")
t2 = time.perf_counter()
idx, d2d, _ = ca.match_to_catalog_sky(cb)
matched = int(np.count_nonzero(d2d < radius * u.arcsec))
t3 = time.perf_counter()
print(json.dumps({"astropy": astropy.__version__, "numpy": np.__version__, "import": t_import, "load": t1 - t0, "coords": t2 - t1, "match": t3 - t2, "total": t3 - t0, "matched": matched}))
