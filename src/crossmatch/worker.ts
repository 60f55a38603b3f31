/**
 * The worker-thread side of threads.ts: receives DegreeBandJobs (positions on shared memory), runs
 * each band with the same code as the calling thread (degreeBandPairs), and sends the band's pairs
 * back with their buffers transferred (no copy). Bundled as its own entry, dist/crossmatch-worker.js.
 */
import { parentPort } from "node:worker_threads";
import { degreeBandPairs, type DegreeBandJob } from "./pairs.js";

interface Request {
  id: number;
  job: DegreeBandJob;
}

const port = parentPort;
if (port) {
  port.on("message", (m: Request) => {
    try {
      const p = degreeBandPairs(m.job);
      // copies of exact length, so the transferred buffers hold no unused capacity
      const a = p.a.slice();
      const b = p.b.slice();
      const s = p.sepRad.slice();
      port.postMessage({ id: m.id, a, b, sepRad: s }, [a.buffer, b.buffer, s.buffer]);
    } catch (e) {
      port.postMessage({ id: m.id, error: e instanceof Error ? e.message : String(e) });
    }
  });
}
