import { describe, expect, it } from "vitest";
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { float64Column, tableFromColumns, withColumns, type ColumnData } from "../../src/catalogue/columns.js";
import { META, getRoles, readJsonMeta } from "../../src/catalogue/meta.js";
import { combineDistances, errorColumnFor } from "../../src/cosmology/combine.js";

/**
 * A matched table of an invented survey with two distance catalogues "a" and "b" (alias-prefixed
 * columns as the cross-match writes them). True moduli uniform in [32, 37]; a measures 60 % with
 * 0.35 mag, b 50 % with 0.25 mag and a zero point +offset. Truth is the generator's input.
 */
function matched(seed: number, n: number, offset: number) {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);
  const a = new Float64Array(n).fill(NaN);
  const ae = new Float64Array(n).fill(NaN);
  const b = new Float64Array(n).fill(NaN);
  const be = new Float64Array(n).fill(NaN);
  for (let i = 0; i < n; i++) {
    const t = 32 + 5 * u();
    if (u() < 0.6) {
      a[i] = t + 0.35 * g();
      ae[i] = 0.35;
    }
    if (u() < 0.5) {
      b[i] = t + offset + 0.25 * g();
      be[i] = 0.25;
    }
  }
  const cols: ColumnData[] = [
    { name: "id", kind: "utf8", values: Array.from({ length: n }, (_, i) => `s${i + 1}`) },
    { name: "a_mu", kind: "float64", values: a },
    { name: "a_mu_err", kind: "float64", values: ae },
    { name: "b_mu", kind: "float64", values: b },
    { name: "e_b_mu", kind: "float64", values: be },
  ];
  return tableFromColumns(cols, new Map([[META.roles, JSON.stringify({ id: "id" })]]), n);
}

describe("the combine step", () => {
  it("recovers a -0.12 mag zero-point offset of catalogue b and applies it on request", () => {
    // Seed 42, 3000 rows: ~900 shared, pair sigma 0.43 mag, formal error ~0.014 mag; truth -0.12 (generator input).
    const t = matched(42, 3000, -0.12);
    const { table, report } = combineDistances(t, { muColumns: ["a_mu", "b_mu"], apply: true });
    const ob = report.offsets[1]!;
    expect(report.reference).toBe("a_mu");
    expect(ob.errColumn).toBe("e_b_mu");
    expect(ob.nShared).toBeGreaterThan(800);
    expect(Math.abs(ob.offsetMag - -0.12)).toBeLessThan(3 * ob.offsetErrMag);
    // the applied offset is the clipped one (a Gaussian sample: a few 3-sigma rejections at most)
    expect(ob.appliedMag).toBe(ob.clippedOffsetMag);
    expect(ob.nRejected).toBeLessThan(10);
    expect(Math.abs(ob.appliedMag - -0.12)).toBeLessThan(3 * ob.clippedOffsetErrMag);
    expect(report.offsets[0]!.offsetMag).toBe(0);
    // After the offset, the combined moduli of shared galaxies follow a's zero point:
    // their mean difference from a is ~0 (much less than the offset).
    const mu = float64Column(table, "mu");
    const a = float64Column(table, "a_mu");
    let s = 0;
    let k = 0;
    const nd = float64Column(table, "n_dist");
    for (let i = 0; i < mu.length; i++) if (nd[i] === 2) {
      s += mu[i]! - a[i]!;
      k++;
    }
    expect(Math.abs(s / k)).toBeLessThan(0.03);
    expect(report.nDist["2"]).toBe(ob.nShared);
    expect(getRoles(table).mu).toBe("mu");
    expect(getRoles(table).mu_err).toBe("mu_err");
    const settings = readJsonMeta<Record<string, unknown>>(table, META.settings)!;
    expect(settings.step).toBe("combine");
    expect(settings.applied).toBe(true);
  });

  it("without --apply the offsets are reported but the moduli are combined as given", () => {
    const t = matched(42, 500, 0.3);
    const { table, report } = combineDistances(t, { muColumns: ["a_mu", "b_mu"], apply: false });
    expect(report.offsets[1]!.appliedMag).toBe(0);
    const nd = float64Column(table, "n_dist");
    const i = nd.findIndex((x) => x === 2);
    const a = float64Column(table, "a_mu")[i]!;
    const b = float64Column(table, "b_mu")[i]!;
    const w1 = 1 / 0.35 ** 2;
    const w2 = 1 / 0.25 ** 2;
    expect(float64Column(table, "mu")[i]).toBeCloseTo((w1 * a + w2 * b) / (w1 + w2), 12);
  });

  it("a reference given by alias flips the sign of the offset", () => {
    const t = matched(5, 1000, 0.2);
    const byA = combineDistances(t, { muColumns: ["a_mu", "b_mu"], apply: false }).report;
    const byB = combineDistances(t, { muColumns: ["a_mu", "b_mu"], reference: "b", apply: false }).report;
    expect(byB.reference).toBe("b_mu");
    expect(byB.offsets[0]!.offsetMag).toBeCloseTo(-byA.offsets[1]!.offsetMag, 12);
  });

  it("keeps every row: rows with no modulus get n_dist = 0 and an empty mu", () => {
    const t = matched(9, 200, 0);
    const { table } = combineDistances(t, { muColumns: ["a_mu", "b_mu"], apply: true });
    expect(table.numRows).toBe(200);
    const nd = float64Column(table, "n_dist");
    const mu = float64Column(table, "mu");
    for (let i = 0; i < 200; i++) expect(Number.isNaN(mu[i]!)).toBe(nd[i] === 0);
  });

  it("finds error columns by their usual spellings and says which one is missing", () => {
    const t = matched(1, 10, 0);
    expect(errorColumnFor(t, "a_mu")).toBe("a_mu_err");
    expect(errorColumnFor(t, "b_mu")).toBe("e_b_mu");
    expect(errorColumnFor(t, "id")).toBeUndefined();
    expect(() => combineDistances(t, { muColumns: ["a_mu", "id"], apply: false })).toThrow(/column id: no error column found/);
    expect(() => combineDistances(t, { muColumns: ["a_mu", "c_mu"], apply: false })).toThrow(/column c_mu: no such modulus column/);
    expect(() => combineDistances(t, { muColumns: ["a_mu", "b_mu"], reference: "zz", apply: false })).toThrow(/reference/);
    expect(() => combineDistances(t, { muColumns: [], apply: false })).toThrow(/at least one/);
    // a text column named as a modulus (with an error column given) is refused, not read as empty
    expect(() => combineDistances(t, { muColumns: ["a_mu", "id"], errColumns: ["a_mu_err", "e_b_mu"], apply: false })).toThrow(/column id: is text, not a number/);
  });

  it("says how many moduli have no usable error, and when an error column is empty throughout", () => {
    const t = matched(3, 400, 0.1);
    const ae = float64Column(t, "a_mu_err");
    const a = float64Column(t, "a_mu");
    let changed = 0;
    for (let i = 0; i < 400 && changed < 3; i++) if (Number.isFinite(a[i]!)) ae[i] = changed++ === 0 ? -0.1 : 0;
    const t2 = withColumns(t, [{ name: "a_mu_err", kind: "float64", values: ae }]);
    const { report } = combineDistances(t2, { muColumns: ["a_mu", "b_mu"], apply: true });
    expect(report.notes.find((x) => x.startsWith("a_mu:"))).toMatch(/^a_mu: 3 of \d+ moduli have no usable error in a_mu_err \(0 empty, 3 zero or negative\)/);
    const empty = withColumns(t, [{ name: "e_b_mu", kind: "float64", values: new Float64Array(400).fill(NaN) }]);
    const r = combineDistances(empty, { muColumns: ["a_mu", "b_mu"], apply: true }).report;
    expect(r.notes.some((x) => /^e_b_mu has no value for any of the \d+ moduli of b_mu/.test(x))).toBe(true);
  });

  it("with network, ties a catalogue that overlaps only another one and applies its offset", () => {
    // Invented rows: a and b share g1-g3, b and c share g4-g6, a and c share none. Offsets by construction:
    // b - a = +0.2 exactly, c - b = -0.3 exactly, so c - a = -0.1 (no noise: the solution is exact).
    const a = [33, 34, 35, NaN, NaN, NaN];
    const b = [33.2, 34.2, 35.2, 32.2, 33.7, 36.2];
    const c = [NaN, NaN, NaN, 31.9, 33.4, 35.9];
    const e = (x: number[]) => Float64Array.from(x.map((v) => (Number.isFinite(v) ? 0.2 : NaN)));
    const cols: ColumnData[] = [
      { name: "a_mu", kind: "float64", values: Float64Array.from(a) },
      { name: "a_mu_err", kind: "float64", values: e(a) },
      { name: "b_mu", kind: "float64", values: Float64Array.from(b) },
      { name: "b_mu_err", kind: "float64", values: e(b) },
      { name: "c_mu", kind: "float64", values: Float64Array.from(c) },
      { name: "c_mu_err", kind: "float64", values: e(c) },
    ];
    const t = tableFromColumns(cols);
    const pair = combineDistances(t, { muColumns: ["a_mu", "b_mu", "c_mu"], apply: true });
    expect(pair.report.offsets[2]!.appliedMag).toBe(0);
    expect(pair.report.notes.join(" ")).toMatch(/--network ties it/);
    const net = combineDistances(t, { muColumns: ["a_mu", "b_mu", "c_mu"], apply: true, network: true });
    expect(net.report.solution).toBe("network");
    expect(net.report.offsets[1]!.appliedMag).toBeCloseTo(0.2, 12);
    expect(net.report.offsets[2]!.appliedMag).toBeCloseTo(-0.1, 12);
    // Every galaxy ends on a's zero point: g4 has b = 32.2 and c = 31.9, both 32.0 after the offsets.
    expect(float64Column(net.table, "mu")[3]).toBeCloseTo(32.0, 12);
  });

  it("reports, and does not apply, the offset of a catalogue that shares no galaxy with the reference", () => {
    const cols: ColumnData[] = [
      { name: "a_mu", kind: "float64", values: Float64Array.from([33, NaN]) },
      { name: "a_mu_err", kind: "float64", values: Float64Array.from([0.2, NaN]) },
      { name: "b_mu", kind: "float64", values: Float64Array.from([NaN, 34]) },
      { name: "b_mu_err", kind: "float64", values: Float64Array.from([NaN, 0.2]) },
    ];
    const { report } = combineDistances(tableFromColumns(cols), { muColumns: ["a_mu", "b_mu"], apply: true });
    expect(report.offsets[1]!.nShared).toBe(0);
    expect(report.offsets[1]!.appliedMag).toBe(0);
    expect(report.notes.join(" ")).toMatch(/shares no galaxy/);
  });
});
