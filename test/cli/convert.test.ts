import { beforeAll, afterAll, describe, expect, it } from "vitest";
import { readdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";
import { readTable } from "../../src/catalogue/io.js";
import { float64Column, stringColumn, nullMask } from "../../src/catalogue/columns.js";
import { invalidReasons, validMask, countInvalid } from "../../src/catalogue/validity.js";
import { convertPosition, separationDeg } from "../../src/sky/index.js";

// Invented rows: made-up ids and positions.
const CSV = [
  "id,ra,dec,cz",
  "-,deg,deg,km/s",
  "g1,266.404994801,-28.93617396,1284",
  "g2,abc,10,1500", // non-numeric coordinate
  "g3,10,,2000", // missing coordinate
  "g4,10,95,2100", // out-of-range angle
  "g5,359.99,0.5,2200",
  "g6,0.01,-0.5,3000,extra", // wrong field count (the reader's)
  "",
].join("\n");

const SEXA = ["id,ra,dec", "g1,12 30 49.42338,+12 23 28.0439", "g2,12 61 00,+10 00 00", "g3,00 42 44.3,-00 30 00", ""].join("\n");

// Against the domain reference values: 1e-8 deg; between our own writers and readers: exact.
const TOL_DEG = 1e-8;

let dir: string;
let cleanup: () => void;

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  writeFileSync(join(dir, "a.csv"), CSV);
  writeFileSync(join(dir, "s.csv"), SEXA);
});
afterAll(() => cleanup());

describe("peculiar convert", () => {
  it("prints its help with --help and exits 0", () => {
    const r = runCli(["convert", "--help"]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^usage: peculiar convert IN OUT/);
    expect(r.stdout).toMatch(/--add-frames/);
  });

  it("keeps every row, flags the bad ones, counts them and adds l, b, sgl, sgb in degrees", async () => {
    const r = runCli(["convert", "a.csv", "out.arrow", "--add-frames", "galactic,supergalactic"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/out\.arrow: wrote 6 rows \(2 valid, 4 invalid kept and flagged\) as arrow; added l, b, sgl, sgb \(deg\)/);
    expect(r.stderr).toMatch(/a\.csv: 6 rows, 2 valid, 4 invalid/);
    const t = await readTable(join(dir, "out.arrow"));
    expect(t.numRows).toBe(6);
    expect(stringColumn(t, "id")).toEqual(["g1", "g2", "g3", "g4", "g5", "g6"]);
    expect(Array.from(validMask(t))).toEqual([1, 0, 0, 0, 1, 0]);
    const reasons = invalidReasons(t);
    expect(reasons[1]).toMatch(/column ra: "abc" is not a number/);
    expect(reasons[2]).toBe("line 5: column dec: missing value");
    expect(reasons[3]).toBe("line 6: column dec: 95 is outside [-90, 90]");
    expect(reasons[5]).toMatch(/line 8: 5 fields, expected 4/);
    // Domain reference sheet §3.1, computed with astropy 8.0.1: ICRS (266.404994801, -28.936173960) is (l, b) = (0, 0).
    const l = float64Column(t, "l");
    const b = float64Column(t, "b");
    expect(Math.min(l[0]!, 360 - l[0]!)).toBeLessThan(TOL_DEG);
    expect(Math.abs(b[0]!)).toBeLessThan(TOL_DEG);
    const [sgl, sgb] = convertPosition(359.99, 0.5, "icrs", "supergalactic");
    expect(float64Column(t, "sgl")[4]).toBe(sgl);
    expect(float64Column(t, "sgb")[4]).toBe(sgb);
    expect(Array.from(nullMask(t, "l"))).toEqual([0, 1, 1, 1, 0, 1]);
    expect(t.schema.fields.find((f) => f.name === "b")!.metadata.get("unit")).toBe("deg");
  });

  it("reads sexagesimal positions and keeps a row with minutes >= 60 flagged", async () => {
    const r = runCli(["convert", "s.csv", "s.vot", "--add-frames", "galactic"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(join(dir, "s.vot"));
    expect(t.numRows).toBe(3);
    expect(invalidReasons(t)[1]).toBe('line 3: column ra: "12 61 00" has minutes >= 60');
    // Domain reference sheet §3.1, computed with astropy 8.0.1: (187.70593075, +12.39112331) -> (283.777739, +74.491156).
    const l = float64Column(t, "l")[0]!;
    const b = float64Column(t, "b")[0]!;
    expect(separationDeg(l, b, 283.777739, 74.491156)).toBeLessThan(1e-6);
    expect(countInvalid(t)).toBe(1);
  });

  it.each(["csv", "tsv", "vot", "fits", "arrow"])("round-trips through .%s with rows, flags and nulls intact", async (ext) => {
    const mid = `rt.${ext}`;
    const back = `rt-${ext}.csv`;
    expect(runCli(["convert", "a.csv", mid, "--add-frames", "galactic"], { cwd: dir }).code).toBe(0);
    const r = runCli(["convert", mid, back], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    const t = await readTable(join(dir, back));
    expect(t.numRows).toBe(6);
    expect(Array.from(validMask(t))).toEqual([1, 0, 0, 0, 1, 0]);
    expect(invalidReasons(t)[3]).toBe("line 6: column dec: 95 is outside [-90, 90]");
    expect(Array.from(nullMask(t, "l"))).toEqual([0, 1, 1, 1, 0, 1]);
    const direct = await readTable(join(dir, "out.arrow"));
    expect(float64Column(t, "l")[4]).toBe(float64Column(direct, "l")[4]);
  });

  it("writes the format --out-format names whatever the extension", async () => {
    const r = runCli(["convert", "a.csv", "x.dat", "--out-format", "fits"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    expect(readFileSync(join(dir, "x.dat")).subarray(0, 6).toString("latin1")).toBe("SIMPLE");
  });

  it("refuses to write over its input and leaves the input unchanged", () => {
    const before = readFileSync(join(dir, "a.csv"), "utf8");
    const mtime = statSync(join(dir, "a.csv")).mtimeMs;
    const r = runCli(["convert", "a.csv", "./a.csv"], { cwd: dir });
    expect(r.code).toBe(2);
    expect(r.stderr).toBe("peculiar convert: ./a.csv: output is the input file; inputs are never modified, choose another output\n");
    expect(readFileSync(join(dir, "a.csv"), "utf8")).toBe(before);
    expect(statSync(join(dir, "a.csv")).mtimeMs).toBe(mtime);
  });

  it("leaves no output behind when it fails", () => {
    const { dir: d, cleanup: done } = tempDir();
    try {
      writeFileSync(join(d, "nopos.csv"), "id,cz\ng1,100\n");
      writeFileSync(join(d, "broken.vot"), "<VOTABLE><RESOURCE><TABLE><FIELD name='ra'");
      const cases: [string[], number, RegExp][] = [
        [["convert", "nopos.csv", "o1.fits", "--add-frames", "galactic"], 1, /nopos\.csv: no column for ra, dec/],
        [["convert", "nopos.csv", "o2.fits", "--add-frames", "ecliptic"], 2, /unknown frame 'ecliptic'/],
        [["convert", "missing.csv", "o3.fits"], 1, /missing\.csv: no such file/],
        [["convert", "broken.vot", "o4.csv"], 1, /broken\.vot/],
        [["convert", "nopos.csv", "o5.xyz"], 1, /unknown file format/],
        [["convert", "nopos.csv", "no/such/folder/o6.csv"], 1, /cannot write/],
      ];
      for (const [args, code, msg] of cases) {
        const r = runCli(args, { cwd: d });
        expect(r.code, `${args.join(" ")}: ${r.stderr}`).toBe(code);
        // Summaries of what was read may come first; the error itself is one line, and the last.
        const errors = r.stderr.trim().split("\n").filter((x) => x.startsWith("peculiar convert:"));
        expect(errors, r.stderr).toHaveLength(1);
        expect(errors[0]).toMatch(msg);
        expect(r.stderr.trim().split("\n").at(-1)).toBe(errors[0]);
      }
      expect(readdirSync(d).sort()).toEqual(["broken.vot", "nopos.csv"]);
    } finally {
      done();
    }
  });

  it("converts a table without positions when no frames are asked for", async () => {
    writeFileSync(join(dir, "v.csv"), "id,cz\ng1,100\ng2,200\n");
    const r = runCli(["convert", "v.csv", "v.arrow"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    expect((await readTable(join(dir, "v.arrow"))).numRows).toBe(2);
  });

  it("recomputes l and b it wrote before but will not overwrite another column called l", async () => {
    expect(runCli(["convert", "out.arrow", "again.arrow", "--add-frames", "galactic"], { cwd: dir }).code).toBe(0);
    writeFileSync(join(dir, "clash.csv"), "id,ra,dec,l\ng1,10,10,7\n");
    const r = runCli(["convert", "clash.csv", "clash.arrow", "--add-frames", "galactic", "--col", "glon="], { cwd: dir });
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/already has a column l/);
  });
});
