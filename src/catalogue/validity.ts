/**
 * Row validity: the `valid` and `invalid_reason` columns every table keeps (DEVELOPERS.md,
 * "Nothing is lost"). A step that finds problems flags rows here; rows are never dropped.
 * A flagged row gets valid = false and "; reason" appended to its reason (the first reason
 * stands alone). Tables without the two columns get them, all valid, on the first flag.
 */
import { Bool, type Table } from "apache-arrow";
import { float64Column, hasColumn, nullMask, stringColumn, valuesView, withColumns, type ColumnData } from "./columns.js";
import { INVALID_REASON, SOURCE_ROW, VALID } from "./meta.js";

/** 1 where the row is valid. A table without a `valid` column is all valid; a null `valid` is invalid. */
export function validMask(table: Table): Uint8Array {
  const n = table.numRows;
  const out = new Uint8Array(n).fill(1);
  const v = table.getChild(VALID);
  if (!v) return out;
  if (v.type instanceof Bool) {
    // read the packed bits directly (Arrow: bit (offset + k) of `values`); nulls are invalid
    let i = 0;
    for (const chunk of v.data) {
      const bits = chunk.values as Uint8Array;
      const off = chunk.offset;
      const len = chunk.length;
      for (let k = 0; k < len; ) {
        const b = off + k;
        // a whole byte of true values (the usual case) leaves its eight 1s in place
        if ((b & 7) === 0 && k + 8 <= len && bits[b >> 3] === 0xff) {
          k += 8;
          continue;
        }
        out[i + k] = (bits[b >> 3]! >> (b & 7)) & 1;
        k++;
      }
      if (chunk.nullCount > 0) for (let k = 0; k < len; k++) if (!chunk.getValid(k)) out[i + k] = 0;
      i += len;
    }
    return out;
  }
  const nulls = nullMask(table, VALID);
  for (let i = 0; i < n; i++) out[i] = !nulls[i] && v.get(i) ? 1 : 0;
  return out;
}

/** The reason of each row ("" when valid or none given). */
export function invalidReasons(table: Table): string[] {
  if (!hasColumn(table, INVALID_REASON)) return new Array<string>(table.numRows).fill("");
  return stringColumn(table, INVALID_REASON).map((s) => s ?? "");
}

/** Number of rows with valid = false. */
export function countInvalid(table: Table): number {
  const v = table.getChild(VALID);
  if (!v) return 0;
  if (v.type instanceof Bool && v.nullCount === 0) {
    // count the clear bits of the packed values, a whole byte at a time where it is all true
    let k = 0;
    for (const chunk of v.data) {
      const bits = chunk.values as Uint8Array;
      const off = chunk.offset;
      const len = chunk.length;
      for (let t = 0; t < len; ) {
        const b = off + t;
        if ((b & 7) === 0 && t + 8 <= len && bits[b >> 3] === 0xff) {
          t += 8;
          continue;
        }
        if (!((bits[b >> 3]! >> (b & 7)) & 1)) k++;
        t++;
      }
    }
    return k;
  }
  const m = validMask(table);
  let k = 0;
  for (let i = 0; i < m.length; i++) if (!m[i]) k++;
  return k;
}

/** Indices (Int32Array) of the invalid rows, in order. */
export function invalidRows(table: Table): Int32Array {
  const m = validMask(table);
  const out: number[] = [];
  for (let i = 0; i < m.length; i++) if (!m[i]) out.push(i);
  return Int32Array.from(out);
}

function validityColumns(valid: Uint8Array, reasons: string[]): ColumnData[] {
  return [
    { name: VALID, kind: "bool", values: valid },
    { name: INVALID_REASON, kind: "utf8", values: reasons },
  ];
}

/** The table with `valid` and `invalid_reason` present (added as all valid when absent). */
export function withValidity(table: Table): Table {
  if (hasColumn(table, VALID) && hasColumn(table, INVALID_REASON)) return table;
  return withColumns(table, validityColumns(validMask(table), invalidReasons(table)));
}

/**
 * Flags rows: where bad[i] is 1, valid becomes false and reasons[i] (or "flagged" when undefined;
 * nothing when "" and the row has a reason already) is appended to invalid_reason with "; ". Rows already invalid stay invalid and collect the reason.
 * Returns a new table; the input is not changed. Nothing to flag returns the table with the columns ensured.
 */
export function flagRows(table: Table, bad: Uint8Array, reasons: readonly (string | undefined)[]): Table {
  const n = table.numRows;
  if (bad.length !== n) throw new RangeError(`flagRows: mask has ${bad.length} entries, table has ${n} rows`);
  let any = false;
  for (let i = 0; i < n; i++) if (bad[i]) any = true;
  if (!any) return withValidity(table);
  const valid = validMask(table);
  const text = invalidReasons(table);
  for (let i = 0; i < n; i++) {
    if (!bad[i]) continue;
    valid[i] = 0;
    // "" flags the row without new text (its reason already says why); no entry at all is "flagged"
    const r = reasons[i] ?? "flagged";
    const before = text[i] ?? "";
    text[i] = before ? (r ? `${before}; ${r}` : before) : r || "flagged";
  }
  return withColumns(table, validityColumns(valid, text));
}

/**
 * The source row (1-based line of a text file, row of a binary one) of every row of a table: its
 * source_row column, or the row number where it has none (or a null). A view of the column when it
 * can be (read only), else a new array.
 */
export function sourceRows(table: Table): Int32Array {
  const n = table.numRows;
  if (!table.getChild(SOURCE_ROW)) return Int32Array.from({ length: n }, (_, i) => i + 1);
  const view = valuesView(table, SOURCE_ROW, "int32");
  if (view) return view;
  const f = float64Column(table, SOURCE_ROW);
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) out[i] = Number.isNaN(f[i]!) ? i + 1 : f[i]!;
  return out;
}
