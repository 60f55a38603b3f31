/**
 * Sky bands on helper threads (Node; helper-threads.ts, the band job in worker.ts), with the calling
 * thread taking bands too. The catalogues' positions are copied once into SharedArrayBuffers that
 * every helper reads; each band's pairs come back in transferred buffers. Where no worker script is
 * found (the sources run directly, as under vitest) or a helper fails, its bands run on the calling
 * thread: the result is the same either way.
 */
import { helperThread, type HelperThread } from "../helper-threads.js";
import type { BandRunner } from "./match.js";
import { degreeBandPairs, type DegreeBandJob } from "./pairs.js";
import type { PairList } from "./zones.js";

export class BandPool {
  private readonly helpers: HelperThread[] = [];
  /** Bands whose pairs came back from a helper (the others ran on the calling thread). */
  bandsOnHelpers = 0;

  /**
   * `threads` in all, this one included: helpers 0 .. threads - 2 (the process's shared ones, started
   * now where not running) warm their kernels as their next job. `workerUrl` is for tests.
   */
  constructor(threads: number, workerUrl?: URL) {
    for (let t = 1; t < threads; t++) {
      const h = helperThread(t - 1, workerUrl);
      if (!h) return;
      h.call("warm-bands", {}).catch(() => {}); // a failed helper is noticed when a band is sent
      this.helpers.push(h);
    }
  }

  /** Helper threads taking bands (0 when every band runs here). */
  get size(): number {
    return this.helpers.filter((h) => h.alive).length;
  }

  /** Bands run by this pool: one per helper at a time, the calling thread taking the others in turn. */
  readonly run: BandRunner = async (jobs) => {
    const out = new Array<PairList>(jobs.length);
    const helpers = this.helpers.filter((h) => h.alive);
    if (helpers.length === 0 || jobs.length < 2) return jobs.map(degreeBandPairs);
    const shared = sharedJobs(jobs);
    let next = 0;
    const onHelper = async (h: HelperThread): Promise<void> => {
      while (next < shared.length) {
        const k = next++;
        try {
          const m = await h.call<{ a?: Int32Array; b?: Int32Array; sepRad?: Float64Array; error?: { message: string } }>("band", { job: shared[k]! });
          if (m.error || !m.a || !m.b || !m.sepRad) throw new Error(m.error?.message ?? "band job failed");
          out[k] = { a: m.a, b: m.b, sepRad: m.sepRad, length: m.a.length };
          this.bandsOnHelpers++;
        } catch {
          out[k] = degreeBandPairs(shared[k]!); // a failed helper's band runs here
          return;
        }
      }
    };
    const running = helpers.map(onHelper);
    // this thread takes bands too, yielding between them so finished helpers get their next band
    while (next < shared.length) {
      const k = next++;
      out[k] = degreeBandPairs(shared[k]!);
      await new Promise((r) => setImmediate(r));
    }
    await Promise.all(running);
    return out;
  };
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
