import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { readTable } from "../../src/catalogue/io.js";
import { float64Column } from "../../src/catalogue/columns.js";
import { getRoles } from "../../src/catalogue/meta.js";

/**
 * A matched table of an invented survey and two distance catalogues "a" and "b" (seed 77,
 * 1500 rows): a measures 60 % with 0.35 mag, b 50 % with 0.25 mag and a zero point +0.25 mag.
 * The truth (+0.25) is the generator's input.
 */
function matchedCsv(): string {
  const src = randomLcg(77);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);
  const lines = ["id,a_mu,a_mu_err,b_mu,b_mu_err"];
  for (let i = 0; i < 1500; i++) {
    const t = 32 + 5 * u();
    const a = u() < 0.6 ? [(t + 0.35 * g()).toFixed(4), "0.35"] : ["", ""];
    const b = u() < 0.5 ? [(t + 0.25 + 0.25 * g()).toFixed(4), "0.25"] : ["", ""];
    lines.push([`m${i + 1}`, ...a, ...b].join(","));
  }
  return lines.join("\n") + "\n";
}

let tmp: ReturnType<typeof tempDir>;
let input: string;

beforeAll(() => {
  buildOnce();
  tmp = tempDir();
  input = join(tmp.dir, "matched.csv");
  writeFileSync(input, matchedCsv());
});
afterAll(() => tmp.cleanup());

describe("peculiar combine", () => {
  it("reports the offset as JSON on stdout and writes the combined table", async () => {
    const out = join(tmp.dir, "combined.arrow");
    const r = runCli(["combine", input, "-o", out, "--mu", "a_mu,b_mu", "--apply"]);
    expect(r.code).toBe(0);
    const rep = JSON.parse(r.stdout) as { reference: string; applied: boolean; offsets: { column: string; offsetMag: number; offsetErrMag: number; nShared: number }[] };
    expect(rep.reference).toBe("a_mu");
    expect(rep.applied).toBe(true);
    const b = rep.offsets.find((o) => o.column === "b_mu")!;
    expect(b.nShared).toBeGreaterThan(350);
    expect(Math.abs(b.offsetMag - 0.25)).toBeLessThan(3 * b.offsetErrMag);
    expect(r.stderr).toMatch(/b_mu - a_mu: 0\.2\d+ \+- 0\.0\d+ mag from \d+ shared/);
    const t = await readTable(out);
    expect(t.numRows).toBe(1500);
    expect(getRoles(t).mu).toBe("mu");
    const nd = float64Column(t, "n_dist");
    expect(nd.some((x) => x === 2)).toBe(true);
  });

  it("writes the JSON to --report and takes the reference by alias", () => {
    const out = join(tmp.dir, "c2.csv");
    const rep = join(tmp.dir, "offsets.json");
    const r = runCli(["combine", input, "-o", out, "--mu", "a_mu,b_mu", "--reference", "b", "--report", rep]);
    expect(r.code).toBe(0);
    expect(r.stdout).toBe("");
    const j = JSON.parse(readFileSync(rep, "utf8")) as { reference: string; applied: boolean; offsets: { column: string; offsetMag: number }[] };
    expect(j.reference).toBe("b_mu");
    expect(j.applied).toBe(false);
    expect(j.offsets.find((o) => o.column === "a_mu")!.offsetMag).toBeLessThan(-0.15);
  });

  it("hands the combined modulus to velocities even when the input moduli stay in the table", () => {
    const small = join(tmp.dir, "small.csv");
    // Invented rows: q1 has both catalogues, q2 only b; cz is heliocentric.
    writeFileSync(small, "id,ra,dec,cz,dm,e_dm,b_mu,b_mu_err\nq1,150,20,7000,35.0,0.3,35.2,0.3\nq2,160,10,6000,,,34.8,0.2\n");
    const comb = join(tmp.dir, "small-comb.arrow");
    expect(runCli(["combine", small, "-o", comb, "--mu", "dm,b_mu", "--err", "e_dm,b_mu_err", "--apply"]).code).toBe(0);
    const r = runCli(["velocities", comb, "-o", join(tmp.dir, "small-v.csv")]);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/distance from mu column mu\)/);
  });

  it("says what is wrong with the options", () => {
    const out = join(tmp.dir, "bad.csv");
    let r = runCli(["combine", input, "-o", out]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--mu/);
    r = runCli(["combine", input, "-o", out, "--mu", "a_mu,z_mu"]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/matched\.csv column z_mu: no such modulus column/);
    r = runCli(["combine", input, "-o", out, "--mu", "a_mu,b_mu", "--err", "a_mu_err"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--err names 1 columns for 2/);
    r = runCli(["combine", input, "-o", input, "--mu", "a_mu,b_mu"]);
    expect(r.code).not.toBe(0);
  });
});
