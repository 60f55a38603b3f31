import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { readTable } from "../../src/catalogue/io.js";
import { float64Column, stringColumn } from "../../src/catalogue/columns.js";

let dir = "";
let cleanup = () => {};

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir("peculiar-dedupe-"));
  // invented rows: x1-x2-x3 a chain 1.08" apart in RA (0.0003 deg * cos 20 deg, small-angle rule), x1-x3 2.16"
  writeFileSync(
    join(dir, "dups.csv"),
    ["id,ra,dec,cz", "x1,10.0,20.0,5000", "x2,10.0003,20.0,5010", "x3,10.0006,20.0,5020", "x4,10.0006,20.0,9000", "x5,100,-89.99999,100", "x6,280,-89.99999,120", "x7,bad,0,1"].join("\n") + "\n",
  );
});
afterAll(() => cleanup());

describe("peculiar dedupe", () => {
  it("links rows transitively, keeps every row and adds dup_group and dup_size", async () => {
    const out = join(dir, "d.csv");
    const r = runCli(["dedupe", join(dir, "dups.csv"), "-o", out, "--radius", "1.2arcsec"]);
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(out);
    expect(t.numRows).toBe(7);
    // x1..x4 one object (x4 duplicates x3's position), x5-x6 across the south pole, x7 has no position
    expect(Array.from(float64Column(t, "dup_group"))).toEqual([0, 0, 0, 0, 1, 1, 2]);
    expect(Array.from(float64Column(t, "dup_size"))).toEqual([4, 4, 4, 4, 2, 2, 1]);
  });

  it("--max-dv keeps the different-velocity row apart", async () => {
    const out = join(dir, "dv.csv");
    const r = runCli(["dedupe", join(dir, "dups.csv"), "-o", out, "--radius", "1.2arcsec", "--max-dv", "100"]);
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(out);
    expect(Array.from(float64Column(t, "dup_group"))).toEqual([0, 0, 0, 1, 2, 2, 3]);
    expect(r.stderr).toMatch(/2 links rejected by --max-dv/);
  });

  it("--collapse writes one row per object: its first valid row, with the rows it stands for", async () => {
    const out = join(dir, "c.csv");
    const r = runCli(["dedupe", join(dir, "dups.csv"), "-o", out, "--radius", "1.2arcsec", "--collapse"]);
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(out);
    expect(stringColumn(t, "id")).toEqual(["x1", "x5", "x7"]);
    expect(stringColumn(t, "dup_rows")).toEqual(["2;3;4;5", "6;7", "8"]);
    expect(Array.from(float64Column(t, "dup_size"))).toEqual([4, 2, 1]);
  });

  it("needs a radius", () => {
    const r = runCli(["dedupe", join(dir, "dups.csv"), "-o", join(dir, "n.csv")]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--radius/);
  });
});
