/**
 * CSV/TSV text of a large table on two threads: the last half of the rows is formatted in
 * dist/csv-worker.js (sent there as Arrow IPC) while this thread formats and writes the first half;
 * the bytes are those of csvChunks. Small tables, and runs without the worker script (the sources
 * run directly, as under vitest), use csvChunks alone; so does a part whose worker fails.
 * The worker can be started ahead (startCsvWorker), so that its start-up overlaps other work.
 */
import { Worker } from "node:worker_threads";
import { tableToIPC, type Table } from "apache-arrow";
import { csvChunks, csvDelimiter, type CsvWriteOptions } from "./formats/csv-write.js";
import { workerScript } from "../worker-script.js";

/** Tables with fewer rows are written on this thread alone. */
export const CSV_THREADS_MIN_ROWS = 200_000;

/** A worker started ahead of the write; give it to csvChunksThreaded (or writeTable), or stop it. */
export interface CsvWorker {
  readonly worker: Worker;
  /** False once the worker has exited (failed at start-up, or stopped). */
  alive(): boolean;
  /** Ends the worker when it is not needed after all (a used worker ends by itself). */
  stop(): void;
}

/**
 * Starts dist/csv-worker.js now; undefined where there is no worker script. The worker does not keep
 * the process alive until it is given work.
 */
export function startCsvWorker(how: { workerUrl?: URL } = {}): CsvWorker | undefined {
  const url = how.workerUrl ?? workerScript("csv-worker.js");
  if (!url) return undefined;
  const worker = new Worker(url);
  worker.unref();
  let exited = false;
  worker.on("error", () => {}); // a failed worker is noticed (and replaced by this thread) when it is used
  worker.on("exit", () => (exited = true));
  return { worker, alive: () => !exited, stop: () => void worker.terminate() };
}

/**
 * The chunks of csvChunks(table, options), the second half made on a worker thread. The options are
 * checked now (a bad delimiter is an error before anything is written). `how` is for tests and for
 * a worker started ahead (`worker`, which is used or stopped).
 */
export function csvChunksThreaded(table: Table, options: CsvWriteOptions = {}, how: { workerUrl?: URL; minRows?: number; worker?: CsvWorker } = {}): AsyncGenerator<Uint8Array> {
  let delimiter: string;
  try {
    delimiter = csvDelimiter(options);
  } catch (e) {
    how.worker?.stop();
    throw e;
  }
  return threaded(table, options, delimiter, how);
}

/** Rows of the first part: about half, a multiple of 64 (bit columns then slice without repacking). */
function cutRow(n: number): number {
  return Math.min(n - 1, Math.ceil(n / 128) * 64);
}

async function* threaded(table: Table, options: CsvWriteOptions, delimiter: string, how: { workerUrl?: URL; minRows?: number; worker?: CsvWorker }): AsyncGenerator<Uint8Array> {
  const n = table.numRows;
  if (how.worker && !how.worker.alive()) how = { ...how, worker: undefined };
  const url = how.worker ? undefined : how.workerUrl ?? workerScript("csv-worker.js");
  if ((!how.worker && !url) || n < (how.minRows ?? CSV_THREADS_MIN_ROWS) || n < 2) {
    how.worker?.stop();
    yield* csvChunks(table, options);
    return;
  }
  const cut = cutRow(n);
  const tail = table.slice(cut);
  const w = how.worker?.worker ?? new Worker(url!);
  w.ref();
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
