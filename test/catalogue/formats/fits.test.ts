// Expected values follow from the invented inputs and the rules in DEVELOPERS.md "Catalogue formats"
// (our own decisions); facts of a format cite their standard beside them.
import { describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { parseFits } from "../../../src/catalogue/formats/fits.js";
import { fitsFromTable } from "../../../src/catalogue/formats/fits-write.js";
import { columnDataOf, columnMeta, tableFromColumns, type ColumnData } from "../../../src/catalogue/columns.js";
import { META } from "../../../src/catalogue/meta.js";
import { bintable, card, concat, header, kv, padData, primaryHeader } from "./fits-build.js";

const REF = join(__dirname, "../../reference/formats");
const expected = JSON.parse(readFileSync(join(REF, "expected.json"), "utf8")) as Record<string, Record<string, { values: unknown[]; unit: string | null }>>;
const fixture = (name: string) => new Uint8Array(readFileSync(join(REF, name)));

const cells = (t: Table, name: string) => {
  const v = t.getChild(name);
  if (!v) throw new Error(`no column ${name}`);
  return Array.from({ length: t.numRows }, (_, i) => (v.isValid(i) ? v.get(i) : null));
};
/** expected.json keeps 64-bit integers as strings; compare them as BigInt. */
const fromJson = (t: Table, name: string, values: unknown[]) => {
  const kind = columnDataOf(t, name).kind;
  return kind === "int64" || kind === "uint64" ? values.map((v) => (v === null ? null : BigInt(v as string))) : values;
};

function checkAgainstAstropy(t: Table, file: string) {
  const exp = expected[file]!;
  for (const [name, { values, unit }] of Object.entries(exp)) {
    expect(cells(t, name), `${file} ${name}`).toEqual(fromJson(t, name, values));
    expect(columnMeta(t, name).unit ?? null, `${file} ${name} unit`).toBe(unit);
  }
}

describe("FITS reader against astropy 5.2.1 fixtures (test/reference/make_format_fixtures.py)", () => {
  it("reads mixed.fits exactly, nulls included (TNULL ints, NaN floats, empty strings, TZERO unsigned)", () => {
    const t = parseFits(fixture("mixed.fits"), { file: "mixed.fits" });
    checkAgainstAstropy(t, "mixed.fits");
    expect(["u8", "u16", "u32", "n16", "n64", "mag", "flag"].map((n) => columnDataOf(t, n).kind)).toEqual(["uint8", "uint16", "uint32", "int16", "int64", "float32", "bool"]);
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toEqual({ file: "mixed.fits", format: "fits", rows: 5, invalid: 0, hdu: 1 });
    expect(cells(t, "source_row")).toEqual([1, 2, 3, 4, 5]);
  });

  it("refuses a table of more than 999 columns, the most TFIELDS allows (FITS Standard 4.0, sect. 7.3.1)", () => {
    const cols = (k: number): ColumnData[] => Array.from({ length: k }, (_, j) => ({ name: `c${j}`, kind: "int32", values: Int32Array.of(j) }));
    expect(() => fitsFromTable(tableFromColumns(cols(1000)), { file: "wide.fits" })).toThrow(/wide\.fits: a FITS binary table holds at most 999 columns; this table has 1000/);
    expect(parseFits(fitsFromTable(tableFromColumns(cols(999))), { file: "w.fits" }).schema.fields.length).toBeGreaterThanOrEqual(999);
  });

  it("finds the table in the second extension, after an image, and by EXTNAME", () => {
    const bytes = fixture("second_ext.fits");
    const t = parseFits(bytes, { file: "second_ext.fits" });
    checkAgainstAstropy(t, "second_ext.fits");
    expect(JSON.parse(t.schema.metadata.get(META.source)!)).toMatchObject({ hdu: 2, extname: "OBJECTS" });
    expect(parseFits(bytes, { file: "f", hdu: "objects" }).numRows).toBe(3);
    expect(parseFits(bytes, { file: "f", hdu: 2 }).numRows).toBe(3);
    expect(() => parseFits(bytes, { file: "f.fits", hdu: 1 })).toThrow("f.fits: HDU 1 IMAGE 'SKY' is not a BINTABLE");
    expect(() => parseFits(bytes, { file: "f.fits", hdu: "nothere" })).toThrow("f.fits: no HDU named 'nothere' (HDUs: 0 primary, 1 IMAGE 'SKY', 2 BINTABLE 'OBJECTS')");
  });

  it("reads a 10X bit array as one bool column per bit and 3D as three columns", () => {
    checkAgainstAstropy(parseFits(fixture("bits.fits"), { file: "bits.fits" }), "bits.fits");
  });
});

describe("FITS reader on hand-built files (FITS Standard 4.0 binary tables)", () => {
  it("reads unsigned and signed-byte integers stored with TZERO (FITS Standard 4.0 §7.3, TZEROn convention for unsigned integers; section from memory)", () => {
    // one row per value; columns: 1B TZERO -128, 1I TZERO 32768, 1J TZERO 2147483648, 1K TZERO 2^63
    const rows = [
      { b: 0, i: -32768, j: -2147483648, k: -(2n ** 63n) }, // physical minimums
      { b: 255, i: 32767, j: 2147483647, k: 2n ** 63n - 1n }, // physical maximums
    ];
    const data = new Uint8Array(rows.length * 15);
    const dv = new DataView(data.buffer);
    rows.forEach((r, n) => {
      dv.setUint8(n * 15, r.b);
      dv.setInt16(n * 15 + 1, r.i, false);
      dv.setInt32(n * 15 + 3, r.j, false);
      dv.setBigInt64(n * 15 + 7, r.k, false);
    });
    const cols = [
      kv("TTYPE1", "'sb'"), kv("TFORM1", "'1B'"), kv("TZERO1", -128), kv("TSCAL1", 1),
      kv("TTYPE2", "'u16'"), kv("TFORM2", "'1I'"), kv("TZERO2", 32768),
      kv("TTYPE3", "'u32'"), kv("TFORM3", "'1J'"), kv("TZERO3", 2147483648),
      kv("TTYPE4", "'u64'"), kv("TFORM4", "'1K'"), kv("TZERO4", "9223372036854775808"),
    ];
    const t = parseFits(concat(primaryHeader(), bintable(15, 2, cols, data)), { file: "u.fits" });
    expect(cells(t, "sb")).toEqual([-128, 127]);
    expect(cells(t, "u16")).toEqual([0, 65535]);
    expect(cells(t, "u32")).toEqual([0, 4294967295]);
    expect(cells(t, "u64")).toEqual([0n, 2n ** 64n - 1n]);
    expect(["sb", "u16", "u32", "u64"].map((n) => columnDataOf(t, n).kind)).toEqual(["int8", "uint16", "uint32", "uint64"]);
  });

  it("applies a general TSCAL/TZERO as physical = TZERO + TSCAL * stored, TNULL on the stored value", () => {
    // FITS Standard 4.0 §7.3: physical = TZEROn + TSCALn * stored, TNULLn on the stored value (from memory)
    const data = new Uint8Array(6);
    const dv = new DataView(data.buffer);
    [4, -7, 99].forEach((x, n) => dv.setInt16(n * 2, x, false));
    const cols = [kv("TTYPE1", "'m'"), kv("TFORM1", "'I'"), kv("TSCAL1", 0.5), kv("TZERO1", 10), kv("TNULL1", 99), kv("TUNIT1", "'mag'")];
    const t = parseFits(concat(primaryHeader(), bintable(2, 3, cols, data)), { file: "s.fits" });
    expect(cells(t, "m")).toEqual([12, 6.5, null]);
    expect(columnDataOf(t, "m").kind).toBe("float64");
    expect(columnMeta(t, "m").unit).toBe("mag");
  });

  it("reads 3X bits most significant first, L with a zero byte as null, A cut at NUL and trailing blanks", () => {
    // FITS Standard 4.0 §7.3 (from memory): bit arrays start at the most significant bit; L: 'T', 'F', 0 = undefined
    const data = new Uint8Array([0b10100000, 0x54, ...new TextEncoder().encode("ab  "), 0b01000000, 0x00, 0x78, 0, 0x79, 0x79, 0b00100000, 0x46, 32, 32, 32, 32]);
    const cols = [kv("TTYPE1", "'x'"), kv("TFORM1", "'3X'"), kv("TTYPE2", "'ok'"), kv("TFORM2", "'L'"), kv("TTYPE3", "'s'"), kv("TFORM3", "'4A'")];
    const t = parseFits(concat(primaryHeader(), bintable(6, 3, cols, data)), { file: "x.fits" });
    expect(cells(t, "x_0")).toEqual([true, false, false]);
    expect(cells(t, "x_1")).toEqual([false, true, false]);
    expect(cells(t, "x_2")).toEqual([true, false, true]);
    expect(cells(t, "ok")).toEqual([true, null, false]);
    expect(cells(t, "s")).toEqual(["ab", "x", null]);
  });

  it("reads a vector longer than 64 elements as one text column", () => {
    const data = new Uint8Array(100 * 4);
    const dv = new DataView(data.buffer);
    for (let e = 0; e < 100; e++) dv.setFloat32(e * 4, e === 5 ? NaN : e / 2, false);
    const t = parseFits(concat(primaryHeader(), bintable(400, 1, [kv("TTYPE1", "'flux'"), kv("TFORM1", "'100E'"), kv("TUNIT1", "'Jy'")], data)), { file: "v.fits" });
    const parts = String(cells(t, "flux")[0]).split(" ");
    expect(parts.length).toBe(100);
    expect(parts.slice(0, 7)).toEqual(["0", "0.5", "1", "1.5", "2", "NaN", "3"]);
    expect(columnMeta(t, "flux").unit).toBe("Jy");
  });

  it("finds a hand-built table in the second extension after an image HDU", () => {
    const img = concat(header([kv("XTENSION", "'IMAGE'"), kv("BITPIX", 16), kv("NAXIS", 2), kv("NAXIS1", 3000), kv("NAXIS2", 1), kv("PCOUNT", 0), kv("GCOUNT", 1)]), padData(new Uint8Array(6000)));
    const data = new Uint8Array(8);
    new DataView(data.buffer).setFloat64(0, 187.70593075, false);
    const t = parseFits(concat(primaryHeader(), img, bintable(8, 1, [kv("TTYPE1", "'ra'"), kv("TFORM1", "'D'")], data)), { file: "two.fits" });
    expect(cells(t, "ra")).toEqual([187.70593075]);
    expect(JSON.parse(t.schema.metadata.get(META.source)!).hdu).toBe(2);
  });

  it("takes the TTYPE comment as the description and leaves out complex columns, saying so", () => {
    const data = new Uint8Array(12);
    const cols = [card("TTYPE1  = 'cz      '           / heliocentric redshift times c"), kv("TFORM1", "'E'"), kv("TTYPE2", "'c'"), kv("TFORM2", "'C'")];
    const t = parseFits(concat(primaryHeader(), bintable(12, 1, cols, data)), { file: "c.fits" });
    expect(columnMeta(t, "cz").description).toBe("heliocentric redshift times c");
    expect(t.getChild("c")).toBeNull();
    expect(JSON.parse(t.schema.metadata.get(META.source)!).skipped).toEqual(["c: TFORM 'C' (complex) is not read"]);
  });
});

describe("bad FITS files", () => {
  it("says how many data bytes the header promises and how many the file has", () => {
    const bytes = fixture("mixed.fits");
    // mixed.fits: 2880 primary + 5760 table header (astropy 5.2.1 output); NAXIS1 47 * NAXIS2 5 = 235
    const cut = bytes.subarray(0, 2880 + 5760 + 100);
    expect(() => parseFits(cut, { file: "cut.fits" })).toThrow("cut.fits: truncated: header says 235 bytes of data, file has 100 (HDU 1)");
  });

  it("fails on a header without END", () => {
    expect(() => parseFits(fixture("mixed.fits").subarray(0, 2880 + 1000), { file: "h.fits" })).toThrow("h.fits: truncated: header of HDU 1 has no END card");
  });

  it("fails on a file that is not FITS, and on one with no table", () => {
    expect(() => parseFits(new TextEncoder().encode("a,b\n1,2\n".repeat(20)), { file: "n.fits" })).toThrow("n.fits: not a FITS file");
    expect(() => parseFits(primaryHeader(), { file: "p.fits" })).toThrow("p.fits: no BINTABLE extension (HDUs: 0 primary)");
  });

  it("fails when the TFORMs need more bytes than NAXIS1", () => {
    const bytes = concat(primaryHeader(), bintable(4, 1, [kv("TTYPE1", "'a'"), kv("TFORM1", "'D'")], new Uint8Array(4)));
    expect(() => parseFits(bytes, { file: "w.fits" })).toThrow("w.fits: TFORMs need 8 bytes per row, NAXIS1 says 4");
  });
});

describe("fitsFromTable", () => {
  const everyType = (): ColumnData[] => {
    const nulls = new Uint8Array([0, 1, 0]);
    return [
      { name: "f64", kind: "float64", values: new Float64Array([187.70593075, 0, -1e-300]), nulls, meta: { unit: "deg", description: "right ascension" } },
      { name: "f32", kind: "float32", values: new Float32Array([0.1, 0, 3]), nulls, meta: { unit: "mag" } },
      { name: "i8", kind: "int8", values: new Int8Array([-128, 0, 127]), nulls },
      { name: "u8", kind: "uint8", values: new Uint8Array([0, 0, 255]), nulls },
      { name: "i16", kind: "int16", values: new Int16Array([-32768, 0, 32767]), nulls },
      { name: "u16", kind: "uint16", values: new Uint16Array([0, 0, 65535]), nulls },
      { name: "i32", kind: "int32", values: new Int32Array([-2147483648, 0, 2147483647]), nulls, meta: { unit: "km/s" } },
      { name: "u32", kind: "uint32", values: new Uint32Array([0, 0, 4294967295]), nulls },
      { name: "i64", kind: "int64", values: new BigInt64Array([-(2n ** 63n), 0n, 2n ** 63n - 1n]), nulls },
      { name: "u64", kind: "uint64", values: new BigUint64Array([0n, 0n, 2n ** 64n - 1n]), nulls },
      { name: "b", kind: "bool", values: new Uint8Array([1, 0, 0]), nulls },
      { name: "s", kind: "utf8", values: ["obj-1", "", "ω-é"], nulls },
      { name: "plain", kind: "int32", values: new Int32Array([1, 2, 3]) },
    ];
  };

  it("round-trips every type with nulls, units, descriptions and schema metadata", () => {
    const settings = { step: "velocities", estimator: "watkins", frame: "cmb", H0: 70, Omega_m: 0.3, note: "x".repeat(150) + "'q'" };
    const meta = new Map([
      [META.settings, JSON.stringify(settings)],
      [META.roles, JSON.stringify({ ra: "f64" })],
      ["other", "µ unicode"],
    ]);
    const t = tableFromColumns(everyType(), meta);
    const back = parseFits(fitsFromTable(t), { file: "rt.fits" });
    for (const c of everyType()) {
      expect(cells(back, c.name), c.name).toEqual(cells(t, c.name));
      expect(columnDataOf(back, c.name).kind, c.name).toBe(c.kind);
      expect(columnMeta(back, c.name), c.name).toEqual(c.meta ?? {});
    }
    expect(JSON.parse(back.schema.metadata.get(META.settings)!)).toEqual(settings);
    expect(back.schema.metadata.get(META.roles)).toBe(JSON.stringify({ ra: "f64" }));
    expect(back.schema.metadata.get("other")).toBe("µ unicode");
  });

  it("writes the settings as keywords of their own and the columns with TNULL only where needed", () => {
    const t = tableFromColumns(everyType(), new Map([[META.settings, JSON.stringify({ H0: 70, Omega_m: 0.3, frame: "cmb" })]]));
    const text = new TextDecoder().decode(fitsFromTable(t).subarray(2880, 2880 * 3));
    const cards = text.match(/.{80}/g)!.map((c) => c.trimEnd());
    expect(cards).toContain("H0      =                   70 / peculiar.settings H0");
    expect(cards).toContain("OMEGA_M =                  0.3 / peculiar.settings Omega_m");
    expect(cards).toContain("FRAME   = 'cmb     '           / peculiar.settings frame");
    expect(cards).toContain("TZERO6  =                32768");
    expect(cards.some((c) => c.startsWith("TNULL13"))).toBe(false);
    expect(cards.some((c) => c.startsWith("TNULL7 "))).toBe(true);
  });

  it("stores a double as the same big-endian bytes astropy wrote (astropy 5.2.1 fixture mixed.fits, ra of row 2)", () => {
    // mixed.fits row 2 (1-based) starts at 2880 + 5760 + 47; ra follows the 5-byte id
    const astropy = fixture("mixed.fits").subarray(2880 + 5760 + 47 + 5, 2880 + 5760 + 47 + 13);
    const t = tableFromColumns([{ name: "ra", kind: "float64", values: new Float64Array([187.70593075]) }]);
    const mine = fitsFromTable(t);
    const data = mine.subarray(mine.length - 2880, mine.length - 2880 + 8);
    expect(Array.from(data)).toEqual(Array.from(astropy));
    expect(Array.from(data)).toEqual([0x40, 0x67, 0x76, 0x96, 0xfc, 0x15, 0x8f, 0xb4]); // IEEE 754 binary64 of 187.70593075
  });

  it("widens an integer column when every stored value is taken and a TNULL is needed", () => {
    const values = new Uint8Array(257);
    for (let i = 0; i < 256; i++) values[i] = i;
    const nulls = new Uint8Array(257);
    nulls[256] = 1;
    const t = tableFromColumns([{ name: "u", kind: "uint8", values, nulls }]);
    const back = parseFits(fitsFromTable(t), { file: "w.fits" });
    expect(cells(back, "u")).toEqual(cells(t, "u"));
    expect(columnDataOf(back, "u").kind).toBe("int16");
  });

  it("round-trips long and non-ASCII column names and units (CONTINUE cards, \\u escapes)", () => {
    const long = "a_very_long_column_name_that_does_not_fit_on_one_header_card_at_all_x".repeat(2);
    const t = tableFromColumns([
      { name: long, kind: "float64", values: new Float64Array([1]), meta: { unit: "µm", description: "Größe" } },
      { name: "δ", kind: "int32", values: new Int32Array([2]) },
    ]);
    const back = parseFits(fitsFromTable(t), { file: "n.fits" });
    expect(back.schema.fields.map((f) => f.name).slice(0, 2)).toEqual([long, "δ"]);
    expect(columnMeta(back, long)).toEqual({ unit: "µm", description: "Größe" });
    expect(cells(back, "δ")).toEqual([2]);
  });

  it("takes an HDU number given as text", () => {
    const t = tableFromColumns([{ name: "a", kind: "float64", values: new Float64Array([1]) }]);
    expect(parseFits(fitsFromTable(t), { file: "h.fits", hdu: "1" }).numRows).toBe(1);
  });

  it("writes and reads an empty table and a table of one row", () => {
    for (const n of [0, 1]) {
      const t = tableFromColumns([{ name: "a", kind: "float64", values: new Float64Array(n).fill(2.5) }, { name: "s", kind: "utf8", values: new Array<string>(n).fill("z") }], new Map(), n);
      const back = parseFits(fitsFromTable(t), { file: "e.fits" });
      expect(back.numRows).toBe(n);
      expect(cells(back, "s")).toEqual(cells(t, "s"));
    }
  });

  it("writes a string column of 300000 rows (no argument-count limit on the width)", () => {
    const n = 300000;
    const t = tableFromColumns([{ name: "id", kind: "utf8", values: Array.from({ length: n }, (_, i) => `obj-${i}`) }]);
    const back = parseFits(fitsFromTable(t), { file: "big.fits" });
    expect(back.numRows).toBe(n);
    expect(cells(back, "id")[n - 1]).toBe(`obj-${n - 1}`);
  });

  it("writes every HDU in whole 2880-byte blocks (FITS Standard 4.0, 2880-byte logical records; from memory)", () => {
    expect(fitsFromTable(tableFromColumns(everyType())).length % 2880).toBe(0);
  });
});
