import { describe, expect, it } from "vitest";
import { tableFromColumns, float64Column, stringColumn, type ColumnData } from "../../src/catalogue/columns.js";
import { META, readJsonMeta, type RoleMap } from "../../src/catalogue/meta.js";
import { validMask } from "../../src/catalogue/validity.js";
import { computeVelocities, type PositionedTable } from "../../src/cosmology/velocities.js";
import { convertRedshifts, frameToHelio, galacticUnitVectors, solarMotion } from "../../src/cosmology/restframes.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { angleDiffDeg } from "../../src/sky/index.js";

const LCDM = { h0: 70, omegaM: 0.3 };

/** An invented catalogue: ids g1..gN, positions, heliocentric cz, mu with errors. */
function catalogue(rows: { ra: number; dec: number; cz: number; mu: number; muErr?: number; valid?: boolean; reason?: string }[], extra: ColumnData[] = [], roles: RoleMap = {}): PositionedTable {
  const n = rows.length;
  const cols: ColumnData[] = [
    { name: "id", kind: "utf8", values: rows.map((_, i) => `g${i + 1}`) },
    { name: "ra", kind: "float64", values: Float64Array.from(rows.map((r) => r.ra)), meta: { unit: "deg" } },
    { name: "dec", kind: "float64", values: Float64Array.from(rows.map((r) => r.dec)), meta: { unit: "deg" } },
    { name: "cz", kind: "float64", values: Float64Array.from(rows.map((r) => r.cz)), meta: { unit: "km/s" } },
    { name: "mu", kind: "float64", values: Float64Array.from(rows.map((r) => r.mu)), meta: { unit: "mag" } },
    { name: "mu_err", kind: "float64", values: Float64Array.from(rows.map((r) => r.muErr ?? NaN)), meta: { unit: "mag" } },
    { name: "valid", kind: "bool", values: Uint8Array.from(rows.map((r) => (r.valid === false ? 0 : 1))) },
    { name: "invalid_reason", kind: "utf8", values: rows.map((r) => r.reason ?? "") },
    { name: "source_row", kind: "int32", values: Int32Array.from(rows.map((_, i) => i + 1)) },
    ...extra,
  ];
  const table = tableFromColumns(cols, new Map(), n);
  return {
    table,
    roles: { id: "id", ra: "ra", dec: "dec", cz: "cz", mu: "mu", mu_err: "mu_err", ...roles },
    raDeg: Float64Array.from(rows.map((r) => r.ra)),
    decDeg: Float64Array.from(rows.map((r) => r.dec)),
    file: "invented.csv",
  };
}

describe("the velocities step", () => {
  it("gives the worked value v = 118.61 km/s for mu = 35 at cz_CMB = 7000 km/s", () => {
    // Domain reference §5.1 (Davis & Scrimgeour 2014 exact estimator; H0 = 70, Omega_m = 0.3).
    const cat = catalogue([{ ra: 150, dec: 20, cz: 7000, mu: 35, muErr: 0.4 }]);
    const { table } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact", redshiftFrame: "cmb" });
    expect(float64Column(table, "cz_cmb")[0]).toBeCloseTo(7000, 9);
    expect(Math.abs(float64Column(table, "v_pec")[0]! - 118.61)).toBeLessThan(0.006);
    expect(Math.abs(float64Column(table, "z_cos")[0]! - 0.0229447818)).toBeLessThan(1e-10);
    expect(float64Column(table, "dist_mpc")[0]).toBeCloseTo(100, 9);
    expect(float64Column(table, "dist_err_mpc")[0]).toBeCloseTo((100 * Math.LN10 * 0.4) / 5, 9);
    expect(Math.abs(float64Column(table, "dist_c_mpc")[0]! - 97.75699)).toBeLessThan(1e-5);
  });

  it("reads a distance in kpc, pc or Mpc/h and a cz in m/s by their units: the same 118.61 km/s", () => {
    // Domain reference §5.1 worked value (mu = 35 is D_L = 100 Mpc); 1 kpc = 1e-3 Mpc and 1 m/s = 1e-3
    // km/s by the SI prefixes; Mpc/h with h = H0/100 (common practice).
    const at = (cz: number, czUnit: string, d: number, dUnit: string, units?: Record<string, string>) => {
      const base = catalogue([{ ra: 150, dec: 20, cz: 0, mu: NaN }]);
      const table = tableFromColumns([
        { name: "id", kind: "utf8", values: ["g1"] },
        { name: "ra", kind: "float64", values: Float64Array.of(150), meta: { unit: "deg" } },
        { name: "dec", kind: "float64", values: Float64Array.of(20), meta: { unit: "deg" } },
        { name: "cz", kind: "float64", values: Float64Array.of(cz), meta: czUnit ? { unit: czUnit } : {} },
        { name: "d", kind: "float64", values: Float64Array.of(d), meta: dUnit ? { unit: dUnit } : {} },
        { name: "d_err", kind: "float64", values: Float64Array.of(d / 10), meta: dUnit ? { unit: dUnit } : {} },
      ]);
      const cat: PositionedTable = { ...base, table, roles: { id: "id", ra: "ra", dec: "dec", cz: "cz", dist: "d", dist_err: "d_err" }, ...(units ? { units } : {}) };
      const { table: out, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact", redshiftFrame: "cmb" });
      return { v: float64Column(out, "v_pec")[0]!, err: float64Column(out, "dist_err_mpc")[0]!, notes: report.notes };
    };
    for (const [cz, cu, d, du] of [[7000, "km/s", 100, "Mpc"], [7000, "", 100, ""], [7000, "km s-1", 1e5, "kpc"], [7e6, "m/s", 1e8, "pc"], [7000, "km/s", 70, "Mpc/h"], [7000, "km/s", 0.1, "Gpc"]] as const) {
      const r = at(cz, cu, d, du);
      expect(Math.abs(r.v - 118.61), `${cz} ${cu}, ${d} ${du}`).toBeLessThan(0.006);
      expect(r.err, `${d} ${du}`).toBeCloseTo(10, 9);
    }
    expect(at(7000, "km/s", 1e5, "kpc").notes).toContain("dist <- d in kpc: read as 0.001 Mpc per unit");
    // --unit (the loader's units) wins over the column's metadata
    expect(Math.abs(at(7000, "km/s", 1e5, "Mpc", { dist: "kpc" }).v - 118.61)).toBeLessThan(0.006);
    expect(() => at(7000, "km/s", 100, "furlong")).toThrow(/invented\.csv column d: unit "furlong" is not a distance unit.*--unit dist=UNIT/);
    expect(() => at(7000, "knots", 100, "Mpc")).toThrow(/unit "knots" is not a velocity unit/);
  });

  it("flags a row without a distance for that alone, and a redshift at or below z = -1", () => {
    // 1 + z > 0 for any redshift (common practice); cz = -449 689 km/s is z = -1.5
    const cat = catalogue([
      { ra: 150, dec: 20, cz: 7000, mu: NaN, muErr: 0.2 },
      { ra: 150, dec: 20, cz: -1.5 * C_KMS, mu: 35, muErr: 0.2 },
      { ra: 150, dec: 20, cz: 7000, mu: 35, muErr: 0.2 },
    ]);
    const { table, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact", redshiftFrame: "cmb" });
    expect(stringColumn(table, "invalid_reason")).toEqual(["no usable distance (mu)", "redshift at or below z = -1 (cz): 1 + z must be positive", ""]);
    expect(report.flagged).toEqual({ "no usable distance (mu)": 1, "redshift at or below z = -1 (cz): 1 + z must be positive": 1 });
  });

  it("keeps every input column and adds the contract columns", () => {
    const cat = catalogue([{ ra: 10, dec: -5, cz: 3000, mu: 33.5, muErr: 0.2 }]);
    const { table } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    const names = table.schema.fields.map((f) => f.name);
    for (const c of cat.table.schema.fields) expect(names).toContain(c.name);
    for (const c of ["z_cmb", "cz_cmb", "dist_mpc", "dist_err_mpc", "dist_c_mpc", "z_cos", "v_pec", "v_pec_err", "l", "b", "sgl", "sgb", "sgx", "sgy", "sgz"]) {
      expect(names).toContain(c);
    }
    expect(table.numRows).toBe(1);
    expect(table.schema.fields.find((f) => f.name === "v_pec")!.metadata.get("unit")).toBe("km/s");
  });

  it("converts heliocentric cz with the frame module and the given apex", () => {
    const cat = catalogue([
      { ra: 187.70593075, dec: 12.39112331, cz: 1284, mu: 31, muErr: 0.3 },
      { ra: 20, dec: -60, cz: 9000, mu: 36, muErr: 0.3 },
    ]);
    const { table } = computeVelocities(cat, { frame: "lg", apex: "km1996", form: "additive", cosmology: LCDM, estimator: "linear" });
    // Domain reference §4.3 (astropy 8.0.1): the galaxy at (187.70593075, +12.39112331) with
    // cz_helio = 1284 km/s has 1179.958 km/s in the LG frame of Karachentsev & Makarov 1996.
    expect(Math.abs(float64Column(table, "cz_lg")[0]! - 1179.958)).toBeLessThan(2e-3);
    const want = convertRedshifts([9000 / C_KMS], [20], [-60], { frame: "helio" }, { frame: "lg", apex: "km1996" }, "additive")[0]!;
    expect(float64Column(table, "z_lg")[1]).toBeCloseTo(want, 14);
  });

  it("a CMB-frame mock made heliocentric with frameToHelio comes back to the same z_cmb and v_pec", () => {
    // Round trip: cz_CMB -> cz_helio (inverse of the frame step) -> velocities from helio.
    const ra = [0.5, 95, 187.7, 266.4, 359.9];
    const dec = [-80, 10, 12.4, -28.9, 60];
    const czCmb = [800, 3000, 7000, 12000, 25000];
    const nGal = galacticUnitVectors(ra, dec);
    const zh = frameToHelio(czCmb.map((x) => x / C_KMS), nGal, solarMotion("cmb"));
    const cat = catalogue(ra.map((r, i) => ({ ra: r, dec: dec[i]!, cz: zh[i]! * C_KMS, mu: 34, muErr: 0.3 })));
    const { table } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    const back = float64Column(table, "cz_cmb");
    czCmb.forEach((c, i) => expect(Math.abs(back[i]! - c)).toBeLessThan(1e-9));
    const direct = computeVelocities(catalogue(ra.map((r, i) => ({ ra: r, dec: dec[i]!, cz: czCmb[i]!, mu: 34, muErr: 0.3 }))), { frame: "cmb", redshiftFrame: "cmb", cosmology: LCDM, estimator: "exact" });
    const v1 = float64Column(table, "v_pec");
    const v2 = float64Column(direct.table, "v_pec");
    czCmb.forEach((_, i) => expect(Math.abs(v1[i]! - v2[i]!)).toBeLessThan(1e-8));
  });

  it("puts Galactic and supergalactic coordinates and the SG Cartesian of the comoving distance", () => {
    const cat = catalogue([{ ra: 187.70593075, dec: 12.39112331, cz: 1284, mu: 31, muErr: 0.3 }]);
    const { table } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    // Domain reference §3.1/§3.2 [computed with pyerfa 2.0.1.5 / astropy 8.0.1]: (l, b) = (283.777739, 74.491156),
    // (SGL, SGB) = (102.880569, -2.347921).
    expect(angleDiffDeg(float64Column(table, "l")[0]!, 283.777739)).toBeLessThan(2e-6);
    expect(Math.abs(float64Column(table, "b")[0]! - 74.491156)).toBeLessThan(2e-6);
    expect(angleDiffDeg(float64Column(table, "sgl")[0]!, 102.880569)).toBeLessThan(2e-6);
    expect(Math.abs(float64Column(table, "sgb")[0]! - -2.347921)).toBeLessThan(2e-6);
    const r = Math.hypot(float64Column(table, "sgx")[0]!, float64Column(table, "sgy")[0]!, float64Column(table, "sgz")[0]!);
    expect(r).toBeCloseTo(float64Column(table, "dist_c_mpc")[0]!, 9);
  });

  it("flags rows without redshift, distance or position and keeps them all", () => {
    const cat = catalogue([
      { ra: 10, dec: 10, cz: 5000, mu: 34.5, muErr: 0.3 },
      { ra: 10, dec: 10, cz: NaN, mu: 34.5, muErr: 0.3 },
      { ra: 10, dec: 10, cz: 5000, mu: NaN, muErr: 0.3 },
      { ra: NaN, dec: 10, cz: 5000, mu: 34.5, muErr: 0.3 },
      { ra: 10, dec: 10, cz: 5000, mu: 34.5, valid: false, reason: "dec out of range" },
    ]);
    const { table, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    expect(table.numRows).toBe(5);
    expect(Array.from(validMask(table))).toEqual([1, 0, 0, 0, 0]);
    const why = stringColumn(table, "invalid_reason");
    expect(why[0]).toBe("");
    expect(why[1]).toMatch(/no usable redshift \(cz\)/);
    expect(why[2]).toMatch(/no usable distance \(mu\)/);
    expect(why[3]).toMatch(/no usable position/);
    // A row flagged before keeps its reason; it has no mu error, so its velocity has no error.
    expect(why[4]).toBe("dec out of range");
    expect(report.withoutError).toBe(1);
    expect(report.withVelocity).toBe(2);
    expect(report.flagged["no usable position"]).toBe(1);
    expect(report.valid).toBe(1);
  });

  it("flags a negative distance error and keeps the row with its velocity", () => {
    // A 1-sigma error is a non-negative number by definition (common practice).
    const cat = catalogue([
      { ra: 10, dec: 10, cz: 5000, mu: 34.5, muErr: 0.3 },
      { ra: 20, dec: 10, cz: 5000, mu: 34.5, muErr: -0.3 },
    ]);
    const { table, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    expect(table.numRows).toBe(2);
    expect(Array.from(validMask(table))).toEqual([1, 0]);
    expect(stringColumn(table, "invalid_reason")[1]).toBe("negative distance error (mu_err)");
    expect(report.flagged["negative distance error (mu_err)"]).toBe(1);
    expect(Number.isFinite(float64Column(table, "v_pec")[1]!)).toBe(true);
  });

  it("records the settings in the schema metadata", () => {
    const cat = catalogue([{ ra: 10, dec: 10, cz: 5000, mu: 34.5, muErr: 0.3 }]);
    const { table } = computeVelocities(cat, { frame: "cmb", cosmology: { h0: 73, omegaM: 0.25 }, estimator: "log" });
    const s = readJsonMeta<Record<string, unknown>>(table, META.settings)!;
    expect(s.step).toBe("velocities");
    expect(s.estimator).toBe("log");
    expect(s.frame).toBe("cmb");
    expect(s.apex).toBe("planck2018");
    expect(s.h0).toBe(73);
    expect(s.omegaM).toBe(0.25);
    expect(String(s.apexCitation)).toMatch(/Planck 2018/);
    const h = readJsonMeta<unknown[]>(table, META.history)!;
    expect(h.length).toBe(1);
  });

  it("keeps an input column that clashes with an output under a new name", () => {
    const extra: ColumnData[] = [
      { name: "v_pec", kind: "float64", values: Float64Array.from([123]) },
      { name: "l", kind: "float64", values: Float64Array.from([999]) },
    ];
    const cat = catalogue([{ ra: 10, dec: 10, cz: 5000, mu: 34.5, muErr: 0.3 }], extra);
    const { table, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    expect(float64Column(table, "v_pec_input")[0]).toBe(123);
    expect(float64Column(table, "l")[0]).not.toBe(999);
    expect(report.renamed).toEqual(["v_pec -> v_pec_input"]);
  });

  it("uses a distance column of a stated kind and an eta column", () => {
    const base = catalogue([{ ra: 10, dec: 10, cz: 7000, mu: 35, muErr: 0.4 }], [
      { name: "d_com", kind: "float64", values: Float64Array.from([97.75698725367535]) },
      { name: "logdr", kind: "float64", values: Float64Array.from([0.007553255297031447]) },
      { name: "e_logdr", kind: "float64", values: Float64Array.from([0.08]) },
    ]);
    // The same galaxy three ways: mu = 35 (D_L = 100 Mpc), D_C = 97.757 Mpc, eta = 0.0075533 at cz_CMB = 7000
    // (domain reference §5.1, §5.3): the exact estimator gives 118.61 km/s each time.
    const common = { frame: "cmb" as const, redshiftFrame: "cmb" as const, cosmology: LCDM, estimator: "exact" as const };
    const byDist = computeVelocities({ ...base, roles: { ...base.roles, dist: "d_com" } }, { ...common, distance: "dist", distKind: "comoving" });
    const byEta = computeVelocities({ ...base, roles: { ...base.roles, eta: "logdr", eta_err: "e_logdr" } }, { ...common, distance: "eta" });
    for (const r of [byDist, byEta]) {
      expect(Math.abs(float64Column(r.table, "v_pec")[0]! - 118.61)).toBeLessThan(0.006);
      expect(float64Column(r.table, "dist_mpc")[0]).toBeCloseTo(100, 4);
    }
    expect(byEta.report.distanceSource).toBe("eta");
    expect(float64Column(byEta.table, "v_pec_err")[0]).toBeGreaterThan(0);
  });

  it("takes a z column with its error when there is no cz", () => {
    const cat = catalogue([{ ra: 150, dec: 20, cz: NaN, mu: 35, muErr: 0.4 }], [
      { name: "zspec", kind: "float64", values: Float64Array.from([7000 / C_KMS]) },
      { name: "zspec_err", kind: "float64", values: Float64Array.from([30 / C_KMS]) },
    ]);
    const roles = { ...cat.roles, z: "zspec", z_err: "zspec_err" } as RoleMap;
    delete roles.cz;
    const withZ = computeVelocities({ ...cat, roles }, { frame: "cmb", redshiftFrame: "cmb", cosmology: LCDM, estimator: "exact" });
    expect(withZ.report.redshiftColumn).toBe("zspec");
    // Domain reference §5.1 worked case again (Davis & Scrimgeour 2014 estimator).
    expect(Math.abs(float64Column(withZ.table, "v_pec")[0]! - 118.61)).toBeLessThan(0.006);
    const noZErr = computeVelocities({ ...cat, roles: { ...roles, z_err: undefined } as RoleMap }, { frame: "cmb", redshiftFrame: "cmb", cosmology: LCDM, estimator: "exact" });
    // The redshift error adds in quadrature: sigma_v grows.
    expect(float64Column(withZ.table, "v_pec_err")[0]).toBeGreaterThan(float64Column(noZErr.table, "v_pec_err")[0]!);
  });

  it("reads eta on the CMB-frame redshift whatever the output frame", () => {
    // eta is defined with the CMB-frame redshift (Springob et al. 2014), so the distance must not
    // change with --frame; only z_<frame> and v_pec do.
    const cat = catalogue([{ ra: 187.70593075, dec: 12.39112331, cz: 5000, mu: NaN }], [
      { name: "logdr", kind: "float64", values: Float64Array.from([0.02]) },
      { name: "e_logdr", kind: "float64", values: Float64Array.from([0.1]) },
    ]);
    const withEta = { ...cat, roles: { ...cat.roles, eta: "logdr", eta_err: "e_logdr" } };
    const common = { cosmology: LCDM, estimator: "exact" as const, distance: "eta" as const };
    const cmb = computeVelocities(withEta, { ...common, frame: "cmb" });
    const lg = computeVelocities(withEta, { ...common, frame: "lg" });
    expect(float64Column(lg.table, "dist_c_mpc")[0]).toBeCloseTo(float64Column(cmb.table, "dist_c_mpc")[0]!, 10);
    expect(float64Column(lg.table, "v_pec")[0]).not.toBeCloseTo(float64Column(cmb.table, "v_pec")[0]!, 0);
  });

  it("names the missing role in its error", () => {
    const cat = catalogue([{ ra: 10, dec: 10, cz: 5000, mu: 34.5 }]);
    expect(() => computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact", distance: "eta" })).toThrow(/--col eta=NAME/);
    const noZ = { ...cat, roles: { ra: "ra", dec: "dec", mu: "mu" } };
    expect(() => computeVelocities(noZ, { frame: "cmb", cosmology: LCDM, estimator: "exact" })).toThrow(/no redshift column/);
    expect(() => computeVelocities(cat, { frame: "cmb", cosmology: { h0: 0, omegaM: 0.3 }, estimator: "exact" })).toThrow(/H0/);
  });

  it("handles an empty table", () => {
    const cat = catalogue([]);
    const { table, report } = computeVelocities(cat, { frame: "cmb", cosmology: LCDM, estimator: "exact" });
    expect(table.numRows).toBe(0);
    expect(report.withVelocity).toBe(0);
  });
});
