/**
 * Reading a catalogue on a worker thread while this thread does something else (the second input of
 * `match` while the first is read here): the same readTable, run in dist/read-worker.js, the table
 * coming back as Arrow IPC. Where no worker script is found (the sources run directly, as under vitest),
 * for Arrow files (already fast to read) and for small files, it is readTable here. Errors are the
 * same errors, with the same messages (file, row and column).
 */
import { statSync } from "node:fs";
import { Worker } from "node:worker_threads";
import { tableFromIPC, type Table } from "apache-arrow";
import { formatFromPath, readTable, type ReadOptions } from "./io.js";
import { PeculiarError, type ErrorCode, type ErrorPlace } from "../errors.js";
import { workerScript } from "../worker-script.js";

/** Files smaller than this are read here: a worker's start-up would cost more than it saves. */
export const READ_AHEAD_MIN_BYTES = 4 << 20;

/** A read under way: readTable's result, and a way to stop the worker when the result is no longer wanted. */
export type ReadAhead = Promise<Table> & { cancel(): void };

/** Starts reading `path`; the promise is readTable's result. `how` is for tests (worker script, size threshold). */
export function readTableAhead(path: string, options: ReadOptions = {}, how: { workerUrl?: URL; minBytes?: number } = {}): ReadAhead {
  const url = how.workerUrl ?? workerScript("read-worker.js");
  let size = 0;
  try {
    size = statSync(path).size;
  } catch {
    // readTable says what is wrong with the path
  }
  const format = options.format ?? (url ? safeFormat(path) : undefined);
  if (!url || size < (how.minBytes ?? READ_AHEAD_MIN_BYTES) || format === "arrow" || format === undefined) return Object.assign(readTable(path, options), { cancel: () => {} });
  let w: Worker | undefined;
  const p = new Promise<Table>((resolve, reject) => {
    w = new Worker(url);
    let settled = false;
    const done = () => {
      settled = true;
      void w!.terminate();
    };
    w!.on("message", (m: { bytes?: Uint8Array; error?: { code?: ErrorCode; message: string; place?: ErrorPlace } }) => {
      done();
      if (m.bytes) resolve(tableFromIPC(m.bytes));
      else if (m.error?.code) {
        const e = new PeculiarError(m.error.code, "", m.error.place ?? {});
        Object.defineProperty(e, "message", { value: m.error.message }); // already formatted with its place
        reject(e);
      } else reject(new Error(m.error?.message ?? "read worker failed"));
    });
    w!.on("error", () => {
      if (settled) return;
      done();
      // the worker itself failed (not the file): read it here instead
      readTable(path, options).then(resolve, reject);
    });
    w!.postMessage({ path, options });
  });
  return Object.assign(p, { cancel: () => void w?.terminate() });
}

function safeFormat(path: string): string | undefined {
  try {
    return formatFromPath(path);
  } catch {
    return undefined;
  }
}
