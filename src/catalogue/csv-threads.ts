/**
 * CSV/TSV text of a large table on two threads: the last half of the rows is formatted by a helper
 * thread's CSV job (csv-worker.ts; sent there as Arrow IPC) while this thread formats and writes the
 * first half; the bytes are those of csvChunks. Small tables, and runs without the worker script (the
 * sources run directly, as under vitest), use csvChunks alone; so does a part whose helper fails.
 * The helper is the process's shared one (helper-threads.ts): in `match` it is already running by
 * the time the output is written (it read B, or took cross-match bands).
 */
import { tableToIPC, type Table } from "apache-arrow";
import { csvChunks, csvDelimiter, usedRowText, type CsvWriteOptions } from "./formats/csv-write.js";
import { helperThread } from "../helper-threads.js";

/** Tables with fewer rows are written on this thread alone. */
export const CSV_THREADS_MIN_ROWS = 200_000;

/**
 * The chunks of csvChunks(table, options), the second half made on a helper thread. The options are
 * checked now (a bad delimiter is an error before anything is written). `how` is for tests (worker
 * script, size threshold).
 */
export function csvChunksThreaded(table: Table, options: CsvWriteOptions = {}, how: { workerUrl?: URL; minRows?: number } = {}): AsyncGenerator<Uint8Array> {
  const delimiter = csvDelimiter(options);
  return threaded(table, options, delimiter, how);
}

/** Rows of the first part: about half, a multiple of 64 (bit columns then slice without repacking). */
function cutRow(n: number): number {
  return Math.min(n - 1, Math.ceil(n / 128) * 64);
}

async function* threaded(table: Table, options: CsvWriteOptions, delimiter: string, how: { workerUrl?: URL; minRows?: number }): AsyncGenerator<Uint8Array> {
  const n = table.numRows;
  // Lines copied from their files (line-text.ts) leave little to format: this thread writes them all,
  // each chunk made while the last one is written. A helper taking half such rows (the file bytes
  // shared with it, or copied to it) gained nothing here: with both halves running, each took about
  // as long as the whole on one thread, and the hand-over came on top (this machine's two cores share
  // their memory bandwidth, and copying lines is mostly memory traffic: bench/RESULTS.md, run 10).
  const copied = usedRowText(table, delimiter.charCodeAt(0), options.rowText ?? []).some((b) => b !== null);
  const helper = copied || n < (how.minRows ?? CSV_THREADS_MIN_ROWS) || n < 2 ? undefined : helperThread(0, how.workerUrl);
  if (!helper) {
    yield* csvChunks(table, options);
    return;
  }
  const cut = cutRow(n);
  const tail = table.slice(cut);
  const ipc = tableToIPC(tail, "stream");
  const later = helper.call<{ chunks?: Uint8Array[] }>("csv", { ipc, delimiter }, [ipc.buffer as ArrayBuffer]).then(
    (m) => m.chunks ?? null,
    () => null,
  );
  yield* csvChunks(table.slice(0, cut), options);
  const rest = await later;
  if (rest) yield* rest;
  else yield* csvChunks(tail, { ...options, header: false });
}
