// Expected values follow from the invented inputs and the rules in DEVELOPERS.md "Catalogue formats"
// (our own decisions); facts of a format cite their standard beside them.
import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { parseVOTable, VOTABLE_INFOS, VOTABLE_PARAMS } from "../../../src/catalogue/formats/votable.js";
import { votableFromTable } from "../../../src/catalogue/formats/votable-write.js";
import { columnDataOf, columnMeta, tableFromColumns, type ColumnData } from "../../../src/catalogue/columns.js";
import { META } from "../../../src/catalogue/meta.js";

const REF = join(__dirname, "../../reference/formats");
const expected = JSON.parse(readFileSync(join(REF, "expected.json"), "utf8")) as Record<string, Record<string, { values: unknown[]; unit: string | null }>>;
const enc = (s: string) => new TextEncoder().encode(s);
const cells = (t: Table, name: string) => {
  const v = t.getChild(name);
  if (!v) throw new Error(`no column ${name}`);
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};
const wrap = (fields: string, data: string, extra = "") =>
  `<?xml version="1.0"?>\n<VOTABLE version="1.4" xmlns="http://www.ivoa.net/xml/VOTable/v1.3"><RESOURCE>${extra}<TABLE>${fields}<DATA>${data}</DATA></TABLE></RESOURCE></VOTABLE>`;

describe("VOTable reader against astropy 5.2.1 fixtures (test/reference/make_format_fixtures.py)", () => {
  for (const fmt of ["tabledata", "binary2", "binary"]) {
    it(`reads mixed_${fmt}.vot exactly, nulls included`, () => {
      const file = `mixed_${fmt}.vot`;
      const t = parseVOTable(new Uint8Array(readFileSync(join(REF, file))), { file });
      for (const [name, { values, unit }] of Object.entries(expected[file]!)) {
        const kind = columnDataOf(t, name).kind;
        let want = kind === "int64" ? values.map((v) => (v === null ? null : BigInt(v as string))) : values;
        // astropy 5.2.1 reads a masked char cell back as "" (no mask on strings); we read "" as null (VOTable 1.4 Recommendation, TABLEDATA: empty TD is null)
        if (kind === "utf8") want = want.map((v) => (v === "" ? null : v));
        expect(cells(t, name), `${file} ${name}`).toEqual(want);
        expect(columnMeta(t, name).unit ?? null, `${file} ${name} unit`).toBe(unit);
      }
      expect(columnMeta(t, "ra").ucd).toBe("pos.eq.ra;meta.main");
      expect(columnMeta(t, "cz").description).toBe("heliocentric cz");
      expect(["id", "ra", "mag", "cz", "n16", "n64", "u8", "flag"].map((n) => columnDataOf(t, n).kind)).toEqual(["utf8", "float64", "float32", "int32", "int16", "int64", "uint8", "bool"]);
      expect(JSON.parse(t.schema.metadata.get(META.source)!)).toEqual({ file, format: "votable", rows: 5, invalid: 0 });
    });
  }
});

/** BINARY2 bytes for hand-built rows: flag bytes then big-endian cells (VOTable 1.4 Recommendation, BINARY2; from memory). */
function b64(bytes: number[]): string {
  return btoa(String.fromCharCode(...bytes));
}

describe("VOTable reader on hand-built files (VOTable 1.4 Recommendation)", () => {
  it("reads BINARY2 null bits, most significant bit first, across two flag bytes", () => {
    // 9 short fields -> 2 flag bytes; row 1: field 1 and field 9 null; row 2: field 8 null (VOTable 1.4 Recommendation, BINARY2 null flags; from memory)
    const fields = Array.from({ length: 9 }, (_, k) => `<FIELD name="f${k + 1}" datatype="short"/>`).join("");
    const row = (flags: [number, number], base: number) => [flags[0], flags[1], ...Array.from({ length: 9 }, (_, k) => [0, base + k]).flat()];
    const bytes = [...row([0b10000000, 0b10000000], 10), ...row([0b00000001, 0], 20)];
    const t = parseVOTable(enc(wrap(fields, `<BINARY2><STREAM encoding="base64">${b64(bytes)}</STREAM></BINARY2>`)), { file: "b2.vot" });
    expect(cells(t, "f1")).toEqual([null, 20]);
    expect(cells(t, "f2")).toEqual([11, 21]);
    expect(cells(t, "f8")).toEqual([17, null]);
    expect(cells(t, "f9")).toEqual([null, 28]);
  });

  it("reads BINARY variable-length char, unicodeChar, fixed arrays, booleans and bits", () => {
    const fields =
      '<FIELD name="s" datatype="char" arraysize="*"/><FIELD name="u" datatype="unicodeChar" arraysize="2"/>' +
      '<FIELD name="v" datatype="double" arraysize="2" unit="Mpc"/><FIELD name="ok" datatype="boolean"/><FIELD name="bits" datatype="bit" arraysize="3"/>' +
      '<FIELD name="n" datatype="int"><VALUES null="-1"/></FIELD>';
    const dbl = (x: number) => {
      const b = new Uint8Array(8);
      new DataView(b.buffer).setFloat64(0, x, false);
      return Array.from(b);
    };
    const rows = [
      [0, 0, 0, 3, 0x61, 0x62, 0x63, 0x3c9, 0x00, 0x00, ...dbl(1.5), ...dbl(NaN), 0x54, 0b10100000, 0, 0, 0, 7],
      [0, 0, 0, 0, 0x00, 0x41, 0x00, 0x00, ...dbl(-2), ...dbl(3), 0x3f, 0b01000000, 0xff, 0xff, 0xff, 0xff],
    ].map((r) => r.flatMap((x) => (x > 0xff ? [x >> 8, x & 0xff] : [x])));
    const t = parseVOTable(enc(wrap(fields, `<BINARY><STREAM encoding="base64">${b64(rows.flat())}</STREAM></BINARY>`)), { file: "b.vot" });
    expect(cells(t, "s")).toEqual(["abc", null]);
    expect(cells(t, "u")).toEqual(["ω", "A"]);
    expect(cells(t, "v_0")).toEqual([1.5, -2]);
    expect(cells(t, "v_1")).toEqual([null, 3]);
    expect(columnMeta(t, "v_1").unit).toBe("Mpc");
    expect(cells(t, "ok")).toEqual([true, null]);
    expect(cells(t, "bits_0")).toEqual([true, false]);
    expect(cells(t, "bits_1")).toEqual([false, true]);
    expect(cells(t, "bits_2")).toEqual([true, false]);
    expect(cells(t, "n")).toEqual([7, null]);
  });

  it("reads TABLEDATA with VALUES null, hex integers, NaN, a namespace prefix, and keeps PARAM and INFO", () => {
    const xml = `<?xml version="1.0"?>
<vot:VOTABLE xmlns:vot="http://www.ivoa.net/xml/VOTable/v1.3" version="1.3"><vot:RESOURCE><vot:INFO name="QUERY_STATUS" value="OK">all fine</vot:INFO>
<vot:TABLE><vot:PARAM name="epoch" datatype="double" value="2000" unit="yr"/>
<vot:FIELD name="n" datatype="int"><vot:VALUES null="-99"/></vot:FIELD><vot:FIELD ID="x" datatype="float"/><vot:FIELD name="ok" datatype="boolean"/>
<vot:DATA><vot:TABLEDATA><vot:TR><vot:TD>0x1F</vot:TD><vot:TD>NaN</vot:TD><vot:TD>t</vot:TD></vot:TR>
<vot:TR><vot:TD>-99</vot:TD><vot:TD>+Inf</vot:TD><vot:TD>?</vot:TD></vot:TR></vot:TABLEDATA></vot:DATA></vot:TABLE></vot:RESOURCE></vot:VOTABLE>`;
    const t = parseVOTable(enc(xml), { file: "ns.vot" });
    expect(cells(t, "n")).toEqual([31, null]);
    expect(cells(t, "x")).toEqual([null, Infinity]);
    expect(cells(t, "ok")).toEqual([true, null]);
    expect(JSON.parse(t.schema.metadata.get(VOTABLE_PARAMS)!)).toEqual([{ name: "epoch", datatype: "double", value: "2000", unit: "yr" }]);
    expect(JSON.parse(t.schema.metadata.get(VOTABLE_INFOS)!)).toEqual([{ name: "QUERY_STATUS", value: "OK", text: "all fine" }]);
  });

  it("keeps a row with the wrong number of TD and a bad value, flagged with row and line", () => {
    const xml = wrap('<FIELD name="a" datatype="int"/><FIELD name="b" datatype="double"/>', "<TABLEDATA>\n<TR><TD>1</TD><TD>2</TD></TR>\n<TR><TD>3</TD></TR>\n<TR><TD>x</TD><TD>4</TD><TD>5</TD></TR>\n</TABLEDATA>");
    const t = parseVOTable(enc(xml), { file: "r.vot" });
    expect(t.numRows).toBe(3);
    expect(cells(t, "b")).toEqual([2, null, 4]);
    expect(cells(t, "valid")).toEqual([true, false, false]);
    expect(cells(t, "invalid_reason")[1]).toBe("row 2 (line 4): 1 TD, expected 2");
    expect(cells(t, "invalid_reason")[2]).toBe('row 3 (line 5): 3 TD, expected 2 (extra: "5"); column a: "x" is not a valid int');
  });

  it("keeps a fixed array longer than 64 values, and a variable one, as text", () => {
    const long = Array.from({ length: 70 }, (_, k) => String(k)).join(" ");
    const xml = wrap('<FIELD name="spec" datatype="float" arraysize="70"/><FIELD name="v" datatype="int" arraysize="*"/>', `<TABLEDATA><TR><TD>${long}</TD><TD> 1  2 3 </TD></TR></TABLEDATA>`);
    const t = parseVOTable(enc(xml), { file: "a.vot" });
    expect(cells(t, "spec")).toEqual([long]);
    expect(cells(t, "v")).toEqual(["1 2 3"]);
  });

  it("reads the first TABLE by default and another one by number or name, listing them when none matches", () => {
    const table = (name: string, v: number) => `<TABLE name="${name}"><FIELD name="a" datatype="int"/><DATA><TABLEDATA><TR><TD>${v}</TD></TR></TABLEDATA></DATA></TABLE>`;
    const xml = enc(`<VOTABLE version="1.4"><RESOURCE>${table("first", 1)}${table("second", 2)}</RESOURCE></VOTABLE>`);
    const t = parseVOTable(xml, { file: "two.vot" });
    expect(cells(t, "a")).toEqual([1]);
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toMatchObject({ table: 0, tableName: "first", skipped: ["1 other TABLE element(s) are not read (TABLEs: 0 'first', 1 'second')"] });
    expect(cells(parseVOTable(xml, { file: "two.vot", table: 1 }), "a")).toEqual([2]);
    expect(cells(parseVOTable(xml, { file: "two.vot", table: "SECOND" }), "a")).toEqual([2]);
    expect(cells(parseVOTable(xml, { file: "two.vot", table: "1" }), "a")).toEqual([2]);
    expect(() => parseVOTable(xml, { file: "two.vot", table: "third" })).toThrow("two.vot: no TABLE named 'third' (TABLEs: 0 'first', 1 'second')");
  });

  it("reads an empty TABLEDATA as a table of no rows", () => {
    const t = parseVOTable(enc(wrap('<FIELD name="a" datatype="int"/>', "<TABLEDATA></TABLEDATA>")), { file: "e.vot" });
    expect(t.numRows).toBe(0);
    expect(t.schema.fields.map((f) => f.name)).toEqual(["a", "valid", "invalid_reason", "source_row"]);
  });
});

describe("bad VOTable files", () => {
  const good = wrap('<FIELD name="a" datatype="int"/>', "<TABLEDATA><TR><TD>1</TD></TR></TABLEDATA>");
  it("fails on truncated XML naming the file", () => {
    expect(() => parseVOTable(enc(good.slice(0, good.length - 40)), { file: "t.vot" })).toThrow(/^t\.vot: malformed XML: /);
  });
  it("fails on mismatched tags naming the file", () => {
    expect(() => parseVOTable(enc(good.replace("</TR>", "</TD>")), { file: "m.vot" })).toThrow(/^m\.vot: malformed XML: /);
  });
  it("fails on XML that is not a VOTable or has no TABLE", () => {
    expect(() => parseVOTable(enc("<html><body/></html>"), { file: "h.xml" })).toThrow("h.xml: not a VOTable (root element is <html>)");
    expect(() => parseVOTable(enc('<VOTABLE version="1.4"><RESOURCE/></VOTABLE>'), { file: "n.vot" })).toThrow("n.vot: VOTable has no TABLE");
  });
  it("fails on a BINARY2 stream cut inside a row", () => {
    const xml = wrap('<FIELD name="a" datatype="double"/>', `<BINARY2><STREAM encoding="base64">${b64([0, 1, 2, 3])}</STREAM></BINARY2>`);
    expect(() => parseVOTable(enc(xml), { file: "c.vot" })).toThrow("c.vot: truncated BINARY2 stream: row 1 of the stream needs 5 more bytes");
  });
  it("fails on a stream that is not base64", () => {
    const xml = wrap('<FIELD name="a" datatype="double"/>', `<BINARY><STREAM encoding="gzip">abc</STREAM></BINARY>`);
    expect(() => parseVOTable(enc(xml), { file: "g.vot" })).toThrow('g.vot: STREAM encoding "gzip" is not read (only base64)');
  });
});

describe("votableFromTable", () => {
  const nulls = new Uint8Array([0, 1, 0]);
  const columns = (): ColumnData[] => [
    { name: "f64", kind: "float64", values: new Float64Array([187.70593075, 0, -1e-300]), nulls, meta: { unit: "deg", ucd: "pos.eq.ra;meta.main", description: "right ascension <J2000> & more" } },
    { name: "f32", kind: "float32", values: new Float32Array([0.1, 0, 3]), nulls, meta: { unit: "mag" } },
    { name: "u8", kind: "uint8", values: new Uint8Array([0, 0, 255]), nulls },
    { name: "i16", kind: "int16", values: new Int16Array([-32768, 0, 32767]), nulls },
    { name: "i32", kind: "int32", values: new Int32Array([-2147483648, 0, 2147483647]), nulls, meta: { unit: "km/s" } },
    { name: "i64", kind: "int64", values: new BigInt64Array([-(2n ** 63n), 0n, 2n ** 63n - 1n]), nulls },
    { name: "b", kind: "bool", values: new Uint8Array([1, 0, 0]), nulls },
    { name: "s", kind: "utf8", values: ['a "q" <tag> &', "", " two\nlines\r\n"], nulls },
    { name: "w", kind: "utf8", values: ["ω-é", "x", "y"] },
  ];

  it("round-trips every type with nulls, units, ucd and descriptions", () => {
    const t = tableFromColumns(columns());
    const back = parseVOTable(enc(votableFromTable(t)), { file: "rt.vot" });
    for (const c of columns()) {
      expect(cells(back, c.name), c.name).toEqual(cells(t, c.name));
      expect(columnMeta(back, c.name), c.name).toEqual(c.meta ?? {});
      expect(columnDataOf(back, c.name).kind).toBe(c.kind);
    }
  });

  it("widens kinds VOTable lacks (int8 -> short, uint16 -> int, uint32 -> long) keeping the values", () => {
    const t = tableFromColumns([
      { name: "a", kind: "int8", values: new Int8Array([-128, 127]) },
      { name: "b", kind: "uint16", values: new Uint16Array([0, 65535]) },
      { name: "c", kind: "uint32", values: new Uint32Array([0, 4294967295]) },
    ]);
    const back = parseVOTable(enc(votableFromTable(t)), { file: "w.vot" });
    expect([cells(back, "a"), cells(back, "b"), cells(back, "c")]).toEqual([[-128, 127], [0, 65535], [0n, 4294967295n]]);
  });

  it("writes each setting as an INFO and restores the schema metadata", () => {
    const settings = { step: "velocities", estimator: "watkins", frame: "cmb", H0: 70, Omega_m: 0.3 };
    const meta = new Map([
      [META.settings, JSON.stringify(settings)],
      [META.history, JSON.stringify([{ step: "velocities", settings }])],
      [VOTABLE_PARAMS, JSON.stringify([{ name: "epoch", value: "2000", datatype: "double" }])],
    ]);
    const text = votableFromTable(tableFromColumns(columns(), meta));
    expect(text).toContain('<INFO name="H0" value="70"/>');
    expect(text).toContain('<INFO name="Omega_m" value="0.3"/>');
    expect(text).toContain('<INFO name="estimator" value="watkins"/>');
    expect(text).toContain('<PARAM name="epoch" value="2000" datatype="double"/>');
    const back = parseVOTable(enc(text), { file: "m.vot" });
    expect(JSON.parse(back.schema.metadata.get(META.settings)!)).toEqual(settings);
    expect(back.schema.metadata.get(META.history)).toBe(meta.get(META.history));
    expect(back.schema.metadata.get(VOTABLE_INFOS)).toBeUndefined();
    expect(JSON.parse(back.schema.metadata.get(VOTABLE_PARAMS)!)).toEqual([{ name: "epoch", value: "2000", datatype: "double" }]);
  });

  it("writes nulls as empty TD", () => {
    const text = votableFromTable(tableFromColumns([{ name: "a", kind: "float64", values: new Float64Array([1, 0]), nulls: new Uint8Array([0, 1]) }]));
    expect(text).toContain("<TR><TD>1</TD></TR>");
    expect(text).toContain("<TR><TD></TD></TR>");
  });
});
