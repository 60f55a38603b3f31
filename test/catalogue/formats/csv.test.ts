// Expected values follow from the invented inputs and the rules in DEVELOPERS.md "Catalogue formats"
// (our own decisions); facts of a format cite their standard beside them.
import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { parseCsv, UNITS_MARKER } from "../../../src/catalogue/formats/csv.js";
import { csvFromTable } from "../../../src/catalogue/formats/csv-write.js";
import { columnMeta, stringColumn, tableFromColumns, columnDataOf } from "../../../src/catalogue/columns.js";
import { META } from "../../../src/catalogue/meta.js";

const file = "t.csv";
const col = (t: Table, name: string) => t.getChild(name)!.toArray() as unknown[];
const cells = (t: Table, name: string) => {
  const v = t.getChild(name)!;
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};

describe("parseCsv", () => {
  it("reads RFC 4180 quoting: delimiters, doubled quotes and newlines inside quotes", () => {
    // RFC 4180 §2 rules 5-7 (quoted fields, CRLF inside quotes, "" for a quote).
    const t = parseCsv('id,name,cz\r\ng1,"a, b",100\r\ng2,"say ""hi""",200\r\ng3,"two\r\nlines",300\r\n', { file });
    expect(cells(t, "name")).toEqual(["a, b", 'say "hi"', "two\r\nlines"]);
    expect(cells(t, "cz")).toEqual([100, 200, 300]);
    // the third record starts on line 4 and spans lines 4-5
    expect(cells(t, "source_row")).toEqual([2, 3, 4]);
  });

  it("skips comment and blank lines but counts them in source_row", () => {
    const text = "# made up catalogue\n\nid,cz\n# note\ng1,10\n\n   \ng2,20\n";
    const t = parseCsv(text, { file });
    expect(t.numRows).toBe(2);
    expect(cells(t, "source_row")).toEqual([5, 8]); // common practice: 1-based line numbers
  });

  it("detects a units row above numeric columns and stores each unit as field metadata", () => {
    const t = parseCsv("id,ra,dec,cz,mag\n,deg,deg,km/s,mag\ng1,10.5,-3.25,1200,14.1\ng2,11,4,1300,15\n", { file });
    expect(t.numRows).toBe(2);
    expect(columnMeta(t, "ra").unit).toBe("deg");
    expect(columnMeta(t, "cz").unit).toBe("km/s");
    expect(columnMeta(t, "id").unit).toBeUndefined();
    expect(cells(t, "source_row")).toEqual([3, 4]);
  });

  it("does not take a first data row of words for a units row", () => {
    const t = parseCsv("name,cz\ngal1,abc\ngal2,100\ngal3,200\ngal4,300\n", { file });
    expect(t.numRows).toBe(4);
    expect(columnMeta(t, "cz").unit).toBeUndefined();
    expect(cells(t, "invalid_reason")[0]).toBe('line 2: column cz: "abc" is not a number');
  });

  it("accepts units with SI prefixes, powers and brackets (h-1.Mpc, [km/s], erg/s/cm2)", () => {
    const t = parseCsv("a,b,c\nh-1.Mpc,[km/s],erg/s/cm2\n1,2,3\n", { file });
    expect([columnMeta(t, "a").unit, columnMeta(t, "b").unit, columnMeta(t, "c").unit]).toEqual(["h-1.Mpc", "[km/s]", "erg/s/cm2"]);
  });

  it("infers int, float, bool and text columns", () => {
    const t = parseCsv("i,f,b,s,big\n1,1.5,true,x,9007199254740993\n-2,2e3,FALSE,y,1\n", { file });
    const kinds = ["i", "f", "b", "s", "big"].map((n) => columnDataOf(t, n).kind);
    expect(kinds).toEqual(["int32", "float64", "bool", "utf8", "int64"]);
    expect(cells(t, "f")).toEqual([1.5, 2000]);
    expect(cells(t, "b")).toEqual([true, false]);
    // 2^53 + 1 is kept exactly as int64 (IEEE 754 double cannot hold it)
    expect(cells(t, "big")).toEqual([9007199254740993n, 1n]);
  });

  it("keeps sexagesimal positions as text", () => {
    const t = parseCsv("ra,dec\n12 30 49.42,+12 23 28.0\n12:30:49.42,-00:12:34\n", { file });
    expect(columnDataOf(t, "ra").kind).toBe("utf8");
    expect(cells(t, "dec")).toEqual(["+12 23 28.0", "-00:12:34"]);
  });

  it("reads empty cells and null tokens as null", () => {
    const t = parseCsv("a,b,s\n1,,x\nNaN,2,--\nnull,NULL,\n4,N/A,NA\n5,6,\"\"\n", { file });
    expect(cells(t, "a")).toEqual([1, null, null, 4, 5]);
    expect(cells(t, "b")).toEqual([null, 2, null, null, 6]);
    // a quoted empty cell is an empty string in a text column
    expect(cells(t, "s")).toEqual(["x", null, null, null, ""]);
    expect(cells(t, "valid")).toEqual([true, true, true, true, true]);
  });

  it("reads a quoted empty cell in a numeric column as null, not as a bad number", () => {
    const t = parseCsv('a,s\n1,x\n"",""\n3,z\n', { file });
    expect(cells(t, "a")).toEqual([1, null, 3]);
    expect(cells(t, "s")).toEqual(["x", "", "z"]);
    expect(cells(t, "valid")).toEqual([true, true, true]);
  });

  it("keeps a mostly numeric column numeric, nulls its bad cell and flags the row", () => {
    const t = parseCsv("id,cz\ng1,100\ng2,abc\ng3,300\ng4,400\n", { file });
    expect(columnDataOf(t, "cz").kind).toBe("int32");
    expect(cells(t, "cz")).toEqual([100, null, 300, 400]);
    expect(cells(t, "valid")).toEqual([true, false, true, true]);
    expect(cells(t, "invalid_reason")[1]).toBe('line 3: column cz: "abc" is not a number');
  });

  it("keeps a row with too few fields, fills nulls and flags it with its line", () => {
    const text = "a,b,c,d,e,f,g\n" + "1,2,3,4,5,6,7\n".repeat(15) + "1,2,3,4,5\n";
    const t = parseCsv(text, { file });
    expect(t.numRows).toBe(16);
    expect(cells(t, "f")[15]).toBeNull();
    expect(cells(t, "invalid_reason")[15]).toBe("line 17: 5 fields, expected 7");
    expect(cells(t, "source_row")[15]).toBe(17);
  });

  it("keeps a row with too many fields and its extra cells in the reason", () => {
    const t = parseCsv("a,b\n1,2\n3,4,x,y\n", { file });
    expect(t.numRows).toBe(2);
    expect(cells(t, "b")).toEqual([2, 4]);
    expect(cells(t, "invalid_reason")[1]).toBe('line 3: 4 fields, expected 2 (extra: "x", "y")');
  });

  it("flags a quote that is never closed", () => {
    const t = parseCsv('a,b\n1,"open\n2,3\n', { file });
    expect(t.numRows).toBe(1);
    expect(String(cells(t, "invalid_reason")[0])).toContain("line 2: quote not closed");
  });

  it("reads tab-separated text", () => {
    const t = parseCsv("id\tcz\ng1\t10\ng2\t\n", { file: "t.tsv", delimiter: "\t" });
    expect(cells(t, "cz")).toEqual([10, null]);
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toEqual({ file: "t.tsv", format: "tsv", rows: 2, invalid: 0 });
  });

  it("names empty and repeated header cells", () => {
    const t = parseCsv("a,,a\n1,2,3\n", { file });
    expect(t.schema.fields.map((f) => f.name).slice(0, 3)).toEqual(["a", "col2", "a_2"]);
  });

  it("fails on a file of comments only, naming the file", () => {
    expect(() => parseCsv("# nothing\n\n", { file })).toThrow("t.csv: no header row");
  });

  it("records the source and the invalid count in the schema metadata", () => {
    const t = parseCsv("a\n1\nx\n2\n3\n", { file });
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toEqual({ file, format: "csv", rows: 4, invalid: 1 });
  });

  it("reads an empty table (header only)", () => {
    const t = parseCsv("a,b\n", { file });
    expect(t.numRows).toBe(0);
    expect(t.schema.fields.map((f) => f.name)).toEqual(["a", "b", "valid", "invalid_reason", "source_row"]);
  });
});

describe("csvFromTable", () => {
  const table = () =>
    tableFromColumns([
      { name: "id", kind: "utf8", values: ["g1", "a,b", 'q"q', "", "NaN", " pad", "x"], nulls: new Uint8Array([0, 0, 0, 0, 0, 0, 1]) },
      { name: "ra", kind: "float64", values: new Float64Array([0.1, 1 / 3, -0, 1e-300, 187.70593075, Infinity, 0]), nulls: new Uint8Array([0, 0, 0, 0, 0, 0, 1]), meta: { unit: "deg" } },
      { name: "f32", kind: "float32", values: new Float32Array([0.1, 1.5, 3, 4, 5, 6, 7]), nulls: new Uint8Array([0, 1, 0, 0, 0, 0, 0]) },
      { name: "n", kind: "int32", values: new Int32Array([1, -2, 3, 4, 5, 6, 0]), nulls: new Uint8Array([0, 0, 0, 0, 0, 0, 1]), meta: { unit: "km/s" } },
      { name: "k", kind: "int64", values: new BigInt64Array([9007199254740993n, 1n, 2n, 3n, 4n, 5n, 6n]) },
      { name: "ok", kind: "bool", values: new Uint8Array([1, 0, 1, 0, 1, 0, 0]), nulls: new Uint8Array([0, 0, 0, 0, 0, 0, 1]) },
    ]);

  it("writes booleans as true/false, nulls as empty fields and quotes when needed", () => {
    const text = csvFromTable(table());
    const lines = text.split("\n");
    expect(lines[0]).toBe(UNITS_MARKER);
    expect(lines[1]).toBe("id,ra,f32,n,k,ok");
    expect(lines[2]).toBe(",deg,,km/s,,");
    expect(lines[3]).toBe("g1,0.1,0.1,1,9007199254740993,true");
    expect(lines[4]).toBe('"a,b",0.3333333333333333,,-2,1,false');
    expect(lines[9]).toBe(",,7,,6,");
  });

  it("round-trips every type with nulls and units", () => {
    const t = table();
    const back = parseCsv(csvFromTable(t), { file });
    expect(back.numRows).toBe(t.numRows);
    for (const name of ["id", "ra", "n", "k", "ok"]) expect(cells(back, name)).toEqual(cells(t, name));
    // float32 is written in its shortest float32 form and read as float64
    expect(cells(back, "f32")).toEqual([0.1, null, 3, 4, 5, 6, 7]);
    expect(columnMeta(back, "ra").unit).toBe("deg");
    expect(columnMeta(back, "n").unit).toBe("km/s");
    expect(stringColumn(back, "id")[3]).toBe("");
  });

  it("round-trips a one-column table with a null", () => {
    const t = tableFromColumns([{ name: "a", kind: "float64", values: new Float64Array([1, 0, 3]), nulls: new Uint8Array([0, 1, 0]) }]);
    expect(cells(parseCsv(csvFromTable(t), { file }), "a")).toEqual([1, null, 3]);
  });

  it("reads back a column of empty strings as text (an all-valid invalid_reason stays text)", () => {
    const first = parseCsv("a\n1\n2\n", { file });
    const back = parseCsv(csvFromTable(first), { file });
    expect(columnDataOf(back, "invalid_reason").kind).toBe("utf8");
    expect(cells(back, "invalid_reason")).toEqual(["", ""]);
    expect(back.schema.fields.map((f) => f.name)).toEqual(["a", "valid", "invalid_reason", "source_row"]);
  });

  it("keeps its own bookkeeping columns when read back", () => {
    const first = parseCsv("a,b\n1,2\n3\n", { file });
    const back = parseCsv(csvFromTable(first), { file: "again.csv" });
    expect(cells(back, "source_row")).toEqual([2, 3]);
    expect(cells(back, "invalid_reason")).toEqual(["", "line 3: 1 field, expected 2"]);
    expect(cells(back, "valid")).toEqual([true, false]);
    expect(back.schema.fields.filter((f) => f.name === "valid").length).toBe(1);
    expect(col(back, "a")).toEqual(new Int32Array([1, 3]));
  });
});

describe("ECSV header (Astropy APE 6)", () => {
  const REF = join(__dirname, "../../reference/formats");
  const expected = JSON.parse(readFileSync(join(REF, "expected.json"), "utf8")) as Record<string, Record<string, { values: unknown[]; unit: string | null }>>;
  for (const name of ["mixed_space.ecsv", "mixed_comma.ecsv"]) {
    it(`reads ${name} written by astropy 5.2.1 exactly, with declared types, units and nulls`, () => {
      const t = parseCsv(readFileSync(join(REF, name), "utf8"), { file: name });
      for (const [col, { values, unit }] of Object.entries(expected[name]!)) {
        const kind = columnDataOf(t, col).kind;
        const want = kind === "int64" ? values.map((v) => (v === null ? null : BigInt(v as string))) : values;
        expect(cells(t, col), `${name} ${col}`).toEqual(want);
        expect(columnMeta(t, col).unit ?? null).toBe(unit);
      }
      expect(["id", "mag", "n16", "n64", "u8", "u16", "u32", "flag"].map((c) => columnDataOf(t, c).kind)).toEqual(["utf8", "float32", "int16", "int64", "uint8", "uint16", "uint32", "bool"]);
      expect(columnMeta(t, "cz").description).toBe("heliocentric cz");
      // 15 header comment lines (16 with the delimiter line), then the names, then the data
      expect(cells(t, "source_row")).toEqual([17, 18, 19, 20, 21].map((l) => l + (name.includes("comma") ? 1 : 0)));
    });
  }

  it("keeps text that looks like numbers as text when the header says string, and flags cells that do not fit", () => {
    const text = "# %ECSV 1.0\n# ---\n# datatype:\n# - name: id\n#   datatype: string\n# - {name: n, datatype: uint8}\n# meta: !!omap\n# - {H0: 70}\n# schema: astropy-2.0\nid n\n007 1\n008 300\n";
    const t = parseCsv(text, { file: "e.ecsv" });
    expect(cells(t, "id")).toEqual(["007", "008"]);
    expect(cells(t, "n")).toEqual([1, null]);
    expect(cells(t, "invalid_reason")).toEqual(["", 'line 12: column n: "300" is not a valid uint8']);
    expect(t.schema.metadata.get("ecsv.meta")).toBe("- {H0: 70}");
  });

  it("fails when the header row does not match the declared columns", () => {
    const text = "# %ECSV 1.0\n# ---\n# datatype:\n# - {name: a, datatype: int32}\nb\n1\n";
    expect(() => parseCsv(text, { file: "m.ecsv" })).toThrow("m.ecsv:5: ECSV header lists columns a but the header row has b");
  });
});
