/**
 * Arrow IPC, file and stream. Reading keeps the schema metadata (roles, settings, history) and the
 * field metadata (unit, ucd, description); writing writes the file format, or the stream format
 * for `.arrows`.
 */
import { RecordBatchFileWriter, RecordBatchStreamWriter, tableFromIPC, tableToIPC, type Table } from "apache-arrow";
import { columnDataOf, columnMeta, kindOf, TYPED, type ColumnData, type ColumnKind } from "../columns.js";
import { PeculiarError } from "../../errors.js";
import { finishTable, type ParsedColumns } from "./table.js";

export function parseArrowColumns(bytes: Uint8Array, options: { file: string }): ParsedColumns {
  const magic = (at: number) => String.fromCharCode(...bytes.subarray(at, at + 6)) === "ARROW1";
  if (magic(0) && (bytes.length < 12 || !magic(bytes.length - 6))) {
    throw new PeculiarError("format", "truncated: Arrow IPC file does not end with its ARROW1 footer", { file: options.file });
  }
  // A stream ends with the end-of-stream marker 0xFFFFFFFF 0x00000000 (Arrow columnar format,
  // IPC streaming format); without it a cut between two batches would read as fewer rows.
  const isStream = !magic(0) && bytes.length >= 8 && bytes[0] === 0xff && bytes[1] === 0xff && bytes[2] === 0xff && bytes[3] === 0xff;
  if (isStream) {
    const end = bytes.subarray(bytes.length - 8);
    if (!(end[0] === 0xff && end[1] === 0xff && end[2] === 0xff && end[3] === 0xff && end[4] === 0 && end[5] === 0 && end[6] === 0 && end[7] === 0)) {
      throw new PeculiarError("format", "truncated: Arrow IPC stream does not end with its end-of-stream marker", { file: options.file });
    }
  }
  let table: Table;
  try {
    table = tableFromIPC(bytes);
  } catch (e) {
    throw new PeculiarError("format", `not a readable Arrow IPC file or stream: ${(e as Error).message}`, { file: options.file }, { cause: e });
  }
  if (table.schema.fields.length === 0 && bytes.length > 0 && table.numRows === 0) {
    // tableFromIPC returns an empty table for bytes that hold no message at all.
    const magic = new TextDecoder().decode(bytes.subarray(0, 6));
    if (magic !== "ARROW1" && !(bytes[0] === 0xff && bytes[1] === 0xff && bytes[2] === 0xff && bytes[3] === 0xff)) {
      throw new PeculiarError("format", "not an Arrow IPC file or stream (no ARROW1 magic, no stream message)", { file: options.file });
    }
  }
  const n = table.numRows;
  const sourceRows = new Int32Array(n);
  for (let i = 0; i < n; i++) sourceRows[i] = i + 1;
  return { columns: table.schema.fields.map((f) => numericView(table, f.name) ?? columnDataOf(table, f.name)), rows: n, reasons: [], sourceRows, metadata: new Map(table.schema.metadata) };
}


/**
 * A numeric column in one chunk without nulls as a view of the file's bytes (no copy: the table
 * built from it reads the same buffer); undefined for any other column, which is copied out.
 */
function numericView(table: Table, name: string): ColumnData | undefined {
  const v = table.getChild(name);
  const field = table.schema.fields.find((f) => f.name === name);
  if (!v || !field || v.data.length !== 1 || v.nullCount !== 0) return undefined;
  const kind = kindOf(field.type);
  const want = kind === undefined || kind === "bool" || kind === "utf8" ? undefined : TYPED[kind];
  const chunk = v.data[0]!;
  if (kind === undefined || want === undefined || !(chunk.values instanceof want)) return undefined;
  // Arrow slices `values` already (chunk.offset only indexes the validity bitmap)
  const values = (chunk.values as Float64Array).subarray(0, chunk.length);
  return { name, kind, values, meta: columnMeta(table, name) };
}

export function parseArrow(bytes: Uint8Array, options: { file: string }): Table {
  return finishTable(parseArrowColumns(bytes, options), { file: options.file, format: "arrow" });
}

export function arrowFromTable(table: Table, options: { stream?: boolean } = {}): Uint8Array {
  return tableToIPC(table, options.stream ? "stream" : "file");
}

/** Pieces handed to the file are gathered to about this size; bigger buffers go as they are. */
const PIECE = 1 << 20;

/**
 * The bytes of arrowFromTable in pieces, without first joining them into one buffer: the writer's
 * own buffers (column data as it is in the table) go out as they are, small ones gathered.
 */
export async function* arrowChunks(table: Table, options: { stream?: boolean } = {}): AsyncGenerator<Uint8Array> {
  const writer = (options.stream ? RecordBatchStreamWriter : RecordBatchFileWriter).writeAll(table);
  let held: Uint8Array[] = [];
  let heldBytes = 0;
  const flush = (): Uint8Array => {
    const out = held.length === 1 ? held[0]! : new Uint8Array(heldBytes);
    if (held.length > 1) {
      let p = 0;
      for (const h of held) {
        out.set(h, p);
        p += h.length;
      }
    }
    held = [];
    heldBytes = 0;
    return out;
  };
  for await (const c of writer as AsyncIterable<Uint8Array>) {
    if (c.length >= PIECE) {
      if (heldBytes > 0) yield flush();
      yield c;
      continue;
    }
    held.push(c);
    heldBytes += c.length;
    if (heldBytes >= PIECE) yield flush();
  }
  if (heldBytes > 0) yield flush();
}
