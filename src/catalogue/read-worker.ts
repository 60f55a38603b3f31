/**
 * The read job of a helper thread (src/helper-worker.ts): reads one table with readTable and replies
 * with its column buffers (transfer.ts; moved, not copied) and the lines it keeps (line-text.ts), as
 * Arrow IPC bytes when it has columns of other kinds, or with the error it raised. See read-ahead.ts.
 */
import { tableToIPC } from "apache-arrow";
import { readTable, type ReadOptions } from "./io.js";
import { tablePartsOf, type TableParts } from "./transfer.js";
import { keptLines, lineBuffers, type LineText } from "./line-text.js";
import { PeculiarError, type ErrorCode, type ErrorPlace } from "../errors.js";

export interface ReadReply {
  parts?: TableParts;
  /** The lines of the file and its column names (line-text.ts), moved with the parts. */
  lines?: { text: LineText; names: string[] };
  bytes?: Uint8Array;
  error?: { code?: ErrorCode; message: string; place?: ErrorPlace };
}

export async function readJob(m: { path: string; options: ReadOptions }): Promise<{ reply: ReadReply; transfer: ArrayBuffer[] }> {
  try {
    const table = await readTable(m.path, m.options);
    const moved = tablePartsOf(table);
    if (moved) {
      const lines = keptLines(table);
      if (!lines) return { reply: { parts: moved.parts }, transfer: moved.transfer };
      return { reply: { parts: moved.parts, lines }, transfer: [...new Set([...moved.transfer, ...lineBuffers(lines.text)])] };
    }
    const bytes = tableToIPC(table, "stream");
    return { reply: { bytes }, transfer: [bytes.buffer as ArrayBuffer] };
  } catch (e) {
    if (e instanceof PeculiarError) return { reply: { error: { code: e.code, message: e.message, place: e.place } }, transfer: [] };
    return { reply: { error: { message: e instanceof Error ? e.message : String(e) } }, transfer: [] };
  }
}
