import { describe, expect, it } from "vitest";
import { tableFromColumns, type ColumnData, type ColumnMeta } from "../../src/catalogue/columns.js";
import { detectRoles, describeRoles, unitClass } from "../../src/catalogue/roles.js";
import { PeculiarError } from "../../src/errors.js";

/** A one-row table with these columns (float64 unless `text`), metadata as given. Ids are made up. */
function table(cols: (string | [string, ColumnMeta])[]) {
  const data: ColumnData[] = cols.map((c) => {
    const [name, meta] = typeof c === "string" ? [c, {}] : c;
    return { name, kind: "float64", values: new Float64Array([1]), meta };
  });
  return tableFromColumns(data);
}

describe("detectRoles", () => {
  it("finds positions, velocity and distance columns by their common names", () => {
    // Common names: domain reference §12.1 (CDS ReadMe examples) and common practice.
    const { roles } = detectRoles(table(["objname", "RAJ2000", "DEJ2000", "cz", "e_cz", "mu", "e_mu", "v_pec", "v_pec_err"]));
    expect(roles).toEqual({ id: "objname", ra: "RAJ2000", dec: "DEJ2000", cz: "cz", cz_err: "e_cz", mu: "mu", mu_err: "e_mu", v_pec: "v_pec", v_pec_err: "v_pec_err" });
  });

  it.each([
    [["ra", "dec"], { ra: "ra", dec: "dec" }],
    [["ra_deg", "dec_deg"], { ra: "ra_deg", dec: "dec_deg" }],
    [["alpha", "delta"], { ra: "alpha", dec: "delta" }],
    [["RA_hms", "Dec_dms"], { ra: "RA_hms", dec: "Dec_dms" }],
    [["v_helio", "zhel"], { cz: "v_helio", z: "zhel" }],
    [["vhel", "z"], { cz: "vhel", z: "z" }],
    [["dm", "mu_err"], { mu: "dm", mu_err: "mu_err" }],
    [["distmod"], { mu: "distmod" }],
    [["dist_mpc", "e_dist"], { dist: "dist_mpc", dist_err: "e_dist" }],
    [["eta", "e_eta"], { eta: "eta", eta_err: "e_eta" }],
    [["id", "GLON", "GLAT", "group"], { id: "id", glon: "GLON", glat: "GLAT", group: "group" }],
    [["name", "l", "b"], { id: "name", glon: "l", glat: "b" }],
  ] as [string[], Record<string, string>][])("maps %j to %j", (cols, want) => {
    const { roles } = detectRoles(table(cols));
    expect(roles).toEqual(want);
  });

  it("finds roles from UCDs when the names say nothing", () => {
    const t = table([
      ["c1", { ucd: "meta.id;meta.main" }],
      ["c2", { ucd: "pos.eq.ra;meta.main", unit: "deg" }],
      ["c3", { ucd: "pos.eq.dec;meta.main", unit: "deg" }],
      ["c4", { ucd: "src.redshift" }],
      ["c5", { ucd: "stat.error;src.redshift" }],
      ["c6", { ucd: "spect.dopplerVeloc.opt", unit: "km/s" }],
      ["c7", { ucd: "phot.mag.distMod", unit: "mag" }],
      ["c8", { ucd: "pos.distance", unit: "Mpc" }],
      ["c9", { ucd: "stat.error;pos.distance", unit: "Mpc" }],
    ]);
    expect(detectRoles(t).roles).toEqual({ id: "c1", ra: "c2", dec: "c3", cz: "c6", z: "c4", z_err: "c5", mu: "c7", dist: "c8", dist_err: "c9" });
  });

  it("prefers the UCD meta.main column over a name match and says why", () => {
    const t = table(["ra", ["RA_ICRS", { ucd: "pos.eq.ra;meta.main", unit: "deg" }], "dec"]);
    const { roles, notes } = detectRoles(t);
    expect(roles.ra).toBe("RA_ICRS");
    expect(notes.join("\n")).toMatch(/ra: candidates ra, RA_ICRS; chose RA_ICRS \(UCD pos\.eq\.ra;meta\.main beats name \(ra\)\)/);
  });

  it("breaks a tie between two equally good columns by file order and reports it", () => {
    const { roles, notes } = detectRoles(table(["ra_deg", "ra", "dec"]));
    expect(roles.ra).toBe("ra_deg");
    expect(notes.some((n) => /ra: candidates ra_deg, ra; chose ra_deg \(the first in the file\)/.test(n))).toBe(true);
  });

  it("reads a redshift-named column in km/s as cz", () => {
    const { roles } = detectRoles(table([["z", { unit: "km/s" }], ["e_z", { unit: "km/s" }]]));
    expect(roles).toEqual({ cz: "z", cz_err: "e_z" });
  });

  it("drops a name match whose unit contradicts the role", () => {
    const { roles, notes } = detectRoles(table([["cz", { unit: "deg" }]]));
    expect(roles.cz).toBeUndefined();
    expect(notes.join(" ")).toMatch(/cz .*unit "deg" does not fit/);
  });

  it("never takes a velocity in another rest frame as heliocentric", () => {
    const { roles, notes } = detectRoles(table(["zcmb", "v_cmb", "Vlg"]));
    expect(roles).toEqual({});
    expect(notes.filter((n) => /another rest frame/.test(n))).toHaveLength(3);
  });

  it("needs a length unit before taking a column called d as a distance", () => {
    expect(detectRoles(table(["d"])).roles).toEqual({});
    expect(detectRoles(table([["d", { unit: "Mpc" }]])).roles).toEqual({ dist: "d" });
  });

  it("ignores the bookkeeping columns valid, invalid_reason and source_row", () => {
    expect(detectRoles(table(["valid", "source_row", "invalid_reason", "ra", "dec"])).roles).toEqual({ ra: "ra", dec: "dec" });
  });

  it("takes overrides first, frees their columns and lets an empty name unset a role", () => {
    const t = table(["ra", "dec", "x", "y", "cz"]);
    const { roles } = detectRoles(t, { ra: "x", dec: "y", cz: "" });
    expect(roles).toEqual({ ra: "x", dec: "y" });
  });

  it("rejects an override naming a missing column with the list of columns", () => {
    const t = table(["ra", "dec"]);
    try {
      detectRoles(t, { cz: "velocity" }, "a.csv");
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(PeculiarError);
      expect((e as PeculiarError).code).toBe("column");
      expect((e as PeculiarError).message).toBe("a.csv: --col cz=velocity: no such column; expected one of ra, dec");
    }
  });

  it("keeps Galactic coordinates only as a pair", () => {
    const { roles, notes } = detectRoles(table(["GLON", "ra", "dec"]));
    expect(roles.glon).toBeUndefined();
    expect(notes.join(" ")).toMatch(/no partner/);
  });

  it("gives no roles and no notes for an empty table", () => {
    expect(detectRoles(tableFromColumns([]))).toEqual({ roles: {}, notes: [] });
  });

  it("describes the choice on one line with units", () => {
    const t = table([["RAJ2000", { unit: "h" }], "DEJ2000", ["cz", { unit: "km/s" }]]);
    const { roles } = detectRoles(t);
    expect(describeRoles(t, roles)).toBe("ra <- RAJ2000 (h), dec <- DEJ2000, cz <- cz (km/s)");
  });
});

describe("unitClass", () => {
  it("classifies common unit spellings (FITS Standard 4.0 §4.3, CDS/VOUnits)", () => {
    expect(unitClass("km/s")).toBe("velocity");
    expect(unitClass("km.s-1")).toBe("velocity");
    expect(unitClass("km / s")).toBe("velocity");
    expect(unitClass("Mpc")).toBe("length");
    expect(unitClass("mag")).toBe("mag");
    expect(unitClass("deg")).toBe("angle");
    expect(unitClass('"h:m:s"')).toBe("angle");
    expect(unitClass("")).toBe("none");
    expect(unitClass("Jy")).toBe("other");
  });
});
