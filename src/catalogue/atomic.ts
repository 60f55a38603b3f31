/**
 * Atomic output: the bytes go to a temporary file in the destination's folder, then one rename
 * puts them in place, so a reader never sees half a file and a failed write leaves nothing.
 */
import { randomBytes } from "node:crypto";
import { realpathSync, statSync } from "node:fs";
import { open, rename, rm, writeFile, type FileHandle } from "node:fs/promises";
import { basename, dirname, join, resolve } from "node:path";
import { PeculiarError } from "../errors.js";

export async function writeFileAtomic(path: string, data: Uint8Array | string | Iterable<Uint8Array> | AsyncIterable<Uint8Array>): Promise<void> {
  const tmp = join(dirname(path), `.${basename(path)}.${randomBytes(6).toString("hex")}.tmp`);
  try {
    if (typeof data === "string" || data instanceof Uint8Array) await writeFile(tmp, data, { flag: "wx" });
    else await writeChunks(tmp, data);
    await rename(tmp, path);
  } catch (e) {
    await rm(tmp, { force: true });
    const reason = (e as NodeJS.ErrnoException).code === "ENOENT" ? "folder does not exist" : (e as Error).message;
    throw new PeculiarError("io", `cannot write: ${reason}`, { file: path }, { cause: e });
  }
}

/**
 * Writes chunks to a new file, the next chunk made while the last one is written (the write runs
 * on libuv's thread pool, so a chunk's making and the previous chunk's write overlap on two cores).
 * A chunk must not change after it is handed over.
 */
async function writeChunks(path: string, chunks: Iterable<Uint8Array> | AsyncIterable<Uint8Array>): Promise<void> {
  const file = await open(path, "wx");
  let writing: Promise<void> = Promise.resolve();
  try {
    for await (const chunk of chunks) {
      await writing;
      writing = writeAll(file, chunk);
      writing.catch(() => {}); // awaited below; a failure is not unhandled meanwhile
    }
    await writing;
  } finally {
    await file.close();
  }
}

async function writeAll(file: FileHandle, chunk: Uint8Array): Promise<void> {
  for (let at = 0; at < chunk.length; ) at += (await file.write(chunk, at, chunk.length - at)).bytesWritten;
}

/** The real path of a file, or its absolute path when it does not exist (yet). */
function canonical(path: string): string {
  try {
    return realpathSync(path);
  } catch {
    return resolve(path);
  }
}

/** Refuses to write `output` when it is the same file as `input` (also through links). */
export function assertNotSameFile(input: string, output: string): void {
  let same = canonical(input) === canonical(output);
  if (!same) {
    try {
      const a = statSync(input);
      const b = statSync(output);
      same = a.dev === b.dev && a.ino === b.ino;
    } catch {
      same = false;
    }
  }
  if (same) throw new PeculiarError("usage", "output is the input file; inputs are never modified, choose another output", { file: output });
}
