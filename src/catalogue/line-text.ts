/**
 * The text of each row of a CSV/TSV file, kept beside the table read from it, so that a writer can
 * copy a row's cells as the file spelled them instead of formatting the values again: `match`
 * writes every column of A and of B, and for two large number-only CSV files formatting those
 * values was most of the run.
 *
 * Only the reader's plain-number path keeps it (csv.ts plainNumericTable): every cell there is a
 * number or empty, with no quotes and no blanks, so a line's bytes are exactly its cells joined by
 * the delimiter, and they read back as the same values. A table keeps its lines only while its
 * file columns are the very Arrow data the reader made: `lineTextOf` checks this, so a table whose
 * values were changed, or rebuilt from copies, simply has none.
 */
import type { Data, Table } from "apache-arrow";

export interface LineText {
  /** The file's bytes (UTF-8). */
  bytes: Uint8Array;
  /** Per table row: where its line starts in `bytes`, and where it ends (before CR/LF). */
  starts: Uint32Array;
  ends: Uint32Array;
  /** The delimiter, as a character code. */
  delimiter: number;
}

/** Rows of one catalogue inside a written table: `count` columns from `first` hold the lines of `rows` (-1: no row, all cells empty). */
export interface RowText {
  first: number;
  count: number;
  text: LineText;
  rows: Int32Array;
}

/** By the Arrow data of a table's first file column: the lines, and the data of every file column in order. */
const kept = new WeakMap<Data, { text: LineText; columns: Data[] }>();

/** Only data of one chunk can be recognised again. */
function onlyChunk(table: Table, name: string): Data | undefined {
  const v = table.getChild(name);
  return v && v.data.length === 1 ? (v.data[0] as Data) : undefined;
}

/** Records that the columns `names` of `table` (the file's columns, in its order) are the lines of `text`. */
export function keepLineText(table: Table, names: string[], text: LineText): void {
  if (names.length === 0 || text.starts.length !== table.numRows) return;
  const columns: Data[] = [];
  for (const n of names) {
    const d = onlyChunk(table, n);
    if (!d) return;
    columns.push(d);
  }
  kept.set(columns[0]!, { text, columns });
}

/** The lines of `table` when its columns `names` are, in this order, exactly the file columns they were read as; else undefined. */
export function lineTextOf(table: Table, names: string[]): LineText | undefined {
  const first = names.length > 0 ? onlyChunk(table, names[0]!) : undefined;
  const k = first && kept.get(first);
  if (!k || k.columns.length !== names.length || k.text.starts.length !== table.numRows) return undefined;
  for (let j = 1; j < names.length; j++) if (onlyChunk(table, names[j]!) !== k.columns[j]) return undefined;
  return k.text;
}

/** The lines a table keeps and the names of its file columns, to send with the table to another thread (keepLineText there). */
export function keptLines(table: Table): { text: LineText; names: string[] } | undefined {
  if (table.batches.length !== 1) return undefined;
  const children = table.batches[0]!.data.children as Data[];
  const fields = table.schema.fields;
  for (const d of children) {
    const k = kept.get(d);
    if (!k) continue;
    const names = k.columns.map((c) => fields[children.indexOf(c)]?.name ?? "");
    return lineTextOf(table, names) === k.text ? { text: k.text, names } : undefined;
  }
  return undefined;
}

/**
 * The buffers of the lines to transfer (moved, not copied). Small ones are left to be copied: the
 * bytes of a small file can sit in Node's shared Buffer pool, which must not be moved.
 */
export function lineBuffers(text: LineText): ArrayBuffer[] {
  const out = new Set<ArrayBuffer>();
  for (const a of [text.bytes, text.starts, text.ends]) if (a.buffer instanceof ArrayBuffer && a.buffer.byteLength >= 1 << 16) out.add(a.buffer);
  return [...out];
}

/**
 * The block for a table written with `table`'s columns first, in its order (a command that adds
 * columns after them): row t of the output from row rows[t] of `table`. None when `table` keeps no
 * lines, or its file columns are not its first columns.
 */
export function leadingRowText(table: Table, rows: Int32Array): RowText[] {
  const k = keptLines(table);
  if (!k) return [];
  const fields = table.schema.fields;
  if (k.names.some((n, j) => fields[j]?.name !== n)) return [];
  return [{ first: 0, count: k.names.length, text: k.text, rows }];
}
