/**
 * The band jobs of a helper thread (src/helper-worker.ts), the other side of threads.ts: a
 * DegreeBandJob (positions on shared memory) runs with the same code as on the calling thread
 * (degreeBandPairs) and its pairs go back with their buffers transferred (no copy). "warm-bands"
 * runs the kernels on small inputs first (warmKernels), while the calling thread prepares the bands.
 */
import { degreeBandPairs, warmKernels, type DegreeBandJob } from "./pairs.js";

export function bandJob(m: { job: DegreeBandJob }): { reply: { a: Int32Array; b: Int32Array; sepRad: Float64Array }; transfer: ArrayBuffer[] } {
  const p = degreeBandPairs(m.job);
  // the views go with their whole buffers (no copy; capacity the pair buffer never used was never touched)
  return { reply: { a: p.a, b: p.b, sepRad: p.sepRad }, transfer: [p.a.buffer as ArrayBuffer, p.b.buffer as ArrayBuffer, p.sepRad.buffer as ArrayBuffer] };
}

export function warmBandsJob(): { reply: object; transfer: ArrayBuffer[] } {
  warmKernels();
  return { reply: {}, transfer: [] };
}
