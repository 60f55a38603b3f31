/**
 * The CSV job of a helper thread (src/helper-worker.ts): formats the rows of a table part (sent as
 * Arrow IPC) as CSV/TSV without a header and replies with the chunks (transferred). See csv-threads.ts.
 */
import { tableFromIPC } from "apache-arrow";
import { csvChunks } from "./formats/csv-write.js";

export function csvJob(m: { ipc: Uint8Array; delimiter: string }): { reply: { chunks: Uint8Array[] }; transfer: ArrayBuffer[] } {
  const chunks = [...csvChunks(tableFromIPC(m.ipc), { delimiter: m.delimiter, header: false })];
  return { reply: { chunks }, transfer: chunks.map((c) => c.buffer as ArrayBuffer) };
}
