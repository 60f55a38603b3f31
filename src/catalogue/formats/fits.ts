/**
 * FITS binary tables (FITS Standard 4.0 §7.3). Reading: walks the HDUs (2880-byte blocks), takes
 * the first BINTABLE (or the one chosen by number or EXTNAME) and decodes big-endian columns.
 * Decisions (also in DEVELOPERS.md, "Catalogue formats"):
 * - TFORM L, X, B, I, J, K, E, D, A. A repeat count 1 < r <= 64 on a numeric, logical or bit field
 *   gives r columns `name_0` .. `name_{r-1}` (longer vectors: one text column, values separated by
 *   spaces, nulls as NaN) (bits: one bool column per bit, bit 0 = most significant
 *   bit of the first byte, FITS 4.0 §7.3); `rA` is one string of up to r bytes (UTF-8 read,
 *   cut at the first NUL, trailing spaces dropped; empty -> null). C, M, P, Q fields are left out
 *   and listed in peculiar.source `skipped`.
 * - TZEROn/TSCALn: TSCAL 1 with TZERO -128 (B), 32768 (I), 2147483648 (J) or
 *   9223372036854775808 (K) gives int8, uint16, uint32, uint64; any other scaling gives float64.
 *   TNULLn is compared with the stored integer; NaN floats are null; logical 0 bytes are null.
 * - Field metadata: unit from TUNITn, description from the comment of TTYPEn.
 * Writing (fits-write.ts): an empty primary HDU and one BINTABLE (EXTNAME 'CATALOGUE'): TTYPE/TFORM/TUNIT, TNULL for
 * integer columns with nulls (a stored value the column does not use), TZERO for unsigned and int8,
 * strings as rA (r = longest value in bytes), bools as L, NaN for null floats. Schema metadata
 * entries are written as PMETAn (key) / PMVALn (value, long-string convention; PMENCn = 'base64'
 * when not printable ASCII), and each peculiar.settings entry also as a keyword of its own.
 */
import type { Table } from "apache-arrow";
import type { ColumnData, ColumnKind, ColumnMeta } from "../columns.js";
import { PeculiarError } from "../../errors.js";
import { finishTable, type ParsedColumns, type SourceInfo } from "./table.js";
import { BLOCK, base64ToBytes, card, num, parseHeader, str, type Card, type Header } from "./fits-header.js";

export interface FitsReadOptions {
  file: string;
  /** HDU number (0 = primary) or EXTNAME (case-insensitive). Default: the first BINTABLE. */
  hdu?: number | string;
}

interface Hdu {
  index: number;
  header: Header;
  dataStart: number;
  dataBytes: number;
  kind: string; // "primary", "BINTABLE", "IMAGE", "TABLE", ...
  extname?: string;
}

/** The size of an HDU's data in bytes (FITS 4.0: |BITPIX|/8 * GCOUNT * (PCOUNT + NAXIS1 * ... * NAXISn)). */
function dataSize(h: Header, primary: boolean): number {
  const naxis = num(h, "NAXIS", 0)!;
  if (naxis === 0) return 0;
  const bitpix = Math.abs(num(h, "BITPIX", 8)!);
  const groups = primary && card(h, "GROUPS")?.value === true && num(h, "NAXIS1") === 0;
  let prod = 1;
  for (let k = groups ? 2 : 1; k <= naxis; k++) prod *= num(h, `NAXIS${k}`, 0)!;
  const pcount = num(h, "PCOUNT", 0)!;
  const gcount = num(h, "GCOUNT", 1)!;
  return (bitpix / 8) * gcount * (pcount + prod);
}

function walk(bytes: Uint8Array, file: string, stopAt: (h: Hdu) => boolean): { hdus: Hdu[]; found?: Hdu } {
  const hdus: Hdu[] = [];
  let offset = 0;
  for (let index = 0; offset < bytes.length; index++) {
    if (index > 0) {
      // Only a header that starts with XTENSION is another HDU; anything else is trailing bytes.
      const key = String.fromCharCode(...bytes.subarray(offset, offset + 8));
      if (key !== "XTENSION" || bytes.length - offset < 80) break;
    }
    if (index === 0 && !/^SIMPLE  = {20}T/.test(String.fromCharCode(...bytes.subarray(0, 30)))) {
      throw new PeculiarError("format", "not a FITS file (the first card is not SIMPLE = T)", { file });
    }
    const header = parseHeader(bytes, offset, file, index);
    const dataBytes = dataSize(header, index === 0);
    const kind = index === 0 ? "primary" : (str(header, "XTENSION") ?? "?").trim();
    const hdu: Hdu = { index, header, dataStart: header.end, dataBytes, kind };
    const extname = str(header, "EXTNAME");
    if (extname !== undefined) hdu.extname = extname.trim();
    hdus.push(hdu);
    const available = bytes.length - header.end;
    if (dataBytes > available) {
      throw new PeculiarError("format", `truncated: header says ${dataBytes} bytes of data, file has ${Math.max(0, available)}${index > 0 ? ` (HDU ${index})` : ""}`, { file });
    }
    if (stopAt(hdu)) return { hdus, found: hdu };
    offset = header.end + Math.ceil(dataBytes / BLOCK) * BLOCK;
  }
  return { hdus };
}

function describe(h: Hdu): string {
  return `${h.index} ${h.kind}${h.extname ? ` '${h.extname}'` : ""}`;
}

interface FieldForm {
  repeat: number;
  code: string;
  width: number;
}

export const CODE_BYTES: Record<string, number> = { L: 1, B: 1, I: 2, J: 4, K: 8, A: 1, E: 4, D: 8, C: 8, M: 16, P: 8, Q: 16 };

function parseTform(tform: string, file: string, n: number): FieldForm {
  const m = /^\s*(\d*)\s*([LXBIJKAEDCMPQ])/.exec(tform.toUpperCase());
  if (!m) throw new PeculiarError("format", `TFORM${n} '${tform}' is not a FITS binary table format`, { file });
  const repeat = m[1] === "" ? 1 : Number(m[1]);
  const code = m[2]!;
  const width = code === "X" ? Math.ceil(repeat / 8) : code === "P" || code === "Q" ? CODE_BYTES[code]! * Math.min(repeat, 1) : CODE_BYTES[code]! * repeat;
  return { repeat, code, width };
}

export const TWO63 = 9223372036854775808n;

/** Repeat counts up to this become columns name_0 .. name_{r-1}; longer vectors one text column. */
export const MAX_SPLIT = 64;

/** One element of a vector as text (nulls as NaN, booleans as T/F). */
function elementText(c: ColumnData, i: number): string {
  if (c.nulls?.[i]) return "NaN";
  const v = (c.values as ArrayLike<number | bigint>)[i]!;
  return c.kind === "bool" ? (v ? "T" : "F") : String(v);
}

export function parseFitsColumns(bytes: Uint8Array, options: FitsReadOptions): { parsed: ParsedColumns; info: SourceInfo } {
  const file = options.file;
  // A number given as text ("2", e.g. from a command line) is an HDU number.
  const want = typeof options.hdu === "string" && /^\s*\d+\s*$/.test(options.hdu) ? Number(options.hdu) : options.hdu;
  const match = (h: Hdu) =>
    want === undefined ? h.kind === "BINTABLE" : typeof want === "number" ? h.index === want : (h.extname ?? "").toUpperCase() === want.trim().toUpperCase();
  const { hdus, found } = walk(bytes, file, match);
  if (!found) {
    const list = hdus.map(describe).join(", ");
    if (want === undefined) throw new PeculiarError("format", `no BINTABLE extension (HDUs: ${list})`, { file });
    throw new PeculiarError("format", `no HDU ${typeof want === "number" ? want : `named '${want}'`} (HDUs: ${list})`, { file });
  }
  if (found.kind !== "BINTABLE") {
    throw new PeculiarError("format", `HDU ${describe(found)} is not a BINTABLE`, { file });
  }
  const h = found.header;
  const rowBytes = num(h, "NAXIS1", 0)!;
  const rows = num(h, "NAXIS2", 0)!;
  const tfields = num(h, "TFIELDS", 0)!;
  const view = new DataView(bytes.buffer, bytes.byteOffset + found.dataStart, Math.min(found.dataBytes, bytes.length - found.dataStart));
  const u8 = new Uint8Array(bytes.buffer, bytes.byteOffset + found.dataStart, view.byteLength);

  const columns: ColumnData[] = [];
  const skipped: string[] = [];
  const names = new Set<string>();
  const freshName = (base: string) => {
    let nm = base;
    for (let k = 2; names.has(nm); k++) nm = `${base}_${k}`;
    names.add(nm);
    return nm;
  };
  const forms: FieldForm[] = [];
  let offset = 0;
  for (let n = 1; n <= tfields; n++) {
    const tformCard = card(h, `TFORM${n}`);
    if (!tformCard || typeof tformCard.value !== "string") throw new PeculiarError("format", `BINTABLE HDU ${found.index} has no TFORM${n}`, { file });
    const form = parseTform(tformCard.value, file, n);
    forms.push(form);
    offset += form.width;
  }
  if (offset > rowBytes) throw new PeculiarError("format", `TFORMs need ${offset} bytes per row, NAXIS1 says ${rowBytes}`, { file });
  if (rowBytes * rows > view.byteLength) throw new PeculiarError("format", `truncated: header says ${rowBytes * rows} bytes of data, file has ${view.byteLength}`, { file });
  offset = 0;
  for (let n = 1; n <= tfields; n++) {
    const tformCard = card(h, `TFORM${n}`)!;
    const form = forms[n - 1]!;
    const ttype = card(h, `TTYPE${n}`);
    const base = typeof ttype?.value === "string" && ttype.value.trim() !== "" ? unescapeAscii(ttype.value.trim()) : `col${n}`;
    const meta: ColumnMeta = {};
    const unit = unescapeAscii(str(h, `TUNIT${n}`)?.trim() ?? "");
    if (unit) meta.unit = unit;
    if (ttype?.comment) meta.description = unescapeAscii(ttype.comment);
    const start = offset;
    offset += form.width;
    if (form.repeat === 0) continue;
    if ("CMPQ".includes(form.code)) {
      skipped.push(`${base}: TFORM '${String(tformCard.value).trim()}' (${form.code === "C" || form.code === "M" ? "complex" : "variable-length array"}) is not read`);
      continue;
    }
    if (form.code === "A") {
      columns.push(readString(u8, rows, rowBytes, start, form.repeat, freshName(base), meta));
      continue;
    }
    const tnullCard = card(h, `TNULL${n}`);
    const scale = { zero: card(h, `TZERO${n}`), scal: card(h, `TSCAL${n}`) };
    const count = form.repeat;
    const element = (e: number, name: string) =>
      form.code === "X"
        ? readBit(u8, rows, rowBytes, start, e, name)
        : readNumeric(view, u8, rows, rowBytes, start + e * CODE_BYTES[form.code]!, form.code, name, tnullCard?.raw, scale.zero?.raw, scale.scal?.value);
    if (count > MAX_SPLIT) {
      // A long vector (a spectrum, a bit mask) is one text column, values separated by spaces.
      const texts = new Array<string>(rows).fill("");
      for (let e = 0; e < count; e++) {
        const c = element(e, base);
        for (let i = 0; i < rows; i++) texts[i] += (e > 0 ? " " : "") + elementText(c, i);
      }
      const col: ColumnData = { name: freshName(base), kind: "utf8", values: texts };
      if (Object.keys(meta).length > 0) col.meta = meta;
      columns.push(col);
      continue;
    }
    for (let e = 0; e < count; e++) {
      const name = freshName(count > 1 ? `${base}_${e}` : base);
      const c = element(e, name);
      if (Object.keys(meta).length > 0) c.meta = meta;
      columns.push(c);
    }
  }

  // Schema metadata written by us: PMETAn / PMVALn (/ PMENCn).
  const metadata = new Map<string, string>();
  for (const c of h.cards) {
    const m = /^PMETA(\d+)$/.exec(c.key);
    if (!m || typeof c.value !== "string") continue;
    const v = card(h, `PMVAL${m[1]}`);
    if (!v) continue;
    const text = typeof v.value === "string" ? v.value : v.raw;
    let value = text;
    if (str(h, `PMENC${m[1]}`)?.trim() === "base64") {
      try {
        value = new TextDecoder().decode(base64ToBytes(text));
      } catch {
        throw new PeculiarError("format", `PMVAL${m[1]} is not valid base64`, { file });
      }
    }
    metadata.set(c.value, value);
  }

  const sourceRows = new Int32Array(rows);
  for (let i = 0; i < rows; i++) sourceRows[i] = i + 1;
  const info: SourceInfo = { file, format: "fits", hdu: found.index };
  if (found.extname !== undefined) info.extname = found.extname;
  if (skipped.length > 0) info.skipped = skipped;
  return { parsed: { columns, rows, reasons: [], sourceRows, metadata }, info };
}

function readString(u8: Uint8Array, rows: number, rowBytes: number, start: number, width: number, name: string, meta: ColumnMeta): ColumnData {
  const dec = new TextDecoder("utf-8");
  const values = new Array<string>(rows);
  const nulls = new Uint8Array(rows);
  let any = false;
  for (let i = 0; i < rows; i++) {
    const p = i * rowBytes + start;
    let end = p;
    while (end < p + width && u8[end] !== 0) end++;
    const s = dec.decode(u8.subarray(p, end)).replace(/ +$/, "");
    values[i] = s;
    if (s === "") {
      nulls[i] = 1;
      any = true;
    }
  }
  const c: ColumnData = { name, kind: "utf8", values };
  if (any) c.nulls = nulls;
  if (Object.keys(meta).length > 0) c.meta = meta;
  return c;
}

function readBit(u8: Uint8Array, rows: number, rowBytes: number, start: number, bit: number, name: string): ColumnData {
  const v = new Uint8Array(rows);
  const mask = 0x80 >> (bit & 7);
  for (let i = 0; i < rows; i++) v[i] = u8[i * rowBytes + start + (bit >> 3)]! & mask ? 1 : 0;
  return { name, kind: "bool", values: v };
}

function readNumeric(
  view: DataView,
  u8: Uint8Array,
  rows: number,
  rowBytes: number,
  at: number,
  code: string,
  name: string,
  tnullRaw: string | undefined,
  zeroRaw: string | undefined,
  scal: Card["value"] | undefined,
): ColumnData {
  const nulls = new Uint8Array(rows);
  let any = false;
  const setNull = (i: number) => {
    nulls[i] = 1;
    any = true;
  };
  const done = (kind: ColumnKind, values: ColumnData["values"]): ColumnData => {
    const c: ColumnData = { name, kind, values };
    if (any) c.nulls = nulls;
    return c;
  };
  if (code === "L") {
    const v = new Uint8Array(rows);
    for (let i = 0; i < rows; i++) {
      const b = u8[i * rowBytes + at]!;
      if (b === 0x54 /* T */) v[i] = 1;
      else if (b !== 0x46 /* F */) setNull(i);
    }
    return done("bool", v);
  }
  if (code === "E" || code === "D") {
    const scaled = isScaled(zeroRaw, scal);
    const zero = Number(zeroRaw ?? 0);
    const s = typeof scal === "number" ? scal : 1;
    const v = code === "E" && !scaled ? new Float32Array(rows) : new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      const p = i * rowBytes + at;
      const x = code === "E" ? view.getFloat32(p, false) : view.getFloat64(p, false);
      if (Number.isNaN(x)) setNull(i);
      else v[i] = scaled ? zero + s * x : x;
    }
    return done(code === "E" && !scaled ? "float32" : "float64", v);
  }
  // Integers: B, I, J, K.
  const tnull = tnullRaw !== undefined && /^[+-]?\d+$/.test(tnullRaw) ? BigInt(tnullRaw) : undefined;
  const zeroBig = zeroRaw !== undefined && /^[+-]?\d+$/.test(zeroRaw) ? BigInt(zeroRaw) : zeroRaw === undefined ? 0n : undefined;
  const unitScale = scal === undefined || scal === 1;
  const offsetKind: Record<string, [bigint, ColumnKind, ColumnKind]> = {
    B: [-128n, "int8", "uint8"],
    I: [32768n, "uint16", "int16"],
    J: [2147483648n, "uint32", "int32"],
    K: [TWO63, "uint64", "int64"],
  };
  const [special, specialKind, plainKind] = offsetKind[code]!;
  const get = (p: number): number =>
    code === "B" ? view.getUint8(p) : code === "I" ? view.getInt16(p, false) : view.getInt32(p, false);
  if (code === "K") {
    const raw = (p: number) => view.getBigInt64(p, false);
    if (unitScale && (zeroBig === 0n || zeroBig === special)) {
      const unsigned = zeroBig === special;
      const v = unsigned ? new BigUint64Array(rows) : new BigInt64Array(rows);
      for (let i = 0; i < rows; i++) {
        const x = raw(i * rowBytes + at);
        if (tnull !== undefined && x === tnull) setNull(i);
        else v[i] = unsigned ? BigInt.asUintN(64, x + TWO63) : x;
      }
      return done(unsigned ? specialKind : plainKind, v);
    }
    const zero = Number(zeroRaw ?? 0);
    const s = typeof scal === "number" ? scal : 1;
    const v = new Float64Array(rows);
    for (let i = 0; i < rows; i++) {
      const x = raw(i * rowBytes + at);
      if (tnull !== undefined && x === tnull) setNull(i);
      else v[i] = zero + s * Number(x);
    }
    return done("float64", v);
  }
  const tnullNum = tnull === undefined ? undefined : Number(tnull);
  if (unitScale && (zeroBig === 0n || zeroBig === special)) {
    const shifted = zeroBig === special;
    const kind = shifted ? specialKind : plainKind;
    const Arr = { int8: Int8Array, uint8: Uint8Array, int16: Int16Array, uint16: Uint16Array, int32: Int32Array, uint32: Uint32Array } as const;
    const v = new Arr[kind as keyof typeof Arr](rows);
    const z = Number(zeroBig);
    for (let i = 0; i < rows; i++) {
      const x = get(i * rowBytes + at);
      if (tnullNum !== undefined && x === tnullNum) setNull(i);
      else v[i] = shifted ? x + z : x;
    }
    return done(kind, v);
  }
  const zero = Number(zeroRaw ?? 0);
  const s = typeof scal === "number" ? scal : 1;
  const v = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    const x = get(i * rowBytes + at);
    if (tnullNum !== undefined && x === tnullNum) setNull(i);
    else v[i] = zero + s * x;
  }
  return done("float64", v);
}

/** Header text is ASCII; the writer escapes other characters as \uXXXX (see fits-header.ts). */
function unescapeAscii(s: string): string {
  return s.replace(/\\u([0-9a-fA-F]{4})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16)));
}

function isScaled(zeroRaw: string | undefined, scal: Card["value"] | undefined): boolean {
  return (zeroRaw !== undefined && Number(zeroRaw) !== 0) || (scal !== undefined && scal !== 1);
}

export function parseFits(bytes: Uint8Array, options: FitsReadOptions): Table {
  const { parsed, info } = parseFitsColumns(bytes, options);
  return finishTable(parsed, info);
}
