/**
 * The page's fit worker: claims and sums chunks of each pass of the re-centring fit (passChunk, the
 * library's own code) on the rows the page shares with it (fit-share.ts), then sleeps until the next
 * pass. Started by fit-threads.ts with one message { buffer, capacity }.
 */
import { logRowsBytes, logRowsOn, PARTIAL_SUMS, PASS_PARAMS, passChunk, passChunks } from "../src/flow/recentre.js";
import { claimChunks, CTL_READY, CTL_SEQ, fitShareViews } from "./fit-share.js";

/** Rows of the warm-up (odd, so that no loop tail goes unrun). */
const WARM_ROWS = 2001;

/** Compiles the pass on made-up rows (seen from us, a Hubble flow with noise) before the first real one. */
function warm(): void {
  const m = WARM_ROWS;
  const R = logRowsOn(new ArrayBuffer(logRowsBytes(m)), 0, m, m);
  let seed = 12345;
  const next = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
  for (let k = 0; k < m; k++) {
    const zc = 2 * next() - 1;
    const phi = 2 * Math.PI * next();
    const rc = Math.sqrt(1 - zc * zc);
    R.ax[k] = rc * Math.cos(phi);
    R.ay[k] = rc * Math.sin(phi);
    R.az[k] = zc;
    R.q0[k] = 7000 * (0.2 + next()) + 300 * (next() - 0.5);
    R.lnD[k] = Math.log(100 * (0.2 + next()));
    R.f[k] = 0.2;
    R.member[k] = 1;
  }
  const P = new Float64Array(PASS_PARAMS);
  const partials = new Float64Array(passChunks(m) * PARTIAL_SUMS);
  P[6] = 70;
  P[10] = 250 * 250;
  for (let it = 0; it < 40; it++) {
    P[11] = it & 1;
    passChunk(R, 0, P, partials);
  }
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
