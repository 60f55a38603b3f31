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

  it("writes the cells of a number-only CSV input as spelled there, with and without --collapse, the same values as Arrow", async () => {
    // 600 rows (the number-only reader starts past 256 lines): every 10th row repeated 0.36" away
    const lines = ["id,ra,dec,cz"];
    for (let i = 0; i < 600; i++) {
      const ra = ((i % 10 === 1 ? i - 1 : i) * 0.5).toFixed(4);
      lines.push(`${i + 1},${ra},${i % 10 === 1 ? "+10.0001" : "10.00"},${i % 25 === 0 ? "1.50" : 3000 + i}`);
    }
    writeFileSync(join(dir, "many.csv"), lines.join("\n") + "\n");
    for (const collapse of [[], ["--collapse"]]) {
      const outs = ["many-out.csv", "many-out.arrow"].map((f) => join(dir, f));
      for (const out of outs) {
        const r = runCli(["dedupe", join(dir, "many.csv"), "-o", out, "--radius", "2arcsec", ...collapse]);
        expect(r.code, r.stderr).toBe(0);
      }
      const rows = (await import("node:fs")).readFileSync(outs[0]!, "utf8").split("\n");
      expect(rows[0]!.startsWith("id,ra,dec,cz,")).toBe(true);
      expect(rows.some((l) => l.startsWith("1,0.0000,10.00,1.50,"))).toBe(true);
      if (!collapse.length) expect(rows.some((l) => l === `2,0.0000,+10.0001,3001,true,"",3,0,2`)).toBe(true);
      const [tc, ta] = await Promise.all(outs.map((o) => readTable(o)));
      expect(tc!.numRows).toBe(collapse.length ? 540 : 600);
      expect(ta!.numRows).toBe(tc!.numRows);
      // dup_rows is text that looks like numbers, which CSV reads back as numbers and flags "2;3" (a known loss of CSV)
      for (const f of ta!.schema.fields) if (!["dup_rows", "valid", "invalid_reason"].includes(f.name)) expect([...tc!.getChild(f.name)!], f.name).toEqual([...ta!.getChild(f.name)!]);
    }
  });
});
