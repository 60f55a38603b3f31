/**
 * Arrow IPC, file and stream. Reading keeps the schema metadata (roles, settings, history) and the
 * field metadata (unit, ucd, description); writing writes the file format, or the stream format
 * for `.arrows`.
 */
import { tableFromIPC, tableToIPC, type Table } from "apache-arrow";
import { columnsOf } from "../columns.js";
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
  return { columns: columnsOf(table), rows: n, reasons: new Array<string>(n).fill(""), sourceRows, metadata: new Map(table.schema.metadata) };
}

export function parseArrow(bytes: Uint8Array, options: { file: string }): Table {
  return finishTable(parseArrowColumns(bytes, options), { file: options.file, format: "arrow" });
}

export function arrowFromTable(table: Table, options: { stream?: boolean } = {}): Uint8Array {
  return tableToIPC(table, options.stream ? "stream" : "file");
}
