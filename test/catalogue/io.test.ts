// Expected values follow from the invented inputs and the rules in DEVELOPERS.md "Catalogue formats".
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { mkdtempSync, readdirSync, rmSync, writeFileSync, symlinkSync, existsSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { tableToIPC } from "apache-arrow";
import { readTable, writeTable, formatFromPath, assertNotSameFile, parseFormatName } from "../../src/catalogue/io.js";
import { tableFromColumns, columnMeta, float64Column } from "../../src/catalogue/columns.js";
import { META } from "../../src/catalogue/meta.js";
import { PeculiarError } from "../../src/errors.js";
import { writeFileAtomic } from "../../src/catalogue/atomic.js";

let dir = "";
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), "peculiar-io-"));
  // invented rows: one good, one with a bad number, one short
  writeFileSync(join(dir, "mixed-bad.csv"), "id,cz\nobj-1,1200\nobj-2,abc\nobj-3,1300\nobj-4,1400\nobj-5\n");
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const cells = (t: Table, name: string) => {
  const v = t.getChild(name)!;
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};
const sample = () =>
  tableFromColumns(
    [
      { name: "id", kind: "utf8", values: ["g1", "g2", "g3"], nulls: new Uint8Array([0, 0, 1]) },
      { name: "cz", kind: "float64", values: new Float64Array([1200.5, 0, 3e4]), nulls: new Uint8Array([0, 1, 0]), meta: { unit: "km/s", ucd: "spect.dopplerVeloc.opt" } },
      { name: "n", kind: "int32", values: new Int32Array([1, 2, 3]) },
    ],
    new Map([[META.settings, JSON.stringify({ step: "velocities", H0: 70 })]]),
  );

describe("formatFromPath", () => {
  it("maps each accepted extension, in any case, to its format", () => {
    const cases: [string, string][] = [
      ["a.csv", "csv"], ["a.TSV", "tsv"], ["a.tab", "tsv"], ["a.txt", "tsv"], ["a.vot", "votable"], ["a.votable", "votable"],
      ["a.xml", "votable"], ["a.fits", "fits"], ["a.FIT", "fits"], ["a.fts", "fits"], ["a.arrow", "arrow"], ["a.feather", "arrow"],
      ["a.ipc", "arrow"], ["a.arrows", "arrow"],
    ];
    for (const [p, f] of cases) expect(formatFromPath(p)).toBe(f);
  });

  it("rejects an unknown extension naming the file and the accepted extensions", () => {
    expect(() => formatFromPath("dir/cat.xlsx")).toThrow(/^dir\/cat\.xlsx: unknown file format "\.xlsx".*\.csv .*\.arrows/);
    expect(() => formatFromPath("cat")).toThrow("cat: unknown file format (no extension)");
  });

  it("parses a format name given by the user", () => {
    expect(parseFormatName("VOTable")).toBe("votable");
    expect(() => parseFormatName("xls")).toThrow(PeculiarError);
  });
});

describe("readTable and writeTable", () => {
  it("round-trips CSV, TSV, Arrow (file and stream), VOTable and FITS through the disk", async () => {
    for (const name of ["rt.csv", "rt.tsv", "rt.arrow", "rt.arrows", "rt.vot", "rt.xml", "rt.fits"]) {
      const path = join(dir, name);
      await writeTable(sample(), path);
      const back = await readTable(path);
      expect(cells(back, "id")).toEqual(["g1", "g2", null]);
      expect(cells(back, "cz")).toEqual([1200.5, null, 3e4]);
      expect(columnMeta(back, "cz").unit).toBe("km/s");
      expect(cells(back, "valid")).toEqual([true, true, true]);
      const src = JSON.parse(back.schema.metadata.get(META.source)!);
      expect(src.file).toBe(path);
    }
  });

  it("keeps our own bookkeeping columns, once, through every format", async () => {
    const first = await readTable(join(dir, "mixed-bad.csv"));
    for (const ext of ["csv", "tsv", "vot", "fits", "arrow"]) {
      const path = join(dir, `again.${ext}`);
      await writeTable(first, path);
      const back = await readTable(path);
      expect(back.schema.fields.map((f) => f.name), ext).toEqual(first.schema.fields.map((f) => f.name));
      for (const name of ["valid", "invalid_reason", "source_row", "id", "cz"]) expect(cells(back, name), `${ext} ${name}`).toEqual(cells(first, name));
    }
  });

  it("keeps Arrow schema metadata, field metadata and our bookkeeping columns", async () => {
    const path = join(dir, "keep.arrow");
    const first = await readTable(join(dir, "rt.csv"));
    await writeTable(first, path);
    const back = await readTable(path);
    expect(cells(back, "source_row")).toEqual(cells(first, "source_row"));
    const src = JSON.parse(back.schema.metadata.get(META.source)!);
    expect(src).toMatchObject({ file: path, format: "arrow", rows: 3, invalid: 0, previous: { file: join(dir, "rt.csv"), format: "csv" } });
    const arrowFirst = sample();
    await writeTable(arrowFirst, join(dir, "meta.arrow"));
    const m = await readTable(join(dir, "meta.arrow"));
    expect(JSON.parse(m.schema.metadata.get(META.settings)!)).toEqual({ step: "velocities", H0: 70 });
    expect(columnMeta(m, "cz").ucd).toBe("spect.dopplerVeloc.opt");
  });

  it("reads an Arrow stream written by apache-arrow under a file extension", async () => {
    const path = join(dir, "stream.arrow");
    writeFileSync(path, tableToIPC(sample(), "stream"));
    expect(cells(await readTable(path), "n")).toEqual([1, 2, 3]);
  });

  it("writes the values of a sliced table, not those before the slice", async () => {
    const path = join(dir, "slice.csv");
    await writeTable(sample().slice(1), path);
    const back = await readTable(path);
    expect(cells(back, "n")).toEqual([2, 3]);
    expect(Array.from(float64Column(sample().slice(2), "cz"))).toEqual([3e4]);
  });

  it("reads a .txt table separated by tabs, commas or runs of blanks", async () => {
    const cases: [string, string][] = [
      ["tabs.txt", "# made up\nid\tcz\ng1\t10\ng2\t20\n"],
      ["commas.txt", "id,cz\ng1,10\ng2,20\n"],
      ["blanks.txt", "  id    cz\n  g1    10  \n  g2    20\n"],
    ];
    for (const [name, text] of cases) {
      writeFileSync(join(dir, name), text);
      const t = await readTable(join(dir, name));
      expect(cells(t, "id"), name).toEqual(["g1", "g2"]);
      expect(cells(t, "cz"), name).toEqual([10, 20]);
      expect(cells(t, "valid"), name).toEqual([true, true]);
    }
  });

  it("reads and writes gzip-compressed files of every format (.csv.gz, .fits.gz, ...)", async () => {
    for (const name of ["z.csv.gz", "z.vot.gz", "z.fits.gz", "z.arrow.gz", "z.txt.gz"]) {
      const path = join(dir, name);
      await writeTable(sample(), path);
      const raw = readFileSync(path);
      expect([raw[0], raw[1]], name).toEqual([0x1f, 0x8b]); // RFC 1952 gzip magic
      const back = await readTable(path);
      expect(cells(back, "cz"), name).toEqual([1200.5, null, 3e4]);
    }
    expect(formatFromPath("a.fits.gz")).toBe("fits");
  });

  it("fails on cut gzip data naming the file", async () => {
    const path = join(dir, "cut.csv.gz");
    writeFileSync(path, readFileSync(join(dir, "z.csv.gz")).subarray(0, 20));
    await expect(readTable(path)).rejects.toThrow(`${path}: truncated or damaged gzip data`);
  });

  it("honours an explicit format over the extension", async () => {
    const path = join(dir, "odd.dat");
    await writeTable(sample(), path, { format: "csv" });
    expect(readFileSync(path, "utf8").split("\n")[1]).toBe("id,cz,n");
    expect((await readTable(path, { format: "csv" })).numRows).toBe(3);
  });
});

describe("bad files", () => {
  it("fails on a missing file naming it", async () => {
    await expect(readTable(join(dir, "nope.csv"))).rejects.toThrow(`${join(dir, "nope.csv")}: no such file`);
  });

  it("fails on an empty file naming it", async () => {
    const path = join(dir, "empty.csv");
    writeFileSync(path, "");
    await expect(readTable(path)).rejects.toThrow(`${path}: empty file`);
    writeFileSync(join(dir, "blank.csv"), "\n \n");
    await expect(readTable(join(dir, "blank.csv"))).rejects.toThrow("empty file");
  });

  it("fails on a folder", async () => {
    await expect(readTable(dir, { format: "csv" })).rejects.toThrow("is a folder");
  });

  it("fails on an unknown format before reading", async () => {
    const path = join(dir, "x.xlsx");
    writeFileSync(path, "a,b\n");
    await expect(readTable(path)).rejects.toThrow("unknown file format");
  });

  it("fails on binary data read as CSV, naming the file", async () => {
    const path = join(dir, "binary.csv");
    await writeTable(sample(), join(dir, "bin.fits"));
    writeFileSync(path, readFileSync(join(dir, "bin.fits")));
    await expect(readTable(path)).rejects.toThrow(`${path}: binary data, not a text table`);
  });

  it("reads a UTF-16 text table with its byte-order mark", async () => {
    const path = join(dir, "utf16.csv");
    const text = "id,cz\nobj-é,10\n";
    const le = new Uint8Array(2 + text.length * 2);
    le[0] = 0xff;
    le[1] = 0xfe;
    for (let i = 0; i < text.length; i++) new DataView(le.buffer).setUint16(2 + 2 * i, text.charCodeAt(i), true);
    writeFileSync(path, le);
    const t = await readTable(path);
    expect(cells(t, "id")).toEqual(["obj-é"]);
    expect(cells(t, "cz")).toEqual([10]);
  });

  it("fails on bytes that are not Arrow", async () => {
    const path = join(dir, "bad.arrow");
    writeFileSync(path, "id,cz\n1,2\n");
    await expect(readTable(path)).rejects.toThrow(`${path}: not`);
  });
});

describe("bad FITS and VOTable files through readTable", () => {
  it("fails on a truncated FITS file with the byte counts", async () => {
    const path = join(dir, "cut.fits");
    await writeTable(sample(), join(dir, "whole.fits"));
    const whole = readFileSync(join(dir, "whole.fits"));
    writeFileSync(path, whole.subarray(0, whole.length - 2880 + 10)); // headers and 10 bytes of the data block
    await expect(readTable(path)).rejects.toThrow(`${path}: truncated: header says`);
  });

  it("fails on truncated XML naming the file", async () => {
    const path = join(dir, "cut.vot");
    await writeTable(sample(), join(dir, "whole.vot"));
    const text = readFileSync(join(dir, "whole.vot"), "utf8");
    writeFileSync(path, text.slice(0, text.length / 2));
    await expect(readTable(path)).rejects.toThrow(`${path}: malformed XML`);
  });

  it("passes the HDU choice to the FITS reader", async () => {
    await expect(readTable(join(dir, "whole.fits"), { hdu: 0 })).rejects.toThrow("HDU 0 primary is not a BINTABLE");
    expect((await readTable(join(dir, "whole.fits"), { hdu: "CATALOGUE" })).numRows).toBe(3);
  });
});

describe("atomic writes", () => {
  it("leaves no file behind when the folder does not exist", async () => {
    const path = join(dir, "missing-folder", "out.csv");
    await expect(writeTable(sample(), path)).rejects.toThrow(`${path}: cannot write: folder does not exist`);
    expect(existsSync(join(dir, "missing-folder"))).toBe(false);
  });

  it("leaves no file and no temporary behind when the format is unknown", async () => {
    const sub = join(dir, "sub-unknown");
    rmSync(sub, { recursive: true, force: true });
    await import("node:fs").then((fs) => fs.mkdirSync(sub));
    await expect(writeTable(sample(), join(sub, "out.xlsx"))).rejects.toThrow("unknown file format");
    expect(readdirSync(sub)).toEqual([]);
  });

  it("replaces an existing output in one step and leaves no temporary file", async () => {
    const sub = join(dir, "sub-replace");
    await import("node:fs").then((fs) => fs.mkdirSync(sub));
    const path = join(sub, "out.csv");
    writeFileSync(path, "old\n");
    await writeTable(sample(), path);
    expect(readdirSync(sub)).toEqual(["out.csv"]);
    expect(readFileSync(path, "utf8")).toContain("g1");
  });

  it("writes chunks made while earlier ones are written, in order, and leaves nothing when making them fails", async () => {
    const sub = join(dir, "sub-chunks");
    await import("node:fs").then((fs) => fs.mkdirSync(sub));
    // 40 chunks of 300 000 bytes, some made while the one before is still being written
    const chunk = (k: number) => new Uint8Array(300_000).fill(65 + (k % 26));
    async function* chunks(failAt = -1) {
      for (let k = 0; k < 40; k++) {
        if (k === failAt) throw new Error("formatting failed");
        yield chunk(k);
        if (k % 7 === 0) await new Promise((r) => setImmediate(r));
      }
    }
    await writeFileAtomic(join(sub, "big.bin"), chunks());
    const got = readFileSync(join(sub, "big.bin"));
    expect(got.length).toBe(40 * 300_000);
    for (let k = 0; k < 40; k++) expect(got[k * 300_000]).toBe(65 + (k % 26));
    await expect(writeFileAtomic(join(sub, "cut.bin"), chunks(30))).rejects.toThrow("formatting failed");
    expect(readdirSync(sub)).toEqual(["big.bin"]);
  });

  it("writeTable refuses to write over the input it is told about, and leaves it as it was", async () => {
    const input = join(dir, "in.csv");
    writeFileSync(input, "a\n1\n");
    await expect(writeTable(sample(), input, { input })).rejects.toThrow(`${input}: output is the input file`);
    expect(readFileSync(input, "utf8")).toBe("a\n1\n");
  });

  it("refuses to write over the input, also through a link", () => {
    const input = join(dir, "rt.csv");
    expect(() => assertNotSameFile(input, input)).toThrow("output is the input file");
    expect(() => assertNotSameFile(input, join(dir, ".", "rt.csv"))).toThrow(PeculiarError);
    const link = join(dir, "link.csv");
    symlinkSync(input, link);
    expect(() => assertNotSameFile(input, link)).toThrow("output is the input file");
    expect(() => assertNotSameFile(input, join(dir, "other.csv"))).not.toThrow();
  });
});
