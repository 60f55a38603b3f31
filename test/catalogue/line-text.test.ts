// The lines a CSV table keeps (line-text.ts) and the writer that copies them (csv-write.ts rowText):
// our own rules (DEVELOPERS.md "Catalogue formats"). The reference is the writer without copies:
// what a copied line reads back as must equal what the formatted values read back as.
import { describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { tableFromColumns, columnDataOf, withColumns } from "../../src/catalogue/columns.js";
import { flagRows, invalidReasons } from "../../src/catalogue/validity.js";
import { csvChunks } from "../../src/catalogue/formats/csv-write.js";
import { parseCsvBytes } from "../../src/catalogue/formats/csv.js";
import { parseTable, readTable } from "../../src/catalogue/io.js";
import { keptLines, leadingRowText, lineTextOf, type RowText } from "../../src/catalogue/line-text.js";
import { readTableAhead } from "../../src/catalogue/read-ahead.js";
import { buildOnce, ROOT, tempDir } from "../cli-helpers.js";

const enc = new TextEncoder();
const dec = new TextDecoder();

function rng(seed: number): () => number {
  return () => (seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 4294967296;
}

// spellings a reader accepts and a writer would spell otherwise ("1.50" is written "1.5")
const SPELLINGS = ["+5", ".5", "5.", "1.50", "-0", "1E3", "007", "2.5e-3", "1e400", "0.000001"];

/** A number-only table text of `rows` rows (id, ra, dec, cz), with the variations asked for, and its data lines as written. */
function numbers(seed: number, rows: number, o: { crlf?: boolean; comments?: boolean; nulls?: boolean; tab?: boolean; fortran?: boolean } = {}) {
  const u = rng(seed);
  const d = o.tab ? "\t" : ",";
  const nl = o.crlf ? "\r\n" : "\n";
  let text = ["id", "ra", "dec", "cz"].join(d) + nl;
  const lines: string[] = [];
  for (let i = 0; i < rows; i++) {
    if (o.comments && u() < 0.02) text += u() < 0.5 ? `# a note${nl}` : nl;
    const row = [String(i + 1), String(u() * 360), u() < 0.1 ? SPELLINGS[Math.floor(u() * SPELLINGS.length)]! : String(u() * 180 - 90), (u() * 3e4).toFixed(Math.floor(u() * 3))];
    if (o.nulls && u() < 0.05) row[3] = "";
    if (o.fortran && i === rows - 3) row[1] = "1.5d2";
    lines.push(row.join(d));
    text += row.join(d) + nl;
  }
  return { text, lines, delimiter: d };
}

const FILE_COLUMNS = ["id", "ra", "dec", "cz"];

function read(text: string, delimiter = ","): ReturnType<typeof parseTable> {
  return parseTable(enc.encode(text), delimiter === "\t" ? "tsv" : "csv", { file: "t.csv", delimiter });
}

function csv(table: ReturnType<typeof parseTable>, rowText: RowText[] = [], delimiter = ","): string {
  return [...csvChunks(table, { delimiter, rowText })].map((c) => dec.decode(c)).join("");
}

/** The values of every column of a CSV text as read back by our reader, for comparison. */
function valuesOf(text: string, delimiter = ",") {
  const p = parseCsvBytes(enc.encode(text), { file: "back.csv", delimiter, generalRules: true });
  return p.columns.map((c) => ({ name: c.name, nulls: c.nulls ? Array.from(c.nulls) : null, values: Array.from(c.values as ArrayLike<unknown>, (v) => (typeof v === "number" ? (Object.is(v, -0) ? "-0" : String(v)) : String(v))) }));
}

describe("the lines a CSV table keeps", () => {
  for (const [what, o] of [
    ["plain lines", {}],
    ["CRLF line ends and empty cells", { crlf: true, nulls: true }],
    ["comment and empty lines between rows", { comments: true }],
    ["tabs", { tab: true }],
  ] as const) {
    it(`keeps each row's line as written, for ${what}`, () => {
      const t = numbers(20261202 + what.length, 2000, o);
      const table = read(t.text, t.delimiter);
      const text = lineTextOf(table, FILE_COLUMNS);
      expect(text).toBeDefined();
      expect(text!.delimiter).toBe(t.delimiter.charCodeAt(0));
      expect(text!.starts.length).toBe(2000);
      for (let i = 0; i < 2000; i++) expect(dec.decode(text!.bytes.subarray(text!.starts[i]!, text!.ends[i]!))).toBe(t.lines[i]);
    });
  }

  it("keeps them for a small file too, and none for a file with a text column or a number with a Fortran exponent", () => {
    expect(lineTextOf(read(numbers(1, 100).text), FILE_COLUMNS)?.starts.length).toBe(100);
    const withText = numbers(2, 2000).text.replace("id,ra,dec,cz\n1,", "id,ra,dec,cz\nx,");
    expect(lineTextOf(read(withText), FILE_COLUMNS)).toBeUndefined();
    expect(lineTextOf(read(numbers(3, 2000, { fortran: true }).text), FILE_COLUMNS)).toBeUndefined();
  });

  it("keeps none once a file column is the bookkeeping source_row", () => {
    const t = numbers(4, 2000).text.replace("id,ra,dec,cz", "source_row,ra,dec,cz");
    const table = read(t);
    expect(lineTextOf(table, ["ra", "dec", "cz"])).toBeUndefined();
    expect(lineTextOf(table, ["source_row", "ra", "dec", "cz"])).toBeUndefined();
  });

  it("are found only for the file's columns in the file's order, and not in a table rebuilt from copies", () => {
    const table = read(numbers(5, 2000).text);
    expect(lineTextOf(table, FILE_COLUMNS)).toBeDefined();
    expect(lineTextOf(table, ["id", "ra", "dec"])).toBeUndefined();
    expect(lineTextOf(table, ["id", "dec", "ra", "cz"])).toBeUndefined();
    const copy = tableFromColumns(table.schema.fields.map((f) => columnDataOf(table, f.name)));
    expect(lineTextOf(copy, FILE_COLUMNS)).toBeUndefined();
    expect(lineTextOf(table.slice(1), FILE_COLUMNS)).toBeUndefined();
    expect(keptLines(table)?.names).toEqual(FILE_COLUMNS);
    expect(keptLines(copy)).toBeUndefined();
    // a block for an output that starts with the table's columns: only where the file's columns lead
    const rows = Int32Array.from([3, 1, -1]);
    expect(leadingRowText(table, rows)).toEqual([{ first: 0, count: 4, text: lineTextOf(table, FILE_COLUMNS), rows }]);
    expect(leadingRowText(copy, rows)).toEqual([]);
    expect(leadingRowText(table.selectAt([1, 0, 2, 3, 4, 5, 6]), rows)).toEqual([]);
  });

  it("stay with a table whose rows are flagged (the file columns are carried over, not copied)", () => {
    const table = read(numbers(7, 2000).text);
    const bad = new Uint8Array(2000);
    bad[5] = 1;
    const flagged = flagRows(table, bad, Object.assign([], { 5: "a reason of a later step" }));
    expect(invalidReasons(flagged)[5]).toBe("a reason of a later step");
    expect(lineTextOf(flagged, FILE_COLUMNS)).toBe(lineTextOf(table, FILE_COLUMNS));
    // a replaced file column takes the lines away
    const c = columnDataOf(table, "cz");
    expect(lineTextOf(withColumns(table, [{ ...c, values: (c.values as Float64Array).map((x) => x + 1) }]), FILE_COLUMNS)).toBeUndefined();
  });
});

describe("the CSV writer copying lines", () => {
  const t = numbers(6, 3000, { nulls: true, comments: true });
  const table = read(t.text);
  const text = lineTextOf(table, FILE_COLUMNS)!;
  // rows in another order, some absent (-1)
  const order = Int32Array.from({ length: 3000 }, (_, i) => (i % 17 === 5 ? -1 : (i * 7) % 3000));
  // the file's columns gathered in that order, and a column of our own after them
  const picked = tableFromColumns([
    ...FILE_COLUMNS.map((name) => {
      const c = columnDataOf(table, name);
      const values = Array.from(order, (r) => (r < 0 ? 0 : (c.values as ArrayLike<number>)[r]!));
      const nulls = Uint8Array.from(order, (r) => (r < 0 || c.nulls?.[r] ? 1 : 0));
      return { ...c, values: c.kind === "int32" ? Int32Array.from(values) : Float64Array.from(values), nulls };
    }),
    { name: "extra", kind: "float64" as const, values: Float64Array.from(order, (r) => r / 3) },
  ]);
  const block: RowText = { first: 0, count: 4, text, rows: order };

  it("writes each row's cells as its line spelled them, and empty cells for an absent row", () => {
    const out = csv(picked, [block]).split("\n");
    for (let i = 0; i < 3000; i++) {
      expect(out[i + 1]).toBe(`${order[i]! < 0 ? ",,," : t.lines[order[i]!]},${order[i]! / 3}`);
    }
    expect(t.lines.some((l) => SPELLINGS.some((s) => l.includes(`,${s},`)))).toBe(true);
  });

  it("gives a text that reads back as the same values as the text it formats", () => {
    expect(valuesOf(csv(picked, [block]))).toEqual(valuesOf(csv(picked)));
  });

  it("formats the values instead where the delimiter differs, the block overlaps another or lacks rows", () => {
    const formatted = csv(picked, [], "\t");
    expect(csv(picked, [block], "\t")).toBe(formatted);
    expect(csv(picked, [{ ...block, rows: order.subarray(1) }])).toBe(csv(picked));
    const other: RowText = { ...block, first: 2, count: 2 };
    expect(csv(picked, [block, other])).toBe(csv(picked, [block]));
    const one = tableFromColumns([columnDataOf(picked, "id")]);
    expect(csv(one, [{ ...block, count: 1 }])).toBe(csv(one));
  });
});

describe("lines read on a helper thread", () => {
  it("come back with the table (the read job moves them)", async () => {
    buildOnce();
    const { dir } = tempDir();
    const f = join(dir, "big.csv");
    const t = numbers(7, 2000);
    writeFileSync(f, t.text);
    const there = await readTableAhead(f, {}, { workerUrl: pathToFileURL(join(ROOT, "dist", "helper-worker.js")), minBytes: 0 });
    const here = await readTable(f);
    const a = lineTextOf(there, FILE_COLUMNS)!;
    const b = lineTextOf(here, FILE_COLUMNS)!;
    expect(a).toBeDefined();
    expect(Array.from(a.starts)).toEqual(Array.from(b.starts));
    expect(Array.from(a.ends)).toEqual(Array.from(b.ends));
    expect(dec.decode(a.bytes)).toBe(dec.decode(b.bytes));
  }, 120_000);
});
