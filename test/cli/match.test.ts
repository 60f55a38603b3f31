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

  it("--sigma flags a row with a negative positional error and matches it as a row without an error", async () => {
    // invented rows; 0.36" per 1e-4 deg of Dec (small-angle rule, Meeus 1998 ch. 17)
    writeFileSync(join(dir, "neg-a.csv"), "id,ra,dec,e_pos\nn1,10,20,0.5\nn2,20,20,-1\nn3,30,20,0.5\n");
    writeFileSync(join(dir, "neg-b.csv"), "id,ra,dec\nm1,10,20.0001\nm2,20,20.0001\nm3,30,20.0001\n");
    const out = join(dir, "neg.csv");
    // with --radius 2arcsec a row without an error falls back on R: n2-m2 at 0.36" is kept
    const r = runCli(["match", join(dir, "neg-a.csv"), join(dir, "neg-b.csv"), "-o", out, "--sigma", "3", "--radius", "2arcsec", "--join", "left"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/neg-a\.csv: 1 row with a negative or infinite positional error: flagged/);
    const t = await readTable(out);
    expect(stringColumn(t, "neg_a_id")).toEqual(["n1", "n2", "n3"]);
    expect(stringColumn(t, "neg_b_id")).toEqual(["m1", "m2", "m3"]);
    expect(stringColumn(t, "invalid_reason")).toEqual(["", "neg_a: column e_pos: positional error is negative", ""]);
  });

  it("refuses --col for an input that is not there, and a default alias never starts with a digit", async () => {
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", join(dir, "col3.csv"), "--radius", "2arcsec", "--col", "3:ra=ra"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--col 3:ra=ra: there is no input 3; this command reads 2 inputs/);
    writeFileSync(join(dir, "2cat.csv"), readFileSync(join(dir, "dist.csv")));
    const out = join(dir, "digit.arrow");
    const r2 = runCli(["match", join(dir, "survey.csv"), join(dir, "2cat.csv"), "-o", out, "--radius", "2arcsec", "-q"]);
    expect(r2.code, r2.stderr).toBe(0);
    expect((await readTable(out)).schema.fields.map((f) => f.name)).toContain("_2cat_id");
    const r3 = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--alias", "2mass,d"]);
    expect(r3.code).toBe(2);
    expect(r3.stderr).toMatch(/starting with a letter or _/);
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

  it("refuses a report that is the output, and an output or report in a missing folder, before writing anything", () => {
    const out = join(dir, "both.csv");
    const r = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--report", out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/two outputs are the same file/);
    expect(existsSync(out)).toBe(false);
    const r2 = runCli(["match", join(dir, "survey.csv"), join(dir, "dist.csv"), "-o", out, "--radius", "2arcsec", "--report", join(dir, "no-such-folder", "r.json")]);
    expect(r2.code).toBe(1);
    expect(r2.stderr).toMatch(/folder does not exist/);
    expect(r2.stderr).toMatch(/r\.json/);
    expect(existsSync(out)).toBe(false); // the table is not written when the report cannot be
  });

  it("a missing input names the file", () => {
    const r = runCli(["match", join(dir, "nope.csv"), join(dir, "dist.csv"), "-o", join(dir, "z.csv"), "--radius", "1arcsec"]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/nope\.csv/);
  });

  it("writes the cells of number-only CSV inputs as they were spelled, the same values as any other output", async () => {
    // 600 rows each (the number-only reader starts past 256 lines); B holds every other row of A, 0.36" off
    const spell = ["1.50", "+5", ".25", "007"];
    const a = ["id,ra,dec,cz"];
    const b = ["id,ra,dec,mu"];
    for (let i = 0; i < 600; i++) {
      const ra = (i * 0.6).toFixed(4);
      const dec = ((i % 100) - 50).toFixed(3);
      a.push(`${i + 1},${ra},${dec},${i % 50 === 0 ? spell[(i / 50) % 4] : 3000 + i}`);
      if (i % 2 === 0) b.push(`${i % 8 === 0 ? "007" : 9000 + i},${ra},${(Number(dec) + 1e-4).toFixed(4)},${(30 + i / 100).toFixed(2)}`);
    }
    writeFileSync(join(dir, "many-a.csv"), a.join("\n") + "\n");
    writeFileSync(join(dir, "many-b.csv"), b.join("\r\n") + "\r\n");
    const outs = ["many.csv", "many.arrow", "many.tsv"].map((f) => join(dir, f));
    for (const out of outs) {
      const r = runCli(["match", join(dir, "many-a.csv"), join(dir, "many-b.csv"), "-o", out, "--radius", "2arcsec", "--join", "outer"]);
      expect(r.code, r.stderr).toBe(0);
    }
    const lines = readFileSync(outs[0]!, "utf8").split("\n");
    expect(lines[1]).toBe("many_a_id,many_a_ra,many_a_dec,cz,many_b_id,many_b_ra,many_b_dec,mu,sep_arcsec,n_candidates,ambiguous,row_a,row_b,valid,invalid_reason,source_row");
    expect(lines[3]!.startsWith("1,0.0000,-50.000,1.50,007,0.0000,-49.9999,30.00,0.36")).toBe(true);
    expect(lines[4]!.startsWith("2,0.6000,-49.000,3001,,,,,,")).toBe(true); // no pair: B's cells empty
    // the tab-separated output formats the values (its delimiter is not the inputs')
    expect(readFileSync(outs[2]!, "utf8").split("\n")[3]!.startsWith("1\t0\t-50\t1.5\t7\t0\t-49.9999\t30\t0.36")).toBe(true);
    const [tc, ta, tt] = await Promise.all(outs.map((o) => readTable(o)));
    const cells = (t: typeof ta, name: string) => [...t!.getChild(name)!].map((v) => (typeof v === "bigint" ? Number(v) : v));
    for (const f of ta!.schema.fields) {
      expect(cells(tc, f.name), f.name).toEqual(cells(ta, f.name));
      expect(cells(tt, f.name), f.name).toEqual(cells(ta, f.name));
    }
  });
});
