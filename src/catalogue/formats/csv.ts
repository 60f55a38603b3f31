/**
 * CSV and TSV (RFC 4180 quoting) with the habits of astronomical text tables: `#` comment lines,
 * blank lines, a header row, an optional units row, per-column type inference, null tokens.
 * Rules (also in DEVELOPERS.md, "Catalogue formats"):
 * - A record may span lines inside double quotes; `""` inside quotes is one quote. Unquoted cells
 *   are trimmed of spaces; quoted cells are kept as written.
 * - Outside quotes, a line whose first non-blank character is `#` is a comment and a line of only
 *   spaces and tabs is blank; both are skipped (they still count for line numbers).
 * - The first record is the header. Empty names become `col<N>`, repeated names get `_2`, `_3`.
 * - Units row: the second record is a units row when the comment `# peculiar: second row gives
 *   units` comes before the header, or when (a) each of its cells is empty, a placeholder (`-`,
 *   `--`, `---`, `[-]`) or a unit made only of known unit symbols (deg, rad, h, km, s, mag, Mpc, ...
 *   with SI prefixes, joined by / . * ^ digits and brackets), (b) at least one cell is a real unit,
 *   and (c) at least one column with a unit holds numbers in the rows below it.
 * - Nulls: an unquoted cell that is empty or one of NULL_TOKENS. A quoted empty cell is an empty
 *   string in a text column and null elsewhere.
 * - Types: bool when every non-null cell is true/false (any case); numeric when at least 3/4 of
 *   the non-null cells are numbers (int32 when all are integers in range, int64 for larger
 *   integers, uint64 for non-negative ones beyond int64, else float64); the other cells of a numeric column become null and flag their row
 *   `line 12: column cz: "abc" is not a number`. Everything else is text (sexagesimal angles stay text).
 * - A row with too few fields gets nulls, one with too many keeps the extra cells in its reason:
 *   `line 17: 5 fields, expected 7` / `line 17: 9 fields, expected 7 (extra: "a", "b")`.
 * - The delimiter is one ASCII character other than a quote or a line end.
 * The reader works on the UTF-8 bytes (csv-records.ts cuts them into records and cell spans, numbers
 * are read from the bytes by decimal.ts with exactly Number()'s result); only text cells become strings.
 */
import { Buffer } from "node:buffer";
import type { Table } from "apache-arrow";
import type { ColumnData, ColumnKind, ColumnMeta } from "../columns.js";
import { PeculiarError } from "../../errors.js";
import { CsvRecords, decodeSpan, NUMBER_DEC, NUMBER_INT, QUOTED, SPECIAL, splitRecords } from "./csv-records.js";
import { DECIMAL, INTEGER, NOT_NUMBER, scanNumber, scanned } from "./decimal.js";
import { readNumericBody } from "./csv-numeric.js";
import { ecsvKind, isEcsv, parseEcsvHeader, type EcsvHeader } from "./ecsv.js";
import { addReason, finishTable, type ParsedColumns } from "./table.js";

/** Unquoted cells read as null (case-sensitive). */
export const NULL_TOKENS: ReadonlySet<string> = new Set(["", "NaN", "nan", "NAN", "null", "NULL", "Null", "NA", "N/A", "n/a", "--"]);

/** The comment the writer puts before the header when it writes a units row. */
export const UNITS_MARKER = "# peculiar: second row gives units";

export interface CsvOptions {
  file: string;
  /** Field separator; default "," (TSV callers pass "\t"). */
  delimiter?: string;
  /** Recorded in peculiar.source (csv or tsv). */
  format?: string;
  /** Read every file with the general rules, without trying the plain numeric body first (tests compare the two). */
  generalRules?: boolean;
}

const INT_RE = /^[+-]?\d+$/;
const FLOAT_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][+-]?\d+)?$/;
const INF_RE = /^[+-]?(?:inf|infinity)$/i;
const BOOL_RE = /^(?:true|false)$/i;

function parseNumber(s: string): number {
  if (FLOAT_RE.test(s)) return Number(s.replace(/[dD]/, "e"));
  if (INF_RE.test(s)) return s.startsWith("-") ? -Infinity : Infinity;
  return NaN;
}
function isNumber(s: string): boolean {
  return FLOAT_RE.test(s) || INF_RE.test(s);
}

/** Unit symbols recognised in a units row (each may carry an SI prefix). Common practice (IAU / CDS / FITS 4.0 Table 23 units). */
const UNIT_SYMBOLS = new Set([
  "deg", "degree", "degrees", "rad", "sr", "arcsec", "arcmin", "mas", "uas", "h", "hr", "hour", "hours", "min", "s", "sec",
  "hms", "dms", "m", "pc", "AU", "au", "ly", "lyr", "yr", "a", "d", "day", "mag", "dex", "Jy", "erg", "W", "J", "Hz", "K",
  "g", "Msun", "Lsun", "solMass", "solLum", "solRad", "Angstrom", "angstrom", "AA", "percent", "ct", "count", "counts",
  "pix", "pixel", "beam", "Ry", "eV", "G", "T", "mol", "Mgeo", "Mjup", "Rgeo", "Rjup", "cy", "Sun",
]);
const SI_PREFIXES = ["da", "y", "z", "a", "f", "p", "n", "u", "µ", "m", "c", "d", "h", "k", "M", "G", "T", "P", "E"];

function isUnitSymbol(atom: string): boolean {
  if (UNIT_SYMBOLS.has(atom)) return true;
  for (const p of SI_PREFIXES) if (atom.length > p.length && atom.startsWith(p) && UNIT_SYMBOLS.has(atom.slice(p.length))) return true;
  return false;
}

/** "none" for a placeholder/no unit, "unit" for a unit made of known symbols, "no" otherwise. */
function unitCell(cell: string): "none" | "unit" | "no" {
  const s = cell.trim();
  if (s === "" || s === "-" || s === "--" || s === "---" || s === "[-]" || s === "[---]") return "none";
  if (s.length > 40 || isNumber(s) || BOOL_RE.test(s)) return "no";
  if (!/^[A-Za-z0-9°µ%'"/.*^+\-_ ()[\]:]+$/.test(s)) return "no";
  const atoms = s.split(/[^A-Za-zµ°%'"]+/).filter((a) => a !== "");
  if (atoms.length === 0) return "no";
  for (const a of atoms) if (!(a === "%" || a === "°" || a === "'" || a === '"' || isUnitSymbol(a))) return "no";
  return "unit";
}

function looksNumeric(recs: CsvRecords, from: number, col: number): boolean {
  let num = 0;
  let other = 0;
  for (let r = from; r < recs.records && num + other < 200; r++) {
    const k = recs.cellAt(r, col);
    if (k < 0) continue;
    const cell = recs.cellString(k);
    if ((!recs.quoted(k) && NULL_TOKENS.has(cell)) || cell === "") continue;
    if (isNumber(cell.trim())) num++;
    else other++;
  }
  return num > 0 && num >= 3 * other;
}

function isUnitsRow(recs: CsvRecords, width: number): boolean {
  if (recs.records < 2 || recs.recCount[1]! > width) return false;
  const row = recs.recordCells(1);
  let units = 0;
  let evidence = false;
  for (let j = 0; j < row.length; j++) {
    const kind = unitCell(row[j]!);
    if (kind === "no") return false;
    if (kind === "unit") {
      units++;
      if (!evidence && looksNumeric(recs, 2, j)) evidence = true;
    }
  }
  return units > 0 && evidence;
}

/** Column names from the header cells: an empty one is colN, a repeated one gets _2, _3, ...; each such change is noted. */
function headerNames(cells: string[]): { names: string[]; notes: string[] } {
  const seen = new Set<string>();
  const notes: string[] = [];
  const names = cells.map((c, j) => {
    let name = c.trim() === "" ? `col${j + 1}` : c.trim();
    if (c.trim() === "") notes.push(`header: column ${j + 1} has no name; read as ${name}`);
    if (seen.has(name)) {
      let k = 2;
      while (seen.has(`${name}_${k}`)) k++;
      notes.push(`header: the name ${name} is repeated in column ${j + 1}; read as ${name}_${k}`);
      name = `${name}_${k}`;
    }
    seen.add(name);
    return name;
  });
  return { names, notes };
}

const INT32_MIN = -2147483648;
const INT32_MAX = 2147483647;
const INT64_MIN = -(2n ** 63n);
const INT64_MAX = 2n ** 63n - 1n;
const UINT64_MAX = 2n ** 64n - 1n;

// Cell classes found by the column builder.
const C_NULL = 0;
const C_QUOTED_EMPTY = 1;
const C_TRUE = 2;
const C_FALSE = 3;
const C_INT = 4;
const C_FLOAT = 5;
const C_OTHER = 6;

/** NULL_TOKENS as bytes, by length. */
const NULL_BYTES: Uint8Array[][] = [];
for (const t of NULL_TOKENS) (NULL_BYTES[t.length] ??= []).push(new TextEncoder().encode(t));

/** Whether bytes [s, e) of b are one of NULL_TOKENS (the reader's nulls; the writer quotes such text). */
export function isNullToken(b: Uint8Array, s: number, e: number): boolean {
  const list = NULL_BYTES[e - s];
  if (!list) return false;
  outer: for (const t of list) {
    for (let i = 0; i < t.length; i++) if (b[s + i] !== t[i]) continue outer;
    return true;
  }
  return false;
}

/** ASCII characters of JavaScript's \s. */
export function isBlank(c: number): boolean {
  return c === 32 || (c >= 9 && c <= 13);
}

/** "true"/"false" in any case at bytes[s, e)? C_TRUE, C_FALSE or -1. */
function boolBytes(b: Uint8Array, s: number, e: number): number {
  const len = e - s;
  const word = len === 4 ? "true" : len === 5 ? "false" : "";
  if (word === "") return -1;
  for (let i = 0; i < len; i++) if ((b[s + i]! | 32) !== word.charCodeAt(i)) return -1;
  return len === 4 ? C_TRUE : C_FALSE;
}

/** Class and value of a trimmed cell given as text (the rare cells that are not plain spans). */
function classifyText(t: string, val: Float64Array, i: number): number {
  if (BOOL_RE.test(t)) return t.toLowerCase() === "true" ? C_TRUE : C_FALSE;
  if (INT_RE.test(t)) {
    val[i] = Number(t);
    return C_INT;
  }
  if (isNumber(t)) {
    val[i] = parseNumber(t);
    return C_FLOAT;
  }
  return C_OTHER;
}

/**
 * Class of every cell of column j (rows first.. of recs) into cls, numbers into val: the same
 * decisions as the string rules (NULL_TOKENS for unquoted cells, a quoted "" apart, then the
 * trimmed text as bool, integer, number or other), read from the bytes.
 */
function classifyColumn(recs: CsvRecords, first: number, j: number, cls: Uint8Array, val: Float64Array): void {
  const b = recs.bytes;
  const rows = cls.length;
  const starts = recs.cellStart;
  const ends = recs.cellEnd;
  const flags = recs.cellFlags;
  const values = recs.cellValue;
  const recFirst = recs.recFirst;
  const recCount = recs.recCount;
  for (let i = 0; i < rows; i++) {
    const r = first + i;
    const k = j < recCount[r]! ? recFirst[r]! + j : -1;
    if (k < 0) {
      cls[i] = C_NULL;
      continue;
    }
    const f = flags[k]!;
    if (f & (NUMBER_INT | NUMBER_DEC)) {
      let x = values[k]!;
      if (x !== x) {
        // A number the byte reader leaves to Number() (many digits, far exponent, a close call).
        const t = decodeSpan(b, starts[k]!, ends[k]!);
        x = f & NUMBER_INT ? Number(t) : parseNumber(t);
      }
      val[i] = x;
      cls[i] = f & NUMBER_INT ? C_INT : C_FLOAT;
      continue;
    }
    if (f & SPECIAL) {
      const c = recs.special.get(k)!;
      if (!(f & QUOTED) && NULL_TOKENS.has(c)) cls[i] = C_NULL;
      else if (c === "") cls[i] = C_QUOTED_EMPTY;
      else cls[i] = classifyText(c.trim(), val, i);
      continue;
    }
    let s = starts[k]!;
    let e = ends[k]!;
    if (!(f & QUOTED)) {
      if (isNullToken(b, s, e)) {
        cls[i] = C_NULL;
        continue;
      }
    } else {
      if (s === e) {
        cls[i] = C_QUOTED_EMPTY;
        continue;
      }
      while (s < e && isBlank(b[s]!)) s++;
      while (e > s && isBlank(b[e - 1]!)) e--;
      if (s < e && (b[s]! >= 0x80 || b[e - 1]! >= 0x80)) {
        cls[i] = classifyText(recs.cellString(k).trim(), val, i);
        continue;
      }
    }
    const kind = scanNumber(b, s, e);
    if (kind === NOT_NUMBER) {
      const bool = boolBytes(b, s, e);
      cls[i] = bool < 0 ? C_OTHER : bool;
      continue;
    }
    let x = scanned[0]!;
    if (x !== x) {
      // A number the byte reader leaves to Number() (many digits, far exponent, a close call).
      const t = decodeSpan(b, s, e);
      x = kind === INTEGER ? Number(t) : parseNumber(t);
    }
    val[i] = x;
    cls[i] = kind === DECIMAL ? C_FLOAT : C_INT;
  }
}

/** The trimmed text of cell i of column j. */
function trimmedCell(recs: CsvRecords, first: number, j: number, i: number): string {
  return recs.cellString(recs.cellAt(first + i, j)).trim();
}

/** One column from its cells: infers the type, fills nulls, flags bad cells in `reasons`. */
function buildColumn(name: string, recs: CsvRecords, first: number, j: number, rows: number, reasons: string[], meta: ColumnMeta): ColumnData {
  const n = rows;
  const cls = new Uint8Array(n);
  const val = new Float64Array(n);
  classifyColumn(recs, first, j, cls, val);
  const isNull = new Uint8Array(n);
  let nonNull = 0;
  let quotedEmpty = 0;
  let bools = 0;
  let nums = 0;
  let floats = 0;
  let int32ok = true;
  let int64ok = true;
  let uint64ok = true; // every integer in [0, 2^64): for a column beyond int64 only
  let negative = false;
  for (let i = 0; i < n; i++) {
    const c = cls[i]!;
    if (c === C_NULL) {
      isNull[i] = 1;
      continue;
    }
    if (c === C_QUOTED_EMPTY) {
      isNull[i] = 1;
      quotedEmpty++;
      continue;
    }
    nonNull++;
    if (c === C_TRUE || c === C_FALSE) bools++;
    else if (c === C_INT) {
      nums++;
      const x = val[i]!;
      if (x < 0) negative = true;
      if (x < INT32_MIN || x > INT32_MAX) {
        int32ok = false;
        // Below 9.2e18 (< 2^63) the integer fits int64 whatever its last digits.
        if (!(Math.abs(x) < 9.2e18)) {
          const bi = BigInt(trimmedCell(recs, first, j, i));
          if (bi < INT64_MIN || bi > INT64_MAX) int64ok = false;
          if (bi < 0n || bi > UINT64_MAX) uint64ok = false;
        }
      }
    } else if (c === C_FLOAT) {
      nums++;
      floats++;
    }
  }
  const withMeta = (c: ColumnData): ColumnData => {
    if (meta.unit) c.meta = meta;
    if (isNull.includes(1)) c.nulls = isNull;
    return c;
  };
  if (nonNull === 0 && quotedEmpty === 0) return withMeta({ name, kind: "float64", values: val.fill(NaN) });
  if (nonNull > 0 && bools === nonNull) {
    const v = new Uint8Array(n);
    for (let i = 0; i < n; i++) if (cls[i] === C_TRUE) v[i] = 1;
    return withMeta({ name, kind: "bool", values: v });
  }
  if (nums > 0 && nums >= 3 * (nonNull - nums)) {
    const bad = (i: number) => {
      isNull[i] = 1;
      addReason(reasons, i, `line ${recs.recLine[first + i]}: column ${name}: ${JSON.stringify(recs.cellString(recs.cellAt(first + i, j)))} is not a number`);
    };
    if (floats === 0 && int32ok) {
      const v = new Int32Array(n);
      for (let i = 0; i < n; i++) {
        if (isNull[i]) continue;
        if (cls[i] === C_INT) v[i] = val[i]!;
        else bad(i);
      }
      return withMeta({ name, kind: "int32", values: v });
    }
    // int64, or uint64 beyond int64 when none is negative (identifiers of 64 bits): exact, not rounded to a double
    if (floats === 0 && (int64ok || (uint64ok && !negative))) {
      const v = int64ok ? new BigInt64Array(n) : new BigUint64Array(n);
      for (let i = 0; i < n; i++) {
        if (isNull[i]) continue;
        const x = val[i]!;
        if (cls[i] !== C_INT) bad(i);
        else v[i] = Math.abs(x) < 9007199254740992 ? BigInt(x) : BigInt(trimmedCell(recs, first, j, i));
      }
      return withMeta({ name, kind: int64ok ? "int64" : "uint64", values: v });
    }
    for (let i = 0; i < n; i++) {
      if (isNull[i]) continue;
      if (cls[i] !== C_INT && cls[i] !== C_FLOAT) {
        bad(i);
        val[i] = 0;
      }
    }
    return withMeta({ name, kind: "float64", values: val });
  }
  // Text: quoted empty cells are empty strings, the rest as read.
  const v = new Array<string>(n);
  for (let i = 0; i < n; i++) {
    const c = cls[i]!;
    if (c === C_QUOTED_EMPTY) {
      isNull[i] = 0;
      v[i] = "";
    } else v[i] = isNull[i] ? "" : recs.cellString(recs.cellAt(first + i, j));
  }
  return withMeta({ name, kind: "utf8", values: v });
}

/** Schema-metadata key for the `meta:` block of an ECSV header (YAML text). */
export const ECSV_META = "ecsv.meta";

/** The comment lines at the very top of the text. */
function leadingComments(text: string): string[] {
  const out: string[] = [];
  for (const line of text.split(/\r\n|\n|\r/)) {
    if (!line.startsWith("#")) break;
    out.push(line);
  }
  return out;
}

const INT_RANGE: Partial<Record<ColumnKind, [bigint, bigint]>> = {
  int8: [-128n, 127n],
  int16: [-32768n, 32767n],
  int32: [-2147483648n, 2147483647n],
  int64: [INT64_MIN, INT64_MAX],
  uint8: [0n, 255n],
  uint16: [0n, 65535n],
  uint32: [0n, 4294967295n],
  uint64: [0n, 2n ** 64n - 1n],
};
const TYPED_ARRAYS: Partial<Record<ColumnKind, new (n: number) => ColumnData["values"]>> = {
  int8: Int8Array, int16: Int16Array, int32: Int32Array, int64: BigInt64Array, uint8: Uint8Array, uint16: Uint16Array, uint32: Uint32Array, uint64: BigUint64Array,
  float32: Float32Array, float64: Float64Array, bool: Uint8Array,
};

/** A column whose type the file declares (ECSV): no inference; cells that do not fit are null and flagged. */
function buildDeclaredColumn(name: string, cells: (string | undefined)[], lines: ArrayLike<number>, reasons: string[], meta: ColumnMeta, datatype: string, kind: ColumnKind): ColumnData {
  const n = cells.length;
  const nulls = new Uint8Array(n);
  const values = kind === "utf8" ? new Array<string>(n).fill("") : new TYPED_ARRAYS[kind]!(n);
  const bad = (i: number) => {
    nulls[i] = 1;
    addReason(reasons, i, `line ${lines[i]}: column ${name}: ${JSON.stringify(cells[i])} is not a valid ${datatype}`);
  };
  for (let i = 0; i < n; i++) {
    const c = cells[i];
    // ECSV writes a missing value as an empty field (quoted "" when space-separated).
    if (c === undefined || c === "") {
      nulls[i] = 1;
      continue;
    }
    const t = c.trim();
    if (kind === "utf8") (values as string[])[i] = c;
    else if (kind === "bool") {
      const l = t.toLowerCase();
      if (l === "true" || l === "1") (values as Uint8Array)[i] = 1;
      else if (l !== "false" && l !== "0") bad(i);
    } else if (kind === "float32" || kind === "float64") {
      if (/^[+-]?nan$/i.test(t)) nulls[i] = 1;
      else if (isNumber(t)) (values as Float64Array)[i] = parseNumber(t);
      else bad(i);
    } else {
      const range = INT_RANGE[kind]!;
      if (!INT_RE.test(t)) bad(i);
      else {
        const b = BigInt(t);
        if (b < range[0] || b > range[1]) bad(i);
        else if (kind === "int64" || kind === "uint64") (values as BigInt64Array)[i] = b;
        else (values as Int32Array)[i] = Number(b);
      }
    }
  }
  const col: ColumnData = { name, kind, values };
  if (nulls.some((x) => x === 1)) col.nulls = nulls;
  if (Object.keys(meta).length > 0) col.meta = meta;
  return col;
}

/** Reads CSV/TSV text into a table (bookkeeping columns and peculiar.source included). */
export function parseCsv(text: string, options: CsvOptions): Table {
  return finishTable(parseCsvColumns(text, options), { file: options.file, format: options.format ?? (options.delimiter === "\t" ? "tsv" : "csv") });
}

/** parseCsvBytes on the UTF-8 bytes of `text`. */
export function parseCsvColumns(text: string, options: CsvOptions): ParsedColumns {
  return parseCsvBytes(new TextEncoder().encode(text), options);
}

/** The first lines of the bytes from `from` while they start with `#`, plus the line after them, as text. */
function headText(b: Uint8Array, from: number): string {
  let i = from;
  for (;;) {
    let e = i;
    while (e < b.length && b[e] !== 10 && b[e] !== 13) e++;
    if (b[i] !== 35 || e >= b.length) return new TextDecoder().decode(b.subarray(from, e));
    i = e + 1;
  }
}

/** The header row's names, the units row (or none) and the first data record, from the records. */
function tableHead(recs: CsvRecords, ecsv: EcsvHeader | undefined, file: string): { names: string[]; width: number; units: string[]; first: number; notes: string[] } {
  if (recs.records === 0) throw new PeculiarError("format", "no header row (the file has only comments or blank lines)", { file });
  const headerCells = recs.recordCells(0);
  const { names, notes } = headerNames(headerCells);
  const width = names.length;
  if (ecsv) {
    const listed = ecsv.columns.map((c) => c.name);
    if (listed.join("\u0000") !== headerCells.map((c) => c.trim()).join("\u0000")) {
      throw new PeculiarError("format", `ECSV header lists columns ${listed.join(", ")} but the header row has ${headerCells.join(", ")}`, { file, row: recs.recLine[0]! });
    }
  }
  const hasUnits = !ecsv && (recs.marker || isUnitsRow(recs, width));
  return { names, width, units: hasUnits ? recs.recordCells(1) : [], first: hasUnits ? 2 : 1, notes };
}

/** Lines of the head read with the general rules: header, units row, and the rows isUnitsRow looks at. */
const HEAD_LINES = 256;

/**
 * The table when its body is plain numbers and empty cells (csv-numeric.ts), its head (header,
 * units row) read with the general rules; null when the file is of another shape, and the general
 * rules then read it all (they give the same table for the files read here).
 */
export function plainNumericTable(bytes: Uint8Array, from: number, delim: number, file: string): ParsedColumns | null {
  if (delim === 32 || /[0-9+\-.eEdD]/.test(String.fromCharCode(delim))) return null;
  const n = bytes.length;
  let end = from;
  for (let count = 0; end < n && count < HEAD_LINES; count++) {
    const nl = bytes.indexOf(10, end);
    end = nl < 0 ? n : nl + 1;
  }
  const head = bytes.subarray(0, end); // a small file is all head
  // quotes may hide line ends; a CR not followed by LF ends a line that indexOf does not see
  if (head.indexOf(34, from) >= 0) return null;
  for (let c = head.indexOf(13, from); c >= 0; c = head.indexOf(13, c + 1)) if (head[c + 1] !== 10) return null;
  const recs = splitRecords(head, from, delim, UNITS_MARKER);
  const { names, width, units, first, notes } = tableHead(recs, undefined, file);
  if (recs.records <= first) return null;
  // the first data record's line, and where it starts (records are lines here: no quotes)
  const line = recs.recLine[first]!;
  let start = from;
  for (let l = 1; l < line; l++) start = bytes.indexOf(10, start) + 1;
  const body = readNumericBody(bytes, start, line, delim, width);
  if (!body) return null;
  const rows = body.rows;
  const columns: ColumnData[] = [];
  for (let j = 0; j < width; j++) {
    const u = units[j]?.trim() ?? "";
    const v = body.values[j]!;
    const isNull = body.nulls[j];
    let empty = 0;
    if (isNull) for (let i = 0; i < rows; i++) empty += isNull[i]!;
    // as buildColumn: no value at all is float64 NaN, integers alone are int32 (the range was checked)
    const c: ColumnData = empty === rows ? { name: names[j]!, kind: "float64", values: v.fill(NaN) } : body.integer[j] ? { name: names[j]!, kind: "int32", values: int32Of(v) } : { name: names[j]!, kind: "float64", values: v };
    if (unitCell(u) !== "none") c.meta = { unit: u };
    if (isNull) c.nulls = isNull;
    columns.push(c);
  }
  const parsed: ParsedColumns = { columns, rows, reasons: [], sourceRows: body.lines, metadata: new Map() };
  if (notes.length > 0) parsed.notes = notes;
  // The lines as written, for writers that copy cells (line-text.ts): not when a number has a Fortran
  // exponent (1.5d3), which other programs do not read; the test is on every byte of the body (Buffer's
  // native search: a typed array's indexOf took 90 ms for 44 MB).
  const body8 = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (body.starts && body.ends && body8.indexOf(100, start) < 0 && body8.indexOf(68, start) < 0) parsed.lineText = { bytes, starts: body.starts, ends: body.ends, delimiter: delim };
  return parsed;
}

/** Integral float64 values (in the int32 range) as an Int32Array, converted natively. */
function int32Of(v: Float64Array): Int32Array {
  const out = new Int32Array(v.length);
  out.set(v);
  return out;
}

/**
 * Reads CSV/TSV from UTF-8 bytes (a leading byte-order mark is skipped). Numbers are read
 * straight from the bytes; only text cells become strings.
 */
export function parseCsvBytes(bytes: Uint8Array, options: CsvOptions): ParsedColumns {
  const delim = options.delimiter ?? ",";
  if (delim.length !== 1 || delim === '"' || delim === "\n" || delim === "\r" || delim.charCodeAt(0) > 127) {
    throw new PeculiarError("usage", "delimiter must be one ASCII character other than a quote or newline", { value: delim });
  }
  const from = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
  const head = bytes[from] === 35 || bytes[from] === 0xef ? headText(bytes, from) : "";
  const ecsv = isEcsv(head) ? parseEcsvHeader(leadingComments(head), options.file) : undefined;
  if (!ecsv && !options.generalRules) {
    const plain = plainNumericTable(bytes, from, delim.charCodeAt(0), options.file);
    if (plain) return plain;
  }
  const recs = splitRecords(bytes, from, (ecsv ? ecsv.delimiter : delim).charCodeAt(0), UNITS_MARKER);
  const { names, width, units, first, notes } = tableHead(recs, ecsv, options.file);
  const rows = Math.max(0, recs.records - first);
  const reasons = new Array<string>(rows).fill("");
  const sourceRows = recs.recLine.slice(first, first + rows);
  const counts = recs.recCount;
  const unterminated = recs.recUnterminated;
  for (let r = 0; r < rows; r++) {
    const count = counts[first + r]!;
    if (count === width && !unterminated[first + r]) continue;
    const line = sourceRows[r]!;
    if (unterminated[first + r]) addReason(reasons, r, `line ${line}: quote not closed before the end of the file`);
    if (count !== width) {
      let text = `line ${line}: ${count} ${count === 1 ? "field" : "fields"}, expected ${width}`;
      if (count > width) text += ` (extra: ${recs.recordCells(first + r).slice(width).map((c) => JSON.stringify(c)).join(", ")})`;
      addReason(reasons, r, text);
    }
  }
  const columns: ColumnData[] = [];
  for (let j = 0; j < width; j++) {
    const declared = ecsv?.columns[j];
    if (declared) {
      const cells = new Array<string | undefined>(rows);
      for (let r = 0; r < rows; r++) {
        const k = recs.cellAt(first + r, j);
        if (k >= 0) cells[r] = recs.cellString(k);
      }
      const meta: ColumnMeta = {};
      if (declared.unit) meta.unit = declared.unit;
      if (declared.description) meta.description = declared.description;
      columns.push(buildDeclaredColumn(names[j]!, cells, sourceRows, reasons, meta, declared.datatype, ecsvKind(declared)));
      continue;
    }
    const u = units[j]?.trim() ?? "";
    const meta: ColumnMeta = unitCell(u) === "none" ? {} : { unit: u };
    columns.push(buildColumn(names[j]!, recs, first, j, rows, reasons, meta));
  }
  const metadata = new Map<string, string>();
  if (ecsv?.meta) metadata.set(ECSV_META, ecsv.meta);
  return notes.length > 0 ? { columns, rows, reasons, sourceRows, metadata, notes } : { columns, rows, reasons, sourceRows, metadata };
}
