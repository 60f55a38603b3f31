/**
 * The memory that the page and its fit worker (fit-worker.ts) share for the re-centring fit's passes
 * (fit-threads.ts): one SharedArrayBuffer holding, in this order, the control words and one done flag per
 * chunk (Int32), a pass's parameters (PASS_PARAMS doubles), the chunks' partial sums (PARTIAL_SUMS
 * doubles each) and the fit's rows (LogRows for `capacity` rows). Both sides make their views with
 * fitShareViews on the same buffer.
 *
 * A pass: the page writes the parameters, the row count and the chunk count, clears the done flags,
 * opens the chunk counter (CTL_NEXT = 0), bumps CTL_SEQ and wakes the worker. Both threads then claim
 * chunks with Atomics.add on CTL_NEXT, sum each claimed chunk into its slot and set its done flag; the
 * page waits for every flag and closes the counter (CTL_NEXT = CLOSED) before it writes anything else.
 * Computing a chunk twice writes the same values, so a late worker can do no harm.
 */
import { logRowsBytes, logRowsOn, PARTIAL_SUMS, PASS_CHUNK_ROWS, PASS_PARAMS, passChunk, passChunks, type LogRows } from "../src/flow/recentre.js";

/** Control words: the pass number, the worker's readiness, the next chunk to claim, the pass's chunks and rows. */
export const CTL_SEQ = 0;
export const CTL_READY = 1;
export const CTL_NEXT = 2;
export const CTL_CHUNKS = 3;
export const CTL_ROWS = 4;
const CTL_WORDS = 8;
/** CTL_NEXT between passes: no chunk can be claimed. */
export const CLOSED = 0x3fffffff;

export interface FitShare {
  buffer: SharedArrayBuffer;
  capacity: number;
  ctl: Int32Array;
  /** One flag per chunk: 1 once its partial sums are written. */
  done: Int32Array;
  params: Float64Array;
  partials: Float64Array;
  /** Views on all `capacity` rows. */
  rows: LogRows;
}

function layout(capacity: number) {
  const chunks = passChunks(capacity);
  const doneAt = CTL_WORDS * 4;
  const paramsAt = Math.ceil((doneAt + chunks * 4) / 8) * 8;
  const partialsAt = paramsAt + PASS_PARAMS * 8;
  const rowsAt = partialsAt + chunks * PARTIAL_SUMS * 8;
  return { chunks, doneAt, paramsAt, partialsAt, rowsAt, bytes: rowsAt + logRowsBytes(capacity) };
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
    params: new Float64Array(buffer, L.paramsAt, PASS_PARAMS),
    partials: new Float64Array(buffer, L.partialsAt, L.chunks * PARTIAL_SUMS),
    rows: logRowsOn(buffer, L.rowsAt, capacity, capacity),
  };
}

/**
 * Claims and sums chunks of the current pass until none is left (both threads run this). Returns the
 * number of chunks this thread summed.
 */
export function claimChunks(share: FitShare): number {
  const { ctl, done, params, partials } = share;
  let summed = 0;
  for (;;) {
    const c = Atomics.add(ctl, CTL_NEXT, 1);
    const chunks = Atomics.load(ctl, CTL_CHUNKS);
    if (c >= chunks) return summed;
    const rows = { ...share.rows, m: Atomics.load(ctl, CTL_ROWS) };
    const k0 = c * PASS_CHUNK_ROWS;
    if (k0 < rows.m) passChunk(rows, c, params, partials);
    Atomics.store(done, c, 1);
    summed++;
  }
}
