// The CSV reader works on bytes and the writer writes bytes in chunks; these tests hold them to the
// text rules of DEVELOPERS.md "Catalogue formats" (our own decisions) and RFC 4180 (quoting).
// Numbers are checked against ECMAScript Number()/String() (Node 20) on the same values.
import { describe, expect, it } from "vitest";
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { gzipSync } from "node:zlib";
import { writeFileSync } from "node:fs";
import { randomLcg } from "d3-random";
import type { Table } from "apache-arrow";
import { parseCsv } from "../../../src/catalogue/formats/csv.js";
import { csvBytes, csvChunks, csvFromTable } from "../../../src/catalogue/formats/csv-write.js";
import { columnDataOf, columnsOf, tableFromColumns, type ColumnData } from "../../../src/catalogue/columns.js";
import { parseTable, readTable, writeTable } from "../../../src/catalogue/io.js";
import { META } from "../../../src/catalogue/meta.js";

const file = "t.csv";
const cells = (t: Table, name: string) => {
  const v = t.getChild(name)!;
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};

describe("CSV reader on bytes", () => {
  it("reads CRLF and lone CR line ends like LF, with the same line numbers", () => {
    const lf = parseCsv("a,b\n1,x\n# c\n2,y\n", { file });
    for (const text of ["a,b\r\n1,x\r\n# c\r\n2,y\r\n", "a,b\r1,x\r# c\r2,y\r"]) {
      const t = parseCsv(text, { file });
      expect(cells(t, "a")).toEqual(cells(lf, "a"));
      expect(cells(t, "b")).toEqual(["x", "y"]);
      expect(cells(t, "source_row")).toEqual([2, 4]);
    }
  });

  it("reads the last record of a file without a trailing newline", () => {
    const t = parseCsv("a,b\n1,x\n2.5,y", { file });
    expect(cells(t, "a")).toEqual([1, 2.5]);
    expect(cells(t, "b")).toEqual(["x", "y"]);
  });

  it("reads quoted cells over several lines and counts those lines for the records after them", () => {
    const t = parseCsv('id,note,cz\ng1,"one\ntwo\r\nthree",100\ng2,"a ""q"", b",200\ng3,plain,300', { file });
    expect(cells(t, "note")).toEqual(["one\ntwo\r\nthree", 'a "q", b', "plain"]);
    expect(cells(t, "source_row")).toEqual([2, 5, 6]);
    expect(cells(t, "cz")).toEqual([100, 200, 300]);
  });

  it("trims Unicode blanks around unquoted cells as String.prototype.trim does (a number stays a number)", () => {
    const t = parseCsv("a,s\n\u00a012\u00a0,\u3000x\u3000\n 3 ,y\n", { file });
    expect(cells(t, "a")).toEqual([12, 3]);
    expect(cells(t, "s")).toEqual(["x", "y"]);
  });

  it("reads numbers in quoted cells and keeps quoted text as written", () => {
    const t = parseCsv('a,s\n"1.5"," x "\n" 2 ","y"\n', { file });
    expect(cells(t, "a")).toEqual([1.5, 2]);
    expect(cells(t, "s")).toEqual([" x ", "y"]);
  });

  it("reads numbers exactly as Number() does (ECMAScript Number(), Node 20), cell by cell", () => {
    const u = randomLcg(3);
    const texts: string[] = [];
    for (let i = 0; i < 5000; i++) {
      const x = (u() - 0.5) * 10 ** Math.floor(u() * 40 - 20);
      texts.push(i % 3 === 0 ? x.toPrecision(1 + Math.floor(u() * 20)) : i % 3 === 1 ? x.toExponential(Math.floor(u() * 18)) : String(x));
    }
    texts.push("+1", ".5", "5.", "-0", "1D3", "9007199254740993.5", "2.4703282292062328e-324", "1e-400", "inf", "-Infinity");
    const t = parseCsv("x\n" + texts.join("\n") + "\n", { file });
    const got = cells(t, "x") as number[];
    texts.forEach((s, i) => {
      const want = /^[+-]?inf/i.test(s) ? (s.startsWith("-") ? -Infinity : Infinity) : Number(s.replace(/[dD]/, "e"));
      expect(Object.is(got[i], want), `${s} -> ${got[i]}`).toBe(true);
    });
  });

  it("reads back a zero-row table it wrote without renaming its bookkeeping columns", () => {
    const t = parseCsv("ra,dec,valid,invalid_reason,source_row\n", { file });
    expect(t.numRows).toBe(0);
    expect(t.schema.fields.map((f) => f.name)).toEqual(["ra", "dec", "valid", "invalid_reason", "source_row"]);
    expect(columnDataOf(t, "valid").kind).toBe("bool");
  });

  it("keeps non-negative integers beyond int64 exact as uint64 (up to 2^64 - 1)", () => {
    const t = parseCsv("u\n18446744073709551615\n0\n9223372036854775808\n", { file });
    expect(columnDataOf(t, "u").kind).toBe("uint64");
    expect(cells(t, "u")).toEqual([18446744073709551615n, 0n, 9223372036854775808n]);
    // a negative value among them: no integer type holds both, so float64
    expect(columnDataOf(parseCsv("u\n18446744073709551615\n-1\n", { file }), "u").kind).toBe("float64");
  });

  it("keeps integer columns beyond 2^53 exact as int64 and larger ones as float64", () => {
    const t = parseCsv("a,b\n9007199254740993,123456789012345678901234567890\n-9223372036854775808,1\n", { file });
    expect(columnDataOf(t, "a").kind).toBe("int64");
    expect(cells(t, "a")).toEqual([9007199254740993n, -9223372036854775808n]);
    expect(columnDataOf(t, "b").kind).toBe("float64");
    expect(cells(t, "b")).toEqual([Number("123456789012345678901234567890"), 1]);
  });

  it("names the file, the line and the column of a bad cell", () => {
    const bytes = new TextEncoder().encode("id,cz\n# note\ng1,100\ng2,12x\ng3,300\ng4,400\n");
    const t = parseTable(bytes, "csv", { file: "survey.csv" });
    const row = (cells(t, "invalid_reason") as string[]).findIndex((r) => r !== "");
    expect(cells(t, "invalid_reason")[row]).toBe('line 4: column cz: "12x" is not a number');
    expect(cells(t, "source_row")[row]).toBe(4);
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toMatchObject({ file: "survey.csv", rows: 4, invalid: 1 });
  });

  it("skips a UTF-8 byte-order mark and reads gzip input", async () => {
    const dir = mkdtempSync(join(tmpdir(), "peculiar-csv-"));
    try {
      const text = "\ufeffid,cz\ng1,10\ng2,20\n";
      writeFileSync(join(dir, "a.csv.gz"), gzipSync(new TextEncoder().encode(text)));
      const t = await readTable(join(dir, "a.csv.gz"));
      expect(t.schema.fields[0]!.name).toBe("id");
      expect(cells(t, "cz")).toEqual([10, 20]);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("refuses a delimiter that is not one ASCII character", () => {
    expect(() => parseCsv("a§b\n1§2\n", { file, delimiter: "§" })).toThrow("delimiter must be one ASCII character");
  });
});

describe("CSV writer in chunks", () => {
  const u = randomLcg(17);
  const n = 30000;
  const texts = ["g1", "a,b", 'say "hi"', "two\nlines", "", "NaN", " pad", "pad ", "#hash", "\u00a0nbsp", "ümlaut", "tab\there", "-", "N/A"];
  const columns = (): ColumnData[] => {
    const f64 = new Float64Array(n);
    const f32 = new Float32Array(n);
    const i32 = new Int32Array(n);
    const i64 = new BigInt64Array(n);
    const b = new Uint8Array(n);
    const s = new Array<string>(n);
    const nulls = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      f64[i] = i % 7 === 0 ? -0 : (u() - 0.5) * 10 ** Math.floor(u() * 60 - 30);
      f32[i] = u() * 100;
      i32[i] = Math.floor((u() - 0.5) * 2 ** 32);
      i64[i] = BigInt(Math.floor(u() * 2 ** 53)) * 1024n - 2n ** 62n;
      b[i] = u() < 0.5 ? 1 : 0;
      s[i] = texts[i % texts.length]!;
      nulls[i] = i % 11 === 5 ? 1 : 0;
    }
    return [
      { name: "f64", kind: "float64", values: f64, nulls, meta: { unit: "deg" } },
      { name: "f32", kind: "float32", values: f32 },
      { name: "i32", kind: "int32", values: i32, nulls },
      { name: "i64", kind: "int64", values: i64 },
      { name: "ok", kind: "bool", values: b, nulls },
      { name: "s", kind: "utf8", values: s, nulls },
    ];
  };

  it("writes numbers as String(x) (ECMAScript Number::toString, Node 20), bools, nulls and quotes by the rules", () => {
    const cols = columns();
    const text = csvFromTable(tableFromColumns([cols[0]!, cols[2]!, cols[4]!]));
    const lines = text.split("\n");
    const f64 = cols[0]!.values as Float64Array;
    const i32 = cols[2]!.values as Int32Array;
    const ok = cols[4]!.values as Uint8Array;
    for (let i = 0; i < n; i++) {
      const nul = i % 11 === 5;
      const want = nul ? ",," : `${Object.is(f64[i], -0) ? "-0" : String(f64[i])},${i32[i]},${ok[i] ? "true" : "false"}`;
      if (lines[i + 3] !== want) expect(lines[i + 3]).toBe(want);
    }
    expect(lines.length).toBe(n + 4);
    expect(text.endsWith("\n")).toBe(true);
    // text cells: quoted when they hold a quote, delimiter, newline, edge blank, leading # or equal a null token
    const s = csvFromTable(tableFromColumns([{ name: "s", kind: "utf8", values: texts }, { name: "k", kind: "int32", values: new Int32Array(texts.length) }]));
    expect(s).toBe('s,k\ng1,0\n"a,b",0\n"say ""hi""",0\n"two\nlines",0\n"",0\n"NaN",0\n" pad",0\n"pad ",0\n"#hash",0\n"\u00a0nbsp",0\nümlaut,0\ntab\there,0\n-,0\n"N/A",0\n');
  });

  it("round-trips every column kind through text (write -> read)", () => {
    const t = tableFromColumns(columns());
    const back = parseCsv(csvFromTable(t), { file });
    expect(back.numRows).toBe(n);
    for (const name of ["f64", "i32", "i64", "ok", "s"]) {
      const got = cells(back, name);
      const want = cells(t, name);
      for (let i = 0; i < n; i++) if (!Object.is(got[i], want[i])) expect([name, i, got[i]]).toEqual([name, i, want[i]]);
    }
    // float32 goes out in its shortest float32 form and comes back as that float64
    const f32 = cells(t, "f32") as number[];
    expect((cells(back, "f32") as number[]).every((x, i) => Math.fround(x) === f32[i])).toBe(true);
  });

  it("hands out chunks of about 1 MiB that join into the same text, and writeTable writes those bytes", async () => {
    const t = tableFromColumns(columns());
    const parts = [...csvChunks(t)];
    expect(parts.length).toBeGreaterThan(1);
    for (const p of parts.slice(0, -1)) expect(p.length).toBeLessThanOrEqual(1 << 20);
    const joined = Buffer.concat(parts);
    expect(Buffer.compare(joined, Buffer.from(csvBytes(t)))).toBe(0);
    expect(joined.toString("utf8")).toBe(csvFromTable(t));
    const dir = mkdtempSync(join(tmpdir(), "peculiar-csv-"));
    try {
      await writeTable(t, join(dir, "out.csv"));
      expect(Buffer.compare(readFileSync(join(dir, "out.csv")), joined)).toBe(0);
      await writeTable(t, join(dir, "out.tsv"));
      expect(readFileSync(join(dir, "out.tsv"), "utf8")).toBe(csvFromTable(t, { delimiter: "\t" }));
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it("writes a table of several record batches and sliced columns like one table", () => {
    const t = tableFromColumns(columns());
    const sliced = t.slice(100, 2100);
    // the same rows copied out of Arrow into fresh columns (columnsOf), then written
    expect(csvFromTable(sliced) === csvFromTable(tableFromColumns(columnsOf(sliced)))).toBe(true);
    const two = t.slice(0, 10).concat(t.slice(10, 20));
    expect(two.batches.length).toBe(2);
    expect(csvFromTable(two) === csvFromTable(tableFromColumns(columnsOf(t.slice(0, 20))))).toBe(true);
  });
});
