/**
 * Columns in and out of Arrow. Every reader builds `ColumnData` (typed arrays plus a null mask)
 * and calls `tableFromColumns`; every kernel reads numbers with `float64Column` (nulls -> NaN).
 * Field metadata carries unit, UCD and description; schema metadata carries roles, provenance
 * and the settings that produced derived columns (see meta.ts). Both survive Arrow IPC.
 */
import {
  Bool,
  Field,
  Float32,
  Float64,
  Int8,
  Int16,
  Int32,
  Int64,
  RecordBatch,
  Schema,
  Struct,
  Table,
  Uint8,
  Uint16,
  Uint32,
  Uint64,
  Utf8,
  makeData,
  type DataType,
  type Data,
} from "apache-arrow";
import { PeculiarError } from "../errors.js";

export type ColumnKind =
  | "float64"
  | "float32"
  | "int8"
  | "int16"
  | "int32"
  | "int64"
  | "uint8"
  | "uint16"
  | "uint32"
  | "uint64"
  | "bool"
  | "utf8";

export interface ColumnMeta {
  unit?: string;
  ucd?: string;
  description?: string;
}

type NumericArray =
  | Float64Array
  | Float32Array
  | Int8Array
  | Int16Array
  | Int32Array
  | BigInt64Array
  | Uint8Array
  | Uint16Array
  | Uint32Array
  | BigUint64Array;

export interface ColumnData {
  name: string;
  kind: ColumnKind;
  /** Typed array for numeric kinds, Uint8Array (0/1) for bool, string[] for utf8. */
  values: NumericArray | string[];
  /** 1 where the value is null. Omit when there are no nulls. */
  nulls?: Uint8Array;
  meta?: ColumnMeta;
}

export const ARROW_TYPES: Record<ColumnKind, () => DataType> = {
  float64: () => new Float64(),
  float32: () => new Float32(),
  int8: () => new Int8(),
  int16: () => new Int16(),
  int32: () => new Int32(),
  int64: () => new Int64(),
  uint8: () => new Uint8(),
  uint16: () => new Uint16(),
  uint32: () => new Uint32(),
  uint64: () => new Uint64(),
  bool: () => new Bool(),
  utf8: () => new Utf8(),
};

function fieldMetadata(meta: ColumnMeta | undefined): Map<string, string> {
  const m = new Map<string, string>();
  if (meta?.unit) m.set("unit", meta.unit);
  if (meta?.ucd) m.set("ucd", meta.ucd);
  if (meta?.description) m.set("description", meta.description);
  return m;
}

/** Packs a 1-per-null byte mask into an Arrow validity bitmap (bit set = valid). */
function validityBitmap(nulls: Uint8Array | undefined, length: number): { bitmap?: Uint8Array; nullCount: number } {
  if (!nulls) return { nullCount: 0 };
  let nullCount = 0;
  const bitmap = new Uint8Array((length + 7) >> 3);
  for (let i = 0; i < length; i++) {
    if (nulls[i]) nullCount++;
    else bitmap[i >> 3]! |= 1 << (i & 7);
  }
  return nullCount === 0 ? { nullCount: 0 } : { bitmap, nullCount };
}

function columnToData(col: ColumnData, length: number): Data {
  if (col.values.length !== length) {
    throw new PeculiarError("input", `column has ${col.values.length} values, table has ${length} rows`, {
      column: col.name,
    });
  }
  const type = ARROW_TYPES[col.kind]();
  const { bitmap, nullCount } = validityBitmap(col.nulls, length);
  if (col.kind === "utf8") return utf8Data(col.values as string[], col.nulls, length, bitmap, nullCount);
  if (col.kind === "bool") {
    const src = col.values as Uint8Array;
    const packed = new Uint8Array((length + 7) >> 3);
    for (let i = 0; i < length; i++) if (src[i]) packed[i >> 3]! |= 1 << (i & 7);
    return makeData({ type: type as Bool, length, data: packed, nullBitmap: bitmap, nullCount });
  }
  return makeData({ type: type as Float64, length, data: col.values as Float64Array, nullBitmap: bitmap, nullCount });
}

/** Utf8 data written straight into offsets and bytes (vectorFromArray took ~9 us per string). */
function utf8Data(strings: string[], nulls: Uint8Array | undefined, length: number, bitmap: Uint8Array | undefined, nullCount: number): Data {
  const enc = new TextEncoder();
  const offsets = new Int32Array(length + 1);
  let buf = new Uint8Array(Math.max(64, Math.min(length * 8, 1 << 16))); // grows by doubling: a column of empty strings stays small
  let pos = 0;
  for (let i = 0; i < length; i++) {
    if (!nulls?.[i] && strings[i]!.length !== 0) {
      const s = strings[i]!;
      if (pos + s.length * 3 > buf.length) {
        const grown = new Uint8Array(Math.max(buf.length * 2, pos + s.length * 3));
        grown.set(buf.subarray(0, pos));
        buf = grown;
      }
      // ASCII goes byte by byte (no view per string); anything else through the encoder.
      let k = 0;
      const start = pos;
      for (; k < s.length; k++) {
        const c = s.charCodeAt(k);
        if (c >= 0x80) break;
        buf[pos++] = c;
      }
      if (k < s.length) pos = start + enc.encodeInto(s, buf.subarray(start)).written;
    }
    offsets[i + 1] = pos;
  }
  return makeData({ type: new Utf8(), length, nullCount, nullBitmap: bitmap, valueOffsets: offsets, data: buf.slice(0, pos) });
}

/** A column that is already Arrow data: tableFromColumns takes it as it is. */
export interface DataColumn {
  name: string;
  data: Data;
  meta?: ColumnMeta;
}

function isDataColumn(c: ColumnData | DataColumn): c is DataColumn {
  return (c as DataColumn).data !== undefined;
}

/** Arrow data of a bool column without nulls, true everywhere but at `falseRows`, packed as Arrow bits (bits past n clear). */
export function boolDataExcept(n: number, falseRows: ArrayLike<number> = []): Data {
  const bits = new Uint8Array((n + 7) >> 3).fill(0xff);
  if (n & 7) bits[bits.length - 1] = (1 << (n & 7)) - 1;
  for (let t = 0; t < falseRows.length; t++) {
    const i = falseRows[t]!;
    bits[i >> 3]! &= ~(1 << (i & 7));
  }
  return makeData({ type: new Bool(), length: n, data: bits, nullCount: 0 });
}

/** Arrow data of a utf8 column of n strings without nulls, empty but at `rows` (ascending), where it is texts[row]. */
export function sparseUtf8Data(n: number, rows: readonly number[] = [], texts: readonly string[] = []): Data {
  const offsets = new Int32Array(n + 1);
  const enc = new TextEncoder();
  const parts = rows.map((i) => enc.encode(texts[i]!));
  const data = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let pos = 0;
  let from = 0;
  for (let t = 0; t < rows.length; t++) {
    const i = rows[t]!;
    offsets.fill(pos, from + 1, i + 1);
    data.set(parts[t]!, pos);
    pos += parts[t]!.length;
    offsets[i + 1] = pos;
    from = i + 1;
  }
  offsets.fill(pos, from + 1, n + 1);
  return makeData({ type: new Utf8(), length: n, nullCount: 0, valueOffsets: offsets, data });
}

/** Builds an Arrow table from columns. All columns must have the same length. */
export function tableFromColumns(columns: (ColumnData | DataColumn)[], schemaMetadata: Map<string, string> = new Map(), length?: number): Table {
  const first = columns[0];
  const n = length ?? (first === undefined ? 0 : isDataColumn(first) ? first.data.length : first.values.length);
  const seen = new Set<string>();
  for (const c of columns) {
    if (seen.has(c.name)) throw new PeculiarError("column", "duplicate column name", { column: c.name });
    seen.add(c.name);
  }
  const datas = columns.map((c) => {
    if (!isDataColumn(c)) return columnToData(c, n);
    if (c.data.length !== n) throw new PeculiarError("input", `column has ${c.data.length} values, table has ${n} rows`, { column: c.name });
    return c.data;
  });
  const fields = columns.map((c, i) => new Field(c.name, datas[i]!.type, true, fieldMetadata(c.meta)));
  const schema = new Schema(fields, schemaMetadata);
  const struct = makeData({ type: new Struct(fields), length: n, nullCount: 0, children: datas });
  return new Table(schema, [new RecordBatch(schema, struct)]);
}

/** The metadata (unit, ucd, description) of a column, or {} when it has none. */
export function columnMeta(table: Table, name: string): ColumnMeta {
  const f = table.schema.fields.find((x) => x.name === name);
  if (!f) return {};
  const m = f.metadata;
  const out: ColumnMeta = {};
  const unit = m.get("unit");
  const ucd = m.get("ucd");
  const description = m.get("description");
  if (unit) out.unit = unit;
  if (ucd) out.ucd = ucd;
  if (description) out.description = description;
  return out;
}

export function hasColumn(table: Table, name: string): boolean {
  return table.schema.fields.some((f) => f.name === name);
}

function requireColumn(table: Table, name: string) {
  const v = table.getChild(name);
  if (!v) throw new PeculiarError("column", "no such column", { column: name, expected: `one of ${table.schema.fields.map((f) => f.name).join(", ")}` });
  return v;
}

/**
 * A column as float64 with nulls (and unparseable strings) as NaN. Booleans become 0/1.
 * Strings are parsed with Number(); sexagesimal angles go through sky/angles instead.
 */
export function float64Column(table: Table, name: string): Float64Array {
  const v = requireColumn(table, name);
  const n = table.numRows;
  const out = new Float64Array(n);
  let i = 0;
  for (const chunk of v.data) {
    const len = chunk.length;
    const isNumericFlat = chunk.values instanceof Float64Array || chunk.values instanceof Float32Array || chunk.values instanceof Int32Array || chunk.values instanceof Int16Array || chunk.values instanceof Int8Array || chunk.values instanceof Uint8Array && !(chunk.type instanceof Bool) || chunk.values instanceof Uint16Array || chunk.values instanceof Uint32Array;
    if (isNumericFlat && !(chunk.type instanceof Utf8) && !isHalfFloat(chunk.type)) {
      // Arrow slices `values` already (chunk.offset only indexes the validity bitmap).
      const vals = chunk.values as ArrayLike<number>;
      for (let k = 0; k < len; k++) out[i + k] = vals[k]!;
      if (chunk.nullCount > 0) for (let k = 0; k < len; k++) if (!chunk.getValid(k)) out[i + k] = NaN;
    } else {
      for (let k = 0; k < len; k++) {
        const x = chunk.getValid(k) ? getValue(chunk, k) : null;
        out[i + k] = x === null || x === undefined ? NaN : typeof x === "string" ? (x.trim() === "" ? NaN : Number(x)) : Number(x);
      }
    }
    i += len;
  }
  return out;
}

/**
 * The values of a one-chunk float64 or int32 column without nulls as a view of the Arrow buffer (no
 * copy, so read only), or undefined for any other column (which float64Column then copies).
 */
export function valuesView(table: Table, name: string, kind: "float64"): Float64Array | undefined;
export function valuesView(table: Table, name: string, kind: "int32"): Int32Array | undefined;
export function valuesView(table: Table, name: string, kind: "float64" | "int32"): Float64Array | Int32Array | undefined {
  const v = table.getChild(name);
  if (!v || v.data.length !== 1 || v.nullCount !== 0) return undefined;
  const chunk = v.data[0]!;
  const want = kind === "float64" ? Float64Array : Int32Array;
  if (!(chunk.values instanceof want)) return undefined;
  // Arrow slices `values` already (chunk.offset only indexes the validity bitmap).
  return (chunk.values as Float64Array | Int32Array).subarray(0, chunk.length);
}

function getValue(chunk: Data, k: number): unknown {
  // Data has no public get(); go through a one-chunk vector view.
  return tableCell(chunk, k);
}

import { makeVector } from "apache-arrow";
const vectorCache = new WeakMap<Data, ReturnType<typeof makeVector>>();
function tableCell(chunk: Data, k: number): unknown {
  let vec = vectorCache.get(chunk);
  if (!vec) {
    vec = makeVector(chunk);
    vectorCache.set(chunk, vec);
  }
  return vec.get(k);
}

/** A column as strings; nulls become null. Utf8 chunks are decoded straight from their offsets. */
export function stringColumn(table: Table, name: string): (string | null)[] {
  const v = requireColumn(table, name);
  const out: (string | null)[] = new Array(table.numRows);
  const decoder = new TextDecoder();
  let i = 0;
  for (const chunk of v.data) {
    const len = chunk.length;
    if (chunk.type instanceof Utf8 && chunk.valueOffsets && chunk.values) {
      const offs = chunk.valueOffsets as Int32Array;
      const bytes = chunk.values as Uint8Array;
      const hasNulls = chunk.nullCount > 0;
      for (let k = 0; k < len; k++) {
        if (hasNulls && !chunk.getValid(k)) {
          out[i + k] = null;
          continue;
        }
        // Arrow slices the offsets with the data (chunk.offset only indexes the validity bitmap)
        const a = offs[k]!;
        const b = offs[k + 1]!;
        out[i + k] = decodeAscii(bytes, a, b) ?? decoder.decode(bytes.subarray(a, b));
      }
    } else {
      for (let k = 0; k < len; k++) {
        const x = chunk.getValid(k) ? tableCell(chunk, k) : null;
        out[i + k] = x === null || x === undefined ? null : String(x);
      }
    }
    i += len;
  }
  return out;
}

/** Short pure-ASCII strings without a TextDecoder call; undefined when a byte is not ASCII. */
function decodeAscii(bytes: Uint8Array, a: number, b: number): string | undefined {
  if (b - a > 64) return undefined;
  let s = "";
  for (let j = a; j < b; j++) {
    const c = bytes[j]!;
    if (c > 127) return undefined;
    s += String.fromCharCode(c);
  }
  return s;
}

/** 1 where the column is null. */
export function nullMask(table: Table, name: string): Uint8Array {
  const v = requireColumn(table, name);
  const out = new Uint8Array(table.numRows);
  if (v.nullCount === 0) return out;
  for (let i = 0; i < table.numRows; i++) out[i] = v.isValid(i) ? 0 : 1;
  return out;
}

/** Every column of a table as ColumnData (for readers/writers that rebuild tables). */
export function columnsOf(table: Table): ColumnData[] {
  return table.schema.fields.map((f) => columnDataOf(table, f.name));
}

const KIND_OF_TYPE: [new (...a: never[]) => DataType, ColumnKind][] = [
  [Float64, "float64"],
  [Float32, "float32"],
  [Int8, "int8"],
  [Int16, "int16"],
  [Int32, "int32"],
  [Int64, "int64"],
  [Uint8, "uint8"],
  [Uint16, "uint16"],
  [Uint32, "uint32"],
  [Uint64, "uint64"],
  [Bool, "bool"],
  [Utf8, "utf8"],
];

export function kindOf(type: DataType): ColumnKind | undefined {
  for (const [ctor, kind] of KIND_OF_TYPE) if (type instanceof ctor) return kind;
  // Arrow readers may return the generic Int/Float classes; fall back on type id and bit width.
  const t = type as unknown as { typeId: number; bitWidth?: number; isSigned?: boolean; precision?: number };
  if (t.typeId === 2) {
    const w = t.bitWidth ?? 32;
    const s = t.isSigned ?? true;
    return (`${s ? "int" : "uint"}${w}`) as ColumnKind;
  }
  if (t.typeId === 3) return t.precision === 2 ? "float64" : t.precision === 1 ? "float32" : "float64";
  if (t.typeId === 5) return "utf8";
  if (t.typeId === 6) return "bool";
  return undefined;
}

/** An Arrow half-precision float (its buffer holds raw 16-bit patterns, read as float64 values). */
export function isHalfFloat(type: DataType): boolean {
  const t = type as unknown as { typeId: number; precision?: number };
  return t.typeId === 3 && t.precision === 0;
}

/** The typed array that holds each numeric kind's values. */
export const TYPED: Record<Exclude<ColumnKind, "bool" | "utf8">, new (n: number) => NumericArray> = {
  float64: Float64Array,
  float32: Float32Array,
  int8: Int8Array,
  int16: Int16Array,
  int32: Int32Array,
  int64: BigInt64Array,
  uint8: Uint8Array,
  uint16: Uint16Array,
  uint32: Uint32Array,
  uint64: BigUint64Array,
};

/** One column as ColumnData: values copied out of Arrow, nulls as a byte mask. Unknown types become utf8. */
export function columnDataOf(table: Table, name: string): ColumnData {
  const v = requireColumn(table, name);
  const field = table.schema.fields.find((f) => f.name === name)!;
  const kind = kindOf(field.type) ?? "utf8";
  const n = table.numRows;
  const hasNulls = v.nullCount > 0;
  const nulls = hasNulls ? nullMask(table, name) : undefined;
  const meta = columnMeta(table, name);
  let values: NumericArray | string[];
  if (kind === "utf8") {
    // decoded from the offsets (stringColumn), not one Vector.get per row
    const text = stringColumn(table, name);
    values = new Array<string>(n);
    for (let i = 0; i < n; i++) (values as string[])[i] = text[i] ?? "";
  } else if (kind === "bool" && field.type instanceof Bool) {
    // the packed bits read directly (Arrow: bit offset + k of `values`); a null reads as false
    const b = new Uint8Array(n);
    let i = 0;
    for (const chunk of v.data) {
      const bits = chunk.values as Uint8Array;
      const off = chunk.offset;
      for (let k = 0; k < chunk.length; k++) {
        const x = off + k;
        b[i + k] = (bits[x >> 3]! >> (x & 7)) & 1;
      }
      i += chunk.length;
    }
    if (nulls) for (let r = 0; r < n; r++) if (nulls[r]) b[r] = 0;
    values = b;
  } else if (kind === "bool") {
    const b = new Uint8Array(n);
    for (let i = 0; i < n; i++) b[i] = !nulls?.[i] && v.get(i) ? 1 : 0;
    values = b;
  } else if (isHalfFloat(field.type)) {
    // Arrow decodes the half-precision bit patterns in get(); the buffer itself holds the raw patterns
    const arr = new Float64Array(n);
    for (let r = 0; r < n; r++) arr[r] = nulls?.[r] ? NaN : (v.get(r) as number);
    values = arr;
  } else {
    const arr = new TYPED[kind](n);
    let i = 0;
    for (const chunk of v.data) {
      const src = chunk.values as NumericArray;
      // Arrow slices `values` already (chunk.offset only indexes the validity bitmap).
      (arr as Float64Array).set(src.subarray(0, chunk.length) as Float64Array, i);
      i += chunk.length;
    }
    values = arr;
  }
  const out: ColumnData = { name, kind, values, meta };
  if (hasNulls) out.nulls = nulls;
  return out;
}

/**
 * A column carried over unchanged: its Arrow data itself when it is one chunk of a kind we read
 * (no copy, and the data stays recognisable, line-text.ts), else a copy (columnDataOf).
 */
function keptColumn(table: Table, name: string): ColumnData | DataColumn {
  const v = requireColumn(table, name);
  const field = table.schema.fields.find((f) => f.name === name)!;
  if (v.data.length === 1 && kindOf(field.type) !== undefined && !isHalfFloat(field.type)) {
    const c: DataColumn = { name, data: v.data[0] as Data };
    const meta = columnMeta(table, name);
    if (Object.keys(meta).length > 0) c.meta = meta;
    return c;
  }
  return columnDataOf(table, name);
}

/** A new table with `columns` appended (or replacing same-named columns), schema metadata kept or replaced. */
export function withColumns(table: Table, columns: ColumnData[], schemaMetadata?: Map<string, string>): Table {
  const replaced = new Set(columns.map((c) => c.name));
  const kept = table.schema.fields.filter((f) => !replaced.has(f.name)).map((f) => keptColumn(table, f.name));
  const order = [...kept];
  // Replaced columns keep their position; new ones go at the end.
  const byName = new Map(columns.map((c) => [c.name, c]));
  const out: (ColumnData | DataColumn)[] = [];
  for (const f of table.schema.fields) {
    const r = byName.get(f.name);
    if (r) {
      out.push(r);
      byName.delete(f.name);
    } else out.push(order.shift()!);
  }
  for (const c of byName.values()) out.push(c);
  return tableFromColumns(out, schemaMetadata ?? new Map(table.schema.metadata), table.numRows);
}

/**
 * Rows of `table` at `rows` (Int32Array; -1 gives an all-null row). Used by joins and subsets.
 */
export function takeRows(table: Table, rows: Int32Array, prefix = ""): ColumnData[] {
  return columnsOf(table).map((c) => takeColumn(c, rows, prefix));
}

export function takeColumn(c: ColumnData, rows: Int32Array, prefix = ""): ColumnData {
  const n = rows.length;
  const nulls = new Uint8Array(n);
  let values: NumericArray | string[];
  if (c.kind === "utf8") {
    const src = c.values as string[];
    const dst = new Array<string>(n);
    for (let i = 0; i < n; i++) {
      const r = rows[i]!;
      if (r < 0 || c.nulls?.[r]) {
        nulls[i] = 1;
        dst[i] = "";
      } else dst[i] = src[r]!;
    }
    values = dst;
  } else {
    const src = c.values as NumericArray;
    const dst = new (src.constructor as new (n: number) => NumericArray)(n);
    for (let i = 0; i < n; i++) {
      const r = rows[i]!;
      if (r < 0 || c.nulls?.[r]) nulls[i] = 1;
      else (dst as Float64Array)[i] = (src as Float64Array)[r]!;
    }
    values = dst;
  }
  const out: ColumnData = { name: prefix + c.name, kind: c.kind, values };
  if (c.meta) out.meta = c.meta;
  if (nulls.some((x) => x === 1)) out.nulls = nulls;
  return out;
}
