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
 *   integers, else float64); the other cells of a numeric column become null and flag their row
 *   `column cz: "abc" is not a number`. Everything else is text (sexagesimal angles stay text).
 * - A row with too few fields gets nulls, one with too many keeps the extra cells in its reason:
 *   `line 17: 5 fields, expected 7` / `line 17: 9 fields, expected 7 (extra: "a", "b")`.
 */
import type { Table } from "apache-arrow";
import type { ColumnData, ColumnKind, ColumnMeta } from "../columns.js";
import { PeculiarError } from "../../errors.js";
import { ecsvKind, isEcsv, parseEcsvHeader } from "./ecsv.js";
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
}

/** Records as flat arrays, no object per row: record r holds cells[start[r] .. start[r] + count[r]). */
interface Records {
  cells: string[];
  quoted: number[];
  start: number[];
  count: number[];
  line: number[];
  /** 1 when the record ends inside an unclosed quote. */
  unterminated: number[];
}

function cellsOf(R: Records, r: number): string[] {
  return R.cells.slice(R.start[r]!, R.start[r]! + R.count[r]!);
}
function cellAt(R: Records, r: number, j: number): string | undefined {
  return j < R.count[r]! ? R.cells[R.start[r]! + j] : undefined;
}
function quotedAt(R: Records, r: number, j: number): boolean {
  return j < R.count[r]! && R.quoted[R.start[r]! + j] === 1;
}

/** Splits text into records, skipping comments and blank lines; returns whether the units marker was seen. */
function splitRecords(text: string, delim: string): { recs: Records; marker: boolean } {
  const recs: Records = { cells: [], quoted: [], start: [], count: [], line: [], unterminated: [] };
  let marker = false;
  let i = 0;
  let line = 1;
  const n = text.length;
  const d = delim.charCodeAt(0);
  while (i < n) {
    // Start of a line: comment or blank?
    let j = i;
    while (j < n && (text.charCodeAt(j) === 32 || text.charCodeAt(j) === 9)) j++;
    const c0 = text.charCodeAt(j);
    if (j >= n || c0 === 10 || c0 === 13 || c0 === 35 /* # */) {
      let e = j;
      while (e < n && text.charCodeAt(e) !== 10 && text.charCodeAt(e) !== 13) e++;
      if (c0 === 35 && recs.start.length === 0 && text.slice(i, e).trim() === UNITS_MARKER) marker = true;
      if (e < n && text.charCodeAt(e) === 13 && text.charCodeAt(e + 1) === 10) e++;
      i = e + 1;
      line++;
      continue;
    }
    const first = recs.cells.length;
    recs.line.push(line);
    let unterminated = 0;
    if (d === 32) i = j; // space-separated: leading blanks are not a field
    // Cells of one record.
    for (;;) {
      let k = i;
      while (k < n && text.charCodeAt(k) === 32 && d !== 32) k++;
      if (text.charCodeAt(k) === 34 /* " */) {
        let s = "";
        let p = k + 1;
        let closed = false;
        while (p < n) {
          const q = text.indexOf('"', p);
          if (q < 0) {
            s += text.slice(p);
            p = n;
            break;
          }
          s += text.slice(p, q);
          if (text.charCodeAt(q + 1) === 34) {
            s += '"';
            p = q + 2;
          } else {
            p = q + 1;
            closed = true;
            break;
          }
        }
        // Count newlines inside the quoted part.
        for (let t = k; t < p; t++) {
          const ch = text.charCodeAt(t);
          if (ch === 10 || (ch === 13 && text.charCodeAt(t + 1) !== 10)) line++;
        }
        if (!closed) unterminated = 1;
        // Anything between the closing quote and the delimiter is appended (lenient).
        let e = p;
        while (e < n && text.charCodeAt(e) !== d && text.charCodeAt(e) !== 10 && text.charCodeAt(e) !== 13) e++;
        const tail = text.slice(p, e).trim();
        recs.cells.push(s + tail);
        recs.quoted.push(1);
        i = e;
      } else {
        let e = i;
        while (e < n && text.charCodeAt(e) !== d && text.charCodeAt(e) !== 10 && text.charCodeAt(e) !== 13) e++;
        recs.cells.push(text.slice(i, e).trim());
        recs.quoted.push(0);
        i = e;
      }
      if (i < n && text.charCodeAt(i) === d) {
        i++;
        if (d === 32) {
          // space-separated: a run of blanks is one separator; blanks before the line end are none
          while (i < n && (text.charCodeAt(i) === 32 || text.charCodeAt(i) === 9)) i++;
          if (i >= n || text.charCodeAt(i) === 10 || text.charCodeAt(i) === 13) break;
        }
        continue;
      }
      break;
    }
    // End of record.
    if (i < n && text.charCodeAt(i) === 13 && text.charCodeAt(i + 1) === 10) i++;
    i++;
    line++;
    recs.start.push(first);
    recs.count.push(recs.cells.length - first);
    recs.unterminated.push(unterminated);
  }
  return { recs, marker };
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

function looksNumeric(recs: Records, from: number, col: number): boolean {
  let num = 0;
  let other = 0;
  for (let r = from; r < recs.start.length && num + other < 200; r++) {
    const cell = cellAt(recs, r, col);
    if (cell === undefined || (!quotedAt(recs, r, col) && NULL_TOKENS.has(cell)) || cell === "") continue;
    if (isNumber(cell.trim())) num++;
    else other++;
  }
  return num > 0 && num >= 3 * other;
}

function isUnitsRow(recs: Records, width: number): boolean {
  if (recs.start.length < 2 || recs.count[1]! > width) return false;
  const row = cellsOf(recs, 1);
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

function headerNames(cells: string[]): string[] {
  const seen = new Set<string>();
  return cells.map((c, j) => {
    let name = c.trim() === "" ? `col${j + 1}` : c.trim();
    if (seen.has(name)) {
      let k = 2;
      while (seen.has(`${name}_${k}`)) k++;
      name = `${name}_${k}`;
    }
    seen.add(name);
    return name;
  });
}

const INT32_MIN = -2147483648;
const INT32_MAX = 2147483647;
const INT64_MIN = -(2n ** 63n);
const INT64_MAX = 2n ** 63n - 1n;

/** One column from its cells: infers the type, fills nulls, flags bad cells in `reasons`. */
function buildColumn(name: string, cells: (string | undefined)[], quoted: Uint8Array, reasons: string[], meta: ColumnMeta): ColumnData {
  const n = cells.length;
  const isNull = new Uint8Array(n);
  // Quoted empty cells: null unless the column turns out to be text.
  const quotedEmpty = new Uint8Array(n);
  let nonNull = 0;
  let bools = 0;
  let nums = 0;
  let floats = 0;
  let int32ok = true;
  let int64ok = true;
  for (let i = 0; i < n; i++) {
    const c = cells[i];
    if (c === undefined || (!quoted[i] && NULL_TOKENS.has(c))) {
      isNull[i] = 1;
      continue;
    }
    if (c === "") {
      isNull[i] = 1;
      quotedEmpty[i] = 1;
      continue;
    }
    nonNull++;
    const t = c.trim();
    if (BOOL_RE.test(t)) bools++;
    else if (INT_RE.test(t)) {
      nums++;
      const x = Number(t);
      if (x < INT32_MIN || x > INT32_MAX) {
        int32ok = false;
        const b = BigInt(t);
        if (b < INT64_MIN || b > INT64_MAX) int64ok = false;
      }
    } else if (isNumber(t)) {
      nums++;
      floats++;
    }
  }
  const withMeta = (c: ColumnData): ColumnData => {
    if (meta.unit) c.meta = meta;
    if (isNull.some((x) => x === 1)) c.nulls = isNull;
    return c;
  };
  if (nonNull === 0 && !quotedEmpty.includes(1)) return withMeta({ name, kind: "float64", values: new Float64Array(n).fill(NaN) });
  if (nonNull > 0 && bools === nonNull) {
    const v = new Uint8Array(n);
    for (let i = 0; i < n; i++) if (!isNull[i] && cells[i]!.trim().toLowerCase() === "true") v[i] = 1;
    return withMeta({ name, kind: "bool", values: v });
  }
  if (nums > 0 && nums >= 3 * (nonNull - nums)) {
    const bad = (i: number) => {
      isNull[i] = 1;
      addReason(reasons, i, `column ${name}: ${JSON.stringify(cells[i])} is not a number`);
    };
    if (floats === 0 && int32ok) {
      const v = new Int32Array(n);
      for (let i = 0; i < n; i++) {
        if (isNull[i]) continue;
        const t = cells[i]!.trim();
        if (INT_RE.test(t)) v[i] = Number(t);
        else bad(i);
      }
      return withMeta({ name, kind: "int32", values: v });
    }
    if (floats === 0 && int64ok) {
      const v = new BigInt64Array(n);
      for (let i = 0; i < n; i++) {
        if (isNull[i]) continue;
        const t = cells[i]!.trim();
        if (INT_RE.test(t)) v[i] = BigInt(t);
        else bad(i);
      }
      return withMeta({ name, kind: "int64", values: v });
    }
    const v = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (isNull[i]) continue;
      const t = cells[i]!.trim();
      if (isNumber(t)) v[i] = parseNumber(t);
      else bad(i);
    }
    return withMeta({ name, kind: "float64", values: v });
  }
  // Text: quoted empty cells are empty strings, the rest as read.
  for (let i = 0; i < n; i++) if (quotedEmpty[i]) isNull[i] = 0;
  const v = new Array<string>(n);
  for (let i = 0; i < n; i++) v[i] = isNull[i] ? "" : cells[i]!;
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
function buildDeclaredColumn(name: string, cells: (string | undefined)[], reasons: string[], meta: ColumnMeta, datatype: string, kind: ColumnKind): ColumnData {
  const n = cells.length;
  const nulls = new Uint8Array(n);
  const values = kind === "utf8" ? new Array<string>(n).fill("") : new TYPED_ARRAYS[kind]!(n);
  const bad = (i: number) => {
    nulls[i] = 1;
    addReason(reasons, i, `column ${name}: ${JSON.stringify(cells[i])} is not a valid ${datatype}`);
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

export function parseCsvColumns(text: string, options: CsvOptions): ParsedColumns {
  const delim = options.delimiter ?? ",";
  if (delim.length !== 1 || delim === '"' || delim === "\n" || delim === "\r") {
    throw new PeculiarError("usage", "delimiter must be one character other than a quote or newline", { value: delim });
  }
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  const ecsv = isEcsv(body) ? parseEcsvHeader(leadingComments(body), options.file) : undefined;
  const { recs, marker } = splitRecords(body, ecsv ? ecsv.delimiter : delim);
  if (recs.start.length === 0) throw new PeculiarError("format", "no header row (the file has only comments or blank lines)", { file: options.file });
  const headerCells = cellsOf(recs, 0);
  const names = headerNames(headerCells);
  const width = names.length;
  if (ecsv) {
    const listed = ecsv.columns.map((c) => c.name);
    if (listed.join("\u0000") !== headerCells.map((c) => c.trim()).join("\u0000")) {
      throw new PeculiarError("format", `ECSV header lists columns ${listed.join(", ")} but the header row has ${headerCells.join(", ")}`, { file: options.file, row: recs.line[0]! });
    }
  }
  const hasUnits = !ecsv && (marker || isUnitsRow(recs, width));
  const units = hasUnits ? cellsOf(recs, 1) : [];
  const first = hasUnits ? 2 : 1;
  const rows = recs.start.length - first;
  const reasons = new Array<string>(rows).fill("");
  const sourceRows = new Int32Array(rows);
  for (let r = 0; r < rows; r++) {
    const line = recs.line[first + r]!;
    const count = recs.count[first + r]!;
    sourceRows[r] = line;
    if (recs.unterminated[first + r]) addReason(reasons, r, `line ${line}: quote not closed before the end of the file`);
    if (count !== width) {
      let text = `line ${line}: ${count} ${count === 1 ? "field" : "fields"}, expected ${width}`;
      if (count > width) text += ` (extra: ${cellsOf(recs, first + r).slice(width).map((c) => JSON.stringify(c)).join(", ")})`;
      addReason(reasons, r, text);
    }
  }
  const columns: ColumnData[] = [];
  for (let j = 0; j < width; j++) {
    const cells = new Array<string | undefined>(rows);
    const quoted = new Uint8Array(rows);
    for (let r = 0; r < rows; r++) {
      const at = first + r;
      if (j < recs.count[at]!) {
        cells[r] = recs.cells[recs.start[at]! + j];
        quoted[r] = recs.quoted[recs.start[at]! + j]!;
      }
    }
    const declared = ecsv?.columns[j];
    if (declared) {
      const meta: ColumnMeta = {};
      if (declared.unit) meta.unit = declared.unit;
      if (declared.description) meta.description = declared.description;
      columns.push(buildDeclaredColumn(names[j]!, cells, reasons, meta, declared.datatype, ecsvKind(declared)));
      continue;
    }
    const u = units[j]?.trim() ?? "";
    const meta: ColumnMeta = unitCell(u) === "none" ? {} : { unit: u };
    columns.push(buildColumn(names[j]!, cells, quoted, reasons, meta));
  }
  const metadata = new Map<string, string>();
  if (ecsv?.meta) metadata.set(ECSV_META, ecsv.meta);
  return { columns, rows, reasons, sourceRows, metadata };
}
