/**
 * The row loops of re-centring (src/flow/recentre.ts), as chunk kernels over one workspace of typed
 * arrays, so that the same code runs on one thread or on several sharing the workspace's memory (the
 * web view: web/fit-threads.ts). Every kernel handles the rows of one chunk (CHUNK_ROWS rows), writes
 * only those rows of the per-row arrays and its own slots of `partials`; sums are added in chunk order
 * (sumChunks), so the results do not depend on which thread ran which chunk, to the last bit.
 *
 *   SETUP     distance s and velocity v_AB seen from the origin, cos lambda, the rows used; the linear
 *             fit's normal equations; with P[PACK], the log fit's rows (below).
 *   LOG_PASS  one Gauss-Newton step of the log fit's normal equations (logStepSums).
 *   RESIDUAL  sum of squared residuals of the final parameters over the used rows.
 *   POINT_ROWS the log fit's rows that depend on the point alone (unit vector, ln D, fractional error),
 *             for every row, once for points that stay from fit to fit (the view's); SETUP reads them.
 *
 * The log fit's rows, indexed like the input rows (member = 1 for those in the fit): a = unit line of
 * sight, dc = a . r_A (closest approach), b2 = |r_A|^2 - dc^2, q0 = V_B - a . v_A, lnD = ln D_obs, f =
 * fractional distance error; side (the root a row keeps once frozen) and inFit are written by LOG_PASS.
 * Browser-safe; no allocation in the kernels.
 */

/** Rows per chunk. */
export const CHUNK_ROWS = 4096;

export function chunksOf(n: number): number {
  return Math.ceil(n / CHUNK_ROWS);
}

/** Slots of a chunk's partial sums: a00 a01 a02 a03 a11 a12 a13 a22 a23 a33, b0..b3, sum w y^2, rows. */
export const PARTIAL_SUMS = 16;

/** Parameter slots (the workspace's P). */
export const P_OX = 0; // origin position (3), its 3-D velocity (3), its vr, its unit vector (3), |r_A|
export const P_OVX = 3;
export const P_OVR = 6;
export const P_ONX = 7;
export const P_OD = 10;
export const P_OINDEX = 11; // the origin's row, -1 for a free point
export const P_MAJOR = 12; // 1: major-infall form
export const P_MIN_COS = 13;
export const P_MAX_D = 14;
export const P_MIN_D = 15;
export const P_FIT_H0 = 16; // 0: the slope is held at P_H0 (the linear fit sums v - H0 s)
export const P_H0 = 17; // the H0 that turns vrErr into a fractional distance error, and the held slope
export const P_SS2 = 18; // sigmaStar^2
export const P_HAS_ERR = 19; // vrErr is given
export const P_HAS_USE = 20; // use is given
export const P_PACK = 21; // SETUP also writes the log fit's rows
export const P_H = 22; // current slope (LOG_PASS, RESIDUAL)
export const P_D = 23; // current dipole (3)
export const P_FROZEN = 26; // LOG_PASS: rows keep their side
export const P_POINT_ROWS = 27; // SETUP: ax, ay, az, lnD and f already hold every row's values (POINT_ROWS ran)
export const PARAMS = 32;

export const SETUP = 0;
export const LOG_PASS = 1;
export const RESIDUAL = 2;
export const POINT_ROWS = 3;
export type KernelId = typeof SETUP | typeof LOG_PASS | typeof RESIDUAL | typeof POINT_ROWS;

export interface RecentreWork {
  /** Rows of this fit (the arrays may be longer). */
  n: number;
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
  vr: Float64Array;
  /** Read only where P[P_HAS_ERR] (may then be empty otherwise); likewise use with P[P_HAS_USE]. */
  vrErr: Float64Array;
  use: Uint8Array;
  s: Float64Array;
  vAB: Float64Array;
  cosL: Float64Array;
  used: Uint8Array;
  ax: Float64Array;
  ay: Float64Array;
  az: Float64Array;
  dc: Float64Array;
  b2: Float64Array;
  q0: Float64Array;
  lnD: Float64Array;
  f: Float64Array;
  side: Float64Array;
  member: Uint8Array;
  inFit: Uint8Array;
  /** chunksOf(capacity) x PARTIAL_SUMS. */
  partials: Float64Array;
  P: Float64Array;
}

const F64_ROWS = ["x", "y", "z", "vr", "vrErr", "s", "vAB", "cosL", "ax", "ay", "az", "dc", "b2", "q0", "lnD", "f", "side"] as const;
const U8_ROWS = ["use", "used", "member", "inFit"] as const;

/** Bytes that workOn needs for `capacity` rows. */
export function workBytes(capacity: number): number {
  return PARAMS * 8 + chunksOf(capacity) * PARTIAL_SUMS * 8 + capacity * (F64_ROWS.length * 8 + U8_ROWS.length);
}

/**
 * A workspace as views on `buffer` from `byteOffset` (a multiple of 8) with room for `capacity` rows. The
 * same call on the same SharedArrayBuffer gives another thread the same workspace.
 */
export function workOn(buffer: ArrayBufferLike, byteOffset: number, capacity: number): RecentreWork {
  let at = byteOffset;
  const f64 = (len: number) => {
    const a = new Float64Array(buffer, at, len);
    at += len * 8;
    return a;
  };
  const P = f64(PARAMS);
  const partials = f64(chunksOf(capacity) * PARTIAL_SUMS);
  const w: Record<string, unknown> = { n: capacity, P, partials };
  for (const k of F64_ROWS) w[k] = f64(capacity);
  for (const k of U8_ROWS) {
    w[k] = new Uint8Array(buffer, at, capacity);
    at += capacity;
  }
  return w as unknown as RecentreWork;
}

/** out = the first `chunks` chunks' partial sums added in chunk order. */
export function sumChunks(partials: Float64Array, chunks: number, out: Float64Array): void {
  out.fill(0, 0, PARTIAL_SUMS);
  for (let c = 0; c < chunks; c++) for (let j = 0; j < PARTIAL_SUMS; j++) out[j] = out[j]! + partials[c * PARTIAL_SUMS + j]!;
}

/** |(x, y, z)| (Math.hypot is several times slower in V8 and not needed at these magnitudes). */
function norm3(x: number, y: number, z: number): number {
  return Math.sqrt(x * x + y * y + z * z);
}

/** Writes chunk c's sums of the normal equations into its PARTIAL_SUMS slots. */
function putSums(
  partials: Float64Array,
  c: number,
  ...v: [number, number, number, number, number, number, number, number, number, number, number, number, number, number, number, number]
): void {
  partials.set(v, c * PARTIAL_SUMS);
}

/**
 * SETUP for one chunk: each row's distance s and radial velocity v_AB seen from the origin (minor form
 * v_AB = (v_B - v_A) . e_AB; major form (V_B - V_A cos theta) / cos lambda, rows with |cos lambda| <
 * minCos left out), cos lambda = n_B . e_AB, used = the rows offered to the fits, and the linear fit's
 * sums of v_AB = H s + d . e_AB with error sigma_i (vrErr |cos lambda|, or vrErr in the major form) and
 * sigmaStar in quadrature (v - H0 s when the slope is held). With P[P_PACK], the log fit's rows too.
 */
export function setupChunk(w: RecentreWork, c: number): void {
  // every array is read from w once, here: a property load per row and array cost as much as the arithmetic
  const { x, y, z, vr, vrErr, use, s, vAB, cosL, used, member, P, partials } = w;
  const { ax: AX, ay: AY, az: AZ, dc: DC, b2: B2, q0: Q0, lnD: LND, f: FR } = w;
  const ox = P[P_OX]!;
  const oy = P[P_OX + 1]!;
  const oz = P[P_OX + 2]!;
  const ovx = P[P_OVX]!;
  const ovy = P[P_OVX + 1]!;
  const ovz = P[P_OVX + 2]!;
  const ovr = P[P_OVR]!;
  const onx = P[P_ONX]!;
  const ony = P[P_ONX + 1]!;
  const onz = P[P_ONX + 2]!;
  const od = P[P_OD]!;
  const oIndex = P[P_OINDEX]!;
  const major = P[P_MAJOR] !== 0;
  const minCos = P[P_MIN_COS]!;
  const maxD = P[P_MAX_D]!;
  const minD = P[P_MIN_D]!;
  const held = P[P_FIT_H0] === 0 ? P[P_H0]! : 0;
  const h0 = P[P_H0]!;
  const ss2 = P[P_SS2]!;
  const hasErr = P[P_HAS_ERR] !== 0;
  const hasUse = P[P_HAS_USE] !== 0;
  const pack = P[P_PACK] !== 0;
  const madeRows = P[P_POINT_ROWS] !== 0;
  const rA2 = ox * ox + oy * oy + oz * oz;
  let a00 = 0, a01 = 0, a02 = 0, a03 = 0, a11 = 0, a12 = 0, a13 = 0, a22 = 0, a23 = 0, a33 = 0;
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, wyy = 0;
  let rows = 0;
  const i1 = Math.min(w.n, (c + 1) * CHUNK_ROWS);
  for (let i = c * CHUNK_ROWS; i < i1; i++) {
    const dx = x[i]! - ox;
    const dy = y[i]! - oy;
    const dz = z[i]! - oz;
    const si = Math.sqrt(dx * dx + dy * dy + dz * dz);
    s[i] = si;
    vAB[i] = NaN;
    cosL[i] = NaN;
    used[i] = 0;
    if (pack) member[i] = 0;
    if (i === oIndex || !(si > 0) || !Number.isFinite(vr[i]!)) continue;
    if (hasUse && !use[i]) continue;
    const ux = dx / si;
    const uy = dy / si;
    const uz = dz / si;
    let nbx: number;
    let nby: number;
    let nbz: number;
    let di = NaN;
    if (madeRows) {
      // POINT_ROWS's unit vector (NaN where |r| is not > 0, and such a row ends unused either way)
      nbx = AX[i]!;
      nby = AY[i]!;
      nbz = AZ[i]!;
      if (nbx !== nbx) continue;
    } else {
      di = norm3(x[i]!, y[i]!, z[i]!);
      if (!(di > 0)) continue;
      nbx = x[i]! / di;
      nby = y[i]! / di;
      nbz = z[i]! / di;
    }
    const cl = nbx * ux + nby * uy + nbz * uz;
    cosL[i] = cl;
    let v: number;
    if (major) {
      if (!(Math.abs(cl) >= minCos)) continue;
      const cosTheta = od > 0 ? nbx * onx + nby * ony + nbz * onz : 0;
      v = (vr[i]! - ovr * cosTheta) / cl;
    } else {
      v = (vr[i]! * nbx - ovx) * ux + (vr[i]! * nby - ovy) * uy + (vr[i]! * nbz - ovz) * uz;
    }
    const e = hasErr ? vrErr[i]! : 0;
    const sg = major ? e : e * Math.abs(cl);
    if (!Number.isFinite(v) || !Number.isFinite(sg)) continue;
    vAB[i] = v;
    if (!(si <= maxD && si >= minD)) continue;
    used[i] = 1;
    const v2 = sg * sg + ss2;
    const wt = v2 > 0 ? 1 / v2 : 1;
    const yv = v - held * si;
    const wx = wt * si;
    const wex = wt * ux;
    const wey = wt * uy;
    const wez = wt * uz;
    b0 += wx * yv;
    b1 += wex * yv;
    b2 += wey * yv;
    b3 += wez * yv;
    a00 += wx * si;
    a01 += wx * ux;
    a02 += wx * uy;
    a03 += wx * uz;
    a11 += wex * ux;
    a12 += wex * uy;
    a13 += wex * uz;
    a22 += wey * uy;
    a23 += wey * uz;
    a33 += wez * uz;
    wyy += wt * yv * yv;
    rows++;
    if (pack) {
      const dc = nbx * ox + nby * oy + nbz * oz;
      DC[i] = dc;
      B2[i] = Math.max(0, rA2 - dc * dc);
      Q0[i] = vr[i]! - (nbx * ovx + nby * ovy + nbz * ovz);
      if (!madeRows) {
        AX[i] = nbx;
        AY[i] = nby;
        AZ[i] = nbz;
        LND[i] = Math.log(di);
        FR[i] = Number.isFinite(e) ? e / (h0 * di) : 0;
      }
      member[i] = 1;
    }
  }
  putSums(partials, c, a00, a01, a02, a03, a11, a12, a13, a22, a23, a33, b0, b1, b2, b3, wyy, rows);
}

/**
 * POINT_ROWS for one chunk: every row's ax, ay, az, lnD and f (as SETUP makes them for its members; ax
 * = NaN where |r| is not > 0), for a workspace whose points stay from fit to fit, so that SETUP
 * (with P[P_POINT_ROWS]) reads them instead of making them again. Reads P[P_H0] and P[P_HAS_ERR].
 */
export function pointRowsChunk(w: RecentreWork, c: number): void {
  const { x, y, z, vrErr, ax: AX, ay: AY, az: AZ, lnD: LND, f: FR, P } = w;
  const h0 = P[P_H0]!;
  const hasErr = P[P_HAS_ERR] !== 0;
  const i1 = Math.min(w.n, (c + 1) * CHUNK_ROWS);
  for (let i = c * CHUNK_ROWS; i < i1; i++) {
    // the expressions of SETUP, so that the values are its values to the last bit
    const di = norm3(x[i]!, y[i]!, z[i]!);
    if (!(di > 0)) {
      AX[i] = NaN;
      continue;
    }
    const e = hasErr ? vrErr[i]! : 0;
    AX[i] = x[i]! / di;
    AY[i] = y[i]! / di;
    AZ[i] = z[i]! / di;
    LND[i] = Math.log(di);
    FR[i] = Number.isFinite(e) ? e / (h0 * di) : 0;
  }
}

/**
 * LOG_PASS for one chunk, one Gauss-Newton step's normal equations: for each member row at (H, d), the
 * predicted distance D_pred = dc + t, the root of F = H s^2 - (w - d).(D a - r_A) with
 * t = (q + F'(D_pred)) / (2H) and F'(D_pred) = +-sqrt(q^2 - 4 H F(dc)), signed as q (the root away from
 * dc) or, once frozen, as side, q = (w - d) . a = q0 - d . a and F(dc) = H b2 - (w - d).p =
 * H b2 + (v_A + d).p, p = dc a - r_A (a . p = 0, so V_B drops out); then s_pred, e_pred,
 * kappa = F'(D_pred) D_pred / s_pred and the row y = -kappa ln(D_obs / D_pred) with error |kappa| f and
 * sigmaStar in quadrature. inFit = 1 for the rows that had a usable root.
 */
export function logPassChunk(w: RecentreWork, c: number): void {
  const { ax: AX, ay: AY, az: AZ, dc: DC, b2: B2, q0: Q0, lnD: LND, f: FR, side: SIDE, member, inFit, P, partials } = w;
  const ox = P[P_OX]!;
  const oy = P[P_OX + 1]!;
  const oz = P[P_OX + 2]!;
  const h = P[P_H]!;
  const d0 = P[P_D]!;
  const d1 = P[P_D + 1]!;
  const d2 = P[P_D + 2]!;
  const ux = P[P_OVX]! + d0;
  const uy = P[P_OVX + 1]! + d1;
  const uz = P[P_OVX + 2]! + d2;
  const ss2 = P[P_SS2]!;
  const frozen = P[P_FROZEN] !== 0;
  const inv2h = 1 / (2 * h);
  const h4 = 4 * h;
  let a00 = 0, a01 = 0, a02 = 0, a03 = 0, a11 = 0, a12 = 0, a13 = 0, a22 = 0, a23 = 0, a33 = 0;
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, wyy = 0;
  let rows = 0;
  const k1 = Math.min(w.n, (c + 1) * CHUNK_ROWS);
  for (let k = c * CHUNK_ROWS; k < k1; k++) {
    inFit[k] = 0;
    if (!member[k]) continue;
    const ax = AX[k]!;
    const ay = AY[k]!;
    const az = AZ[k]!;
    const dc = DC[k]!;
    const q = Q0[k]! - (d0 * ax + d1 * ay + d2 * az);
    const c0 = h * B2[k]! + (ux * (dc * ax - ox) + uy * (dc * ay - oy) + uz * (dc * az - oz));
    const disc = q * q - h4 * c0;
    if (!(disc > 0)) continue;
    // F'(D_pred) = 2 H t - q: the root away from dc (the sign of q) until frozen, then the same root
    let sign: number;
    if (frozen) sign = SIDE[k]!;
    else if (q === 0) continue;
    else SIDE[k] = sign = q > 0 ? 1 : -1;
    const fD = sign * Math.sqrt(disc);
    const dp = dc + (q + fD) * inv2h;
    if (!(dp > 0)) continue;
    const sx = dp * ax - ox;
    const sy = dp * ay - oy;
    const sz = dp * az - oz;
    const sp = Math.sqrt(sx * sx + sy * sy + sz * sz);
    if (!(sp > 0)) continue;
    const invSp = 1 / sp;
    const kappa = fD * dp * invSp;
    const yv = -kappa * (LND[k]! - Math.log(dp));
    const ex = sx * invSp;
    const ey = sy * invSp;
    const ez = sz * invSp;
    const sg = Math.abs(kappa) * FR[k]!;
    if (!(Number.isFinite(yv) && Number.isFinite(sp) && Number.isFinite(ex + ey + ez) && Number.isFinite(sg))) continue;
    const v2 = sg * sg + ss2;
    const wt = v2 > 0 ? 1 / v2 : 1;
    const wx = wt * sp;
    const wex = wt * ex;
    const wey = wt * ey;
    const wez = wt * ez;
    b0 += wx * yv;
    b1 += wex * yv;
    b2 += wey * yv;
    b3 += wez * yv;
    a00 += wx * sp;
    a01 += wx * ex;
    a02 += wx * ey;
    a03 += wx * ez;
    a11 += wex * ex;
    a12 += wex * ey;
    a13 += wex * ez;
    a22 += wey * ey;
    a23 += wey * ez;
    a33 += wez * ez;
    wyy += wt * yv * yv;
    rows++;
    inFit[k] = 1;
  }
  putSums(partials, c, a00, a01, a02, a03, a11, a12, a13, a22, a23, a33, b0, b1, b2, b3, wyy, rows);
}

/** RESIDUAL for one chunk: sum of (v_AB - H s - d . e)^2 and the count over the used rows, in slots 0 and 15. */
export function residualChunk(w: RecentreWork, c: number): void {
  const { x, y, z, s, vAB, used, P, partials } = w;
  const ox = P[P_OX]!;
  const oy = P[P_OX + 1]!;
  const oz = P[P_OX + 2]!;
  const h = P[P_H]!;
  const d0 = P[P_D]!;
  const d1 = P[P_D + 1]!;
  const d2 = P[P_D + 2]!;
  let sumR2 = 0;
  let nR = 0;
  const i1 = Math.min(w.n, (c + 1) * CHUNK_ROWS);
  for (let i = c * CHUNK_ROWS; i < i1; i++) {
    if (!used[i]) continue;
    const si = s[i]!;
    const r = vAB[i]! - h * si - (d0 * (x[i]! - ox) + d1 * (y[i]! - oy) + d2 * (z[i]! - oz)) / si;
    if (!Number.isFinite(r)) continue;
    sumR2 += r * r;
    nR++;
  }
  const at = c * PARTIAL_SUMS;
  partials.fill(0, at, at + PARTIAL_SUMS);
  partials[at] = sumR2;
  partials[at + 15] = nR;
}

export const KERNELS: readonly ((w: RecentreWork, c: number) => void)[] = [setupChunk, logPassChunk, residualChunk, pointRowsChunk];

/**
 * Where re-centring's chunks run. work() gives the workspace for the points of one fit: the caller's
 * input arrays and fresh outputs (one thread), or storage shared with other threads, with the inputs
 * copied in unless they are already there. run() runs a kernel over chunks 0..chunks-1, returning when
 * all are done. results() gives the per-row outputs to keep (copies when the storage is reused).
 */
export interface RecentreThreads {
  /** withLogRows: the log fit may run (its row arrays are needed; one thread leaves them empty otherwise). */
  work(points: { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr?: Float64Array; use?: Uint8Array }, withLogRows: boolean): RecentreWork;
  run(w: RecentreWork, kernel: KernelId, chunks: number): void;
  results(w: RecentreWork): { s: Float64Array; vAB: Float64Array; cosL: Float64Array; used: Uint8Array };
  /**
   * Optional: true when w's ax, ay, az, lnD and f hold every row's point rows for the parameters in
   * w.P (P_H0, P_HAS_ERR), having run POINT_ROWS if they did not (only for points that stay from fit
   * to fit). SETUP then reads them.
   */
  pointRows?(w: RecentreWork, chunks: number): boolean;
}

const EMPTY_F64 = new Float64Array(0);
const EMPTY_U8 = new Uint8Array(0);

/** Everything on this thread, with fresh arrays for every fit. */
export const ONE_THREAD: RecentreThreads = {
  work(points, withLogRows) {
    const n = points.x.length;
    const m = withLogRows ? n : 0;
    const f = (len = m) => new Float64Array(len);
    const u = (len = m) => new Uint8Array(len);
    return {
      n,
      x: points.x,
      y: points.y,
      z: points.z,
      vr: points.vr,
      vrErr: points.vrErr ?? EMPTY_F64,
      use: points.use ?? EMPTY_U8,
      s: f(n),
      vAB: f(n),
      cosL: f(n),
      used: u(n),
      ax: f(),
      ay: f(),
      az: f(),
      dc: f(),
      b2: f(),
      q0: f(),
      lnD: f(),
      f: f(),
      side: f(),
      member: u(),
      inFit: u(),
      partials: new Float64Array(chunksOf(n) * PARTIAL_SUMS),
      P: new Float64Array(PARAMS),
    };
  },
  run(w, kernel, chunks) {
    const k = KERNELS[kernel]!;
    for (let c = 0; c < chunks; c++) k(w, c);
  },
  results: (w) => ({ s: w.s, vAB: w.vAB, cosL: w.cosL, used: w.used }),
};
