/**
 * The worker-thread side of threads.ts: receives DegreeBandJobs (positions on shared memory), runs
 * each band with the same code as the calling thread (degreeBandPairs), and sends the band's pairs
 * back with their buffers transferred (no copy). The kernels are warmed on small inputs at start
 * (warmKernels). Bundled as its own entry, dist/crossmatch-worker.js.
 */
import { parentPort } from "node:worker_threads";
import { degreeBandPairs, warmKernels, type DegreeBandJob } from "./pairs.js";

interface Request {
  id: number;
  job: DegreeBandJob;
}

const port = parentPort;
if (port) {
  // warmed while the calling thread prepares the bands (jobs that arrive meanwhile wait in the port)
  warmKernels();
  port.on("message", (m: Request) => {
    try {
      const p = degreeBandPairs(m.job);
      // the views go with their whole buffers (no copy; capacity the pair buffer never used was never touched)
      port.postMessage({ id: m.id, a: p.a, b: p.b, sepRad: p.sepRad }, [p.a.buffer as ArrayBuffer, p.b.buffer as ArrayBuffer, p.sepRad.buffer as ArrayBuffer]);
    } catch (e) {
      port.postMessage({ id: m.id, error: e instanceof Error ? e.message : String(e) });
    }
  });
}
