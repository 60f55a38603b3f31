import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { mockCsv } from "../flow/mock-rows.js";
import { readTable } from "../../src/catalogue/io.js";

let dir: string;
let cleanup: () => void;
let input: string;
const BULK: [number, number, number] = [250, -300, 150];

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  const m = makeMockUniverse({ seed: 62, n: 1200, rMaxMpc: 120, bulkFlowGal: BULK, h0: 72 });
  input = join(dir, "cat.csv");
  writeFileSync(input, mockCsv(m));
});
afterAll(() => cleanup());

describe("peculiar flow", () => {
  it("prints h0, bulk_flow, n_used and settings as JSON and recovers the mock's H0 = 72 and bulk flow", () => {
    const r = runCli(["flow", input, "--json", "-q"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(Object.keys(j)).toEqual(["h0", "bulk_flow", "n_used", "settings"]);
    expect(Object.keys(j.h0)).toEqual(["value", "error"]);
    expect(Object.keys(j.bulk_flow)).toEqual(["vx", "vy", "vz", "amplitude", "amplitude_err", "l", "b", "sgl", "sgb", "cov"]);
    expect(j.n_used).toBe(1200);
    // the generator's input is the truth; 4 sigma bounds keep the test stable
    expect(Math.abs(j.h0.value - 72)).toBeLessThan(4 * j.h0.error);
    for (const [k, v] of [["vx", BULK[0]], ["vy", BULK[1]], ["vz", BULK[2]]] as const) {
      const i = ["vx", "vy", "vz"].indexOf(k);
      expect(Math.abs(j.bulk_flow[k] - v)).toBeLessThan(4 * Math.sqrt(j.bulk_flow.cov[i][i]));
    }
  });

  it("leaves out rows flagged outlier and cuts on --max-dist", () => {
    const flagged = join(dir, "flagged.csv");
    expect(runCli(["flag", input, "-o", flagged, "-q", "--k", "2"]).code).toBe(0);
    const all = JSON.parse(runCli(["flow", flagged, "--json", "-q"]).stdout);
    expect(all.n_used).toBeLessThan(1200);
    expect(all.settings.n_outliers_left_out).toBe(1200 - all.n_used);
    const kept = JSON.parse(runCli(["flow", flagged, "--json", "-q", "--keep-outliers"]).stdout);
    expect(kept.n_used).toBe(1200);
    const near = JSON.parse(runCli(["flow", input, "--json", "-q", "--max-dist", "60"]).stdout);
    expect(near.n_used).toBeLessThan(400);
    expect(near.settings.max_dist_mpc).toBe(60);
  });

  it("names the valid rows the fit could not take, marks flow_used as the fit did, and refuses a degenerate sky", async () => {
    // invented edits of the mock: no distance error (G00002), a negative distance (G00004), no cz (G00006)
    const lines = readFileSync(input, "utf8").split("\n");
    const edit = (id: string, f: (c: string[]) => void) => {
      const k = lines.findIndex((l) => l.startsWith(`${id},`));
      const c = lines[k]!.split(",");
      f(c);
      lines[k] = c.join(",");
    };
    edit("G00002", (c) => (c[5] = ""));
    edit("G00004", (c) => (c[4] = "-5"));
    edit("G00006", (c) => (c[3] = ""));
    const holes = join(dir, "holes.csv");
    writeFileSync(holes, lines.join("\n"));
    const out = join(dir, "holes-flow.arrow");
    const r = runCli(["flow", holes, "--json", "-o", out]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/valid rows also left out of the fit: .*1 no usable distance error \(dist_c_err_mpc\)/);
    expect(r.stderr).toMatch(/1 no usable distance \(dist_c_mpc\)/);
    expect(r.stderr).toMatch(/1 no usable redshift \(cz_cmb\)/);
    const j = JSON.parse(r.stdout);
    expect(j.n_used).toBe(1197);
    const used = (await readTable(out)).getChild("flow_used")!.toArray() as boolean[];
    expect(Array.from(used).filter(Boolean).length).toBe(1197);
    // every galaxy at Dec 0: on one plane through us, so the dipole cannot be fitted
    const flat = join(dir, "flat.csv");
    writeFileSync(flat, readFileSync(input, "utf8").replace(/^(G\d+,[^,]*),[^,]*,/gm, "$1,0,"));
    const bad = runCli(["flow", flat, "--json"]);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/the fit failed with \d+ usable rows: .*--no-dipole fits H0 alone/);
    expect(runCli(["flow", flat, "--json", "-q", "--no-dipole"]).code).toBe(0);
  });

  it("prints a text summary without --json and rejects a bad --max-dist", () => {
    const r = runCli(["flow", input, "-q"]);
    expect(r.stdout).toMatch(/^H0 = \d+\.\d\d \+- /);
    expect(r.stdout).toMatch(/bulk flow = /);
    expect(runCli(["flow", input, "--max-dist", "-5"]).code).toBe(2);
  });
});
