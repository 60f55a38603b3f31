/**
 * The memory that the page and its fit worker (fit-worker.ts) share for re-centring (fit-threads.ts):
 * one SharedArrayBuffer holding the control words, one done flag per chunk (Int32), and the re-centring
 * workspace (src/flow/recentre-kernels.ts: parameters, chunk sums, input and output rows) for
 * `capacity` rows. Both sides make their views with fitShareViews on the same buffer.
 *
 * A run of a kernel: the page writes the parameters and rows it needs, the row count and the kernel,
 * clears the done flags, opens the run by storing its chunk count in the claim word (CTL_CLAIM =
 * chunks << 16 | next chunk, next = 0), bumps CTL_SEQ and wakes the worker. Both threads then claim
 * chunks by compare-and-swap on the claim word, which succeeds only while next < chunks of the run the
 * word describes, run the kernel on each claimed chunk and set its done flag. The page waits for every
 * flag and closes the run (CTL_CLAIM = 0) before it writes anything else; so a thread holding a claim
 * always reads the row count, kernel and parameters of the run it claimed from, and no chunk is ever
 * still running when the next run starts.
 */
import { chunksOf, KERNELS, workBytes, workOn, type RecentreWork } from "../src/flow/recentre-kernels.js";

/** Control words: the run's number, the worker's readiness, the claim word, the run's rows and kernel. */
export const CTL_SEQ = 0;
export const CTL_READY = 1;
export const CTL_CLAIM = 2;
export const CTL_ROWS = 4;
export const CTL_KERNEL = 5;
const CTL_WORDS = 8;
/** Most chunks a run can have (the claim word keeps the count in 15 bits). */
export const MAX_CHUNKS = 0x7fff;

/** The claim word of a run of `chunks` chunks, none claimed yet. */
export function openClaim(chunks: number): number {
  return chunks << 16;
}

export interface FitShare {
  buffer: SharedArrayBuffer;
  capacity: number;
  ctl: Int32Array;
  /** One flag per chunk: 1 once the chunk is done. */
  done: Int32Array;
  /** The workspace, with room for `capacity` rows (its n is set per run from CTL_ROWS). */
  work: RecentreWork;
}

function layout(capacity: number) {
  const chunks = chunksOf(capacity);
  const doneAt = CTL_WORDS * 4;
  const workAt = Math.ceil((doneAt + chunks * 4) / 8) * 8;
  return { chunks, doneAt, workAt, bytes: workAt + workBytes(capacity) };
}

export function fitShareBytes(capacity: number): number {
  return layout(capacity).bytes;
}

export function fitShareViews(buffer: SharedArrayBuffer, capacity: number): FitShare {
  const L = layout(capacity);
  return {
    buffer,
    capacity,
    ctl: new Int32Array(buffer, 0, CTL_WORDS),
    done: new Int32Array(buffer, L.doneAt, L.chunks),
    work: workOn(buffer, L.workAt, capacity),
  };
}

/**
 * Claims and runs chunks of the current run until none is left (both threads run this). Returns the
 * number of chunks this thread ran.
 */
export function claimChunks(share: FitShare): number {
  const { ctl, done, work } = share;
  let ran = 0;
  for (;;) {
    const v = Atomics.load(ctl, CTL_CLAIM);
    const c = v & 0xffff;
    if (c >= v >>> 16) return ran;
    if (Atomics.compareExchange(ctl, CTL_CLAIM, v, v + 1) !== v) continue;
    work.n = Atomics.load(ctl, CTL_ROWS);
    KERNELS[Atomics.load(ctl, CTL_KERNEL)]!(work, c);
    Atomics.store(done, c, 1);
    ran++;
  }
}
