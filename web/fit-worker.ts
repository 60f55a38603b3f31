/**
 * The page's fit worker: claims and runs chunks of the re-centring kernels (src/flow/recentre-kernels.ts,
 * the library's own code) on the workspace the page shares with it (fit-share.ts), and the drawing jobs
 * that follow a re-centring (cells.ts: the slices' and the Hubble diagram's points), then sleeps until
 * the next run. Started by fit-threads.ts with one message { buffer, capacity }.
 */
import { recentre } from "../src/flow/recentre.js";
import { claimChunks, CTL_READY, CTL_SEQ, fitShareViews } from "./fit-share.js";

/** Rows of the warm-up (odd, so that no loop tail goes unrun). */
const WARM_ROWS = 2001;

/**
 * Compiles the kernels before the first real run: re-centres made-up rows (a Hubble flow seen from us
 * with 20 % distance errors) from a few of them.
 */
function warm(): void {
  const m = WARM_ROWS;
  const x = new Float64Array(m);
  const y = new Float64Array(m);
  const z = new Float64Array(m);
  const vr = new Float64Array(m);
  const vrErr = new Float64Array(m);
  let seed = 12345;
  const next = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
  for (let k = 0; k < m; k++) {
    const zc = 2 * next() - 1;
    const phi = 2 * Math.PI * next();
    const rc = Math.sqrt(1 - zc * zc);
    const d = 10 + 140 * next();
    x[k] = d * rc * Math.cos(phi);
    y[k] = d * rc * Math.sin(phi);
    z[k] = d * zc;
    vr[k] = 70 * d * Math.exp(0.2 * (next() + next() + next() - 1.5)) + 300 * (next() - 0.5);
    vrErr[k] = 0.2 * 70 * d;
  }
  for (const index of [1, m >> 1, m - 2]) recentre({ x, y, z, vr, vrErr }, { index }, { h0: 70 });
}

self.onmessage = (e: MessageEvent<{ buffer: SharedArrayBuffer; capacity: number }>) => {
  const share = fitShareViews(e.data.buffer, e.data.capacity);
  const { ctl } = share;
  warm();
  let seen = Atomics.load(ctl, CTL_SEQ);
  Atomics.store(ctl, CTL_READY, 1);
  for (;;) {
    Atomics.wait(ctl, CTL_SEQ, seen);
    seen = Atomics.load(ctl, CTL_SEQ);
    claimChunks(share);
  }
};
