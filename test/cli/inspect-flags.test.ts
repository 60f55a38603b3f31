import { describe, expect, it } from "vitest";
import { parseCatalogueFlags, overridesFor, loadForCommand } from "../../src/cli/catalogue-flags.js";
import type { Io } from "../../src/cli/command.js";
import { PeculiarError } from "../../src/errors.js";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { tempDir } from "../cli-helpers.js";

function memoryIo(): Io & { lines: string[] } {
  const lines: string[] = [];
  const sink = { write: () => true } as unknown as NodeJS.WritableStream;
  return { stdout: sink, stderr: sink, progress: false, quiet: false, note: (l) => lines.push(l), lines };
}

describe("parseCatalogueFlags", () => {
  it("parses repeated --col ROLE=NAME, per-input N:ROLE=NAME, --unit, --format, --out-format and --hdu", () => {
    const f = parseCatalogueFlags({ col: ["ra=RA_h", "2:cz=vel", "z="], unit: ["ra=h"], format: "CSV", "out-format": "fits", hdu: "2" }, 2);
    expect(f.overrides).toEqual({ ra: "RA_h", z: "" });
    expect(overridesFor(f, 1)).toEqual({ ra: "RA_h", z: "" });
    expect(overridesFor(f, 2)).toEqual({ ra: "RA_h", z: "", cz: "vel" });
    expect(f.units).toEqual({ ra: "h" });
    expect(f.format).toBe("csv");
    expect(f.outFormat).toBe("fits");
    expect(f.hdu).toBe(2);
    expect(parseCatalogueFlags({ hdu: "DIST" }).hdu).toBe("DIST");
  });

  it("keeps '=' inside a column name", () => {
    expect(parseCatalogueFlags({ col: ["id=a=b"] }).overrides).toEqual({ id: "a=b" });
  });

  it.each([
    [{ col: ["ra"] }, /--col ra: expected ROLE=NAME/],
    [{ col: ["speed=v"] }, /unknown role 'speed'/],
    [{ col: ["0:ra=x"] }, /numbered from 1/],
    [{ col: ["2:ra=x"] }, /there is no input 2; this command reads one input/],
    [{ unit: ["ra"] }, /--unit ra: expected ROLE=UNIT/],
    [{ format: "xls" }, /unknown format "xls"/],
  ])("rejects %j as a usage error", (values, msg) => {
    try {
      parseCatalogueFlags(values);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(PeculiarError);
      expect((e as PeculiarError).code).toBe("usage");
      expect((e as PeculiarError).message).toMatch(msg);
    }
  });
});

describe("loadForCommand", () => {
  it("prints the role choice, the notes and the counts on stderr", async () => {
    const { dir, cleanup } = tempDir();
    try {
      const file = join(dir, "a.csv");
      writeFileSync(file, "RAJ2000,DEJ2000,cz\nh,deg,km/s\n12.5,10,1000\n25,10,1000\n");
      const io = memoryIo();
      const cat = await loadForCommand(file, parseCatalogueFlags({}), io, { require: ["ra", "dec", "cz"] });
      expect(cat.raDeg[0]).toBe(187.5);
      expect(io.lines[0]).toBe(`${file}: ra <- RAJ2000 (h), dec <- DEJ2000 (deg), cz <- cz (km/s)`);
      expect(io.lines.at(-1)).toBe(`${file}: 2 rows, 1 valid, 1 invalid`);
    } finally {
      cleanup();
    }
  });

  it("says how to aim a --col at one input when a shared one does not fit input 2", async () => {
    const { dir, cleanup } = tempDir();
    try {
      const file = join(dir, "b.csv");
      writeFileSync(file, "ra,dec\n1,2\n");
      const flags = parseCatalogueFlags({ col: ["cz=vhel"] });
      await expect(loadForCommand(file, flags, memoryIo(), { index: 2 })).rejects.toThrow(
        `${file}: --col cz=vhel: no such column; expected one of ra, dec, valid, invalid_reason, source_row (input 2; --col N:ROLE=NAME gives a column for input N only)`,
      );
    } finally {
      cleanup();
    }
  });
});
