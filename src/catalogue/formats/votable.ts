/**
 * VOTable 1.3/1.4 (IVOA Recommendation). Reading: the first TABLE, its FIELDs (name, ID,
 * datatype, arraysize, unit, ucd, DESCRIPTION, VALUES null) and its data as TABLEDATA, BINARY or
 * BINARY2 (base64 STREAM); PARAMs and INFOs go to the schema metadata (`votable.params`,
 * `votable.infos`; an INFO named `peculiar.*` restores that schema-metadata entry).
 * Decisions (also in DEVELOPERS.md, "Catalogue formats"):
 * - Nulls: empty TD, a value equal to VALUES null, a set BINARY2 null bit (MSB of the first byte =
 *   first FIELD), NaN floats, boolean `?`/blank/NUL. An empty string reads as null in every
 *   serialisation (TABLEDATA cannot tell them apart).
 * - Types: boolean/bit -> bool, unsignedByte -> uint8, short -> int16, int -> int32,
 *   long -> int64, float -> float32, double -> float64, char/unicodeChar -> utf8. A fixed
 *   arraysize 1 < n <= 64 on a numeric, boolean or bit FIELD gives columns name_0 .. name_{n-1}; a
 *   longer or variable-length numeric array is kept as its text (TABLEDATA form, values separated by
 *   spaces). floatComplex/doubleComplex FIELDs are left out and listed in peculiar.source.
 * - A TABLEDATA row with the wrong number of TD is kept and flagged.
 * Writing (votable-write.ts): VOTable 1.4 TABLEDATA; FIELD unit/ucd/DESCRIPTION; every schema-metadata entry as an
 * INFO in the RESOURCE, and each peculiar.settings key also as an INFO of its own in the TABLE.
 */
import { SaxesParser } from "saxes";
import type { Table } from "apache-arrow";
import type { ColumnData, ColumnKind, ColumnMeta } from "../columns.js";
import { META } from "../meta.js";
import { PeculiarError } from "../../errors.js";
import { addReason, finishTable, type ParsedColumns, type SourceInfo } from "./table.js";

export const VOTABLE_PARAMS = "votable.params";

/** Fixed arraysizes up to this become columns name_0 .. name_{n-1}; longer arrays one text column. */
export const MAX_SPLIT = 64;
export const VOTABLE_INFOS = "votable.infos";

interface FieldDef {
  name: string;
  datatype: string;
  arraysize?: string;
  unit?: string;
  ucd?: string;
  description?: string;
  nullValue?: string;
}

interface VoState {
  fields: FieldDef[];
  params: Record<string, string>[];
  infos: { name: string; value: string; text?: string; inTable: boolean }[];
  tableCount: number;
  /** name (or ID) of each TABLE, in document order. */
  tables: string[];
  /** index of the TABLE read, -1 when none matched. */
  chosen: number;
  serialization?: "TABLEDATA" | "BINARY" | "BINARY2" | "FITS";
  rows: (string | null)[][];
  rowLines: number[];
  stream: string;
  streamEncoding?: string;
  streamHref?: string;
}

const local = (name: string) => name.slice(name.indexOf(":") + 1);

function parseXml(text: string, file: string, want: number | string | undefined): VoState {
  const st: VoState = { fields: [], params: [], infos: [], tableCount: 0, tables: [], chosen: -1, rows: [], rowLines: [], stream: "" };
  const parser = new SaxesParser({ position: true });
  const stack: string[] = [];
  let inChosen = false;
  let text_ = "";
  let row: (string | null)[] | null = null;
  let field: FieldDef | null = null;
  let descTarget: { description?: string } | null = null;
  let sawVotable = false;
  parser.on("error", (e) => {
    throw new PeculiarError("format", `malformed XML: ${e.message.replace(/^[^:]*:/, "").trim()}`, { file }, { cause: e });
  });
  parser.on("opentag", (tag) => {
    const name = local(tag.name);
    const a = tag.attributes as Record<string, string>;
    stack.push(name);
    text_ = "";
    if (stack.length === 1) {
      if (name !== "VOTABLE") throw new PeculiarError("format", `not a VOTable (root element is <${tag.name}>)`, { file });
      sawVotable = true;
    }
    switch (name) {
      case "TABLE":
      {
        const index = st.tableCount++;
        const label = a.name ?? a.ID ?? "";
        st.tables.push(label);
        const wanted =
          want === undefined ? true : typeof want === "number" ? index === want : label.toUpperCase() === want.trim().toUpperCase() || (a.ID ?? "").toUpperCase() === want.trim().toUpperCase();
        inChosen = st.chosen < 0 && wanted;
        if (inChosen) st.chosen = index;
      }
        break;
      case "FIELD":
        if (inChosen) {
          field = { name: a.name ?? a.ID ?? "", datatype: a.datatype ?? "char" };
          if (a.arraysize !== undefined) field.arraysize = a.arraysize;
          if (a.unit) field.unit = a.unit;
          if (a.ucd) field.ucd = a.ucd;
          st.fields.push(field);
          descTarget = field;
        }
        break;
      case "VALUES":
        if (field && a.null !== undefined) field.nullValue = a.null;
        break;
      case "PARAM": {
        const p: Record<string, string> = {};
        for (const k of ["name", "ID", "value", "datatype", "arraysize", "unit", "ucd"]) if (a[k] !== undefined) p[k] = a[k]!;
        st.params.push(p);
        descTarget = p as { description?: string };
        break;
      }
      case "INFO":
        st.infos.push({ name: a.name ?? "", value: a.value ?? "", inTable: inChosen });
        break;
      case "TABLEDATA":
      case "BINARY":
      case "BINARY2":
      case "FITS":
        if (inChosen) st.serialization = name;
        break;
      case "STREAM":
        if (inChosen) {
          if (a.encoding !== undefined) st.streamEncoding = a.encoding;
          if (a.href !== undefined) st.streamHref = a.href;
        }
        break;
      case "TR":
        if (inChosen) {
          row = [];
          st.rowLines.push(parser.line);
        }
        break;
    }
  });
  parser.on("text", (t) => {
    text_ += t;
  });
  parser.on("cdata", (t) => {
    text_ += t;
  });
  parser.on("closetag", (tag) => {
    const name = local(tag.name);
    stack.pop();
    switch (name) {
      case "TD":
        if (row) row.push(text_ === "" ? null : text_);
        break;
      case "TR":
        if (row) st.rows.push(row);
        row = null;
        break;
      case "STREAM":
        if (inChosen) st.stream += text_;
        break;
      case "DESCRIPTION":
        if (descTarget) descTarget.description = text_.replace(/\s+/g, " ").trim();
        break;
      case "FIELD":
        field = null;
        descTarget = null;
        break;
      case "PARAM":
        descTarget = null;
        break;
      case "INFO": {
        const info = st.infos[st.infos.length - 1];
        if (info && text_.trim() !== "") info.text = text_.trim();
        break;
      }
      case "TABLE":
        inChosen = false;
        break;
    }
    text_ = "";
  });
  try {
    parser.write(text).close();
  } catch (e) {
    if (e instanceof PeculiarError) throw e;
    throw new PeculiarError("format", `malformed XML: ${(e as Error).message}`, { file }, { cause: e });
  }
  if (!sawVotable) throw new PeculiarError("format", "not a VOTable (no root element)", { file });
  return st;
}

// ---- column layout ----

const ELEMENT_BYTES: Record<string, number> = {
  boolean: 1, unsignedByte: 1, short: 2, int: 4, long: 8, char: 1, unicodeChar: 2, float: 4, double: 8, floatComplex: 8, doubleComplex: 16,
};
const KIND_OF: Record<string, ColumnKind> = {
  boolean: "bool", bit: "bool", unsignedByte: "uint8", short: "int16", int: "int32", long: "int64", float: "float32", double: "float64", char: "utf8", unicodeChar: "utf8",
};

interface Layout {
  def: FieldDef;
  /** Elements per cell when fixed; -1 when variable. */
  count: number;
  variable: boolean;
  /** How the cell becomes columns: one string, n numbers, or text of a variable array, or skipped. */
  mode: "string" | "scalar" | "vector" | "vartext" | "skip";
  names: string[];
}

function arrayCount(arraysize: string | undefined): { count: number; variable: boolean } {
  if (arraysize === undefined || arraysize === "") return { count: 1, variable: false };
  const variable = arraysize.includes("*");
  const dims = arraysize.split("x").map((d) => d.replace("*", ""));
  let count = 1;
  for (const d of dims) count *= d === "" ? 1 : Number(d);
  return { count: Number.isFinite(count) ? count : 1, variable };
}

function layout(fields: FieldDef[], skipped: string[]): Layout[] {
  const taken = new Set<string>();
  const fresh = (base: string) => {
    let n = base;
    for (let k = 2; taken.has(n); k++) n = `${base}_${k}`;
    taken.add(n);
    return n;
  };
  return fields.map((def, j) => {
    const base = def.name || `col${j + 1}`;
    const { count, variable } = arrayCount(def.arraysize);
    if (def.datatype === "floatComplex" || def.datatype === "doubleComplex" || !(def.datatype in KIND_OF)) {
      skipped.push(`${base}: datatype '${def.datatype}' is not read`);
      return { def, count, variable, mode: "skip", names: [] };
    }
    if (def.datatype === "char" || def.datatype === "unicodeChar") return { def, count, variable, mode: "string", names: [fresh(base)] };
    if (variable || count > MAX_SPLIT) return { def, count, variable, mode: "vartext", names: [fresh(base)] };
    if (count === 1) return { def, count, variable, mode: "scalar", names: [fresh(base)] };
    return { def, count, variable, mode: "vector", names: Array.from({ length: count }, (_, e) => fresh(`${base}_${e}`)) };
  });
}

function metaOf(def: FieldDef): ColumnMeta | undefined {
  const m: ColumnMeta = {};
  if (def.unit) m.unit = def.unit;
  if (def.ucd) m.ucd = def.ucd;
  if (def.description) m.description = def.description;
  return Object.keys(m).length > 0 ? m : undefined;
}

/** Growing storage for one output column. */
class Sink {
  readonly values: ColumnData["values"];
  readonly nulls: Uint8Array;
  any = false;
  constructor(
    readonly name: string,
    readonly kind: ColumnKind,
    n: number,
  ) {
    const Arr = { float64: Float64Array, float32: Float32Array, int16: Int16Array, int32: Int32Array, int64: BigInt64Array, uint8: Uint8Array, bool: Uint8Array } as Record<string, new (n: number) => ColumnData["values"]>;
    this.values = kind === "utf8" ? new Array<string>(n).fill("") : new Arr[kind]!(n);
    this.nulls = new Uint8Array(n);
  }
  setNull(i: number) {
    this.nulls[i] = 1;
    this.any = true;
  }
  column(meta: ColumnMeta | undefined): ColumnData {
    const c: ColumnData = { name: this.name, kind: this.kind, values: this.values };
    if (this.any) c.nulls = this.nulls;
    if (meta) c.meta = meta;
    return c;
  }
}

const INT_TEXT = /^[+-]?\d+$/;
const HEX_TEXT = /^0[xX][0-9a-fA-F]+$/;
const FLOAT_TEXT = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** One TABLEDATA element value into a sink; returns false when the text is not a valid value. */
function putText(s: Sink, i: number, datatype: string, text: string, nullValue: string | undefined): boolean {
  const t = text.trim();
  if (t === "") {
    s.setNull(i);
    return true;
  }
  switch (datatype) {
    case "boolean":
    case "bit": {
      const c = t.toLowerCase();
      if (c === "t" || c === "true" || c === "1") (s.values as Uint8Array)[i] = 1;
      else if (c === "f" || c === "false" || c === "0") (s.values as Uint8Array)[i] = 0;
      else if (c === "?") s.setNull(i);
      else {
        s.setNull(i);
        return false;
      }
      return true;
    }
    case "float":
    case "double": {
      let x: number;
      if (FLOAT_TEXT.test(t)) x = Number(t);
      else if (/^[+-]?inf(inity)?$/i.test(t)) x = t.startsWith("-") ? -Infinity : Infinity;
      else if (/^nan$/i.test(t)) x = NaN;
      else {
        s.setNull(i);
        return false;
      }
      if (Number.isNaN(x) || (nullValue !== undefined && Number(nullValue) === x)) s.setNull(i);
      else (s.values as Float64Array)[i] = x;
      return true;
    }
    default: {
      // integers, decimal or hexadecimal (VOTable 1.4 TABLEDATA)
      if (!INT_TEXT.test(t) && !HEX_TEXT.test(t)) {
        s.setNull(i);
        return false;
      }
      const b = BigInt(t);
      if (nullValue !== undefined && (INT_TEXT.test(nullValue.trim()) || HEX_TEXT.test(nullValue.trim())) && BigInt(nullValue.trim()) === b) {
        s.setNull(i);
        return true;
      }
      const range: Record<string, [bigint, bigint]> = { unsignedByte: [0n, 255n], short: [-32768n, 32767n], int: [-2147483648n, 2147483647n], long: [-(2n ** 63n), 2n ** 63n - 1n] };
      const [lo, hi] = range[datatype]!;
      if (b < lo || b > hi) {
        s.setNull(i);
        return false;
      }
      if (s.kind === "int64") (s.values as BigInt64Array)[i] = b;
      else (s.values as Int32Array)[i] = Number(b);
      return true;
    }
  }
}

function fromTabledata(st: VoState, lays: Layout[], reasons: string[]): Sink[][] {
  const n = st.rows.length;
  const sinks = lays.map((l) => l.names.map((name) => new Sink(name, l.mode === "vartext" || l.mode === "string" ? "utf8" : KIND_OF[l.def.datatype]!, n)));
  const width = st.fields.length;
  for (let i = 0; i < n; i++) {
    const row = st.rows[i]!;
    if (row.length !== width) {
      let msg = `row ${i + 1} (line ${st.rowLines[i]}): ${row.length} TD, expected ${width}`;
      if (row.length > width) msg += ` (extra: ${row.slice(width).map((c) => JSON.stringify(c ?? "")).join(", ")})`;
      addReason(reasons, i, msg);
    }
    lays.forEach((l, j) => {
      const cell = row[j] ?? null;
      const out = sinks[j]!;
      if (l.mode === "skip") return;
      if (cell === null) {
        for (const s of out) s.setNull(i);
        return;
      }
      if (l.mode === "string" || l.mode === "vartext") {
        (out[0]!.values as string[])[i] = l.mode === "vartext" ? cell.trim().replace(/\s+/g, " ") : cell;
        if (l.mode === "vartext" && cell.trim() === "") out[0]!.setNull(i);
        return;
      }
      let parts: string[];
      if (l.mode === "scalar") parts = [cell];
      else if (l.def.datatype === "bit") parts = cell.replace(/\s+/g, "").split("");
      else parts = cell.trim().split(/\s+/);
      out.forEach((s, e) => {
        const p = parts[e];
        if (p === undefined) return s.setNull(i);
        if (!putText(s, i, l.def.datatype, p, l.def.nullValue)) {
          addReason(reasons, i, `column ${s.name}: ${JSON.stringify(p)} is not a valid ${l.def.datatype}`);
        }
      });
      if (l.mode === "vector" && parts.length !== out.length) addReason(reasons, i, `column ${l.def.name}: ${parts.length} values, expected ${out.length}`);
    });
  }
  return sinks;
}

function base64Bytes(s: string, file: string): Uint8Array {
  const clean = s.replace(/\s+/g, "");
  if (!/^[A-Za-z0-9+/]*={0,2}$/.test(clean)) throw new PeculiarError("format", "STREAM is not valid base64", { file });
  let bin: string;
  try {
    bin = atob(clean);
  } catch {
    throw new PeculiarError("format", "STREAM is not valid base64", { file });
  }
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

function fromBinary(st: VoState, lays: Layout[], two: boolean, file: string): Sink[][] {
  if (st.streamHref !== undefined) throw new PeculiarError("format", `STREAM href="${st.streamHref}" (external data) is not read`, { file });
  if (st.streamEncoding !== "base64") throw new PeculiarError("format", `STREAM encoding "${st.streamEncoding ?? "none"}" is not read (only base64)`, { file });
  const bytes = base64Bytes(st.stream, file);
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  const flagBytes = two ? Math.ceil(st.fields.length / 8) : 0;
  // First pass: row count and offsets (rows are variable when arrays are).
  const starts: number[] = [];
  let p = 0;
  const need = (k: number, at: number) => {
    if (at + k > bytes.length) throw new PeculiarError("format", `truncated ${two ? "BINARY2" : "BINARY"} stream: row ${starts.length} of the stream needs ${at + k - bytes.length} more bytes`, { file });
  };
  const cellBytes = (l: Layout, at: number): number => {
    const el = l.def.datatype === "bit" ? 0 : ELEMENT_BYTES[l.def.datatype] ?? 1;
    let count = l.count;
    let head = 0;
    if (l.variable) {
      need(4, at);
      count = view.getUint32(at, false);
      head = 4;
    }
    return head + (l.def.datatype === "bit" ? Math.ceil(count / 8) : el * count);
  };
  while (p < bytes.length) {
    starts.push(p);
    need(flagBytes, p);
    let q = p + flagBytes;
    for (const l of lays) {
      const k = cellBytes(l, q);
      need(k, q);
      q += k;
    }
    p = q;
  }
  const n = starts.length;
  const sinks = lays.map((l) => l.names.map((name) => new Sink(name, l.mode === "vartext" || l.mode === "string" ? "utf8" : KIND_OF[l.def.datatype]!, n)));
  const dec = new TextDecoder("utf-8");
  for (let i = 0; i < n; i++) {
    let q = starts[i]! + flagBytes;
    lays.forEach((l, j) => {
      const isNull = two && (bytes[starts[i]! + (j >> 3)]! & (0x80 >> (j & 7))) !== 0;
      let count = l.count;
      let at = q;
      if (l.variable) {
        count = view.getUint32(q, false);
        at = q + 4;
      }
      q += cellBytes(l, q);
      const out = sinks[j]!;
      if (l.mode === "skip") return;
      if (isNull) {
        for (const s of out) s.setNull(i);
        return;
      }
      const dt = l.def.datatype;
      if (l.mode === "string") {
        let s: string;
        if (dt === "unicodeChar") {
          let t = "";
          for (let e = 0; e < count; e++) {
            const c = view.getUint16(at + 2 * e, false);
            if (c === 0) break;
            t += String.fromCharCode(c);
          }
          s = t;
        } else {
          let end = at;
          while (end < at + count && bytes[end] !== 0) end++;
          s = dec.decode(bytes.subarray(at, end));
        }
        (out[0]!.values as string[])[i] = s;
        if (s === "") out[0]!.setNull(i);
        return;
      }
      const texts: string[] = [];
      for (let e = 0; e < count; e++) {
        const r = readElement(view, bytes, at, e, count, dt, l.def.nullValue);
        if (l.mode === "vartext") {
          texts.push(r === null ? "NaN" : String(r));
          continue;
        }
        const s = out[e];
        if (!s) continue;
        if (r === null) s.setNull(i);
        else if (s.kind === "int64") (s.values as BigInt64Array)[i] = r as bigint;
        else (s.values as Float64Array)[i] = Number(r);
      }
      if (l.mode === "vartext") {
        (out[0]!.values as string[])[i] = texts.join(" ");
        if (count === 0) out[0]!.setNull(i);
      }
    });
  }
  return sinks;
}

/** One binary element: number, bigint, 0/1 for booleans, or null. */
function readElement(view: DataView, bytes: Uint8Array, at: number, e: number, count: number, dt: string, nullValue: string | undefined): number | bigint | null {
  const nullNum = nullValue !== undefined && nullValue.trim() !== "" ? nullValue.trim() : undefined;
  switch (dt) {
    case "bit":
      // A single bit: any set bit is true. The standard puts it in the most significant bit;
      // astropy 5.2.1 writes 0x08. Arrays: most significant bit first (VOTable 1.4).
      if (count === 1) return bytes[at] !== 0 ? 1 : 0;
      return bytes[at + (e >> 3)]! & (0x80 >> (e & 7)) ? 1 : 0;
    case "boolean": {
      const c = String.fromCharCode(bytes[at + e]!);
      if (c === "T" || c === "t" || c === "1") return 1;
      if (c === "F" || c === "f" || c === "0") return 0;
      return null;
    }
    case "unsignedByte":
    case "short":
    case "int": {
      const x = dt === "unsignedByte" ? view.getUint8(at + e) : dt === "short" ? view.getInt16(at + 2 * e, false) : view.getInt32(at + 4 * e, false);
      return nullNum !== undefined && Number(nullNum) === x ? null : x;
    }
    case "long": {
      const x = view.getBigInt64(at + 8 * e, false);
      return nullNum !== undefined && (INT_TEXT.test(nullNum) || HEX_TEXT.test(nullNum)) && BigInt(nullNum) === x ? null : x;
    }
    case "float":
    case "double": {
      const x = dt === "float" ? view.getFloat32(at + 4 * e, false) : view.getFloat64(at + 8 * e, false);
      return Number.isNaN(x) || (nullNum !== undefined && Number(nullNum) === x) ? null : x;
    }
  }
  return null;
}

/** A settings value as written in its own INFO. */
export function settingText(v: unknown): string {
  return typeof v === "string" ? v : JSON.stringify(v);
}

export interface VOTableReadOptions {
  file: string;
  /** The TABLE to read, by number (0 = first) or name/ID (case-insensitive). Default: the first. */
  table?: number | string;
}

export function parseVOTableColumns(bytes: Uint8Array, options: VOTableReadOptions): { parsed: ParsedColumns; info: SourceInfo } {
  const file = options.file;
  const text = new TextDecoder("utf-8").decode(bytes);
  const want = typeof options.table === "string" && /^\s*\d+\s*$/.test(options.table) ? Number(options.table) : options.table;
  const st = parseXml(text, file, want);
  if (st.tableCount === 0) throw new PeculiarError("format", "VOTable has no TABLE", { file });
  const list = st.tables.map((t, k) => (t ? `${k} '${t}'` : `${k}`)).join(", ");
  if (st.chosen < 0) throw new PeculiarError("format", `no TABLE ${typeof want === "number" ? want : `named '${want}'`} (TABLEs: ${list})`, { file });
  const skipped: string[] = [];
  if (st.tableCount > 1) skipped.push(`${st.tableCount - 1} other TABLE element(s) are not read (TABLEs: ${list})`);
  const lays = layout(st.fields, skipped);
  let sinks: Sink[][];
  let reasons: string[];
  if (st.serialization === "FITS") throw new PeculiarError("format", "VOTable data serialised as FITS is not read (TABLEDATA, BINARY and BINARY2 are)", { file });
  if (st.serialization === "BINARY" || st.serialization === "BINARY2") {
    sinks = fromBinary(st, lays, st.serialization === "BINARY2", file);
    reasons = new Array<string>(sinks[0]?.[0]?.values.length ?? 0).fill("");
  } else {
    reasons = new Array<string>(st.rows.length).fill("");
    sinks = fromTabledata(st, lays, reasons);
  }
  const rows = reasons.length;
  const columns: ColumnData[] = [];
  lays.forEach((l, j) => {
    const meta = metaOf(l.def);
    for (const s of sinks[j]!) columns.push(s.column(meta));
  });

  const metadata = new Map<string, string>();
  const own = st.infos.filter((i) => i.name.startsWith("peculiar."));
  for (const i of own) metadata.set(i.name, i.value);
  let settings: Record<string, unknown> = {};
  try {
    settings = JSON.parse(metadata.get(META.settings) ?? "{}") as Record<string, unknown>;
  } catch {
    settings = {};
  }
  // INFOs that only repeat a settings entry (written by us for people) are not kept twice.
  const infos = st.infos
    .filter((i) => !i.name.startsWith("peculiar."))
    .filter((i) => !(i.inTable && i.name in settings && settingText(settings[i.name]) === i.value))
    .map(({ name, value, text }) => (text === undefined ? { name, value } : { name, value, text }));
  if (infos.length > 0) metadata.set(VOTABLE_INFOS, JSON.stringify(infos));
  if (st.params.length > 0) metadata.set(VOTABLE_PARAMS, JSON.stringify(st.params));

  const sourceRows = new Int32Array(rows);
  for (let i = 0; i < rows; i++) sourceRows[i] = i + 1;
  const info: SourceInfo = { file, format: "votable" };
  if (st.tableCount > 1) {
    info.table = st.chosen;
    if (st.tables[st.chosen]) info.tableName = st.tables[st.chosen]!;
  }
  if (skipped.length > 0) info.skipped = skipped;
  return { parsed: { columns, rows, reasons, sourceRows, metadata }, info };
}

export function parseVOTable(bytes: Uint8Array, options: VOTableReadOptions): Table {
  const { parsed, info } = parseVOTableColumns(bytes, options);
  return finishTable(parsed, info);
}
