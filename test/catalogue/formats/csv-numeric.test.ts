// The plain numeric body reader against the general rules (a twin test: the general reader is the
// reference, our own rules in DEVELOPERS.md "Catalogue formats"). Inputs are seeded random text.
import { describe, expect, it } from "vitest";
import { parseCsvBytes, plainNumericTable } from "../../../src/catalogue/formats/csv.js";
import type { ParsedColumns } from "../../../src/catalogue/formats/table.js";

const enc = new TextEncoder();

function rng(seed: number): () => number {
  return () => (seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 4294967296;
}

/** Column values as comparable lists: bit patterns for floats (NaN and -0 kept apart). */
function shape(p: ParsedColumns) {
  return {
    rows: p.rows,
    sourceRows: Array.from(p.sourceRows),
    reasons: Array.from({ length: p.rows }, (_, i) => p.reasons[i] ?? ""),
    columns: p.columns.map((c) => ({
      name: c.name,
      kind: c.kind,
      unit: c.meta?.unit ?? null,
      nulls: c.nulls ? Array.from(c.nulls) : null,
      values: c.values instanceof Float64Array ? Array.from(new BigUint64Array(c.values.buffer, c.values.byteOffset, c.values.length), String) : Array.from(c.values as ArrayLike<unknown>, String),
    })),
  };
}

const NUMBERS = ["0", "-0", "7", "-12", "+5", "2147483647", "-2147483648", "3.25", "-0.5", ".5", "5.", "1e5", "1.5E-3", "2d3", "123.45678901234567", "0.1", "90.84426292218268", "1234567890123456789012", "4.9e-324", "1e400"];

function cell(u: () => number, integerOnly: boolean): string {
  if (integerOnly) return String(Math.floor((u() - 0.5) * 2e6));
  const r = u();
  if (r < 0.3) return NUMBERS[Math.floor(u() * NUMBERS.length)]!;
  if (r < 0.6) return String((u() - 0.5) * 10 ** Math.floor(u() * 12 - 4));
  return (u() * 360).toFixed(Math.floor(u() * 9));
}

/** A table text of `rows` rows: id (integers), ra, dec, cz, with the variations asked for. */
function table(seed: number, rows: number, o: { nulls?: boolean; units?: boolean; marker?: boolean; crlf?: boolean; comments?: boolean; tab?: boolean; bom?: boolean; emptyColumn?: boolean } = {}): string {
  const u = rng(seed);
  const d = o.tab ? "\t" : ",";
  const nl = o.crlf ? "\r\n" : "\n";
  const names = ["id", "ra", "dec", "cz", ...(o.emptyColumn ? ["dist"] : [])];
  let s = o.bom ? "\ufeff" : "";
  if (o.marker) s += `# peculiar: second row gives units${nl}`;
  s += names.join(d) + nl;
  if (o.units) s += ["", "deg", "deg", "km/s", ...(o.emptyColumn ? ["Mpc"] : [])].join(d) + nl;
  for (let i = 0; i < rows; i++) {
    if (o.comments && u() < 0.01) s += u() < 0.5 ? `# a note${nl}` : nl;
    const row = [String(i + 1), cell(u, false), cell(u, false), cell(u, u() < 0.5)];
    if (o.nulls) for (let j = 1; j < row.length; j++) if (u() < 0.05) row[j] = "";
    if (o.emptyColumn) row.push("");
    s += row.join(d) + nl;
  }
  return s;
}

function both(text: string, delimiter = ",") {
  const bytes = enc.encode(text);
  const options = { file: "t.csv", delimiter };
  return { plain: plainNumericTable(bytes, bytes[0] === 0xef ? 3 : 0, delimiter.charCodeAt(0), "t.csv"), fast: parseCsvBytes(bytes, options), general: parseCsvBytes(bytes, { ...options, generalRules: true }) };
}

describe("the plain numeric body reader", () => {
  const cases: [string, Parameters<typeof table>[2]][] = [
    ["plain numbers", {}],
    ["empty cells", { nulls: true }],
    ["a units row", { units: true }],
    ["the units marker and a units row", { marker: true, units: true }],
    ["CRLF line ends", { crlf: true, nulls: true }],
    ["comment and empty lines in the body", { comments: true }],
    ["a byte-order mark", { bom: true }],
    ["a column with no value at all", { emptyColumn: true, units: true }],
  ];
  for (const [what, o] of cases) {
    it(`reads ${what} exactly as the general rules do`, () => {
      const r = both(table(20261202 + what.length, 3000, o));
      expect(r.plain).not.toBeNull();
      expect(shape(r.fast)).toEqual(shape(r.general));
    });
  }

  it("reads tab-separated text exactly as the general rules do", () => {
    const r = both(table(7, 2000, { tab: true, nulls: true }), "\t");
    expect(r.plain).not.toBeNull();
    expect(shape(r.fast)).toEqual(shape(r.general));
  });

  // Each variation breaks the plain shape late in the file: the general rules then read it all.
  const breaks: [string, (s: string) => string][] = [
    ["a text cell", (s) => s.replace(/\n2500,[^,\n]*/, "\n2500,here")],
    ["a quoted cell", (s) => s.replace(/\n2500,/, '\n"2500",')],
    ["a row with a missing field", (s) => s.replace(/\n2500,[^,\n]*,/, "\n2500,")],
    ["a row with an extra field", (s) => s.replace(/\n2500,([^\n]*)/, "\n2500,$1,9")],
    ["blanks around a value", (s) => s.replace(/\n2500,/, "\n2500 , ")],
    ["an integer beyond int32", (s) => s.replace(/\n2500,/, "\n99999999999,")],
    ["a NaN token", (s) => s.replace(/\n2500,[^,\n]*/, "\n2500,nan")],
    ["a blank line of spaces", (s) => s.replace(/\n2500,/, "\n   \n2500,")],
  ];
  for (const [what, edit] of breaks) {
    it(`leaves a body with ${what} to the general rules, with the same table`, () => {
      const r = both(edit(table(11, 3000, { nulls: true })));
      expect(r.plain).toBeNull();
      expect(shape(r.fast)).toEqual(shape(r.general));
    });
  }

  it("reads a small file (all of it head) exactly as the general rules do, or leaves it to them", () => {
    for (const rows of [1, 2, 3, 10, 100, 255, 256, 257]) {
      for (const [what, o] of cases) {
        const r = both(table(rows * 31 + what.length, rows, o));
        expect(r.plain, `${rows} rows, ${what}`).not.toBeNull();
        expect(shape(r.fast), `${rows} rows, ${what}`).toEqual(shape(r.general));
      }
      for (const [what, edit] of breaks) {
        const r = both(edit(table(rows + 5, Math.max(rows, 2), { nulls: true }).replace(/\n1,/, "\n2500,")));
        expect(shape(r.fast), `${rows} rows, ${what}`).toEqual(shape(r.general));
      }
    }
  });
});
