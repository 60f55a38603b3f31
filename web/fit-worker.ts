/**
 * The page's fit worker: claims and runs chunks of the re-centring kernels (src/flow/recentre-kernels.ts,
 * the library's own code) on the workspace the page shares with it (fit-share.ts), and the drawing jobs
 * that follow a re-centring (cells.ts: the slices' and the Hubble diagram's points), then sleeps until
 * the next run. Started by fit-threads.ts with one message { buffer, capacity }.
 */
import { recentre } from "../src/flow/recentre.js";
import { claimChunks, CTL_READY, CTL_SEQ, fitShareViews } from "./fit-share.js";
import {
  HJ_CROSS_RGB,
  HJ_H,
  HJ_K,
  HJ_LIM,
  HJ_MARKS,
  HJ_N,
  HJ_NG,
  HJ_NO,
  HJ_ORIGIN_ROW,
  HJ_OX,
  HJ_OY,
  HJ_R,
  HJ_RA,
  HJ_RB,
  HJ_RING_RGB,
  HJ_SIZE,
  HJ_SLOTS,
  HJ_W,
  HJ_XA,
  HJ_XB,
  HJ_YA,
  HJ_YB,
  hubbleCells,
  SJ_H,
  SJ_HALF,
  SJ_IA,
  SJ_IB,
  SJ_IC,
  SJ_K,
  SJ_KV,
  SJ_LIM,
  SJ_N,
  SJ_OX,
  SJ_OY,
  SJ_R,
  SJ_SIZE,
  SJ_SLOTS,
  SJ_W,
  SJ_XA,
  SJ_XB,
  SJ_YA,
  SJ_YB,
  sliceCells,
} from "./cells.js";

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
  warmDrawing(x, y, z, vr);
}

/**
 * Compiles the drawing jobs (cells.ts) before the first re-centring hands them over: the Hubble
 * diagram's two parts and a slice, on made-up rows, in arrays of shared memory like the real ones.
 */
function warmDrawing(x: Float64Array, y: Float64Array, z: Float64Array, vr: Float64Array): void {
  const m = x.length;
  const W = 97;
  const H = 89;
  const sab = (bytes: number) => new SharedArrayBuffer(Math.ceil(bytes / 8) * 8);
  const f64 = (len: number) => new Float64Array(sab(len * 8));
  const s = f64(m);
  const u = f64(m);
  for (let k = 0; k < m; k++) {
    s[k] = Math.hypot(x[k]!, y[k]!, z[k]!);
    u[k] = vr[k]! - 70 * s[k]!;
  }
  const rows = new Int32Array(sab(m * 4));
  for (let k = 0; k < m; k += 7) rows[k / 7] = k;
  const P = f64(HJ_SLOTS);
  Object.assign(P, { [HJ_N]: m, [HJ_XA]: 0.5, [HJ_XB]: 2, [HJ_YA]: -0.005, [HJ_YB]: 80, [HJ_RA]: -0.02, [HJ_RB]: 60, [HJ_LIM]: 500, [HJ_K]: 1, [HJ_OX]: -1.4, [HJ_OY]: -1.4, [HJ_SIZE]: 3, [HJ_W]: W, [HJ_H]: H, [HJ_ORIGIN_ROW]: -1, [HJ_MARKS]: 1, [HJ_R]: 1.4, [HJ_NG]: rows.length >> 3, [HJ_NO]: rows.length >> 3, [HJ_RING_RGB]: 0xffaabb, [HJ_CROSS_RGB]: 0x33ccee });
  const hubble = {
    P,
    s,
    v: vr,
    u,
    px: f64(m),
    py: f64(m),
    rx: f64(m),
    ry: f64(m),
    bin: new Uint8Array(sab(m)),
    binRes: new Uint8Array(sab(m)),
    cellsMain: new Uint8Array(sab(W * H)),
    cellsRes: new Uint8Array(sab(W * H)),
    groupRows: rows,
    outlierRows: rows,
    marksMain: new Uint32Array(sab(W * H * 4)),
    marksRes: new Uint32Array(sab(W * H * 4)),
  };
  const SP = f64(SJ_SLOTS);
  Object.assign(SP, { [SJ_N]: m, [SJ_IA]: 0, [SJ_IB]: 1, [SJ_IC]: 2, [SJ_HALF]: 40, [SJ_R]: 150, [SJ_XA]: 0.3, [SJ_XB]: 48, [SJ_YA]: -0.3, [SJ_YB]: 44, [SJ_KV]: 0.001, [SJ_LIM]: 500, [SJ_K]: 1, [SJ_OX]: -1.3, [SJ_OY]: -1.3, [SJ_SIZE]: 3, [SJ_W]: W, [SJ_H]: H });
  const slice = { P: SP, sg: [x, y, z] as [Float64Array, Float64Array, Float64Array], s, u, px: f64(m), py: f64(m), rows: new Int32Array(sab(m * 4)), bin: new Uint8Array(sab(m)), lineStart: new Int32Array(sab(32 * 4)), xy: f64(4 * m), cells: new Uint8Array(sab(W * H)) };
  for (let k = 0; k < 3; k++) {
    hubbleCells(hubble, 1);
    hubbleCells(hubble, 2);
    SP[SJ_IA] = k;
    SP[SJ_IB] = (k + 1) % 3;
    SP[SJ_IC] = (k + 2) % 3;
    sliceCells(slice);
    hubble.cellsMain.fill(0);
    hubble.cellsRes.fill(0);
    hubble.marksMain.fill(0);
    hubble.marksRes.fill(0);
    slice.cells.fill(0);
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
