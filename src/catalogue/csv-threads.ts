/**
 * CSV/TSV text of a large table on two threads: the last half of the rows is formatted in
 * dist/csv-worker.js (sent there as Arrow IPC) while this thread formats and writes the first half;
 * the bytes are those of csvChunks. Small tables, and runs without the worker script (the sources
 * run directly, as under vitest), use csvChunks alone; so does a part whose worker fails.
 */
import { existsSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { Worker } from "node:worker_threads";
import { tableToIPC, type Table } from "apache-arrow";
import { csvChunks, type CsvWriteOptions } from "./formats/csv-write.js";

/** Tables with fewer rows are written on this thread alone. */
export const CSV_THREADS_MIN_ROWS = 200_000;

function workerUrl(): URL | undefined {
  for (const rel of ["./csv-worker.js", "../csv-worker.js"]) {
    const u = new URL(rel, import.meta.url);
    if (u.protocol === "file:" && existsSync(fileURLToPath(u))) return u;
  }
  return undefined;
}

/** The chunks of csvChunks(table, options), the second half made on a worker thread. `how` is for tests. */
export async function* csvChunksThreaded(table: Table, options: CsvWriteOptions = {}, how: { workerUrl?: URL; minRows?: number } = {}): AsyncGenerator<Uint8Array> {
  const url = how.workerUrl ?? workerUrl();
  const n = table.numRows;
  if (!url || n < (how.minRows ?? CSV_THREADS_MIN_ROWS) || n < 2) {
    yield* csvChunks(table, options);
    return;
  }
  const cut = Math.ceil(n / 2);
  const tail = table.slice(cut);
  const delimiter = options.delimiter ?? ",";
  const first = csvChunks(table.slice(0, cut), options); // checks the options before a worker starts
  const w = new Worker(url);
  const later = new Promise<Uint8Array[] | null>((resolve) => {
    w.once("message", (m: { chunks?: Uint8Array[]; error?: string }) => resolve(m.chunks ?? null));
    w.once("error", () => resolve(null));
    w.once("exit", () => resolve(null));
  });
  try {
    w.postMessage({ ipc: tableToIPC(tail, "stream"), delimiter });
    yield* first;
    const rest = await later;
    if (rest) yield* rest;
    else yield* csvChunks(tail, { ...options, header: false });
  } finally {
    void w.terminate();
  }
}
