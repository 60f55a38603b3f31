/**
 * The read job of a helper thread (src/helper-worker.ts): reads one table with readTable and replies
 * with it as Arrow IPC bytes (transferred), or with the error it raised. See read-ahead.ts.
 */
import { tableToIPC } from "apache-arrow";
import { readTable, type ReadOptions } from "./io.js";
import { PeculiarError, type ErrorCode, type ErrorPlace } from "../errors.js";

export interface ReadReply {
  bytes?: Uint8Array;
  error?: { code?: ErrorCode; message: string; place?: ErrorPlace };
}

export async function readJob(m: { path: string; options: ReadOptions }): Promise<{ reply: ReadReply; transfer: ArrayBuffer[] }> {
  try {
    const table = await readTable(m.path, m.options);
    const bytes = tableToIPC(table, "stream");
    return { reply: { bytes }, transfer: [bytes.buffer as ArrayBuffer] };
  } catch (e) {
    if (e instanceof PeculiarError) return { reply: { error: { code: e.code, message: e.message, place: e.place } }, transfer: [] };
    return { reply: { error: { message: e instanceof Error ? e.message : String(e) } }, transfer: [] };
  }
}
