#!/usr/bin/python3
"""Writes small FITS and VOTable files with astropy (Debian python3-astropy 5.2.1) plus
expected.json with the values astropy put in them, nulls as null. The rows are invented.

Run from the repository root:  /usr/bin/python3 test/reference/make_format_fixtures.py
Outputs (test/reference/formats/):
  mixed.fits             primary HDU + one BINTABLE (astropy Table.write)
  second_ext.fits        primary + IMAGE + BINTABLE 'OBJECTS' (table in the second extension)
  bits.fits              BINTABLE with a 10X bit-array column and a 3D repeat column (astropy.io.fits)
  mixed_tabledata.vot    VOTable TABLEDATA (astropy.io.votable)
  mixed_binary2.vot      VOTable BINARY2
  mixed_binary.vot       VOTable BINARY
  mixed_space.ecsv       ECSV 1.0, space-separated (astropy Table.write format="ascii.ecsv")
  mixed_comma.ecsv       ECSV 1.0, comma-separated
  expected.json          per file: column -> {values, unit}; int64 values as strings
"""
import json
import os

import numpy as np
import astropy
from astropy.io import fits
from astropy.io.votable import from_table, writeto
from astropy.table import MaskedColumn, Table

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "formats")
os.makedirs(OUT, exist_ok=True)


def mixed_table():
    n = 5
    t = Table()
    t["id"] = MaskedColumn(["obj-a", "obj-b", "", "obj-d", "obj-e"], mask=[0, 0, 1, 0, 0])
    t["ra"] = MaskedColumn([0.0, 187.70593075, 359.999999999, 12.5, 1e-300], unit="deg", mask=[0, 0, 0, 1, 0], dtype="f8")
    t["dec"] = MaskedColumn([-89.5, 12.391123, 0.0, 45.25, -0.000001], unit="deg", dtype="f8")
    t["mag"] = MaskedColumn(np.array([14.1, 15.25, 16.0, 17.5, 99.0], dtype="f4"), unit="mag", mask=[0, 0, 1, 0, 0])
    t["cz"] = MaskedColumn(np.array([1200, -150, 30000, 0, 7], dtype="i4"), unit="km / s", mask=[0, 0, 0, 0, 1])
    t["n16"] = MaskedColumn(np.array([1, -32767, 32767, 5, 0], dtype="i2"), mask=[0, 0, 0, 1, 0])
    t["n64"] = MaskedColumn(np.array([9007199254740993, -9223372036854775807, 0, 3, 4], dtype="i8"), mask=[0, 0, 0, 0, 1])
    t["u8"] = np.array([0, 1, 254, 255, 7], dtype="u1")
    t["u16"] = np.array([0, 1, 32768, 65535, 7], dtype="u2")
    t["u32"] = np.array([0, 1, 2147483648, 4294967295, 7], dtype="u4")
    t["flag"] = MaskedColumn([True, False, True, False, True], mask=[0, 0, 0, 1, 0])
    assert len(t) == n
    return t


def plain(v):
    if v is None or v is np.ma.masked:
        return None
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, (np.integer,)):
        return str(int(v)) if v.dtype.itemsize == 8 else int(v)
    if isinstance(v, (np.floating, float)):
        x = float(v)
        return None if np.isnan(x) else x
    if isinstance(v, bytes):
        return v.decode()
    return str(v)


def describe(table):
    out = {}
    for name in table.colnames:
        col = table[name]
        mask = getattr(col, "mask", None)
        values = []
        for i in range(len(col)):
            if mask is not None and np.ndim(mask) and bool(mask[i]):
                values.append(None)
            else:
                values.append(plain(col[i]))
        out[name] = {"values": values, "unit": None if col.unit is None else col.unit.to_string()}
    return out


def raw_fits_units(path, hdu, described):
    """Units as written in the file (TUNITn), not astropy's normalised form."""
    with fits.open(path) as hl:
        h = hl[hdu].header
        for k in range(1, h["TFIELDS"] + 1):
            name = h.get(f"TTYPE{k}")
            if name in described:
                described[name]["unit"] = h.get(f"TUNIT{k}")
    return described


def raw_votable_units(path, described):
    """Units as written in the file (FIELD unit), not astropy's normalised form."""
    import xml.etree.ElementTree as ET

    for el in ET.parse(path).iter():
        if el.tag.endswith("FIELD") and el.get("name") in described:
            described[el.get("name")]["unit"] = el.get("unit")
    return described


expected = {"generator": f"astropy {astropy.__version__}, numpy {np.__version__}"}

# 1. FITS via Table.write (masked ints get TNULL, masked floats NaN, unsigned ints TZERO).
t = mixed_table()
path = os.path.join(OUT, "mixed.fits")
t.write(path, overwrite=True)
expected["mixed.fits"] = raw_fits_units(path, 1, describe(Table.read(path)))

# 2. Table in the second extension, after an image.
primary = fits.PrimaryHDU()
image = fits.ImageHDU(np.arange(6, dtype="i2").reshape(2, 3), name="SKY")
tab = fits.BinTableHDU(Table({"name": ["p", "q", "r"], "v": np.array([1.5, -2.0, 3.25])}), name="OBJECTS")
tab.columns["v"].unit = "km/s"
path = os.path.join(OUT, "second_ext.fits")
fits.HDUList([primary, image, tab]).writeto(path, overwrite=True)
with fits.open(path) as hl:
    d = hl["OBJECTS"].data
    expected["second_ext.fits"] = {
        "name": {"values": [str(x) for x in d["name"]], "unit": None},
        "v": {"values": [float(x) for x in d["v"]], "unit": "km/s"},
    }

# 3. A bit array (10X) and a repeat count (3D), written column by column.
bits = np.array([[1, 0, 1, 0, 0, 0, 0, 0, 1, 1], [0, 1, 0, 0, 0, 0, 0, 1, 0, 0]], dtype=bool)
vec = np.array([[1.0, 2.0, 3.0], [4.0, np.nan, 6.0]])
cols = fits.ColDefs([fits.Column(name="b", format="10X", array=bits), fits.Column(name="vec", format="3D", unit="Mpc", array=vec)])
path = os.path.join(OUT, "bits.fits")
fits.BinTableHDU.from_columns(cols, name="BITS").writeto(path, overwrite=True)
with fits.open(path) as hl:
    d = hl[1].data
    e = {}
    for k in range(10):
        e[f"b_{k}"] = {"values": [bool(row[k]) for row in d["b"]], "unit": None}
    for k in range(3):
        e[f"vec_{k}"] = {"values": [None if np.isnan(row[k]) else float(row[k]) for row in d["vec"]], "unit": "Mpc"}
    expected["bits.fits"] = e

# 4. VOTables, three serialisations of the same table.
for fmt in ["tabledata", "binary2", "binary"]:
    t = mixed_table()
    del t["u16"], t["u32"]  # VOTable has no unsigned 16/32-bit datatypes
    t["cz"].description = "heliocentric cz"
    vot = from_table(t)
    table = vot.get_first_table()
    table.get_field_by_id("ra").ucd = "pos.eq.ra;meta.main"
    # astropy needs a magic null for masked integers even in BINARY2 (which also sets the null bits)
    table.get_field_by_id("n16").values.null = -32768
    table.get_field_by_id("cz").values.null = -2147483648
    table.get_field_by_id("n64").values.null = -9223372036854775808
    path = os.path.join(OUT, f"mixed_{fmt}.vot")
    writeto(vot, path, tabledata_format=fmt)
    from astropy.io.votable import parse_single_table

    back = parse_single_table(path).to_table()
    expected[f"mixed_{fmt}.vot"] = raw_votable_units(path, describe(back))

# 5. ECSV (Astropy APE 6), space- and comma-separated.
for name, delim in [("mixed_space.ecsv", " "), ("mixed_comma.ecsv", ",")]:
    t = mixed_table()
    t["cz"].description = "heliocentric cz"
    path = os.path.join(OUT, name)
    t.write(path, format="ascii.ecsv", delimiter=delim, overwrite=True)
    expected[name] = describe(Table.read(path, format="ascii.ecsv"))

with open(os.path.join(OUT, "expected.json"), "w") as f:
    json.dump(expected, f, indent=1, sort_keys=True)
    f.write("\n")
print("wrote", sorted(os.listdir(OUT)))
