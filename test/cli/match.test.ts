import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync, writeFileSync, existsSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { readTable } from "../../src/catalogue/io.js";
import { float64Column, stringColumn } from "../../src/catalogue/columns.js";

let dir = "";
let cleanup = () => {};

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir("peculiar-match-"));
  // invented rows; separations by the small-angle rule (Meeus 1998 ch. 17): 0.36" per 1e-4 deg of Dec
  writeFileSync(
    join(dir, "survey.csv"),
    ["id,ra,dec,cz,e_pos", "s1,10.0,20.0,5000,0.5", "s2,10.01,20.0,5100,0.4", "s3,359.99999,-30,7000,0.3", "s4,,10,100,0.2", "s5,150,89.99999,3000,0.2"].join("\n") + "\n",
  );
  writeFileSync(
    join(dir, "dist.csv"),
    ["id,ra,dec,cz,mu", "d1,10.0,20.0001,5020,33.1", "d2,0.00001,-30,6990,34.0", "d3,50,50,3000,32", "d4,330,89.99999,3050,31", "d5,10.0,19.9998,9000,35"].join("\n") + "\n",
  );
});
afterAll(() => cleanup());

describe("peculiar match", () => {
  it("writes an outer join with clashing names prefixed by the file stems and the added columns", async () => {
    const out = join(dir, "outer.arrow");
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--join", "outer"]);
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(out);
    const names = t.schema.fields.map((f) => f.name);
    for (const n of ["survey_id", "dist_id", "survey_ra", "dist_ra", "e_pos", "mu", "sep_arcsec", "dv", "n_candidates", "ambiguous", "row_a", "row_b", "valid", "invalid_reason"]) expect(names).toContain(n);
    const ids = stringColumn(t, "survey_id");
    const dids = stringColumn(t, "dist_id");
    const sep = float64Column(t, "sep_arcsec");
    // s1 has d1 (0.36") and d5 (0.72"): nearest is d1; s3-d2 across RA 0/360; s5-d4 across the pole
    const at = (id: string) => ids.indexOf(id);
    expect(dids[at("s1")]).toBe("d1");
    expect(Math.abs(sep[at("s1")]! - 0.36)).toBeLessThan(1e-6);
    expect(dids[at("s3")]).toBe("d2");
    expect(dids[at("s5")]).toBe("d4");
    expect(dids[at("s2")]).toBeNull();
    const distDec = float64Column(t, "dist_dec"); // numeric columns are gathered straight from Arrow
    expect(distDec[at("s1")]).toBe(20.0001);
    expect(Number.isNaN(distDec[at("s2")]!)).toBe(true);
    expect(float64Column(t, "mu")[at("s3")]).toBe(34.0);
    expect(Number.isNaN(sep[at("s2")]!)).toBe(true);
    // d3 and d5 are used by no match: they come last with no survey row
    const rowA = float64Column(t, "row_a");
    const tail = [t.numRows - 2, t.numRows - 1];
    expect(tail.map((k) => dids[k])).toEqual(["d3", "d5"]);
    expect(tail.every((k) => Number.isNaN(rowA[k]!))).toBe(true);
    // the row without a position is kept, unmatched and invalid
    expect(dids[at("s4")]).toBeNull();
    expect(stringColumn(t, "invalid_reason")[at("s4")]).toMatch(/^survey: /);
    // s1's second candidate d5 scores (0.72/2)^2 = 0.13 against 0.03: within the 0.25 gap, so ambiguous
    expect(r.stderr).toMatch(/1 ambiguous/);
    const amb = t.getChild("ambiguous")!;
    expect(amb.get(at("s1"))).toBe(true);
    expect(amb.get(at("s3"))).toBe(false);
  });

  it("--max-dv changes the nearest match and dv is v_B - v_A", async () => {
    const out = join(dir, "dv.csv");
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--max-dv", "100", "--alias", "z,d"]);
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(out);
    expect(t.numRows).toBe(3); // inner join: s1-d1, s3-d2, s5-d4 (dv 20, -10, 50)
    expect(Array.from(float64Column(t, "dv"))).toEqual([20, -10, 50]);
    expect(stringColumn(t, "z_id")).toEqual(["s1", "s3", "s5"]);
    expect(Array.from(float64Column(t, "n_candidates"))).toEqual([1, 1, 1]); // d5 rejected by dv
  });

  it("--report writes counts, the histogram, the chance estimate and the suggestion", () => {
    const out = join(dir, "rep.csv");
    const rep = join(dir, "rep.json");
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--select", "one-to-one", "--report", rep, "-q"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toBe("");
    const j = JSON.parse(readFileSync(rep, "utf8"));
    expect(j.counts.rowsA).toBe(5);
    expect(j.counts.matchedPairs).toBe(3);
    expect(j.counts.unmatchedB).toBe(2);
    expect(j.histogram.counts.reduce((s: number, x: number) => s + x, 0)).toBe(3);
    expect(j.chance.expectedChancePairs).toBeGreaterThanOrEqual(0);
    expect(j.suggestedRadius.method).toMatch(/Rayleigh/);
  });

  it("--sigma uses the error column of one catalogue and counts the other's as zero", async () => {
    const out = join(dir, "sigma.csv");
    // pair radius 3 * 0.5" = 1.5" for s1: d1 at 0.36" passes; d5 at 0.72" too
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--sigma", "3", "--select", "all"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/errors count as 0/);
    const t = await readTable(out);
    expect(stringColumn(t, "dist_id").slice(0, 2)).toEqual(["d1", "d5"]);
  });

  it("refuses a radius without a unit, naming the option and the expected form", () => {
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", join(dir, "x.csv"), "--radius", "2"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--radius: the angle needs a unit/);
    expect(r.stderr).toMatch(/2arcsec/);
    expect(existsSync(join(dir, "x.csv"))).toBe(false);
  });

  it("refuses --max-dv when a catalogue has no velocity, and a bad --select", () => {
    writeFileSync(join(dir, "novel.csv"), "id,ra,dec\nq1,10,20\n");
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "novel.csv"), "-o", join(dir, "y.csv"), "--radius", "2arcsec", "--max-dv", "300"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/novel\.csv has none/);
    const r2 = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", join(dir, "y.csv"), "--radius", "2arcsec", "--select", "best"]);
    expect(r2.code).toBe(2);
    expect(r2.stderr).toMatch(/nearest, all, one-to-one/);
  });

  it("a missing input names the file", () => {
    const r = runCli(["match", join(dir, "nope.csv"), join(dir, "dist.csv"), "-o", join(dir, "z.csv"), "--radius", "1arcsec"]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/nope\.csv/);
  });
});
