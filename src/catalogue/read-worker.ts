/**
 * Worker thread entry (the bundle's dist/read-worker.js): reads one table with readTable and posts it
 * back as Arrow IPC bytes (transferred), or the error it raised. See read-ahead.ts.
 */
import { parentPort } from "node:worker_threads";
import { tableToIPC } from "apache-arrow";
import { readTable, type ReadOptions } from "./io.js";
import { PeculiarError } from "../errors.js";

parentPort?.on("message", async (m: { path: string; options: ReadOptions }) => {
  try {
    const table = await readTable(m.path, m.options);
    const bytes = tableToIPC(table, "stream");
    parentPort!.postMessage({ bytes }, [bytes.buffer as ArrayBuffer]);
  } catch (e) {
    if (e instanceof PeculiarError) parentPort!.postMessage({ error: { code: e.code, message: e.message, place: e.place } });
    else parentPort!.postMessage({ error: { message: e instanceof Error ? e.message : String(e) } });
  }
});
