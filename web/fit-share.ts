/**
 * The memory that the page and its fit worker (fit-worker.ts) share for re-centring (fit-threads.ts):
 * one SharedArrayBuffer holding the control words, one done flag per chunk (Int32), and the re-centring
 * workspace (src/flow/recentre-kernels.ts: parameters, chunk sums, input and output rows) for
 * `capacity` rows. Both sides make their views with fitShareViews on the same buffer.
 *
 * A run of a kernel: the page writes the parameters and rows it needs, the row count, the kernel and
 * the chunk count, clears the done flags, opens the chunk counter (CTL_NEXT = 0), bumps CTL_SEQ and
 * wakes the worker. Both threads then claim chunks with Atomics.add on CTL_NEXT, run the kernel on each
 * claimed chunk and set its done flag; the page waits for every flag and closes the counter
 * (CTL_NEXT = CLOSED) before it writes anything else. Running a chunk twice writes the same values,
 * so a late worker can do no harm.
 */
import { chunksOf, KERNELS, workBytes, workOn, type RecentreWork } from "../src/flow/recentre-kernels.js";

/** Control words: the run's number, the worker's readiness, the next chunk to claim, the run's chunks, rows and kernel. */
export const CTL_SEQ = 0;
export const CTL_READY = 1;
export const CTL_NEXT = 2;
export const CTL_CHUNKS = 3;
export const CTL_ROWS = 4;
export const CTL_KERNEL = 5;
const CTL_WORDS = 8;
/** CTL_NEXT between runs: no chunk can be claimed. */
export const CLOSED = 0x3fffffff;

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
    const c = Atomics.add(ctl, CTL_NEXT, 1);
    if (c >= Atomics.load(ctl, CTL_CHUNKS)) return ran;
    work.n = Atomics.load(ctl, CTL_ROWS);
    KERNELS[Atomics.load(ctl, CTL_KERNEL)]!(work, c);
    Atomics.store(done, c, 1);
    ran++;
  }
}
