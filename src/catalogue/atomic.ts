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

/** The file's stat, or undefined when it cannot be read (not there). */
function statOf(path: string): ReturnType<typeof statSync> | undefined {
  try {
    return statSync(path);
  } catch {
    return undefined;
  }
}

/** True when the two paths name the same file (also through links, or both not there yet). */
function sameFile(p: string, q: string): boolean {
  if (canonical(p) === canonical(q)) return true;
  const a = statOf(p);
  const b = statOf(q);
  return a !== undefined && b !== undefined && a.dev === b.dev && a.ino === b.ino;
}

/** Refuses to write `output` when it is the same file as `input` (also through links). */
export function assertNotSameFile(input: string, output: string): void {
  if (sameFile(input, output)) throw new PeculiarError("usage", "output is the input file; inputs are never modified, choose another output", { file: output });
}

/**
 * Checks a command's outputs before it does any work: no output is one of its inputs, no two
 * outputs are the same file, and each output's folder exists. A run that would fail at its last
 * write then fails at its start, with nothing written. Undefined entries (options not given) are skipped.
 */
export function assertOutputs(inputs: readonly string[], outputs: readonly (string | undefined)[]): void {
  const outs = outputs.filter((o): o is string => o !== undefined);
  for (const o of outs) for (const i of inputs) assertNotSameFile(i, o);
  for (let k = 0; k < outs.length; k++) {
    for (let m = 0; m < k; m++) {
      if (sameFile(outs[m]!, outs[k]!)) throw new PeculiarError("usage", `two outputs are the same file (${outs[m]} and ${outs[k]}); give each its own path`, { file: outs[k]! });
    }
    const dir = dirname(resolve(outs[k]!));
    if (!statOf(dir)?.isDirectory()) throw new PeculiarError("io", `cannot write: folder does not exist (${dir})`, { file: outs[k]! });
    if (statOf(outs[k]!)?.isDirectory()) throw new PeculiarError("io", "cannot write: the output is a folder", { file: outs[k]! });
  }
}
