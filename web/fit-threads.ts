/**
 * Re-centring on two threads: the page and a fit worker (fit-worker.ts) share the re-centring workspace
 * (src/flow/recentre-kernels.ts) in one SharedArrayBuffer (fit-share.ts) and claim the chunks of each
 * kernel run by compare-and-swap on a shared claim word. Chunk sums are added in chunk order, so the result is the one-thread
 * result to the last bit, whichever thread ran which chunk. Re-centring stays a synchronous call: the
 * page runs chunks until none is left and then waits only for those the worker is still on; a worker
 * slow to wake (no free core) costs nothing but its share, as the page takes the chunks it has not claimed.
 * A claimed chunk is always waited for, never run a second time alongside the worker: a worker still on
 * a chunk when the next run changed the parameters would write wrong values.
 * Needs a cross-origin isolated page (the view server sends COOP/COEP headers); where the page is not,
 * null is returned and re-centring runs on the page's thread. Fits of fewer than MIN_SPLIT_ROWS rows, or
 * more than the storage holds, also run there.
 */
import { chunksOf, KERNELS, ONE_THREAD, P_H0, P_HAS_ERR, POINT_ROWS, type KernelId, type RecentreThreads, type RecentreWork } from "../src/flow/recentre-kernels.js";
import { claimChunks, CTL_CLAIM, CTL_KERNEL, CTL_READY, CTL_ROWS, CTL_SEQ, DRAW_JOBS, fitShareBytes, fitShareViews, MAX_CHUNKS, MAX_JOBS, openClaim, runDrawJob, type FitShare } from "./fit-share.js";
import type { DrawJobs } from "./cells.js";

/** Below this many rows a run is not shared: waking the worker costs more than it saves (at 1e4 rows two threads took 17 ms against 12 on one, npm run bench view). */
export const MIN_SPLIT_ROWS = 32_768;
/** A chunk the worker claimed and has not finished after this long is run here, and the worker given up. */
const WORKER_TIMEOUT_MS = 2000;

type Points = Parameters<RecentreThreads["work"]>[0];

/** a and b are the same memory (a view of the shared inputs, as adopt() makes them). */
function sameRows(a: Float64Array, b: Float64Array): boolean {
  return a.buffer === b.buffer && a.byteOffset === b.byteOffset;
}

export class TwoThreads implements RecentreThreads {
  /** Kernel runs shared with the worker so far, their chunks, and those the worker ran (for the view's tests and benchmark). */
  splitRuns = 0;
  sharedChunks = 0;
  workerChunks = 0;
  private broken = false;
  /** The shared inputs hold adopted points: other points must not overwrite them. */
  private adopted = false;

  private constructor(
    private readonly share: FitShare,
    private readonly worker: Worker,
  ) {
    Atomics.store(share.ctl, CTL_CLAIM, 0);
    this.draw = {
      hubble: share.hubble,
      slices: share.slices,
      start: (kinds) => {
        if (!this.ready || this.jobsOpen > 0 || kinds.length === 0 || kinds.length > MAX_JOBS) return false;
        const { ctl, done, jobs } = this.share;
        jobs.set(kinds);
        done.fill(0, 0, kinds.length);
        Atomics.store(ctl, CTL_ROWS, 0);
        Atomics.store(ctl, CTL_KERNEL, DRAW_JOBS);
        Atomics.store(ctl, CTL_CLAIM, openClaim(kinds.length));
        Atomics.add(ctl, CTL_SEQ, 1);
        Atomics.notify(ctl, CTL_SEQ);
        this.jobsOpen = kinds.length;
        this.runHere = 0;
        return true;
      },
      finish: (k) => {
        if (k >= this.jobsOpen) return;
        const { ctl, done } = this.share;
        const t0 = performance.now();
        while (Atomics.load(done, k) === 0) {
          // a job the worker has not taken yet is run here: one up to k, or a later one while the
          // worker is still on k (the page needs them all, and waits only for a job being run)
          const v = Atomics.load(ctl, CTL_CLAIM);
          const c = v & 0xffff;
          if (c < v >>> 16) {
            if (Atomics.compareExchange(ctl, CTL_CLAIM, v, v + 1) === v) {
              runDrawJob(this.share, c);
              Atomics.store(done, c, 1);
              this.jobsHere++;
              this.runHere++;
            }
            continue;
          }
          if (performance.now() - t0 > WORKER_TIMEOUT_MS) {
            // the worker is gone (it held a job for seconds): stop it, run its jobs here, and stop using it
            this.broken = true;
            this.worker.terminate();
            for (let j = 0; j < this.jobsOpen; j++) {
              if (Atomics.load(done, j) !== 0) continue;
              runDrawJob(this.share, j);
              Atomics.store(done, j, 1);
              this.jobsHere++;
              this.runHere++;
            }
          }
        }
      },
      finishAll: () => {
        const m = this.jobsOpen;
        if (m === 0) return;
        for (let j = 0; j < m; j++) this.draw.finish(j);
        this.jobsThere += m - this.runHere;
        Atomics.store(this.share.ctl, CTL_CLAIM, 0);
        this.jobsOpen = 0;
      },
    };
  }

  /** Starts the fit worker with room for `capacity` rows; null where the page cannot share memory. */
  static start(capacity: number, workerUrl: URL): TwoThreads | null {
    if (!(globalThis.crossOriginIsolated && typeof SharedArrayBuffer === "function" && typeof Worker === "function" && capacity >= MIN_SPLIT_ROWS && chunksOf(capacity) <= MAX_CHUNKS)) return null;
    let worker: Worker;
    try {
      worker = new Worker(workerUrl, { type: "module", name: "peculiar fit worker" });
    } catch {
      return null;
    }
    const share = fitShareViews(new SharedArrayBuffer(fitShareBytes(capacity)), capacity);
    const threads = new TwoThreads(share, worker);
    worker.onerror = () => {
      threads.broken = true;
    };
    worker.postMessage({ buffer: share.buffer, capacity });
    return threads;
  }

  /** The worker has started and compiled the kernels. */
  get ready(): boolean {
    return !this.broken && Atomics.load(this.share.ctl, CTL_READY) === 1;
  }

  /**
   * Moves the points' columns into the shared inputs and returns views of them in their place, so
   * that re-centring on them copies nothing in (use stays the caller's: it changes from fit to fit).
   * From then on, re-centring on other points runs on the page's thread.
   */
  adopt<T extends Points>(points: T): T {
    const n = points.x.length;
    const w = this.share.work;
    if (n > this.share.capacity) return points;
    this.adopted = true;
    const put = (into: Float64Array, from: Float64Array) => {
      into.set(from);
      return into.subarray(0, n);
    };
    return { ...points, x: put(w.x, points.x), y: put(w.y, points.y), z: put(w.z, points.z), vr: put(w.vr, points.vr), ...(points.vrErr ? { vrErr: put(w.vrErr, points.vrErr) } : {}) };
  }

  work(points: Points, withLogRows: boolean): RecentreWork {
    const n = points.x.length;
    const w = this.share.work;
    const inPlace = sameRows(points.x, w.x) && sameRows(points.y, w.y) && sameRows(points.z, w.z) && sameRows(points.vr, w.vr) && (!points.vrErr || sameRows(points.vrErr, w.vrErr));
    // other points than the adopted ones (a few rows re-centred on their own) run here on fresh arrays
    if (n > this.share.capacity || (this.adopted && !inPlace)) return ONE_THREAD.work(points, withLogRows);
    w.n = n;
    if (!inPlace) {
      for (const k of ["x", "y", "z", "vr"] as const) w[k].set(points[k]);
      if (points.vrErr) w.vrErr.set(points.vrErr);
    }
    if (points.use) w.use.set(points.use);
    return w;
  }

  run(w: RecentreWork, kernel: KernelId, chunks: number): void {
    this.draw.finishAll();
    if (w !== this.share.work || w.n < MIN_SPLIT_ROWS || !this.ready) {
      ONE_THREAD.run(w, kernel, chunks);
      return;
    }
    const share = this.share;
    const { ctl, done } = share;
    done.fill(0, 0, chunks);
    Atomics.store(ctl, CTL_ROWS, w.n);
    Atomics.store(ctl, CTL_KERNEL, kernel);
    Atomics.store(ctl, CTL_CLAIM, openClaim(chunks));
    Atomics.add(ctl, CTL_SEQ, 1);
    Atomics.notify(ctl, CTL_SEQ);
    const mine = claimChunks(share);
    const t0 = performance.now();
    for (let c = 0; c < chunks; c++) {
      while (Atomics.load(done, c) === 0) {
        if (performance.now() - t0 > WORKER_TIMEOUT_MS) {
          // the worker is gone (it held this chunk for seconds): stop it, run the chunk here, and stop using it
          this.broken = true;
          this.worker.terminate();
          KERNELS[kernel]!(w, c);
          break;
        }
      }
    }
    Atomics.store(ctl, CTL_CLAIM, 0);
    this.splitRuns++;
    this.sharedChunks += chunks;
    this.workerChunks += chunks - mine;
  }

  /**
   * Drawing jobs on the worker (cells.ts): start() opens a run whose chunks are the jobs, which only
   * the worker claims while the page goes on drawing; finish(k) runs here any job up to k the worker has
   * not taken, else waits for it; finishAll() closes the run. No re-centring run starts while jobs are
   * open (run() closes them first; the page's code is synchronous from start() to finishAll()).
   */
  readonly draw: DrawJobs;
  /** Jobs in the open run of drawing jobs (0: none), and those of it run here. */
  private jobsOpen = 0;
  private runHere = 0;
  /** Drawing jobs run here (the worker had not taken them) and on the worker. */
  jobsHere = 0;
  jobsThere = 0;

  /** The parameters (P_H0, P_HAS_ERR) the shared point rows were made for; NaN: not made. */
  private pointRowsFor: [number, number] = [NaN, NaN];

  /**
   * The adopted points stay from fit to fit, so the log fit's rows that depend on them alone are made
   * once (POINT_ROWS, shared like any run) and SETUP reads them; other points make them in SETUP.
   */
  pointRows(w: RecentreWork, chunks: number): boolean {
    if (w !== this.share.work || !this.adopted) return false;
    const key: [number, number] = [w.P[P_H0]!, w.P[P_HAS_ERR]!];
    if (key[0] !== this.pointRowsFor[0] || key[1] !== this.pointRowsFor[1]) {
      this.run(w, POINT_ROWS, chunks);
      this.pointRowsFor = key;
    }
    return true;
  }

  results(w: RecentreWork): { s: Float64Array; vAB: Float64Array; cosL: Float64Array; used: Uint8Array } {
    if (w !== this.share.work) return ONE_THREAD.results(w);
    const n = w.n;
    return { s: w.s.slice(0, n), vAB: w.vAB.slice(0, n), cosL: w.cosL.slice(0, n), used: w.used.slice(0, n) };
  }
}
