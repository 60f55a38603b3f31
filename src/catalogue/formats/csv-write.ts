/**
 * Writes a table as CSV/TSV (rules in csv.ts and DEVELOPERS.md, "Catalogue formats"): straight
 * from the Arrow buffers into byte chunks, numbers formatted into the bytes (decimal.ts), text
 * copied as UTF-8 bytes; no string per cell and never the whole file as one string.
 */
import { Utf8, type Data, type Table } from "apache-arrow";
import { PeculiarError } from "../../errors.js";
import { kindOf } from "../columns.js";
import { isBlank, isNullToken, NULL_TOKENS, UNITS_MARKER } from "./csv.js";
import { digitRun, writeShortest } from "./decimal.js";
import { formatFloat } from "./table.js";
import type { RowText } from "../line-text.js";

export interface CsvWriteOptions {
  delimiter?: string;
  /** Write the header (and the units rows); false for the rows of a table cut in parts. Default true. */
  header?: boolean;
  /**
   * Column blocks written as the lines they were read from (line-text.ts), row t of the table from
   * line rows[t] of the block's file; used only where the file's delimiter is the one written.
   */
  rowText?: RowText[];
}

const NEEDS_QUOTES_RE = /["\r\n]|^\s|\s$|^#/;

function quote(s: string, delim: string, text: boolean): string {
  if (s === "" || NEEDS_QUOTES_RE.test(s) || s.includes(delim) || (text && NULL_TOKENS.has(s))) return `"${s.replace(/"/g, '""')}"`;
  return s;
}

/** Bytes per chunk handed out (a row that does not fit grows its chunk). */
const CHUNK = 1 << 20;
const ROOM = 1 << 14;

const encoder = new TextEncoder();
const decoder = new TextDecoder();

// How a column is written.
const W_F64 = 0;
const W_F32 = 1;
const W_INT = 2;
const W_BIG = 3;
const W_BOOL = 4;
const W_UTF8 = 5;
const W_OTHER = 6;
const W_I32 = 7;

function writerKind(data: Data): number {
  switch (kindOf(data.type)) {
    case "float64":
      return data.values instanceof Float64Array ? W_F64 : W_OTHER;
    case "float32":
      return data.values instanceof Float32Array ? W_F32 : W_OTHER;
    case "int64":
    case "uint64":
      return W_BIG;
    case "int32":
      return data.values instanceof Int32Array ? W_I32 : W_INT;
    case "int8":
    case "int16":
    case "uint8":
    case "uint16":
    case "uint32":
      return W_INT;
    case "bool":
      return W_BOOL;
    case "utf8":
      return data.type instanceof Utf8 && data.valueOffsets instanceof Int32Array ? W_UTF8 : W_OTHER;
    default:
      return W_OTHER;
  }
}

/** Writes ASCII text (at most 32 characters: room is made per row) and returns the new position. */
function writeAscii(b: Uint8Array, p: number, s: string): number {
  for (let i = 0; i < s.length; i++) b[p++] = s.charCodeAt(i);
  return p;
}


/** Writes an integer (the text of String(v)) and returns the new position. */
function writeInt(b: Uint8Array, p: number, v: number): number {
  if (v > 2147483647 || v < -2147483647) return writeAscii(b, p, String(v));
  if (v < 0) {
    b[p++] = 45;
    v = -v;
  }
  // the digit count by comparisons (row numbers and counts: the branches predict well)
  const digits = v < 10000 ? (v < 100 ? (v < 10 ? 1 : 2) : v < 1000 ? 3 : 4) : v < 10000000 ? (v < 100000 ? 5 : v < 1000000 ? 6 : 7) : v < 100000000 ? 8 : v < 1000000000 ? 9 : 10;
  digitRun(v, digits, b, p);
  return p + digits;
}

/** A growable byte buffer handed out in chunks. */
class Sink {
  buf = new Uint8Array(CHUNK);
  /** buf as a DataView (copies of line text go four bytes at a time). */
  view = new DataView(this.buf.buffer);
  pos = 0;

  ensure(n: number): void {
    if (this.pos + n <= this.buf.length) return;
    const b = new Uint8Array(Math.max(this.buf.length * 2, this.pos + n));
    b.set(this.buf.subarray(0, this.pos));
    this.buf = b;
    this.view = new DataView(b.buffer);
  }

  take(): Uint8Array {
    const out = this.buf.subarray(0, this.pos);
    this.buf = new Uint8Array(CHUNK);
    this.view = new DataView(this.buf.buffer);
    this.pos = 0;
    return out;
  }

  ascii(s: string): void {
    this.ensure(s.length);
    const b = this.buf;
    let p = this.pos;
    for (let i = 0; i < s.length; i++) b[p++] = s.charCodeAt(i);
    this.pos = p;
  }

  text(s: string): void {
    this.ensure(s.length * 3);
    this.pos += encoder.encodeInto(s, this.buf.subarray(this.pos)).written;
  }

  /** A UTF-8 text cell bytes[a, b), quoted when the CSV rules need it. */
  cell(bytes: Uint8Array, a: number, e: number, delim: number, delimText: string): void {
    let needs = a === e;
    if (!needs) {
      const c0 = bytes[a]!;
      const c1 = bytes[e - 1]!;
      if (c0 >= 0x80 || c1 >= 0x80) {
        // A Unicode blank at an edge needs the regular expression's view.
        this.text(quote(decoder.decode(bytes.subarray(a, e)), delimText, true));
        return;
      }
      needs = c0 === 35 || isBlank(c0) || isBlank(c1) || isNullToken(bytes, a, e);
      for (let i = a; !needs && i < e; i++) {
        const c = bytes[i]!;
        needs = c === 34 || c === 10 || c === 13 || c === delim;
      }
    }
    if (!needs) {
      this.ensure(e - a);
      this.buf.set(bytes.subarray(a, e), this.pos);
      this.pos += e - a;
      return;
    }
    this.ensure(2 * (e - a) + 2);
    const b = this.buf;
    let p = this.pos;
    b[p++] = 34;
    for (let i = a; i < e; i++) {
      const c = bytes[i]!;
      if (c === 34) b[p++] = 34;
      b[p++] = c;
    }
    b[p++] = 34;
    this.pos = p;
  }
}

/** A block of columns copied from the lines of a file (RowText), with its bytes as a DataView too. */
interface Block {
  count: number;
  rows: Int32Array;
  starts: Uint32Array;
  ends: Uint32Array;
  bytes: Uint8Array;
  view: DataView;
}

/** Writes rows of one record batch into the sink until a chunk is full (a plain loop, outside the generator). */
class RowWriter {
  readonly fixed: number;
  constructor(
    readonly sink: Sink,
    readonly delim: number,
    readonly delimText: string,
    readonly nullText: string,
    readonly kinds: number[],
    readonly values: ArrayLike<number>[],
    readonly valid: (Uint8Array | null)[],
    readonly offsets: number[],
    readonly valueOffsets: Int32Array[],
    readonly other: ({ get(i: number): unknown } | null)[],
    readonly row0: number,
    /** Per column: the block of copied lines that starts there, or null. */
    readonly blocks: (Block | null)[],
  ) {
    // Bytes a row of numbers and booleans can take; text cells make room for themselves.
    this.fixed = 1 + kinds.reduce((sum, k) => sum + (k === W_UTF8 || k === W_OTHER ? 1 : 32), 0);
    // The values once more, one array per element type (a dummy where the column is of another):
    // each read in the row loop then sees one type only.
    const f64 = new Float64Array(0);
    const i32 = new Int32Array(0);
    const u8 = new Uint8Array(0);
    this.f64 = kinds.map((k, j) => (k === W_F64 ? (values[j] as Float64Array) : f64));
    this.i32 = kinds.map((k, j) => (k === W_I32 ? (values[j] as Int32Array) : i32));
    this.bytes = kinds.map((k, j) => (k === W_BOOL || k === W_UTF8 ? (values[j] as unknown as Uint8Array) : u8));
    this.blockAt = Uint8Array.from(blocks, (b) => (b ? 1 : 0));
  }
  readonly f64: Float64Array[];
  readonly i32: Int32Array[];
  /** 1 where a block of copied lines starts (a typed array: cheaper to test per cell than `blocks`). */
  readonly blockAt: Uint8Array;
  readonly bytes: Uint8Array[];

  /** Writes rows from..to-1 and returns the next row to write (to, or earlier when a chunk is full). */
  write(from: number, to: number): number {
    const { sink, delim, delimText, nullText, kinds, values, valid, offsets, valueOffsets, other, row0, fixed, f64, i32, bytes, blocks, blockAt } = this;
    const width = kinds.length;
    let buf = sink.buf;
    let pos = sink.pos;
    for (let i = from; i < to; i++) {
      if (pos > CHUNK - ROOM) {
        sink.pos = pos;
        return i;
      }
      if (pos + fixed > buf.length) {
        sink.pos = pos;
        sink.ensure(fixed);
        buf = sink.buf;
      }
      for (let j = 0; j < width; j++) {
        if (j > 0) buf[pos++] = delim;
        if (blockAt[j] === 1) {
          const block = blocks[j]!;
          // the cells of the block as their line spelled them (its delimiters included)
          const r = block.rows[row0 + i]!;
          if (r >= 0) {
            const s = block.starts[r]!;
            const e = block.ends[r]!;
            if (pos + (e - s) + fixed > buf.length) {
              sink.pos = pos;
              sink.ensure(e - s + fixed);
              buf = sink.buf;
            }
            // four bytes at a time (a byte loop took three times as long), then the rest
            const src32 = block.view;
            const dst32 = sink.view;
            let t = s;
            for (; t + 4 <= e; t += 4, pos += 4) dst32.setUint32(pos, src32.getUint32(t, true), true);
            const src = block.bytes;
            for (; t < e; t++) buf[pos++] = src[t]!;
          } else for (let t = 1; t < block!.count; t++) buf[pos++] = delim;
          j += block!.count - 1;
          continue;
        }
        const bits = valid[j];
        if (bits) {
          const bit = offsets[j]! + i;
          if (!((bits[bit >> 3]! >> (bit & 7)) & 1)) {
            if (nullText) {
              buf[pos++] = 78; // NaN
              buf[pos++] = 97;
              buf[pos++] = 78;
            }
            continue;
          }
        }
        const kind = kinds[j]!;
        if (kind === W_F64) {
          const x = f64[j]![i]!;
          if (x === x && x !== 0 && x !== Infinity && x !== -Infinity) {
            const p = writeShortest(x, buf, pos);
            if (p >= 0) {
              pos = p;
              continue;
            }
          }
          pos = writeAscii(buf, pos, formatFloat(x));
        } else if (kind === W_I32) pos = writeInt(buf, pos, i32[j]![i]!);
        else if (kind === W_BOOL) {
          const bit = offsets[j]! + i;
          if ((bytes[j]![bit >> 3]! >> (bit & 7)) & 1) {
            buf[pos++] = 116; // true
            buf[pos++] = 114;
            buf[pos++] = 117;
            buf[pos++] = 101;
          } else {
            buf[pos++] = 102; // false
            buf[pos++] = 97;
            buf[pos++] = 108;
            buf[pos++] = 115;
            buf[pos++] = 101;
          }
        } else if (kind === W_INT) pos = writeInt(buf, pos, values[j]![i]!);
        else if (kind === W_F32) pos = writeAscii(buf, pos, formatFloat(values[j]![i]!, true));
        else if (kind === W_BIG) pos = writeAscii(buf, pos, String((values[j] as unknown as BigInt64Array)[i]));
        else {
          const offs = valueOffsets[j]!;
          if (kind === W_UTF8 && offs[i] === offs[i + 1]) {
            // an empty string is written `""` (quoted, so that it does not read as a null)
            if (pos + fixed + 2 > buf.length) {
              sink.pos = pos;
              sink.ensure(fixed + 2);
              buf = sink.buf;
            }
            buf[pos++] = 34;
            buf[pos++] = 34;
            continue;
          }
          sink.pos = pos;
          if (kind === W_UTF8) {
            sink.cell(bytes[j]!, offs[i]!, offs[i + 1]!, delim, delimText);
          } else sink.text(quote(String(other[j]!.get(row0 + i) ?? ""), delimText, true));
          // the rest of the row still needs its fixed room
          sink.ensure(fixed);
          buf = sink.buf;
          pos = sink.pos;
        }
      }
      buf[pos++] = 10;
    }
    sink.pos = pos;
    return to;
  }
}

/**
 * The CSV/TSV text of a table in chunks of about 1 MiB: header, a units row (after the marker
 * comment) when any column has a unit, booleans as true/false, nulls as empty fields, empty
 * strings as `""`, numbers in their shortest round-trip form (ECMAScript Number::toString).
 */
export function csvChunks(table: Table, options: CsvWriteOptions = {}): Generator<Uint8Array> {
  return chunks(table, csvDelimiter(options), options.header ?? true, options.rowText ?? []);
}

/** The delimiter of `options` (default ","); an error unless it is one ASCII character. */
export function csvDelimiter(options: CsvWriteOptions): string {
  const delimText = options.delimiter ?? ",";
  if (delimText.length !== 1 || delimText.charCodeAt(0) > 127) throw new PeculiarError("usage", "delimiter must be one ASCII character", { value: delimText });
  return delimText;
}

/**
 * Per column of `table`: the block of copied lines (CsvWriteOptions.rowText) that starts there, or
 * null. A block is used when its file has the delimiter `delim`, it lies inside the table, has a row
 * for every table row and overlaps no block used before it; never in a one-column table.
 */
export function usedRowText(table: Table, delim: number, rowText: RowText[]): (RowText | null)[] {
  const width = table.schema.fields.length;
  const used = new Array<RowText | null>(width).fill(null);
  for (const b of rowText) {
    if (width === 1 || b.text.delimiter !== delim || b.count < 1 || b.first < 0 || b.first + b.count > width || b.rows.length < table.numRows) continue;
    if (used.some((o, j) => o !== null && j + o.count > b.first && j < b.first + b.count)) continue;
    used[b.first] = b;
  }
  return used;
}

function* chunks(table: Table, delimText: string, header: boolean, rowText: RowText[]): Generator<Uint8Array> {
  const delim = delimText.charCodeAt(0);
  const fields = table.schema.fields;
  const width = fields.length;
  const blocks = usedRowText(table, delim, rowText).map((b) => {
    if (!b) return null;
    const { bytes, starts, ends } = b.text;
    return { count: b.count, rows: b.rows, starts, ends, bytes, view: new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength) };
  });
  // A one-column table would write a null as a blank line, which reads as no row: write NaN there.
  const nullText = width === 1 ? "NaN" : "";
  const sink = new Sink();
  const units = fields.map((f) => f.metadata.get("unit") ?? "");
  const anyUnit = units.some((u) => u !== "");
  const lines: string[] = [];
  if (anyUnit) lines.push(UNITS_MARKER);
  lines.push(fields.map((f) => quote(f.name, delimText, false)).join(delimText));
  if (anyUnit) lines.push(units.map((u) => (u ? quote(u, delimText, false) : "")).join(delimText));
  if (header) sink.text(lines.join("\n") + "\n");
  let row0 = 0;
  for (const batch of table.batches) {
    const n = batch.numRows;
    const datas = fields.map((_, j) => batch.data.children[j]!);
    const kinds = datas.map(writerKind);
    const other = kinds.map((k, j) => (k === W_OTHER ? table.getChildAt(j) : null));
    // Per column, read once: values, validity bitmap (null when every value is valid), bit offset.
    const values = datas.map((d) => d.values as ArrayLike<number>);
    const valid = datas.map((d) => (d.nullCount > 0 ? d.nullBitmap! : null));
    const offsets = datas.map((d) => d.offset);
    const valueOffsets = datas.map((d) => d.valueOffsets as Int32Array);
    const rows = new RowWriter(sink, delim, delimText, nullText, kinds, values, valid, offsets, valueOffsets, other, row0, blocks);
    for (let i = 0; i < n; ) {
      i = rows.write(i, n);
      if (i < n) yield sink.take();
    }
    row0 += n;
  }
  if (sink.pos > 0) yield sink.take();
}

/** The CSV/TSV bytes of a table (csvChunks joined). */
export function csvBytes(table: Table, options: CsvWriteOptions = {}): Uint8Array {
  const chunks = [...csvChunks(table, options)];
  const out = new Uint8Array(chunks.reduce((s, c) => s + c.length, 0));
  let p = 0;
  for (const c of chunks) {
    out.set(c, p);
    p += c.length;
  }
  return out;
}

/** The CSV/TSV text of a table (csvChunks as one string). */
export function csvFromTable(table: Table, options: CsvWriteOptions = {}): string {
  return decoder.decode(csvBytes(table, options));
}
