/**
 * Sky bands on worker threads (Node): a pool of workers running src/crossmatch/worker.ts (the bundle's
 * dist/crossmatch-worker.js), with the calling thread taking a band too. The catalogues' positions are
 * copied once into SharedArrayBuffers that every worker reads; each band's pairs come back in
 * transferred buffers. Where no worker script is found (the sources run directly, as under vitest) or
 * a worker fails, its bands run on the calling thread: the result is the same either way.
 */
import { Worker } from "node:worker_threads";
import { workerScript } from "../worker-script.js";
import type { BandRunner } from "./match.js";
import { degreeBandPairs, type DegreeBandJob } from "./pairs.js";
import type { PairList } from "./zones.js";

/** The worker script of the bands: dist/crossmatch-worker.js. */
export function defaultWorkerUrl(): URL | undefined {
  return workerScript("crossmatch-worker.js");
}

interface Pending {
  worker: Worker;
  resolve: (p: PairList) => void;
  reject: (e: Error) => void;
}

export class BandPool {
  private readonly workers: Worker[] = [];
  private readonly pending = new Map<number, Pending>();
  private nextId = 0;

  /** `threads` in all, this one included: threads - 1 workers are started now (when a worker script is found). */
  constructor(threads: number, workerUrl: URL | undefined = defaultWorkerUrl()) {
    if (!workerUrl) return;
    for (let t = 1; t < threads; t++) {
      const w = new Worker(workerUrl);
      w.on("message", (m: { id: number; a?: Int32Array; b?: Int32Array; sepRad?: Float64Array; error?: string }) => {
        const p = this.pending.get(m.id);
        if (!p) return;
        this.pending.delete(m.id);
        if (![...this.pending.values()].some((q) => q.worker === w)) w.unref(); // idle: no longer keeps the process alive
        if (m.error !== undefined) p.reject(new Error(m.error));
        else p.resolve({ a: m.a!, b: m.b!, sepRad: m.sepRad!, length: m.a!.length });
      });
      w.on("error", (e) => this.fail(w, e));
      w.on("exit", () => this.fail(w, new Error("cross-match worker exited")));
      w.unref(); // an idle worker does not keep the process alive (after the listeners: adding one refs it again)
      this.workers.push(w);
    }
  }

  /** Worker threads running (0 when every band runs here). */
  get size(): number {
    return this.workers.length;
  }

  /** Bands run by this pool: one per worker at a time, the calling thread taking the others in turn. */
  readonly run: BandRunner = async (jobs) => {
    const out = new Array<PairList>(jobs.length);
    if (this.workers.length === 0 || jobs.length < 2) return jobs.map(degreeBandPairs);
    const shared = sharedJobs(jobs);
    let next = 0;
    const onWorker = async (w: Worker): Promise<void> => {
      while (next < shared.length) {
        const k = next++;
        try {
          out[k] = await this.post(w, shared[k]!);
        } catch {
          out[k] = degreeBandPairs(shared[k]!); // a failed worker's band runs here
          return;
        }
      }
    };
    const running = this.workers.map(onWorker);
    // this thread takes bands too, yielding between them so finished workers get their next band
    while (next < shared.length) {
      const k = next++;
      out[k] = degreeBandPairs(shared[k]!);
      await new Promise((r) => setImmediate(r));
    }
    await Promise.all(running);
    return out;
  };

  /** Stops the workers. */
  async close(): Promise<void> {
    const ws = this.workers.splice(0);
    await Promise.all(ws.map((w) => w.terminate()));
  }

  private post(w: Worker, job: DegreeBandJob): Promise<PairList> {
    if (!this.workers.includes(w)) return Promise.reject(new Error("cross-match worker stopped"));
    const id = this.nextId++;
    return new Promise<PairList>((resolve, reject) => {
      this.pending.set(id, { worker: w, resolve, reject });
      w.ref(); // a band in flight keeps the process alive until its pairs are back
      w.postMessage({ id, job });
    });
  }

  private fail(w: Worker, e: Error): void {
    const i = this.workers.indexOf(w);
    if (i >= 0) this.workers.splice(i, 1);
    for (const [id, p] of this.pending) {
      if (p.worker !== w) continue;
      this.pending.delete(id);
      p.reject(e);
    }
  }
}

/** The jobs with their position arrays on SharedArrayBuffers (each distinct array copied once). */
function sharedJobs(jobs: DegreeBandJob[]): DegreeBandJob[] {
  const copies = new Map<Float64Array, Float64Array>();
  const share = (x: Float64Array): Float64Array => {
    if (x.buffer instanceof SharedArrayBuffer) return x;
    let c = copies.get(x);
    if (!c) {
      c = new Float64Array(new SharedArrayBuffer(x.byteLength));
      c.set(x);
      copies.set(x, c);
    }
    return c;
  };
  return jobs.map((j) => ({ ...j, raA: share(j.raA), decA: share(j.decA), raB: share(j.raB), decB: share(j.decB) }));
}
