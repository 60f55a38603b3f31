import { describe, expect, it } from "vitest";
import { parseCsv } from "../../src/catalogue/io.js";
import { prepareCatalogue } from "../../src/catalogue/load.js";
import { countInvalid, invalidReasons, validMask } from "../../src/catalogue/validity.js";
import { getRoles } from "../../src/catalogue/meta.js";
import { columnsOf, tableFromColumns } from "../../src/catalogue/columns.js";
import { convertPosition } from "../../src/sky/index.js";
import { PeculiarError } from "../../src/errors.js";

// Made-up rows; ids are invented.
const TOL_DEG = 1e-9;

function prep(csv: string, opts: Partial<Parameters<typeof prepareCatalogue>[1]> = {}) {
  return prepareCatalogue(parseCsv(csv, { file: "a.csv" }), { file: "a.csv", ...opts });
}

describe("prepareCatalogue", () => {
  it("reads numeric degrees, detects roles and stores them in peculiar.roles", () => {
    const cat = prep("id,ra,dec,cz\ng1,10.5,-20.25,1500\ng2,359.9,89.9,3000\n");
    expect(cat.roles).toEqual({ id: "id", ra: "ra", dec: "dec", cz: "cz" });
    expect(Array.from(cat.raDeg)).toEqual([10.5, 359.9]);
    expect(Array.from(cat.decDeg)).toEqual([-20.25, 89.9]);
    expect(getRoles(cat.table)).toEqual(cat.roles);
    expect(countInvalid(cat.table)).toBe(0);
    expect(cat.positions).toBe("radec");
    expect(cat.notes.some((n) => /no unit; read as degrees/.test(n))).toBe(true);
  });

  it("passes on the reader's notes: a repeated or empty header name and how it was read", () => {
    for (const rows of [1, 300]) {
      const body = Array.from({ length: rows }, (_, i) => `${i},10,20,11,5`).join("\n");
      const cat = prep(`id,ra,dec,ra,\n${body}\n`);
      expect(cat.table.schema.fields.map((f) => f.name).slice(0, 5)).toEqual(["id", "ra", "dec", "ra_2", "col5"]);
      expect(cat.notes.slice(0, 2)).toEqual(["header: the name ra is repeated in column 4; read as ra_2", "header: column 5 has no name; read as col5"]);
    }
  });

  it("notes a z column that reads like cz and a cz column that reads like z, and keeps their roles", () => {
    // common practice: galaxy redshifts in a velocity survey are far below z = 20, and cz far above 2 km/s
    const z = prep("id,ra,dec,z\ng1,10,20,3000.5\ng2,11,20,4200\n");
    expect(z.roles.z).toBe("z");
    expect(z.notes).toContain("z <- z has values up to 4200: that reads like cz in km/s (name it with --col cz=z)");
    const cz = prep("id,ra,dec,cz\ng1,10,20,0.0123\ng2,11,20,-0.5\n");
    expect(cz.roles.cz).toBe("cz");
    expect(cz.notes).toContain("cz <- cz is never above 0.5 in size: that reads like z (name it with --col z=cz)");
    expect(prep("id,ra,dec,z\ng1,10,20,0.05\n").notes.some((n) => /reads like/.test(n))).toBe(false);
  });

  it("flags a bad position once even when a reason column already says it but no valid column does", () => {
    // invented rows; a file with invalid_reason but no valid column (a cut copy of one we wrote)
    const cat = prep("ra,dec,invalid_reason\n1,2,\n,3,column ra: missing value\n4,5,\n");
    expect(Array.from(validMask(cat.table))).toEqual([1, 0, 1]);
    expect(invalidReasons(cat.table)).toEqual(["", "column ra: missing value", ""]);
  });

  it("reads sexagesimal text: RA in hours and Dec in degrees with the sign from the string", () => {
    // Domain reference sheet §2, computed with astropy 8.0.1: "12:30:49.42338" -> 187.70593075 deg.
    const cat = prep('id,RA_hms,Dec_dms\ng1,12:30:49.42338,+12:23:28.0439\ng2,00 42 44.3,-00 30 00\n');
    expect(Math.abs(cat.raDeg[0]! - 187.70593075)).toBeLessThan(TOL_DEG);
    expect(Math.abs(cat.decDeg[0]! - 12.3911233056)).toBeLessThan(TOL_DEG);
    expect(cat.decDeg[1]).toBe(-0.5);
    expect(cat.units).toMatchObject({ ra: "h:m:s", dec: "d:m:s" });
  });

  it("reads decimal hours when the unit row says h and radians when it says rad", () => {
    const h = prep("ra,dec\nh,deg\n12.5,10\n");
    expect(h.raDeg[0]).toBe(187.5);
    expect(h.units.ra).toBe("h");
    const r = prep("ra,dec\nrad,rad\n3.141592653589793,0.5\n");
    expect(Math.abs(r.raDeg[0]! - 180)).toBeLessThan(TOL_DEG);
    expect(Math.abs(r.decDeg[0]! - 28.64788975654116)).toBeLessThan(TOL_DEG);
  });

  it("takes --unit over metadata and the unit in a column name over the default", () => {
    expect(prep("ra,dec\n12.5,10\n", { units: { ra: "h" } }).raDeg[0]).toBe(187.5);
    expect(prep("ra_hours,dec_deg\n12.5,10\n").raDeg[0]).toBe(187.5);
  });

  it("refuses a coordinate column whose unit is not an angle", () => {
    expect(() => prep("ra,dec\nkm/s,deg\n1,2\n", { overrides: { ra: "ra" } })).toThrow(/a\.csv column ra: unit "km\/s" is not an angle unit/);
  });

  it("keeps, flags and counts a row with a non-numeric coordinate", () => {
    const cat = prep("id,ra,dec\ng1,10,20\ng2,abc,20\ng3,11,21\ng4,12,22\n");
    expect(cat.table.numRows).toBe(4);
    expect(Array.from(validMask(cat.table))).toEqual([1, 0, 1, 1]);
    expect(invalidReasons(cat.table)[1]).toMatch(/column ra: "abc" is not a number/);
    expect(cat.raDeg[1]).toBeNaN();
    expect(countInvalid(cat.table)).toBe(1);
  });

  it("keeps, flags and counts a row with a non-numeric sexagesimal coordinate", () => {
    const cat = prep("id,ra,dec\ng1,10 00 00,+20 00 00\ng2,10 00 00,+2O 00 00\n");
    expect(invalidReasons(cat.table)[1]).toBe('line 3: column dec: "+2O 00 00" is not an angle');
    expect(countInvalid(cat.table)).toBe(1);
    expect(cat.table.numRows).toBe(2);
  });

  it("keeps, flags and counts a row with a missing coordinate", () => {
    const cat = prep("id,ra,dec\ng1,10,20\ng2,11,\ng3,12,22\n");
    expect(invalidReasons(cat.table)).toEqual(["", "line 3: column dec: missing value", ""]);
    expect(countInvalid(cat.table)).toBe(1);
    expect(cat.badPositions).toBe(1);
  });

  it("keeps, flags and counts a row with an out-of-range angle", () => {
    const cat = prep("id,ra,dec\ng1,10 00 00,+95 00 00\ng2,24 00 00,+10 00 00\ng3,10,10\n");
    expect(invalidReasons(cat.table)).toEqual([
      'line 2: column dec: "+95 00 00" is outside [-90, 90]',
      'line 3: column ra: "24 00 00" is outside [0, 24) h',
      "",
    ]);
    const num = prep("ra,dec\n360,0\n-0.1,0\n0,-90.5\n");
    expect(invalidReasons(num.table)).toEqual([
      "line 2: column ra: 360 is outside [0, 360) deg",
      "line 3: column ra: -0.1 is outside [0, 360) deg",
      "line 4: column dec: -90.5 is outside [-90, 90]",
    ]);
    expect(countInvalid(num.table)).toBe(3);
  });

  it("keeps, flags and counts a row with minutes >= 60", () => {
    const cat = prep("id,ra,dec\ng1,10 60 00,+10 00 00\ng2,10 00 00,+10 00 60\n");
    expect(invalidReasons(cat.table)).toEqual(['line 2: column ra: "10 60 00" has minutes >= 60', 'line 3: column dec: "+10 00 60" has seconds >= 60']);
    expect(countInvalid(cat.table)).toBe(2);
    expect(cat.table.numRows).toBe(2);
  });

  it("appends to a reason the reader already gave", () => {
    const cat = prep("id,ra,dec,cz\ng1,10,95,1\ng2,10,10,1,extra\n");
    const r = invalidReasons(cat.table);
    expect(r[0]).toBe("line 2: column dec: 95 is outside [-90, 90]");
    expect(r[1]).toMatch(/^line 3: 5 fields, expected 4/);
    expect(countInvalid(cat.table)).toBe(2);
  });

  it("takes positions from Galactic coordinates when there is no RA/Dec", () => {
    const cat = prep("id,GLON,GLAT\ng1,0,0\n");
    // Domain reference sheet §3.1, computed with astropy 8.0.1: (0, 0) -> (266.404994801, -28.936173960).
    expect(Math.abs(cat.raDeg[0]! - 266.404994801)).toBeLessThan(1e-8);
    expect(Math.abs(cat.decDeg[0]! - -28.93617396)).toBeLessThan(1e-8);
    expect(cat.positions).toBe("galactic");
    const [l] = convertPosition(cat.raDeg[0]!, cat.decDeg[0]!, "icrs", "galactic");
    expect(Math.min(l, 360 - l)).toBeLessThan(1e-9);
  });

  it("combines CDS sexagesimal part columns with the Dec sign in its own column", () => {
    // CDS "Standard for Astronomical Catalogues" v3.5: RAh RAm RAs DE- DEd DEm DEs.
    const cat = prep("Seq,RAh,RAm,RAs,DE-,DEd,DEm,DEs\n1,12,30,49.42338,+,12,23,28.0439\n2,0,42,44.3,-,0,30,0\n3,0,61,0,+,0,0,0\n");
    expect(Math.abs(cat.raDeg[0]! - 187.70593075)).toBeLessThan(TOL_DEG);
    expect(cat.decDeg[1]).toBe(-0.5);
    expect(invalidReasons(cat.table)[2]).toBe("line 4: columns RAh RAm RAs: has minutes >= 60");
    expect(cat.positions).toBe("cds-parts");
  });

  it("raises a column error naming the file and its columns when a required role is absent", () => {
    try {
      prep("id,ra,dec\ng1,1,2\n", { require: ["ra", "dec", "cz"] });
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(PeculiarError);
      expect((e as PeculiarError).code).toBe("column");
      expect((e as PeculiarError).message).toBe("a.csv: no column for cz (name one with --col ROLE=NAME); expected the columns are id, ra, dec, valid, invalid_reason, source_row");
    }
  });

  it("handles an empty table and a table without positions", () => {
    const empty = prep("id,ra,dec\n");
    expect(empty.table.numRows).toBe(0);
    expect(empty.raDeg.length).toBe(0);
    const none = prep("id,cz\ng1,100\n");
    expect(none.positions).toBe("none");
    expect(none.raDeg[0]).toBeNaN();
    expect(countInvalid(none.table)).toBe(0);
  });

  it("notes float32 coordinate columns, whose rounding reaches 0.055 arcsec", () => {
    // IEEE 754 binary32: 24-bit significand, so a step of 2^-15 deg between 256 and 512 deg (common practice).
    const t = tableFromColumns([
      { name: "ra", kind: "float32", values: new Float32Array([300.1]), meta: { unit: "deg" } },
      { name: "dec", kind: "float64", values: new Float64Array([1]), meta: { unit: "deg" } },
    ]);
    const cat = prepareCatalogue(t, { file: "x.fits" });
    expect(cat.notes.some((n) => /ra <- ra is float32/.test(n))).toBe(true);
    expect(Math.abs(cat.raDeg[0]! - 300.1) * 3600).toBeLessThan(0.055);
  });

  it("keeps the roles a table recorded over what the names suggest, below --col, skipping vanished columns", () => {
    // A joined table: the survey's sexagesimal positions were chosen; the second catalogue's raj2000/dej2000
    // (decimal degrees, empty for rows it did not observe) would win detection by name.
    const csv = "ra_hms,dec_dms,cz,raj2000,dej2000\n10:00:00,+10:00:00,1500,150.0001,10.0001\n11:00:00,-00:30:00,2500,,\n";
    const joined = parseCsv(csv, { file: "j.csv" });
    const recorded = new Map(joined.schema.metadata);
    recorded.set("peculiar.roles", JSON.stringify({ ra: "ra_hms", dec: "dec_dms", cz: "cz", mu: "gone" }));
    const table = tableFromColumns(columnsOf(joined), recorded, joined.numRows);
    const cat = prepareCatalogue(table, { file: "j.arrow" });
    expect(cat.roles.ra).toBe("ra_hms");
    expect(cat.roles.dec).toBe("dec_dms");
    expect(cat.roles.mu).toBeUndefined();
    expect(Math.abs(cat.raDeg[1]! - 165)).toBeLessThan(TOL_DEG);
    expect(Math.abs(cat.decDeg[1]! - -0.5)).toBeLessThan(TOL_DEG);
    expect(countInvalid(cat.table)).toBe(0);
    expect(cat.notes.some((n) => /roles kept from the file's own record: ra <- ra_hms/.test(n))).toBe(true);
    const overridden = prepareCatalogue(table, { file: "j.arrow", overrides: { ra: "raj2000", dec: "dej2000" } });
    expect(overridden.roles.ra).toBe("raj2000");
    expect(countInvalid(overridden.table)).toBe(1);
  });

  it("does not change the input table", () => {
    const t = parseCsv("ra,dec\n400,0\n", { file: "a.csv" });
    prepareCatalogue(t, { file: "a.csv" });
    expect(countInvalid(t)).toBe(0);
  });

  it("reads a table that has no bookkeeping columns, naming rows by position", () => {
    const t = tableFromColumns([
      { name: "ra", kind: "float64", values: new Float64Array([1, 400]), meta: { unit: "deg" } },
      { name: "dec", kind: "float64", values: new Float64Array([1, 1]), meta: { unit: "deg" } },
    ]);
    const cat = prepareCatalogue(t, { file: "x.arrow" });
    expect(invalidReasons(cat.table)).toEqual(["", "row 2: column ra: 400 is outside [0, 360) deg"]);
  });
});
