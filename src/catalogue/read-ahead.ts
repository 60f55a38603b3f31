/**
 * Reading a catalogue on a helper thread (helper-threads.ts) while this thread does something else
 * (the second input of `match` while the first is read here): the same readTable, run by the
 * helper's read job (read-worker.ts), the table's buffers coming back moved, not copied (transfer.ts). Where no worker script is
 * found (the sources run directly, as under vitest), for Arrow files (already fast to read) and for
 * small files, it is readTable here. Errors are the same errors, with the same messages (file, row
 * and column).
 */
import { statSync } from "node:fs";
import { tableFromIPC, type Table } from "apache-arrow";
import { formatFromPath, readTable, type ReadOptions } from "./io.js";
import type { ReadReply } from "./read-worker.js";
import { tableFromParts } from "./transfer.js";
import { keepLineText } from "./line-text.js";
import { PeculiarError } from "../errors.js";
import { helperThread } from "../helper-threads.js";

/** Files smaller than this are read here: handing them over would cost more than it saves. */
export const READ_AHEAD_MIN_BYTES = 4 << 20;

/** A read under way: readTable's result, and a way to stop the helper when the result is no longer wanted. */
export type ReadAhead = Promise<Table> & { cancel(): void };

/** Starts reading `path`; the promise is readTable's result. `how` is for tests (worker script, size threshold). */
export function readTableAhead(path: string, options: ReadOptions = {}, how: { workerUrl?: URL; minBytes?: number } = {}): ReadAhead {
  let size = 0;
  try {
    size = statSync(path).size;
  } catch {
    // readTable says what is wrong with the path
  }
  const format = options.format ?? safeFormat(path);
  const helper = size < (how.minBytes ?? READ_AHEAD_MIN_BYTES) || format === "arrow" || format === undefined ? undefined : helperThread(0, how.workerUrl);
  if (!helper) return Object.assign(readTable(path, options), { cancel: () => {} });
  const p = helper.call<ReadReply>("read", { path, options }).then(
    (m) => {
      if (m.parts) {
        const table = tableFromParts(m.parts);
        if (m.lines) keepLineText(table, m.lines.names, m.lines.text);
        return table;
      }
      if (m.bytes) return tableFromIPC(m.bytes);
      if (m.error?.code) {
        const e = new PeculiarError(m.error.code, "", m.error.place ?? {});
        Object.defineProperty(e, "message", { value: m.error.message }); // already formatted with its place
        throw e;
      }
      throw new Error(m.error?.message ?? "read job failed");
    },
    // the helper itself failed (not the file): read it here instead
    () => readTable(path, options),
  );
  return Object.assign(p, { cancel: () => helper.stop() });
}

function safeFormat(path: string): string | undefined {
  try {
    return formatFromPath(path);
  } catch {
    return undefined;
  }
}
