import { describe, it, expect, beforeAll, afterAll } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { mockCsv } from "../flow/mock-rows.js";

let dir: string;
let cleanup: () => void;
let input: string;

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  const m = makeMockUniverse({ seed: 64, n: 1500, rMaxMpc: 120, clusters: [{ raDeg: 200, decDeg: 10, distMpc: 40, nMembers: 40, sigmaKmS: 300, rCoreMpc: 0.5 }] });
  input = join(dir, "cat.csv");
  writeFileSync(input, mockCsv(m));
});
afterAll(() => cleanup());

describe("peculiar recentre", () => {
  it("re-centres on a galaxy by id and gives h0_here, h0_there, the dipole, both scatters and a verdict", () => {
    const r = runCli(["recentre", input, "--on", "G00007", "--h0", "70", "--json", "-q"]);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    for (const k of ["origin", "h0_here", "h0_there", "dipole_here", "dipole_there", "residual_scatter", "n_used", "copernican", "velocity_model", "settings"]) expect(j).toHaveProperty(k);
    expect(j.origin.row).toBe(7);
    expect(j.origin.source_row).toBe(8); // its line in cat.csv (the header is line 1)
    expect(j.velocity_model).toMatch(/radial-only/);
    // a Copernican mock: the same H0 from there within 3 of the combined sigma
    expect(Math.abs(j.h0_there.value - 70)).toBeLessThan(3 * j.h0_there.error + 0.5);
    expect(["consistent", "tension"]).toContain(j.copernican.verdict);
    expect(j.copernican.delta_h0).toBeCloseTo(j.h0_there.value - j.h0_here.value, 10);
    // every other galaxy is usable; the ln D fit drops the few whose line of sight has no root
    expect(j.n_used.there).toBeGreaterThan(1480);
    expect(j.n_used.there).toBeLessThanOrEqual(1499);
  });

  it("re-centres on a point RA,DEC,DIST and on a group, with an infall profile", () => {
    const p = JSON.parse(runCli(["recentre", input, "--on", "200,10,40", "--json", "-q"]).stdout);
    expect(p.origin.kind).toBe("point");
    expect(p.origin.dist_mpc).toBe(40);
    const grouped = join(dir, "g.csv");
    expect(runCli(["groups", input, "-o", grouped, "-q"]).code).toBe(0);
    const g = JSON.parse(runCli(["recentre", grouped, "--on", "group:1", "--json", "-q", "--infall", "0,5,10,20"]).stdout);
    expect(g.origin.kind).toBe("group");
    expect(g.infall).toHaveLength(3);
    expect(g.infall[0]).toHaveProperty("v_mean_kms");
    const rich = JSON.parse(runCli(["recentre", grouped, "--on", "group:richest", "--json", "-q", "--h0", "70"]).stdout);
    expect(rich.origin.kind).toBe("group");
    expect(JSON.parse(runCli(["recentre", input, "--on", "id:G00007", "--json", "-q", "--h0", "70"]).stdout).origin.row).toBe(7);
  });

  it("says with --form major that its Copernican verdict is biased by distance errors", () => {
    const j = JSON.parse(runCli(["recentre", input, "--on", "G00007", "--h0", "70", "--json", "-q", "--form", "major"]).stdout);
    expect(j.copernican.note).toMatch(/major form's fit is biased by distance errors/);
    expect(runCli(["recentre", input, "--on", "G00007", "--h0", "70", "-q", "--form", "major"]).stdout).toMatch(/note: the major form's fit is biased/);
  });

  it("writes the re-centred table and explains a bad origin", () => {
    const out = join(dir, "rec.csv");
    expect(runCli(["recentre", input, "--on", "G00002", "--h0", "70", "-o", out, "-q"]).code).toBe(0);
    const none = runCli(["recentre", input, "--on", "NOPE", "--h0", "70"]);
    expect(none.code).toBe(1);
    expect(none.stderr).toMatch(/no row has this id/);
    expect(runCli(["recentre", input, "--on", "1,2", "--h0", "70"]).code).toBe(1);
    // a point origin is checked as a catalogue position is: RA 400 is not wrapped silently
    const far = runCli(["recentre", input, "--on", "400,10,50", "--h0", "70"]);
    expect(far.code).toBe(2);
    expect(far.stderr).toMatch(/RA in \[0, 360\)/);
    expect(runCli(["recentre", input]).code).toBe(2);
    expect(runCli(["recentre", input, "--on", "10,95,40"]).code).toBe(2);
  });
});
