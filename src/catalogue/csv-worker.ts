/**
 * Worker thread entry (the bundle's dist/csv-worker.js): formats the rows of a table part as CSV/TSV
 * without a header and posts the chunks back (transferred). See csv-threads.ts.
 */
import { parentPort } from "node:worker_threads";
import { tableFromIPC } from "apache-arrow";
import { csvChunks } from "./formats/csv-write.js";

parentPort?.on("message", (m: { ipc: Uint8Array; delimiter: string }) => {
  try {
    const out = [...csvChunks(tableFromIPC(m.ipc), { delimiter: m.delimiter, header: false })];
    parentPort!.postMessage({ chunks: out }, out.map((c) => c.buffer as ArrayBuffer));
  } catch (e) {
    parentPort!.postMessage({ error: e instanceof Error ? e.message : String(e) });
  }
});
