/**
 * What `match` starts before its own code is loaded: the helper thread (helper-threads.ts) that will
 * read B and take cross-match bands, so that the thread's start-up overlaps the loading of the match
 * command (about 0.15 s earlier for B on this machine). The test is the one match.ts makes for its
 * band pool, on what can be seen without parsing the options: the sizes of the arguments that are
 * files (an existing output counts too), and a --threads of 1. A helper started for nothing stays
 * idle and does not keep the process alive; this is only a head start, and a failure here is ignored.
 */
import { statSync } from "node:fs";
import { availableParallelism } from "node:os";
import { helperThread } from "../../helper-threads.js";

/** Without --threads, the helpers start only for input files of this many bytes or more in all. */
export const POOL_MIN_BYTES = 8 << 20;

export function startEarly(args: string[]): void {
  const t = args.findIndex((a) => a === "--threads" || a.startsWith("--threads="));
  const threads = t < 0 ? availableParallelism() : Number(args[t]!.includes("=") ? args[t]!.slice(10) : args[t + 1]);
  if (!(threads > 1)) return;
  let bytes = 0;
  for (const a of args) {
    if (a.startsWith("-")) continue;
    try {
      const s = statSync(a);
      if (s.isFile()) bytes += s.size;
    } catch {
      // not a file: an option's value
    }
  }
  if (t >= 0 || bytes >= POOL_MIN_BYTES) helperThread(0);
}
