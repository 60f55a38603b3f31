/**
 * The velocity field seen from another origin (domain reference section 10; the Copernican check).
 *
 * Interface used by the web view (keep it stable):
 *   recentre(points: { x, y, z: Float64Array (comoving Mpc, any Cartesian frame); vr: Float64Array
 *            (line-of-sight velocity from us, km/s: H0 D + v_pec); vrErr?: Float64Array; use?: Uint8Array },
 *            origin: { x, y, z, vr } | { index },
 *            opts: { h0; fitDipole?: boolean (default true); sigmaStar?: number (default 250); maxDistMpc?: number })
 *   -> { s, vAB, h0There, h0ThereErr, dipole, dipoleErr, nUsed, residualRmsThere, ... }
 * Extra optional options and extra result fields may be added; none of the above will change.
 *
 * Radial-only assumption: each galaxy's 3-D velocity is taken as vr times the unit vector of its position
 * (Hubble flow plus the radial peculiar velocity; tangential peculiar velocities are unknown and set to 0).
 * Minor-infall form (default): v_AB = (v_B - v_A) . e_AB. Major-infall form (Karachentsev & Kashibadze
 * 2006; vector form of domain reference section 10.3): v_AB = (V_B - V_A cos theta) / cos lambda, with
 * cos lambda = n_B . e_AB, which assumes B moves relative to A only along e_AB; rows with
 * |cos lambda| < minCosLambda are not used.
 * Both give v_AB = H0 s exactly in a pure Hubble flow. The Hubble law is fitted as seen from the origin
 * jointly with a dipole (the normal equations of fitHubbleFlow, HubbleSums): the origin's own peculiar velocity u_A appears as a dipole -u_A,
 * and a fit of H0 alone would alias it into H0 because a survey is lopsided as seen from anywhere but us.
 * Errors: a distance error of B moves s by delta D cos lambda while v_AB stays (to first order), so the
 * per-row error is vrErr |cos lambda| (minor form) or vrErr (major form), plus sigmaStar in quadrature.
 * vrErr is read as H0 sigma_D (the error of v_pec that comes from the distance).
 * The fit (minor form, estimator "auto"): in ln D by Gauss-Newton (logDistanceFit) when distance errors
 * dominate, the linear least squares at the observed positions otherwise; the linear fit always gives the
 * starting point. `used` marks the rows offered to the fit; nUsed counts those that entered it.
 * The row loops are chunk kernels (recentre-kernels.ts) whose sums add in chunk order; opts.threads says
 * where they run (this thread by default; the web view shares them with a worker), with the same bits.
 * Browser-safe.
 */
import { HubbleSums, invertSymmetric } from "./hubble.js";
import {
  chunksOf,
  LOG_PASS,
  ONE_THREAD,
  P_D,
  P_FIT_H0,
  P_FROZEN,
  P_H,
  P_H0,
  P_HAS_ERR,
  P_HAS_USE,
  P_MAJOR,
  P_MAX_D,
  P_MIN_COS,
  P_MIN_D,
  P_OD,
  P_OINDEX,
  P_ONX,
  P_OVR,
  P_OVX,
  P_OX,
  P_PACK,
  P_POINT_ROWS,
  P_SS2,
  PARTIAL_SUMS,
  RESIDUAL,
  SETUP,
  sumChunks,
  type RecentreThreads,
  type RecentreWork,
} from "./recentre-kernels.js";

export interface RecentrePoints {
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
  vr: Float64Array;
  vrErr?: Float64Array;
  use?: Uint8Array;
}

export type RecentreOrigin = { x: number; y: number; z: number; vr: number } | { index: number };

export interface RecentreOptions {
  h0: number;
  fitDipole?: boolean;
  sigmaStar?: number;
  maxDistMpc?: number;
  /** Fit H0 (default true); false holds it at opts.h0 and fits the dipole alone. */
  fitH0?: boolean;
  /** "minor" (default) or "major" infall form. */
  form?: "minor" | "major";
  /** Major form only: rows with |cos lambda| below this are left out. Default 0.3. */
  minCosLambda?: number;
  /** Points closer to the origin than this are left out, Mpc. Default 0. */
  minDistMpc?: number;
  /**
   * Minor form only. "auto" (default) takes "log" when distance errors dominate (median vrErr of the used
   * rows > sigmaStar) and "linear" otherwise. "log": maximum likelihood with Gaussian errors in ln D along each
   * galaxy's line of sight (see logDistanceFit); "linear": least squares of v_AB = H s + d . e at the
   * observed positions, which is biased by the log-normal distance errors (about +1% from us and -1.4%
   * from other galaxies for 18% errors, measured on mocks) but unbiased when velocity noise dominates,
   * where "log" is biased instead (sigma*^2 / (H <D^2>): +0.15% on a 120 Mpc mock without distance errors).
   */
  estimator?: "auto" | "log" | "linear";
  /** Where the row loops run (default: on this thread). The web view shares them with a worker. */
  threads?: RecentreThreads;
  /** Start the log fit here instead of at the linear fit (to check that its answer is a fixed point). */
  logStart?: { h: number; d: [number, number, number] };
}

export interface Recentred {
  /** Distance from the origin, Mpc (NaN for non-finite input). */
  s: Float64Array;
  /** Radial velocity seen from the origin, km/s; NaN for the origin itself and unused rows. */
  vAB: Float64Array;
  h0There: number;
  h0ThereErr: number;
  /** Dipole fitted from the origin, in the input frame, km/s (minus the origin's own peculiar velocity). */
  dipole: [number, number, number];
  dipoleErr: [number, number, number];
  nUsed: number;
  /** Unweighted rms of v_AB - H s - dipole . e over the used rows, km/s. */
  residualRmsThere: number;
  /** Covariance of (H, dx, dy, dz), row-major 4 x 4. */
  cov: Float64Array;
  /** cos lambda = n_B . e_AB (NaN where undefined). */
  cosLambda: Float64Array;
  /** Rows offered to the fit (nUsed counts those that entered it: the log fit drops a row whose line of sight has no root). */
  used: Uint8Array;
  /** Index of the origin row, -1 for a free point. */
  originIndex: number;
  /** The origin actually used: position and 3-D velocity in the input frame. */
  origin: { x: number; y: number; z: number; vx: number; vy: number; vz: number };
  chi2: number;
  dof: number;
  /** "log" (Gaussian in ln D, the default for the minor form) or "linear" (v_AB = H s + d . e). */
  estimator: "log" | "linear";
  /** Gauss-Newton steps of the log fit (0 for the linear fit). */
  fitSteps: number;
  /** Always "radial-only": tangential peculiar velocities are taken as zero. */
  velocityModel: "radial-only";
}

/** 3-D velocity of a point under the radial-only assumption: vr times the unit vector of r (0 at r = 0). */
export function radialVelocity3(x: number, y: number, z: number, vr: number): [number, number, number] {
  const d = Math.hypot(x, y, z);
  if (!(d > 0)) return [0, 0, 0];
  return [(vr * x) / d, (vr * y) / d, (vr * z) / d];
}

/** Resolves an origin to a position and a 3-D velocity. NaN coordinates for a bad index. */
export function originOf(points: RecentrePoints, origin: RecentreOrigin): { index: number; x: number; y: number; z: number; vx: number; vy: number; vz: number; vr: number } {
  if ("index" in origin) {
    const i = origin.index;
    if (!(Number.isInteger(i) && i >= 0 && i < points.x.length)) return { index: -1, x: NaN, y: NaN, z: NaN, vx: NaN, vy: NaN, vz: NaN, vr: NaN };
    const x = points.x[i]!;
    const y = points.y[i]!;
    const z = points.z[i]!;
    const vr = points.vr[i]!;
    const [vx, vy, vz] = radialVelocity3(x, y, z, vr);
    return { index: i, x, y, z, vx, vy, vz, vr };
  }
  const [vx, vy, vz] = radialVelocity3(origin.x, origin.y, origin.z, origin.vr);
  return { index: -1, x: origin.x, y: origin.y, z: origin.z, vx, vy, vz, vr: origin.vr };
}

export function recentre(points: RecentrePoints, origin: RecentreOrigin, opts: RecentreOptions): Recentred {
  const n = points.x.length;
  const form = opts.form ?? "minor";
  const fitH0 = opts.fitH0 ?? true;
  const sigmaStar = opts.sigmaStar ?? 250;
  const fitDipole = opts.fitDipole ?? true;
  const wanted = opts.estimator ?? "auto";
  const o = originOf(points, origin);
  const od = Math.hypot(o.x, o.y, o.z);
  // the log fit's rows are made in the same pass as the rest, when the log fit can be chosen
  const mayLog = form === "minor" && (wanted === "log" || (wanted === "auto" && points.vrErr !== undefined));
  const threads = opts.threads ?? ONE_THREAD;
  const w = threads.work(points, mayLog);
  const P = w.P;
  P.fill(0);
  P[P_OX] = o.x;
  P[P_OX + 1] = o.y;
  P[P_OX + 2] = o.z;
  P[P_OVX] = o.vx;
  P[P_OVX + 1] = o.vy;
  P[P_OVX + 2] = o.vz;
  P[P_OVR] = o.vr;
  // unit vector of the origin as seen from us (for cos theta in the major form)
  P[P_ONX] = od > 0 ? o.x / od : 0;
  P[P_ONX + 1] = od > 0 ? o.y / od : 0;
  P[P_ONX + 2] = od > 0 ? o.z / od : 0;
  P[P_OD] = od;
  P[P_OINDEX] = o.index;
  P[P_MAJOR] = form === "major" ? 1 : 0;
  P[P_MIN_COS] = opts.minCosLambda ?? 0.3;
  P[P_MAX_D] = opts.maxDistMpc ?? Infinity;
  P[P_MIN_D] = opts.minDistMpc ?? 0;
  P[P_FIT_H0] = fitH0 ? 1 : 0;
  P[P_H0] = opts.h0;
  P[P_SS2] = sigmaStar * sigmaStar;
  P[P_HAS_ERR] = points.vrErr ? 1 : 0;
  P[P_HAS_USE] = points.use ? 1 : 0;
  P[P_PACK] = mayLog ? 1 : 0;
  const chunks = chunksOf(n);
  // the log fit's rows of the points alone, made once for points that stay (threads.pointRows)
  if (mayLog && threads.pointRows?.(w, chunks)) P[P_POINT_ROWS] = 1;
  // the linear fit's normal equations (fitHubbleFlow's, with the slope held at h0 when fitH0 is false),
  // summed as the rows are made: v_AB = H s + d . e_AB, error sigma_i and sigmaStar in quadrature
  threads.run(w, SETUP, chunks);
  const part = new Float64Array(PARTIAL_SUMS);
  const sums = new HubbleSums();
  sumChunks(w.partials, chunks, part);
  setSums(sums, part);
  const linearFit = sums.solve(fitH0, fitDipole);
  const errOf = (k: number) => (linearFit.ok ? Math.sqrt(linearFit.cov[k * 5]!) : NaN);
  let h = fitH0 ? linearFit.params[0]! : opts.h0;
  let d: [number, number, number] = [linearFit.params[1]!, linearFit.params[2]!, linearFit.params[3]!];
  let cov = linearFit.cov;
  let hErr = fitH0 ? errOf(0) : 0;
  let dErr: [number, number, number] = fitDipole ? [errOf(1), errOf(2), errOf(3)] : [0, 0, 0];
  let chi2 = linearFit.chi2;
  let dof = sums.rows - linearFit.nParams;
  let nUsed = sums.rows;
  let fitSteps = 0;
  const estimator = mayLog ? chooseEstimator(wanted, points.vrErr, w.used, n, sigmaStar) : "linear";
  if (estimator === "log" && linearFit.ok) {
    const start = opts.logStart ?? { h, d };
    const g = logDistanceFit(w, threads, chunks, { h0: opts.h0, hStart: start.h, dStart: start.d, fitH0, fitDipole });
    if (g.ok) {
      h = g.h;
      d = g.d;
      cov = g.cov;
      hErr = fitH0 ? Math.sqrt(cov[0]!) : 0;
      dErr = fitDipole ? [Math.sqrt(cov[5]!), Math.sqrt(cov[10]!), Math.sqrt(cov[15]!)] : [0, 0, 0];
      chi2 = g.chi2;
      dof = g.dof;
      nUsed = g.nUsed;
      fitSteps = g.steps;
    }
  }
  // Residual scatter in km/s at the observed positions, for the final parameters.
  P[P_H] = h;
  P[P_D] = d[0];
  P[P_D + 1] = d[1];
  P[P_D + 2] = d[2];
  threads.run(w, RESIDUAL, chunks);
  sumChunks(w.partials, chunks, part);
  const sumR2 = part[0]!;
  const nR = part[15]!;
  const rows = threads.results(w);
  return {
    s: rows.s,
    vAB: rows.vAB,
    h0There: h,
    h0ThereErr: hErr,
    dipole: d,
    dipoleErr: dErr,
    nUsed,
    residualRmsThere: nR > 0 && Number.isFinite(h) ? Math.sqrt(sumR2 / nR) : NaN,
    cov,
    cosLambda: rows.cosL,
    used: rows.used,
    originIndex: o.index,
    origin: { x: o.x, y: o.y, z: o.z, vx: o.vx, vy: o.vy, vz: o.vz },
    chi2,
    dof,
    estimator,
    fitSteps,
    velocityModel: "radial-only",
  };
}

/** Sets `sums` from chunk sums (PARTIAL_SUMS slots: the upper triangle of A, b, sum w y^2, rows). */
function setSums(sums: HubbleSums, part: Float64Array): void {
  sums.reset();
  const A = sums.A;
  A[0] = part[0]!;
  A[1] = part[1]!;
  A[2] = part[2]!;
  A[3] = part[3]!;
  A[5] = part[4]!;
  A[6] = part[5]!;
  A[7] = part[6]!;
  A[10] = part[7]!;
  A[11] = part[8]!;
  A[15] = part[9]!;
  for (let c = 0; c < 4; c++) sums.b[c] = part[10 + c]!;
  sums.wyy = part[14]!;
  sums.rows = part[15]!;
}

/**
 * Positions and 3-D velocities (radial-only assumption) relative to an origin: the full vectors behind
 * recentre's s and v_AB. Shifting by an origin and then by the negated origin is the identity.
 */
export function relativeFrame(
  points: { x: Float64Array; y: Float64Array; z: Float64Array; vx: Float64Array; vy: Float64Array; vz: Float64Array },
  origin: { x: number; y: number; z: number; vx: number; vy: number; vz: number },
): { x: Float64Array; y: Float64Array; z: Float64Array; vx: Float64Array; vy: Float64Array; vz: Float64Array } {
  const n = points.x.length;
  const out = { x: new Float64Array(n), y: new Float64Array(n), z: new Float64Array(n), vx: new Float64Array(n), vy: new Float64Array(n), vz: new Float64Array(n) };
  for (let i = 0; i < n; i++) {
    out.x[i] = points.x[i]! - origin.x;
    out.y[i] = points.y[i]! - origin.y;
    out.z[i] = points.z[i]! - origin.z;
    out.vx[i] = points.vx[i]! - origin.vx;
    out.vy[i] = points.vy[i]! - origin.vy;
    out.vz[i] = points.vz[i]! - origin.vz;
  }
  return out;
}

export interface LogFitResult {
  ok: boolean;
  /** Gauss-Newton steps taken (the last one confirms convergence). */
  steps: number;
  h: number;
  d: [number, number, number];
  cov: Float64Array;
  chi2: number;
  dof: number;
  nUsed: number;
}

const MAX_ITER = 200;
const FREEZE_AT = 8;
/** Steps of history in the Anderson acceleration of the Gauss-Newton iteration. */
const ANDERSON_DEPTH = 3;

/**
 * The Hubble law seen from origin A with log-normal distance errors, by Gauss-Newton on
 * rho_B = ln(D_obs,B / D_pred,B): D_pred is where B must sit on its own line of sight (unit a) for its
 * radial-only velocity w = V_B a - v_A to satisfy the model from A, F(D) = H s(D)^2 - (w - d).(D a - r_A) = 0
 * (the root away from the point of closest approach D_c = a . r_A; the other root is D_c itself in a pure
 * Hubble flow). Seen from us (r_A = 0) this is D_pred = (V_B - d . a)/H, i.e. the log-distance estimator
 * of Watkins & Feldman 2015 (MNRAS 450, 1868), whose errors are Gaussian for log-normal distance errors.
 * Each step is a linear fit (HubbleSums, the sums behind fitHubbleFlow) of y = -kappa rho = dH s + dd . e,
 * kappa = F'(D) D / s, with per-row error |kappa| f (f = vrErr / (h0 D_obs), the fractional distance error)
 * and sigmaStar in quadrature; in a pure Hubble flow kappa = H D cos(lambda), so this is the linear fit made
 * exact in ln D.
 *
 * The weights move with the parameters, so plain Gauss-Newton converges only linearly here (a factor
 * 0.2-0.7 a step on 1e5-galaxy catalogues). The iteration p -> p + step(p) is therefore accelerated by
 * Anderson mixing (Anderson 1965, J. ACM 12, 547; the form of Walker & Ni 2011, SIAM J. Numer. Anal. 49,
 * 1715) over the last ANDERSON_DEPTH steps, in units of the parameters' errors. The history restarts when
 * a step grows; the fixed point, and so the estimate, is the plain iteration's (the rows that enter it
 * can differ by a few out of 1e5 with the path to it, a change far below the statistical error). On
 * 1e5 galaxies seen from other galaxies: 7-9 steps, where plain steps with halving took 15-35.
 */
function logDistanceFit(
  w: RecentreWork,
  threads: RecentreThreads,
  chunks: number,
  opts: { h0: number; hStart: number; dStart: [number, number, number]; fitH0: boolean; fitDipole: boolean },
): LogFitResult {
  const fail: LogFitResult = { ok: false, steps: 0, h: NaN, d: [NaN, NaN, NaN], cov: new Float64Array(16), chi2: NaN, dof: 0, nUsed: 0 };
  const { fitH0, fitDipole } = opts;
  if (!((fitH0 ? opts.hStart : opts.h0) > 0)) return fail;
  // The rows (member = 1) were made by the SETUP kernel with what does not change from step to step.
  // After FREEZE_AT steps the set of rows can only shrink and each row keeps the root it had then: a row
  // whose root comes and goes, or a row seen near its closest approach (q near 0, where "the root away
  // from D_c" changes sides), would otherwise make a limit cycle that never converges.
  const { member, inFit, P } = w;
  const sums = new HubbleSums();
  const part = new Float64Array(PARTIAL_SUMS);
  const d: [number, number, number] = fitDipole ? [...opts.dStart] : [0, 0, 0];
  let h = fitH0 ? opts.hStart : opts.h0;
  // the fitted parameters as a vector (slots of HubbleSums: 0 = H, 1..3 = dipole)
  const slots = [...(fitH0 ? [0] : []), ...(fitDipole ? [1, 2, 3] : [])];
  const q = slots.length;
  const accel = new Anderson(q, ANDERSON_DEPTH);
  const pNow = new Float64Array(q);
  const unit = new Float64Array(q);
  let prevNorm = Infinity;
  for (let it = 0; it < MAX_ITER; it++) {
    P[P_H] = h;
    P[P_D] = d[0];
    P[P_D + 1] = d[1];
    P[P_D + 2] = d[2];
    P[P_FROZEN] = it >= FREEZE_AT ? 1 : 0;
    threads.run(w, LOG_PASS, chunks);
    sumChunks(w.partials, chunks, part);
    setSums(sums, part);
    if (it + 1 >= FREEZE_AT) member.set(inFit.subarray(0, w.n));
    const step = sums.solve(fitH0, fitDipole);
    if (!step.ok) return fail;
    const err = (slot: number) => Math.sqrt(step.cov[slot * 5]!);
    const raw = step.params;
    const rawH = fitH0 ? raw[0]! : 0;
    const rawD = Math.hypot(raw[1]!, raw[2]!, raw[3]!);
    // Converged when the raw step is a negligible fraction of the statistical error (or at round-off);
    // a fit still wobbling after MAX_ITER steps by less than 1% of its error is accepted as it stands.
    const errD = Math.max(err(1), err(2), err(3));
    const within = (k: number) => Math.abs(rawH) <= Math.max(1e-12 * h, k * (fitH0 ? err(0) : 0)) && (!fitDipole || rawD <= Math.max(1e-9, k * errD));
    if (within(1e-7) || (it === MAX_ITER - 1 && within(0.01))) {
      h += rawH;
      for (let c = 0; c < 3; c++) d[c] = d[c]! + raw[c + 1]!;
      if (!(h > 0)) return fail;
      return { ok: true, steps: it + 1, h, d, cov: step.cov, chi2: step.chi2, dof: sums.rows - step.nParams, nUsed: sums.rows };
    }
    // the next point: Anderson mixing of the plain steps, in units of the first step's errors
    if (it === 0) for (let c = 0; c < q; c++) unit[c] = err(slots[c]!) > 0 ? err(slots[c]!) : 1;
    let norm = 0;
    for (let c = 0; c < q; c++) {
      const slot = slots[c]!;
      pNow[c] = (slot === 0 ? h : d[slot - 1]!) / unit[c]!;
      const f = raw[slot]! / unit[c]!;
      norm += f * f;
      accel.residual[c] = f;
    }
    if (norm > prevNorm) accel.restart();
    prevNorm = norm;
    const next = accel.next(pNow);
    for (let c = 0; c < q; c++) {
      const slot = slots[c]!;
      const v = next[c]! * unit[c]!;
      if (slot === 0) h = v;
      else d[slot - 1] = v;
    }
    if (!(h > 0)) return fail;
  }
  return fail;
}

/**
 * Anderson mixing for a fixed-point iteration p -> g(p) = p + f(p): keeps the last `depth` differences
 * of f and g and returns g minus the combination of them that best cancels f (least squares). Set
 * `residual` to f(p) before each call of next(p).
 */
class Anderson {
  readonly residual: Float64Array;
  private readonly dF: Float64Array[] = [];
  private readonly dG: Float64Array[] = [];
  private lastF: Float64Array | null = null;
  private lastG: Float64Array | null = null;

  constructor(
    private readonly dim: number,
    private readonly depth: number,
  ) {
    this.residual = new Float64Array(dim);
  }

  restart(): void {
    this.dF.length = 0;
    this.dG.length = 0;
    this.lastF = null;
    this.lastG = null;
  }

  next(p: Float64Array): Float64Array {
    const q = this.dim;
    const f = Float64Array.from(this.residual);
    const g = new Float64Array(q);
    for (let c = 0; c < q; c++) g[c] = p[c]! + f[c]!;
    if (this.lastF && this.lastG) {
      const df = new Float64Array(q);
      const dg = new Float64Array(q);
      for (let c = 0; c < q; c++) {
        df[c] = f[c]! - this.lastF[c]!;
        dg[c] = g[c]! - this.lastG[c]!;
      }
      this.dF.push(df);
      this.dG.push(dg);
      if (this.dF.length > this.depth) {
        this.dF.shift();
        this.dG.shift();
      }
    }
    this.lastF = f;
    this.lastG = g;
    const k = this.dF.length;
    if (k === 0) return g;
    // gamma = argmin |f - dF gamma|: normal equations, a little ridge for a near-degenerate history
    const M = new Float64Array(k * k);
    const r = new Float64Array(k);
    let trace = 0;
    for (let a = 0; a < k; a++) {
      for (let c = 0; c < k; c++) {
        let s = 0;
        for (let e = 0; e < q; e++) s += this.dF[a]![e]! * this.dF[c]![e]!;
        M[a * k + c] = s;
      }
      let s = 0;
      for (let e = 0; e < q; e++) s += this.dF[a]![e]! * f[e]!;
      r[a] = s;
      trace += M[a * k + a]!;
    }
    for (let a = 0; a < k; a++) M[a * k + a] = M[a * k + a]! + 1e-10 * trace;
    const inv = invertSymmetric(M, k);
    if (!inv) {
      this.restart();
      return g;
    }
    const out = Float64Array.from(g);
    for (let a = 0; a < k; a++) {
      let gamma = 0;
      for (let c = 0; c < k; c++) gamma += inv[a * k + c]! * r[c]!;
      for (let e = 0; e < q; e++) out[e] = out[e]! - gamma * this.dG[a]![e]!;
    }
    return out;
  }
}

function chooseEstimator(e: "auto" | "log" | "linear", vrErr: Float64Array | undefined, used: Uint8Array, n: number, sigmaStar: number): "log" | "linear" {
  if (e !== "auto") return e;
  if (!vrErr) return "linear";
  // The upper median of the used rows' vrErr (v[m >> 1] of the m sorted values) exceeds sigmaStar exactly
  // when at most m >> 1 of them are <= sigmaStar: a count, no sort or selection.
  let m = 0;
  let atMost = 0;
  for (let i = 0; i < n; i++) {
    if (!used[i]) continue;
    const v = vrErr[i]!;
    if (!Number.isFinite(v)) continue;
    m++;
    if (v <= sigmaStar) atMost++;
  }
  if (m === 0) return "linear";
  return atMost <= m >> 1 ? "log" : "linear";
}
