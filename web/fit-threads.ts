/**
 * The re-centring fit's passes on two threads: the page and a fit worker (fit-worker.ts) share the fit's
 * rows in one SharedArrayBuffer (fit-share.ts) and claim a pass's chunks from a shared counter; the
 * chunks' partial sums are added in chunk order, so the result is the one-thread result to the last bit,
 * whichever thread summed which chunk. Re-centring stays a synchronous call: the page sums chunks until
 * none is left and then waits only for the chunks the worker is still on. A worker that is slow to wake
 * (no free core) costs nothing but its share: the page takes the chunks it has not claimed.
 * Needs a cross-origin isolated page (the view server sends COOP/COEP headers); where the page is not,
 * or a fit has fewer than MIN_SPLIT_ROWS rows or more than the storage holds, passes run on this thread.
 */
import { ONE_THREAD, passChunk, passChunks, sumChunks, type LogPasses, type LogRows } from "../src/flow/recentre.js";
import { claimChunks, CLOSED, CTL_CHUNKS, CTL_NEXT, CTL_READY, CTL_ROWS, CTL_SEQ, fitShareBytes, fitShareViews, type FitShare } from "./fit-share.js";

/** Below this many rows a pass is not shared: waking the worker costs more than it saves. */
export const MIN_SPLIT_ROWS = 8192;
/** A chunk the worker claimed and has not finished after this long is summed here, and the worker given up. */
const WORKER_TIMEOUT_MS = 2000;

export class TwoThreadPasses implements LogPasses {
  /** Passes shared with the worker so far, and the chunks it summed (for the view's tests and benchmark). */
  splitPasses = 0;
  workerChunks = 0;
  private broken = false;

  private constructor(
    private readonly share: FitShare,
    private readonly worker: Worker,
  ) {
    Atomics.store(share.ctl, CTL_NEXT, CLOSED);
  }

  /** Starts the fit worker with room for `capacity` rows; null where the page cannot share memory. */
  static start(capacity: number, workerUrl: URL): TwoThreadPasses | null {
    if (!(globalThis.crossOriginIsolated && typeof SharedArrayBuffer === "function" && typeof Worker === "function" && capacity >= MIN_SPLIT_ROWS)) return null;
    let worker: Worker;
    try {
      worker = new Worker(workerUrl, { type: "module", name: "peculiar fit worker" });
    } catch {
      return null;
    }
    const share = fitShareViews(new SharedArrayBuffer(fitShareBytes(capacity)), capacity);
    const passes = new TwoThreadPasses(share, worker);
    worker.onerror = () => {
      passes.broken = true;
    };
    worker.postMessage({ buffer: share.buffer, capacity });
    return passes;
  }

  /** The worker has started and compiled its pass. */
  get ready(): boolean {
    return !this.broken && Atomics.load(this.share.ctl, CTL_READY) === 1;
  }

  rows(m: number): LogRows {
    if (m > this.share.capacity) return ONE_THREAD.rows(m);
    return { ...this.share.rows, m };
  }

  pass(R: LogRows, P: Float64Array, out: Float64Array): void {
    const m = R.m;
    if (R.ax.buffer !== this.share.buffer || m < MIN_SPLIT_ROWS || !this.ready) {
      ONE_THREAD.pass(R, P, out);
      return;
    }
    const share = this.share;
    const { ctl, done, params, partials } = share;
    const chunks = passChunks(m);
    params.set(P);
    done.fill(0, 0, chunks);
    Atomics.store(ctl, CTL_ROWS, m);
    Atomics.store(ctl, CTL_CHUNKS, chunks);
    Atomics.store(ctl, CTL_NEXT, 0);
    Atomics.add(ctl, CTL_SEQ, 1);
    Atomics.notify(ctl, CTL_SEQ);
    const mine = claimChunks(share);
    const t0 = performance.now();
    for (let c = 0; c < chunks; c++) {
      while (Atomics.load(done, c) === 0) {
        if (performance.now() - t0 > WORKER_TIMEOUT_MS) {
          // the worker is gone: sum its chunk here (the same values it would write) and stop using it
          this.broken = true;
          this.worker.terminate();
          passChunk(R, c, params, partials);
          break;
        }
      }
    }
    Atomics.store(ctl, CTL_NEXT, CLOSED);
    this.splitPasses++;
    this.workerChunks += chunks - mine;
    sumChunks(partials, chunks, out);
  }
}
