import { beforeAll, afterAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { buildOnce, runCli, tempDir } from "../cli-helpers.js";

// Invented rows: made-up ids and positions.
const BAD_KINDS_CSV = [
  "id,ra,dec,cz",
  "-,h:m:s,d:m:s,km/s",
  "g1,12 30 49.4,+12 23 28,1284",
  "g2,abc,+10 00 00,1500", // non-numeric coordinate
  "g3,10 00 00,,2000", // missing coordinate
  "g4,10 00 00,+95 00 00,2100", // out-of-range angle
  "g5,12 61 00,+10 00 00,2200", // minutes >= 60
  "g6,11 00 00,-00 30 00,3000,extra", // wrong field count (the reader's)
  "",
].join("\n");

let dir: string;
let cleanup: () => void;

beforeAll(() => {
  buildOnce();
  ({ dir, cleanup } = tempDir());
  writeFileSync(join(dir, "a.csv"), BAD_KINDS_CSV);
});
afterAll(() => cleanup());

describe("peculiar inspect", () => {
  it("prints its help with --help and exits 0", () => {
    const r = runCli(["inspect", "--help"]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^usage: peculiar inspect FILE/);
    expect(r.stdout).toMatch(/--col ROLE=NAME/);
  });

  it("shows the schema, roles, units and row counts", () => {
    const r = runCli(["inspect", join(dir, "a.csv")], { cwd: dir });
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/a\.csv \(csv\): 6 rows, 1 valid, 5 invalid/);
    expect(r.stdout).toMatch(/^ {2}name +type +unit +ucd +nulls +range +role$/m);
    expect(r.stdout).toMatch(/^ {2}ra +utf8 +h:m:s +0 +ra$/m);
    expect(r.stdout).toMatch(/^ {2}dec +utf8 +d:m:s +1 +dec$/m);
    expect(r.stdout).toMatch(/^ {2}cz +int32 +km\/s +0 +1284 \.\. 3000 +cz$/m);
    expect(r.stdout).toMatch(/roles: id <- id, ra <- ra \(h\), dec <- dec \(deg\), cz <- cz \(km\/s\)/);
  });

  it("lists each kind of bad row as file:line: reason", () => {
    const r = runCli(["inspect", "a.csv"], { cwd: dir });
    const lines = r.stdout.split("\n");
    expect(lines).toContain('  a.csv:4: column ra: "abc" is not an angle');
    expect(lines).toContain("  a.csv:5: column dec: missing value");
    expect(lines).toContain('  a.csv:6: column dec: "+95 00 00" is outside [-90, 90]');
    expect(lines).toContain('  a.csv:7: column ra: "12 61 00" has minutes >= 60');
    expect(lines).toContain('  a.csv:8: 5 fields, expected 4 (extra: "extra")');
  });

  it("shows the first 20 invalid rows and then how many more", () => {
    const rows = ["id,ra,dec"];
    for (let i = 0; i < 25; i++) rows.push(`x${i},10,${91 + i}`);
    writeFileSync(join(dir, "many.csv"), rows.join("\n") + "\n");
    const r = runCli(["inspect", "many.csv"], { cwd: dir });
    expect(r.stdout.match(/^ {2}many\.csv:\d+: /gm)).toHaveLength(20);
    expect(r.stdout).toMatch(/\.\.\. and 5 more invalid rows/);
  });

  it("prints one JSON object with --json, listing every invalid row", () => {
    const r = runCli(["inspect", "a.csv", "--json"], { cwd: dir });
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j).toMatchObject({ file: "a.csv", format: "csv", rows: 6, valid: 1, invalid: 5, positions: "radec" });
    expect(j.roles).toEqual({ id: "id", ra: "ra", dec: "dec", cz: "cz" });
    expect(j.invalidRows.map((x: { line: number }) => x.line)).toEqual([4, 5, 6, 7, 8]);
    expect(j.columns.find((c: { name: string }) => c.name === "dec")).toMatchObject({ type: "utf8", unit: "d:m:s", nulls: 1, role: "dec", min: null });
    expect(j.columns.find((c: { name: string }) => c.name === "cz")).toMatchObject({ type: "int32", min: 1284, max: 3000 });
  });

  it("takes --col overrides and reports an override naming a missing column with the columns it has", () => {
    writeFileSync(join(dir, "odd.csv"), "name,p,q\nx1,10,20\n");
    const ok = runCli(["inspect", "odd.csv", "--col", "ra=p", "--col", "dec=q", "--json"], { cwd: dir });
    expect(JSON.parse(ok.stdout).roles).toEqual({ id: "name", ra: "p", dec: "q" });
    const bad = runCli(["inspect", "odd.csv", "--col", "ra=alpha"], { cwd: dir });
    expect(bad.code).toBe(1);
    expect(bad.stderr).toBe("peculiar inspect: odd.csv: --col ra=alpha: no such column; expected one of name, p, q, valid, invalid_reason, source_row\n");
  });

  it("fails with one line and no stack for a missing file, an empty file and an unknown role", () => {
    const missing = runCli(["inspect", "nope.csv"], { cwd: dir });
    expect(missing.code).toBe(1);
    expect(missing.stderr).toBe("peculiar inspect: nope.csv: no such file\n");
    writeFileSync(join(dir, "empty.csv"), "");
    const empty = runCli(["inspect", "empty.csv"], { cwd: dir });
    expect(empty.code).toBe(1);
    expect(empty.stderr.trim().split("\n")).toHaveLength(1);
    const role = runCli(["inspect", "a.csv", "--col", "speed=cz"], { cwd: dir });
    expect(role.code).toBe(2);
    expect(role.stderr).toMatch(/^peculiar inspect: --col speed=cz: unknown role 'speed'; expected one of id, ra, dec/);
    const flag = runCli(["inspect", "a.csv", "--bogus"], { cwd: dir });
    expect(flag.code).toBe(2);
    expect(flag.stderr.trim().split("\n")).toHaveLength(1);
    const none = runCli(["inspect"], { cwd: dir });
    expect(none.code).toBe(2);
  });

  it.each(["tsv", "vot", "fits", "arrow"])("inspects a .%s file written by convert with the same counts and lines", (ext) => {
    const out = `a.${ext}`;
    expect(runCli(["convert", "a.csv", out], { cwd: dir }).code).toBe(0);
    const r = runCli(["inspect", out, "--json"], { cwd: dir });
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j).toMatchObject({ rows: 6, valid: 1, invalid: 5 });
    expect(j.roles).toMatchObject({ ra: "ra", dec: "dec", cz: "cz" });
    expect(j.invalidRows.map((x: { line: number }) => x.line)).toEqual([4, 5, 6, 7, 8]);
    expect(j.invalidRows.map((x: { row: number }) => x.row)).toEqual([2, 3, 4, 5, 6]);
    // CSV/TSV keep no schema metadata, so only binary formats remember the first file's name.
    if (ext === "tsv") return;
    expect(j.origin).toBe("a.csv");
    const text = runCli(["inspect", out], { cwd: dir }).stdout;
    expect(text).toContain(`  ${out} row 4 (a.csv:6): column dec: "+95 00 00" is outside [-90, 90]`);
  });

  it.each(["arrow", "csv"])("names a match output's rows as its own (.%s): its source_row counts the joined rows, not lines of A", (ext) => {
    const out = `m.${ext}`;
    expect(runCli(["match", "a.csv", "a.csv", "-o", out, "--radius", "1arcsec", "--join", "left", "--alias", "p,q", "-q"], { cwd: dir }).code).toBe(0);
    const j = JSON.parse(runCli(["inspect", out, "--json"], { cwd: dir }).stdout);
    expect(j.origin).toBe(out);
    expect(j.invalidRows.map((x: { line: number }) => x.line)).toEqual([2, 3, 4, 5, 6]);
    const text = runCli(["inspect", out], { cwd: dir }).stdout;
    expect(text).toContain(`  ${out} row 4 (source row 4): p: line 6: column dec: "+95 00 00" is outside [-90, 90]`);
  });

  it("finds roles from the UCDs of a VOTable written by astropy", () => {
    // astropy 5.2.1 format fixture (test/reference/make_format_fixtures.py): ra has UCD pos.eq.ra;meta.main.
    const r = runCli(["inspect", "test/reference/formats/mixed_tabledata.vot", "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.columns.find((c: { name: string }) => c.name === "ra")).toMatchObject({ ucd: "pos.eq.ra;meta.main", unit: "deg", role: "ra" });
    expect(j.roles).toMatchObject({ ra: "ra", dec: "dec", cz: "cz" });
  });

  it("gives the exact range of a 64-bit integer column (a double would round 2^63 - 1 up)", () => {
    writeFileSync(join(dir, "big.csv"), "k\n-4611686018427387907\n9223372036854775807\n5\n");
    const j = JSON.parse(runCli(["inspect", "big.csv", "--json"], { cwd: dir }).stdout);
    expect(j.columns[0]).toMatchObject({ name: "k", type: "int64", min: "-4611686018427387907", max: "9223372036854775807" });
  });

  it("reads the input in the format --format names", () => {
    writeFileSync(join(dir, "t.dat"), "ra\tdec\n10\t20\n");
    const r = runCli(["inspect", "t.dat", "--format", "tsv", "--json"], { cwd: dir });
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ format: "tsv", rows: 1, valid: 1 });
  });
});
