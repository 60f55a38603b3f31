import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { readTable } from "../../src/catalogue/io.js";
import { float64Column, stringColumn } from "../../src/catalogue/columns.js";
import { META, readJsonMeta } from "../../src/catalogue/meta.js";
import { validMask } from "../../src/catalogue/validity.js";

// An invented catalogue: made-up ids, a galaxy at (187.70593075, +12.39112331), one at the
// worked case of domain reference §5.1 (given in the CMB frame there), and three bad rows.
const CSV = `id,ra,dec,cz,e_cz,mu,e_mu
g1,187.70593075,12.39112331,1284,20,31.0,0.3
g2,150.0,20.0,7000,30,35.0,0.4
g3,10.0,-30.0,,,34.0,0.4
g4,20.0,95.0,5000,20,34.5,0.4
g5,200.0,-10.0,9000,20,,
`;

let tmp: ReturnType<typeof tempDir>;
let input: string;

beforeAll(() => {
  buildOnce();
  tmp = tempDir();
  input = join(tmp.dir, "galaxies.csv");
  writeFileSync(input, CSV);
});
afterAll(() => tmp.cleanup());

describe("peculiar velocities", () => {
  it("writes every row with the added columns and prints the counts", async () => {
    const out = join(tmp.dir, "v.arrow");
    const r = runCli(["velocities", input, "-o", out]);
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/5 rows, 2 with a peculiar velocity/);
    expect(r.stderr).toMatch(/1 flagged: no usable redshift \(cz\)/);
    expect(r.stderr).toMatch(/1 flagged: no usable distance \(mu\)/);
    const t = await readTable(out);
    expect(t.numRows).toBe(5);
    expect(stringColumn(t, "id")).toEqual(["g1", "g2", "g3", "g4", "g5"]);
    expect(Array.from(validMask(t))).toEqual([1, 1, 0, 0, 0]);
    // Domain reference §4.3 (astropy 8.0.1): cz_CMB = 1613.604 km/s for the galaxy at (187.70593075, +12.39112331)
    // with cz_helio = 1284 km/s, exact form, Planck 2018 dipole.
    expect(Math.abs(float64Column(t, "cz_cmb")[0]! - 1613.604)).toBeLessThan(2e-3);
    const s = readJsonMeta<Record<string, unknown>>(t, META.settings)!;
    expect(s).toMatchObject({ step: "velocities", frame: "cmb", apex: "planck2018", estimator: "exact", h0: 70, omegaM: 0.3, form: "exact" });
  });

  it("takes the input frame, H0, Omega_m and the estimator from the flags", async () => {
    const out = join(tmp.dir, "v2.csv");
    const r = runCli(["velocities", input, "-o", out, "--input-frame", "cmb", "--frame", "cmb", "--h0", "70", "--omega-m", "0.3", "--estimator", "exact"]);
    expect(r.code).toBe(0);
    const t = await readTable(out);
    // Domain reference §5.1: mu = 35 at cz_CMB = 7000 km/s gives 118.61 km/s (Davis & Scrimgeour 2014 estimator).
    expect(Math.abs(float64Column(t, "v_pec")[1]! - 118.61)).toBeLessThan(0.006);
    const lin = join(tmp.dir, "v3.arrow");
    expect(runCli(["velocities", input, "-o", lin, "--input-frame", "cmb", "--estimator", "linear", "--h0", "75", "--omega-m", "0.25"]).code).toBe(0);
    const t3 = await readTable(lin);
    // D_L = 100 Mpc is fixed by mu = 35, so v = c z - H0 D_C(z_cos) with z_cos from the H0 = 75 model:
    // a larger H0 gives a larger H0 D_C and a smaller velocity than the H0 = 70 exact value.
    expect(float64Column(t3, "v_pec")[1]).toBeLessThan(float64Column(t, "v_pec")[1]!);
    expect(readJsonMeta<Record<string, unknown>>(t3, META.settings)).toMatchObject({ estimator: "linear", h0: 75, omegaM: 0.25 });
  });

  it("writes the settings as VOTable INFO elements", () => {
    const out = join(tmp.dir, "v.vot");
    expect(runCli(["velocities", input, "-o", out, "--frame", "lg", "--apex", "km1996"]).code).toBe(0);
    const xml = readFileSync(out, "utf8");
    expect(xml).toMatch(/<INFO name="estimator" value="exact"/);
    expect(xml).toMatch(/<INFO name="apex" value="km1996"/);
    expect(xml).toMatch(/<INFO name="h0" value="70"/);
  });

  it("lists every apex with its citation in --help", () => {
    const r = runCli(["velocities", "--help"]);
    expect(r.code).toBe(0);
    for (const name of ["planck2018", "fixsen1996", "yts1977", "km1996", "sbd2010"]) expect(r.stdout).toContain(name);
    expect(r.stdout).toMatch(/Planck 2018 I, A&A 641, A1/);
    expect(r.stdout).toMatch(/Schoenrich, Binney & Dehnen 2010/);
  });

  it("rejects bad option values with a usage error", () => {
    const out = join(tmp.dir, "bad.csv");
    let r = runCli(["velocities", input, "-o", out, "--frame", "galactocentric"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/bad value for --frame.*helio, lsr, gsr, lg, cmb/);
    r = runCli(["velocities", input, "-o", out, "--apex", "yts1977"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/unknown apex for frame cmb/);
    r = runCli(["velocities", input, "-o", out, "--h0", "-3"]);
    expect(r.code).toBe(2);
    r = runCli(["velocities", input]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/-o OUT/);
  });

  it("names the file and the missing role when there is no distance column", () => {
    const noDist = join(tmp.dir, "nodist.csv");
    writeFileSync(noDist, "id,ra,dec,cz\nq1,10,10,3000\n");
    const r = runCli(["velocities", noDist, "-o", join(tmp.dir, "x.csv")]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/nodist\.csv/);
    expect(r.stderr).toMatch(/--col mu=NAME/);
  });

  it("uses a column named with --col", async () => {
    const other = join(tmp.dir, "named.csv");
    writeFileSync(other, "id,ra,dec,vh,dm,dm_e\nq1,150,20,7000,35,0.4\n");
    const out = join(tmp.dir, "named-out.csv");
    const r = runCli(["velocities", other, "-o", out, "--col", "cz=vh", "--col", "mu=dm", "--col", "mu_err=dm_e", "--input-frame", "cmb"]);
    expect(r.code).toBe(0);
    const t = await readTable(out);
    expect(Math.abs(float64Column(t, "v_pec")[0]! - 118.61)).toBeLessThan(0.006);
  });
});
