import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { writeFileSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { mockCsv } from "../flow/mock-rows.js";

let dir: string;
let cleanup: () => void;
let input: string;
let truthBlunders: number[];

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  const m = makeMockUniverse({ seed: 61, n: 800, rMaxMpc: 120, blunderFraction: 0.05, blunderMagRange: [2, 3] });
  truthBlunders = [];
  for (let i = 0; i < m.n; i++) if (m.isBlunder[i]) truthBlunders.push(i);
  input = join(dir, "cat.csv");
  // one row without a distance: kept, not scored
  writeFileSync(input, mockCsv(m).replace(/\n(G00003,[^,]*,[^,]*,[^,]*),[^,]*,[^,\n]*/, "\n$1,,"));
});
afterAll(() => cleanup());

describe("peculiar flag", () => {
  it("adds outlier, outlier_score and outlier_reason, keeps every row and finds the 2-3 mag blunders", () => {
    const out = join(dir, "flagged.csv");
    const r = runCli(["flag", input, "-o", out, "--json", "-q"]);
    expect(r.code).toBe(0);
    const summary = JSON.parse(r.stdout);
    expect(summary.n_rows).toBe(800);
    expect(summary.n_unscored).toBe(1);
    expect(summary.settings.k).toBe(3.5);
    expect(summary.settings.sigma_star).toBe(250);
    const lines = readFileSync(out, "utf8").trim().split("\n").filter((l) => !l.startsWith("#"));
    const header = lines[0]!.split(",");
    const body = lines.slice(1).filter((l) => /^G\d/.test(l));
    expect(body.length).toBe(800);
    const col = header.indexOf("outlier");
    expect(col).toBeGreaterThan(0);
    expect(header).toContain("outlier_score");
    expect(header).toContain("outlier_reason");
    const flagged = body.map((l, i) => [i, l.split(",")[col]] as const).filter(([, v]) => v === "true").map(([i]) => i);
    // 2-3 mag blunders are 10-15 sigma for 20% errors: an ideal detector sees all of them
    const found = truthBlunders.filter((i) => flagged.includes(i)).length;
    expect(found / truthBlunders.length).toBeGreaterThanOrEqual(0.9);
    expect(flagged.length - found).toBeLessThanOrEqual(8); // <= 1% false flags
    expect(body[2]).toMatch(/not scored: no usable distance \(dist_c_mpc\)/);
  });

  it("names why a row with a distance but no distance error is not scored, and refuses a fit it cannot make", () => {
    const noErr = join(dir, "noerr.csv");
    writeFileSync(noErr, readFileSync(input, "utf8").replace(/\n(G00005,[^\n]*),[^,\n]*\n/, "\n$1,\n"));
    const out = join(dir, "noerr-flagged.csv");
    expect(runCli(["flag", noErr, "-o", out, "-q"]).code).toBe(0);
    expect(readFileSync(out, "utf8").split("\n").find((l) => l.startsWith("G00005,"))).toMatch(/not scored: no usable distance error \(dist_c_err_mpc\)/);
    // ten copies of one galaxy: no flow can be fitted, so nothing can be scored
    const same = join(dir, "same.csv");
    const row = readFileSync(input, "utf8").split("\n")[1]!.split(",").slice(1).join(",");
    writeFileSync(same, ["id,ra,dec,cz_cmb,dist_c_mpc,dist_c_err_mpc", ...Array.from({ length: 10 }, (_, i) => `S${i},${row}`)].join("\n") + "\n");
    const r = runCli(["flag", same, "-o", join(dir, "same-flagged.csv")]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/the flow fit that outliers are scored against failed with \d+ usable rows/);
  });

  it("rejects a bad option value and a missing output with a usage error", () => {
    expect(runCli(["flag", input, "-o", join(dir, "x.csv"), "--method", "median"]).code).toBe(2);
    expect(runCli(["flag", input]).code).toBe(2);
    const r = runCli(["flag", input, "-o", join(dir, "y.csv"), "--k", "-1"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--k/);
  });

  it("names the missing column when the velocities step has not run", () => {
    const bare = join(dir, "bare.csv");
    writeFileSync(bare, "id,ra,dec,cz\nA1,10,20,3000\n");
    const r = runCli(["flag", bare, "-o", join(dir, "z.csv")]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/cz_cmb/);
  });
});
