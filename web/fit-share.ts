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
 *
 * The same machinery runs drawing jobs after a re-centring (kernel DRAW_JOBS, chunk c = job c of the
 * jobs table: cells.ts's Hubble diagram and slice points), which the worker takes while the page draws.
 */
import { chunksOf, KERNELS, workBytes, workOn, type RecentreWork } from "../src/flow/recentre-kernels.js";
import { HJ_SLOTS, HUBBLE_MAIN_JOB, HUBBLE_RES_JOB, hubbleCells, SJ_SLOTS, sliceCells, type HubbleJob, type SliceJob } from "./cells.js";

/** Control words: the run's number, the worker's readiness, the claim word, the run's rows and kernel. */
export const CTL_SEQ = 0;
export const CTL_READY = 1;
export const CTL_CLAIM = 2;
export const CTL_ROWS = 4;
export const CTL_KERNEL = 5;
const CTL_WORDS = 8;
/** Most chunks a run can have (the claim word keeps the count in 15 bits). */
export const MAX_CHUNKS = 0x7fff;
/** The kernel number of a run of drawing jobs (cells.ts), chunk c = job c of the jobs table; the re-centring kernels are 0.. */
export const DRAW_JOBS = 16;
/** Most drawing jobs in one run. */
export const MAX_JOBS = 8;
/** Device pixels of the largest canvas whose Hubble cells the worker can write (two buffers of this many bytes). */
export const MAX_CELLS = 1 << 22;
/** Device pixels of the largest canvas whose Hubble marks the worker can stamp (two RGBA buffers). */
export const MAX_MARK_PIXELS = 1 << 21;
/** The same for each slice (one buffer). */
export const MAX_SLICE_CELLS = 1 << 21;
/** Slices with a job of their own. */
export const SLICE_JOBS = 3;

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
  /** The Hubble diagram's job (cells.ts): inputs and outputs for `capacity` rows, cells for MAX_CELLS pixels. */
  hubble: HubbleJob;
  /** The slices' jobs: the supergalactic positions (shared by all three), s and u of the Hubble job, their own outputs. */
  slices: SliceJob[];
  /** The kinds of the current run's drawing jobs (cells.ts HUBBLE_JOB, SLICE_JOB + k). */
  jobs: Int32Array;
}

function layout(capacity: number) {
  const chunks = chunksOf(capacity);
  const doneAt = CTL_WORDS * 4;
  const workAt = Math.ceil((doneAt + chunks * 4) / 8) * 8;
  const hubbleAt = Math.ceil((workAt + workBytes(capacity)) / 8) * 8;
  const hubbleBytes = HJ_SLOTS * 8 + 7 * capacity * 8 + 2 * capacity * 4 + 2 * MAX_MARK_PIXELS * 4 + 2 * capacity + 2 * MAX_CELLS;
  const slicesAt = Math.ceil((hubbleAt + hubbleBytes) / 8) * 8;
  // sg (3 columns), then per slice: P, px, py, xy (4 a row), rows, lineStart (32), bin, cells
  const sliceBytes = SJ_SLOTS * 8 + 6 * capacity * 8 + capacity * 4 + 32 * 4 + capacity + MAX_SLICE_CELLS;
  const slicesBytes = 3 * capacity * 8 + SLICE_JOBS * (Math.ceil(sliceBytes / 8) * 8);
  const jobsAt = slicesAt + slicesBytes;
  return { chunks, doneAt, workAt, hubbleAt, slicesAt, jobsAt, bytes: jobsAt + MAX_JOBS * 4 };
}

/** Typed views carved one after the other from `buffer` from byte `at` (float64 views on a multiple of 8). */
function carver(buffer: SharedArrayBuffer, at: number) {
  const take = <T>(make: (offset: number) => T, bytes: number): T => {
    const a = make(at);
    at += bytes;
    return a;
  };
  return {
    f64: (len: number) => {
      at = Math.ceil(at / 8) * 8;
      return take((o) => new Float64Array(buffer, o, len), len * 8);
    },
    i32: (len: number) => take((o) => new Int32Array(buffer, o, len), len * 4),
    u32: (len: number) => take((o) => new Uint32Array(buffer, o, len), len * 4),
    u8: (len: number) => take((o) => new Uint8Array(buffer, o, len), len),
  };
}

function slicesOn(buffer: SharedArrayBuffer, at: number, capacity: number, hubble: HubbleJob): SliceJob[] {
  const { f64, i32, u8 } = carver(buffer, at);
  const sg: [Float64Array, Float64Array, Float64Array] = [f64(capacity), f64(capacity), f64(capacity)];
  const out: SliceJob[] = [];
  for (let k = 0; k < SLICE_JOBS; k++) {
    out.push({ P: f64(SJ_SLOTS), sg, s: hubble.s, u: hubble.u, px: f64(capacity), py: f64(capacity), xy: f64(4 * capacity), rows: i32(capacity), lineStart: i32(32), bin: u8(capacity), cells: u8(MAX_SLICE_CELLS) });
  }
  return out;
}

/** Runs job c of the current run of drawing jobs. */
export function runDrawJob(share: FitShare, c: number): void {
  const kind = share.jobs[c]!;
  if (kind === HUBBLE_MAIN_JOB) hubbleCells(share.hubble, 1);
  else if (kind === HUBBLE_RES_JOB) hubbleCells(share.hubble, 2);
  else sliceCells(share.slices[kind - 1]!);
}

function hubbleOn(buffer: SharedArrayBuffer, at: number, capacity: number): HubbleJob {
  const { f64, i32, u32, u8 } = carver(buffer, at);
  return {
    P: f64(HJ_SLOTS),
    s: f64(capacity),
    v: f64(capacity),
    u: f64(capacity),
    px: f64(capacity),
    py: f64(capacity),
    rx: f64(capacity),
    ry: f64(capacity),
    groupRows: i32(capacity),
    outlierRows: i32(capacity),
    marksMain: u32(MAX_MARK_PIXELS),
    marksRes: u32(MAX_MARK_PIXELS),
    bin: u8(capacity),
    binRes: u8(capacity),
    cellsMain: u8(MAX_CELLS),
    cellsRes: u8(MAX_CELLS),
  };
}

export function fitShareBytes(capacity: number): number {
  return layout(capacity).bytes;
}

export function fitShareViews(buffer: SharedArrayBuffer, capacity: number): FitShare {
  const L = layout(capacity);
  const hubble = hubbleOn(buffer, L.hubbleAt, capacity);
  return {
    buffer,
    capacity,
    ctl: new Int32Array(buffer, 0, CTL_WORDS),
    done: new Int32Array(buffer, L.doneAt, L.chunks),
    work: workOn(buffer, L.workAt, capacity),
    hubble,
    slices: slicesOn(buffer, L.slicesAt, capacity, hubble),
    jobs: new Int32Array(buffer, L.jobsAt, MAX_JOBS),
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
    const kernel = Atomics.load(ctl, CTL_KERNEL);
    if (kernel === DRAW_JOBS) runDrawJob(share, c);
    else {
      work.n = Atomics.load(ctl, CTL_ROWS);
      KERNELS[kernel]!(work, c);
    }
    Atomics.store(done, c, 1);
    ran++;
  }
}
