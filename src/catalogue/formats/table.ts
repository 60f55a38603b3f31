/**
 * The one place where a reader's columns become a peculiar table: adds the bookkeeping columns
 * `valid`, `invalid_reason` and `source_row` (or merges the reader's findings into the file's own,
 * when the file was written by us) and records `peculiar.source` in the schema metadata.
 */
import type { Table } from "apache-arrow";
import { boolDataExcept, sparseUtf8Data, tableFromColumns, type ColumnData, type ColumnKind, type DataColumn } from "../columns.js";
import { INVALID_REASON, META, SOURCE_ROW, VALID } from "../meta.js";
import { keepLineText, type LineText } from "../line-text.js";

/** What every reader hands over: columns as read, one reason per row ("" when fine), row numbers. */
export interface ParsedColumns {
  columns: ColumnData[];
  /** Number of rows (needed when there are no columns). */
  rows: number;
  /**
   * Per row: what the reader found wrong, "" (or no entry: the array may be shorter than `rows`,
   * and empty when nothing was found) when nothing.
   */
  reasons: string[];
  /** Per row: 1-based line (text) or row (binary) in the file. */
  sourceRows: Int32Array;
  /** Schema metadata found in the file (kept as is). */
  metadata: Map<string, string>;
  /** The text of each row, when a writer may copy it (line-text.ts; the CSV reader's plain-number path). */
  lineText?: LineText;
  /** What the reader changed and the user should hear of (a renamed header cell); goes to peculiar.source `notes`. */
  notes?: string[];
}

export interface SourceInfo {
  file: string;
  format: string;
  /** FITS: the HDU the table came from (0 = primary) and its EXTNAME when present. */
  hdu?: number;
  extname?: string;
  /** VOTable with several TABLEs: the one read (0 = first) and its name. */
  table?: number;
  tableName?: string;
  /** Columns the reader could not represent and left out, with why. */
  skipped?: string[];
}

export interface SourceMeta extends SourceInfo {
  rows: number;
  invalid: number;
  /** The source of a table we wrote earlier and read back (its source_row counts in that file). */
  previous?: unknown;
  /**
   * The file had its own source_row (a table we wrote), which was kept: it counts rows of an
   * earlier table, which a file without our metadata (CSV) does not name.
   */
  keptSourceRow?: boolean;
  /** The reader's notes (ParsedColumns.notes); the loader prints them with its own. */
  notes?: string[];
}

const INT_KINDS: ReadonlySet<ColumnKind> = new Set(["int8", "int16", "int32", "int64", "uint8", "uint16", "uint32", "uint64"]);

/** A free name for a file column that clashes with a bookkeeping column of another type. */
function freeName(name: string, taken: Set<string>): string {
  let n = `${name}_file`;
  for (let k = 2; taken.has(n); k++) n = `${name}_file${k}`;
  return n;
}

export function finishTable(parsed: ParsedColumns, info: SourceInfo): Table {
  const n = parsed.rows;
  const taken = new Set(parsed.columns.map((c) => c.name));
  const cols: ColumnData[] = [];
  let valid: ColumnData | undefined;
  let reason: ColumnData | undefined;
  let sourceRow: ColumnData | undefined;
  const dropped = new Set<ColumnData>();
  for (const c of parsed.columns) {
    if (c.name === VALID && c.kind === "bool") {
      valid = c;
      continue;
    } else if (c.name === INVALID_REASON && c.kind === "utf8") {
      reason = c;
      continue;
    } else if (c.name === SOURCE_ROW && INT_KINDS.has(c.kind)) {
      sourceRow = c;
      continue;
    } else if ((c.name === VALID || c.name === INVALID_REASON || c.name === SOURCE_ROW) && n === 0) {
      // No rows, so no type to tell ours from another's (a text table gives them no type at all):
      // the bookkeeping columns are made new, and nothing is lost
      dropped.add(c);
      continue;
    } else if (c.name === VALID || c.name === INVALID_REASON || c.name === SOURCE_ROW) {
      // Same name, other type: the file's column is kept under a free name.
      const renamed = freeName(c.name, taken);
      taken.add(renamed);
      cols.push({ ...c, name: renamed });
      continue;
    }
    cols.push(c);
  }

  let validCol: ColumnData | DataColumn;
  let reasonCol: ColumnData | DataColumn;
  let invalid = 0;
  if (!valid && !reason) {
    // The common case: the file has no bookkeeping of its own. Only the rows with a finding are
    // looked at; the two columns are written straight as Arrow data.
    const bad: number[] = [];
    const found = parsed.reasons;
    for (let i = 0; i < found.length && i < n; i++) if (found[i]) bad.push(i);
    invalid = bad.length;
    validCol = { name: VALID, data: boolDataExcept(n, bad) };
    reasonCol = { name: INVALID_REASON, data: sparseUtf8Data(n, bad, found) };
  } else {
    const validValues = new Uint8Array(n);
    const reasonValues = new Array<string>(n);
    const oldValid = valid?.values as Uint8Array | undefined;
    const oldReason = reason?.values as string[] | undefined;
    for (let i = 0; i < n; i++) {
      const wasValid = oldValid ? oldValid[i] === 1 || valid!.nulls?.[i] === 1 : true;
      const before = oldReason && !reason!.nulls?.[i] ? oldReason[i]! : "";
      const found = parsed.reasons[i] ?? "";
      const ok = wasValid && found === "";
      validValues[i] = ok ? 1 : 0;
      reasonValues[i] = found === "" ? before : before === "" ? found : `${before}; ${found}`;
      if (!ok) invalid++;
    }
    validCol = { name: VALID, kind: "bool", values: validValues };
    reasonCol = { name: INVALID_REASON, kind: "utf8", values: reasonValues };
  }
  let rowCol: ColumnData;
  if (sourceRow) {
    const src = sourceRow.values as ArrayLike<number | bigint>;
    const rows = new Int32Array(n);
    for (let i = 0; i < n; i++) rows[i] = Number(src[i]);
    rowCol = { name: SOURCE_ROW, kind: "int32", values: rows };
    if (sourceRow.nulls) rowCol.nulls = sourceRow.nulls;
    if (sourceRow.meta) rowCol.meta = sourceRow.meta;
  } else rowCol = { name: SOURCE_ROW, kind: "int32", values: parsed.sourceRows };

  // Bookkeeping columns the file had stay where they were; new ones go at the end.
  const out: (ColumnData | DataColumn)[] = [];
  const had = new Set<string>();
  for (const c of parsed.columns) {
    if (c === valid) (out.push(validCol), had.add(VALID));
    else if (c === reason) (out.push(reasonCol), had.add(INVALID_REASON));
    else if (c === sourceRow) (out.push(rowCol), had.add(SOURCE_ROW));
    else if (!dropped.has(c)) out.push(cols.shift()!);
  }
  if (!had.has(VALID)) out.push(validCol);
  if (!had.has(INVALID_REASON)) out.push(reasonCol);
  if (!had.has(SOURCE_ROW)) out.push(rowCol);

  const metadata = new Map(parsed.metadata);
  const source: SourceMeta = { file: info.file, format: info.format, rows: n, invalid };
  if (info.hdu !== undefined) source.hdu = info.hdu;
  if (info.extname !== undefined) source.extname = info.extname;
  if (info.table !== undefined) source.table = info.table;
  if (info.tableName !== undefined) source.tableName = info.tableName;
  if (info.skipped && info.skipped.length > 0) source.skipped = info.skipped;
  if (sourceRow) source.keptSourceRow = true;
  if (parsed.notes && parsed.notes.length > 0) source.notes = parsed.notes;
  const prev = metadata.get(META.source);
  if (prev !== undefined) {
    try {
      source.previous = JSON.parse(prev);
    } catch {
      source.previous = prev;
    }
  }
  metadata.set(META.source, JSON.stringify(source));
  const table = tableFromColumns(out, metadata, n);
  // the lines stand for the file's columns only when none of them became bookkeeping
  if (parsed.lineText && !valid && !reason && !sourceRow) {
    const names = out.slice(0, parsed.columns.length).map((c) => c.name);
    keepLineText(table, names, parsed.lineText);
  }
  return table;
}

/** Appends one finding to a row's reason. */
export function addReason(reasons: string[], row: number, text: string): void {
  const r = reasons[row];
  reasons[row] = r ? `${r}; ${text}` : text;
}

/**
 * The shortest decimal text that reads back as the same float64 (JavaScript's own Number
 * to string is the shortest round-trip form, ECMA-262 Number::toString). Float32 values get the
 * shortest text that reads back to the same float32.
 */
export function formatFloat(x: number, float32 = false): string {
  if (Number.isNaN(x)) return "NaN";
  if (x === Infinity) return "Infinity";
  if (x === -Infinity) return "-Infinity";
  if (x === 0) return Object.is(x, -0) ? "-0" : "0";
  if (float32) {
    for (let p = 1; p <= 9; p++) {
      const s = x.toPrecision(p);
      if (Math.fround(Number(s)) === x) return String(Number(s));
    }
  }
  return String(x);
}
