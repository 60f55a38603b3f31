/**
 * CSV/TSV text of a large table on two threads: the last half of the rows is formatted in
 * dist/csv-worker.js (sent there as Arrow IPC) while this thread formats and writes the first half;
 * the bytes are those of csvChunks. Small tables, and runs without the worker script (the sources
 * run directly, as under vitest), use csvChunks alone; so does a part whose worker fails.
 */
import { Worker } from "node:worker_threads";
import { tableToIPC, type Table } from "apache-arrow";
import { csvChunks, csvDelimiter, type CsvWriteOptions } from "./formats/csv-write.js";
import { workerScript } from "../worker-script.js";

/** Tables with fewer rows are written on this thread alone. */
export const CSV_THREADS_MIN_ROWS = 200_000;

/**
 * The chunks of csvChunks(table, options), the second half made on a worker thread. The options are
 * checked now (a bad delimiter is an error before anything is written). `how` is for tests.
 */
export function csvChunksThreaded(table: Table, options: CsvWriteOptions = {}, how: { workerUrl?: URL; minRows?: number } = {}): AsyncGenerator<Uint8Array> {
  return threaded(table, options, csvDelimiter(options), how.workerUrl ?? workerScript("csv-worker.js"), how.minRows ?? CSV_THREADS_MIN_ROWS);
}

async function* threaded(table: Table, options: CsvWriteOptions, delimiter: string, url: URL | undefined, minRows: number): AsyncGenerator<Uint8Array> {
  const n = table.numRows;
  if (!url || n < minRows || n < 2) {
    yield* csvChunks(table, options);
    return;
  }
  const cut = Math.ceil(n / 2);
  const tail = table.slice(cut);
  const w = new Worker(url);
  const later = new Promise<Uint8Array[] | null>((resolve) => {
    w.once("message", (m: { chunks?: Uint8Array[]; error?: string }) => resolve(m.chunks ?? null));
    w.once("error", () => resolve(null));
    w.once("exit", () => resolve(null));
  });
  try {
    w.postMessage({ ipc: tableToIPC(tail, "stream"), delimiter });
    yield* csvChunks(table.slice(0, cut), options);
    const rest = await later;
    if (rest) yield* rest;
    else yield* csvChunks(tail, { ...options, header: false });
  } finally {
    void w.terminate();
  }
}
