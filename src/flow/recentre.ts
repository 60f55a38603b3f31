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
 * Browser-safe.
 */
import { quickselect } from "d3-array";
import { HubbleSums, invertSymmetric } from "./hubble.js";

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
  /** Where the log fit's passes run (default: on this thread). The web view spreads them over a worker. */
  passes?: LogPasses;
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
  /** Rows that entered the fit. */
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

/** |(x, y, z)| (Math.hypot is several times slower in V8 and not needed at these magnitudes). */
function norm3(x: number, y: number, z: number): number {
  return Math.sqrt(x * x + y * y + z * z);
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
  const { x, y, z, vr, vrErr, use } = points;
  const n = x.length;
  const form = opts.form ?? "minor";
  const minCos = opts.minCosLambda ?? 0.3;
  const maxD = opts.maxDistMpc ?? Infinity;
  const minD = opts.minDistMpc ?? 0;
  const o = originOf(points, origin);
  const ox = o.x;
  const oy = o.y;
  const oz = o.z;
  const od = Math.hypot(ox, oy, oz);
  // Unit vector of the origin as seen from us (for cos theta in the major form).
  const onx = od > 0 ? ox / od : 0;
  const ony = od > 0 ? oy / od : 0;
  const onz = od > 0 ? oz / od : 0;

  const s = new Float64Array(n);
  const vAB = new Float64Array(n);
  const cosL = new Float64Array(n);
  const used = new Uint8Array(n);
  const fitH0 = opts.fitH0 ?? true;
  const sigmaStar = opts.sigmaStar ?? 250;
  const fitDipole = opts.fitDipole ?? true;
  const ss2 = sigmaStar * sigmaStar;
  // the linear fit's normal equations (fitHubbleFlow's, with the slope held at h0 when fitH0 is false),
  // summed as the rows are made: v_AB = H s + d . e_AB, error sigma_i and sigmaStar in quadrature
  const sums = new HubbleSums();
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - ox;
    const dy = y[i]! - oy;
    const dz = z[i]! - oz;
    const si = Math.sqrt(dx * dx + dy * dy + dz * dz);
    s[i] = si;
    vAB[i] = NaN;
    cosL[i] = NaN;
    if (i === o.index || !(si > 0) || !Number.isFinite(vr[i]!)) continue;
    if (use && !use[i]) continue;
    const ux = dx / si;
    const uy = dy / si;
    const uz = dz / si;
    const di = norm3(x[i]!, y[i]!, z[i]!);
    if (!(di > 0)) continue;
    const nbx = x[i]! / di;
    const nby = y[i]! / di;
    const nbz = z[i]! / di;
    const cl = nbx * ux + nby * uy + nbz * uz;
    cosL[i] = cl;
    let v: number;
    if (form === "major") {
      if (!(Math.abs(cl) >= minCos)) continue;
      const cosTheta = od > 0 ? nbx * onx + nby * ony + nbz * onz : 0;
      v = (vr[i]! - o.vr * cosTheta) / cl;
    } else {
      const vbx = vr[i]! * nbx - o.vx;
      const vby = vr[i]! * nby - o.vy;
      const vbz = vr[i]! * nbz - o.vz;
      v = vbx * ux + vby * uy + vbz * uz;
    }
    const e = vrErr ? vrErr[i]! : 0;
    const sg = form === "major" ? e : e * Math.abs(cl);
    if (!Number.isFinite(v) || !Number.isFinite(sg)) continue;
    vAB[i] = v;
    if (!(si <= maxD && si >= minD)) continue;
    used[i] = 1;
    const v2 = sg * sg + ss2;
    sums.add(si, v - (fitH0 ? 0 : opts.h0 * si), ux, uy, uz, v2 > 0 ? 1 / v2 : 1);
  }
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
  const estimator = form === "minor" ? chooseEstimator(opts.estimator ?? "auto", vrErr, used, sigmaStar) : "linear";
  if (estimator === "log" && linearFit.ok) {
    const g = logDistanceFit(points, o, used, vAB, { h0: opts.h0, hStart: h, dStart: d, fitH0, fitDipole, sigmaStar, passes: opts.passes });
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
  let sumR2 = 0;
  let nR = 0;
  for (let i = 0; i < n; i++) {
    if (!used[i]) continue;
    const si = s[i]!;
    const ux = (x[i]! - ox) / si;
    const uy = (y[i]! - oy) / si;
    const uz = (z[i]! - oz) / si;
    const r = vAB[i]! - h * si - d[0] * ux - d[1] * uy - d[2] * uz;
    if (!Number.isFinite(r)) continue;
    sumR2 += r * r;
    nR++;
  }
  const fit = {
    slope: h,
    slopeErr: hErr,
    dipole: d,
    dipoleErr: dErr,
    nUsed,
    residualRms: nR > 0 && Number.isFinite(h) ? Math.sqrt(sumR2 / nR) : NaN,
    cov,
    chi2,
    dof,
  };
  return {
    s,
    vAB,
    h0There: fit.slope,
    h0ThereErr: fit.slopeErr,
    dipole: fit.dipole,
    dipoleErr: fit.dipoleErr,
    nUsed: fit.nUsed,
    residualRmsThere: fit.residualRms,
    cov: fit.cov,
    cosLambda: cosL,
    used,
    originIndex: o.index,
    origin: { x: ox, y: oy, z: oz, vx: o.vx, vy: o.vy, vz: o.vz },
    chi2: fit.chi2,
    dof: fit.dof,
    estimator,
    fitSteps,
    velocityModel: "radial-only",
  };
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
/** Exported for its tests; callers use recentre. */
export function logDistanceFit(
  points: RecentrePoints,
  o: { x: number; y: number; z: number; vx: number; vy: number; vz: number },
  used: Uint8Array,
  vAB: Float64Array,
  opts: { h0: number; hStart: number; dStart: [number, number, number]; fitH0: boolean; fitDipole: boolean; sigmaStar: number; passes?: LogPasses },
): LogFitResult {
  const { x, y, z, vr, vrErr } = points;
  const n = x.length;
  const fail: LogFitResult = { ok: false, steps: 0, h: NaN, d: [NaN, NaN, NaN], cov: new Float64Array(16), chi2: NaN, dof: 0, nUsed: 0 };
  const { fitH0, fitDipole } = opts;
  if (!((fitH0 ? opts.hStart : opts.h0) > 0)) return fail;
  // The rows offered, packed once with what does not change from step to step (LogRows).
  let m = 0;
  for (let i = 0; i < n; i++) if (used[i] && Number.isFinite(vAB[i]!)) m++;
  const passes = opts.passes ?? ONE_THREAD;
  const R = passes.rows(m);
  const rA2 = o.x * o.x + o.y * o.y + o.z * o.z;
  for (let i = 0, k = 0; i < n; i++) {
    if (!used[i] || !Number.isFinite(vAB[i]!)) continue;
    const dObs = norm3(x[i]!, y[i]!, z[i]!);
    const ax = x[i]! / dObs;
    const ay = y[i]! / dObs;
    const az = z[i]! / dObs;
    const dc = ax * o.x + ay * o.y + az * o.z;
    R.ax[k] = ax;
    R.ay[k] = ay;
    R.az[k] = az;
    R.dc[k] = dc;
    R.b2[k] = Math.max(0, rA2 - dc * dc);
    R.q0[k] = vr[i]! - (ax * o.vx + ay * o.vy + az * o.vz);
    R.lnD[k] = Math.log(dObs);
    const e = vrErr ? vrErr[i]! : 0;
    R.f[k] = Number.isFinite(e) ? e / (opts.h0 * dObs) : 0;
    k++;
  }
  // After FREEZE_AT steps the set of rows can only shrink and each row keeps the root it had then: a row
  // whose root comes and goes, or a row seen near its closest approach (q near 0, where "the root away
  // from D_c" changes sides), would otherwise make a limit cycle that never converges.
  const { member, inFit } = R;
  member.fill(1, 0, m);
  const sums = new HubbleSums();
  const P = new Float64Array(PASS_PARAMS);
  const partial = new Float64Array(PARTIAL_SUMS);
  const ss2 = opts.sigmaStar * opts.sigmaStar;
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
    passParams(P, o, h, d, ss2, it >= FREEZE_AT);
    passes.pass(R, P, partial);
    setSums(sums, partial);
    if (it + 1 >= FREEZE_AT) member.set(inFit.subarray(0, m));
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

/**
 * The rows of the log fit, with the parts of each row's terms that do not depend on (H, d):
 * a = unit line of sight, dc = a . r_A (closest approach), b2 = |r_A|^2 - dc^2, q0 = V_B - a . v_A,
 * lnD = ln D_obs, f = fractional distance error; side and inFit are written by logStepSums, member by
 * logDistanceFit. Rows 0..m-1 are used; the arrays may be longer (storage reused between fits).
 */
export interface LogRows {
  m: number;
  ax: Float64Array;
  ay: Float64Array;
  az: Float64Array;
  dc: Float64Array;
  b2: Float64Array;
  q0: Float64Array;
  lnD: Float64Array;
  f: Float64Array;
  /** The root each row takes once frozen: the sign of F'(D_pred), +1 beyond dc, -1 before it. */
  side: Float64Array;
  /** 1 for the rows a pass looks at. */
  member: Uint8Array;
  /** 1 for the rows that had a usable root in the last pass. */
  inFit: Uint8Array;
}

const LOG_ROW_COLUMNS = ["ax", "ay", "az", "dc", "b2", "q0", "lnD", "f", "side"] as const;

/** Bytes that logRowsOn needs for `capacity` rows. */
export function logRowsBytes(capacity: number): number {
  return capacity * (LOG_ROW_COLUMNS.length * 8 + 2);
}

/**
 * LogRows as views on `buffer` from `byteOffset` (a multiple of 8), room for `capacity` rows, of which
 * the first m are used. The same call on the same SharedArrayBuffer gives another thread the same rows.
 */
export function logRowsOn(buffer: ArrayBufferLike, byteOffset: number, capacity: number, m: number): LogRows {
  let at = byteOffset;
  const f64 = () => {
    const a = new Float64Array(buffer, at, capacity);
    at += capacity * 8;
    return a;
  };
  const u8 = () => {
    const a = new Uint8Array(buffer, at, capacity);
    at += capacity;
    return a;
  };
  return { m, ax: f64(), ay: f64(), az: f64(), dc: f64(), b2: f64(), q0: f64(), lnD: f64(), f: f64(), side: f64(), member: u8(), inFit: u8() };
}

/** Slots of a pass's parameters (passParams): origin position, v_A + d, H, d, sigmaStar^2, frozen. */
export const PASS_PARAMS = 12;
/**
 * Slots of a pass's partial sums: the upper triangle of A (a00 a01 a02 a03 a11 a12 a13 a22 a23 a33),
 * b0..b3, sum w y^2, rows. Partial sums of disjoint row ranges add up to the sums of their union.
 */
export const PARTIAL_SUMS = 16;
const A_SLOTS = [0, 1, 2, 3, 5, 6, 7, 10, 11, 15];

/** Writes a pass's parameters into P (PASS_PARAMS slots). */
export function passParams(P: Float64Array, o: { x: number; y: number; z: number; vx: number; vy: number; vz: number }, h: number, d: readonly number[], ss2: number, frozen: boolean): void {
  P[0] = o.x;
  P[1] = o.y;
  P[2] = o.z;
  P[3] = o.vx + d[0]!;
  P[4] = o.vy + d[1]!;
  P[5] = o.vz + d[2]!;
  P[6] = h;
  P[7] = d[0]!;
  P[8] = d[1]!;
  P[9] = d[2]!;
  P[10] = ss2;
  P[11] = frozen ? 1 : 0;
}

/** Sets `sums` from partial sums (PARTIAL_SUMS slots). */
export function setSums(sums: HubbleSums, part: Float64Array): void {
  sums.reset();
  for (let j = 0; j < A_SLOTS.length; j++) sums.A[A_SLOTS[j]!] = part[j]!;
  for (let c = 0; c < 4; c++) sums.b[c] = part[10 + c]!;
  sums.wyy = part[14]!;
  sums.rows = part[15]!;
}

/**
 * Rows per chunk of a pass. Partial sums are made per chunk and added in chunk order, so that a pass
 * gives the same sums to the last bit however many threads share its chunks.
 */
export const PASS_CHUNK_ROWS = 4096;

export function passChunks(m: number): number {
  return Math.ceil(m / PASS_CHUNK_ROWS);
}

/** Chunk c of a pass: logStepSums over its rows into partials[c * PARTIAL_SUMS ..]. */
export function passChunk(R: LogRows, c: number, P: Float64Array, partials: Float64Array): void {
  const k0 = c * PASS_CHUNK_ROWS;
  logStepSums(R, k0, Math.min(R.m, k0 + PASS_CHUNK_ROWS), P, partials, c * PARTIAL_SUMS);
}

/** out = the chunks' partial sums added in chunk order. */
export function sumChunks(partials: Float64Array, chunks: number, out: Float64Array): void {
  out.fill(0, 0, PARTIAL_SUMS);
  for (let c = 0; c < chunks; c++) for (let j = 0; j < PARTIAL_SUMS; j++) out[j] = out[j]! + partials[c * PARTIAL_SUMS + j]!;
}

/**
 * Where the log fit's passes run: the rows' storage and one pass over rows 0..R.m-1 into the sums
 * (PARTIAL_SUMS slots), made chunk by chunk (passChunk) and added by sumChunks.
 */
export interface LogPasses {
  rows(m: number): LogRows;
  pass(R: LogRows, P: Float64Array, out: Float64Array): void;
}

/** Passes on this thread, with fresh storage for every fit. */
export const ONE_THREAD: LogPasses = {
  rows: (m) => logRowsOn(new ArrayBuffer(logRowsBytes(m)), 0, m, m),
  pass: (R, P, out) => {
    const chunks = passChunks(R.m);
    const partials = new Float64Array(chunks * PARTIAL_SUMS);
    for (let c = 0; c < chunks; c++) passChunk(R, c, P, partials);
    sumChunks(partials, chunks, out);
  },
};

/**
 * One Gauss-Newton step's normal equations over rows k0..k1-1: for each member row at (H, d), the
 * predicted distance D_pred = dc + t, the root of F = H s^2 - (w - d).(D a - r_A) with
 * t = (q + F'(D_pred)) / (2H) and F'(D_pred) = +-sqrt(q^2 - 4 H F(dc)), signed as q (the root away from
 * dc) or, once frozen, as side, q = (w - d) . a = q0 - d . a and F(dc) = H b2 - (w - d).p =
 * H b2 + (v_A + d).p, p = dc a - r_A (a . p = 0, so V_B drops out); then s_pred, e_pred,
 * kappa = F'(D_pred) D_pred / s_pred and the row y = -kappa ln(D_obs / D_pred) with error |kappa| f and
 * sigmaStar in quadrature, summed into out[at .. at + PARTIAL_SUMS). P holds passParams. inFit[k] = 1
 * for the rows that had a usable root. No allocation; rows outside k0..k1-1 are not touched.
 */
export function logStepSums(R: LogRows, k0: number, k1: number, P: Float64Array, out: Float64Array, at: number): void {
  const { ax: AX, ay: AY, az: AZ, dc: DC, b2: B2, q0: Q0, lnD: LND, f: FR, side: SIDE, member, inFit } = R;
  const ox = P[0]!;
  const oy = P[1]!;
  const oz = P[2]!;
  const ux = P[3]!;
  const uy = P[4]!;
  const uz = P[5]!;
  const h = P[6]!;
  const d0 = P[7]!;
  const d1 = P[8]!;
  const d2 = P[9]!;
  const ss2 = P[10]!;
  const frozen = P[11] !== 0;
  const inv2h = 1 / (2 * h);
  const h4 = 4 * h;
  let a00 = 0, a01 = 0, a02 = 0, a03 = 0, a11 = 0, a12 = 0, a13 = 0, a22 = 0, a23 = 0, a33 = 0;
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, wyy = 0;
  let rows = 0;
  for (let k = k0; k < k1; k++) {
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
    const w = v2 > 0 ? 1 / v2 : 1;
    const wx = w * sp;
    const wex = w * ex;
    const wey = w * ey;
    const wez = w * ez;
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
    wyy += w * yv * yv;
    rows++;
    inFit[k] = 1;
  }
  out[at] = a00;
  out[at + 1] = a01;
  out[at + 2] = a02;
  out[at + 3] = a03;
  out[at + 4] = a11;
  out[at + 5] = a12;
  out[at + 6] = a13;
  out[at + 7] = a22;
  out[at + 8] = a23;
  out[at + 9] = a33;
  out[at + 10] = b0;
  out[at + 11] = b1;
  out[at + 12] = b2;
  out[at + 13] = b3;
  out[at + 14] = wyy;
  out[at + 15] = rows;
}

function chooseEstimator(e: "auto" | "log" | "linear", vrErr: Float64Array | undefined, used: Uint8Array, sigmaStar: number): "log" | "linear" {
  if (e !== "auto") return e;
  if (!vrErr) return "linear";
  let m = 0;
  for (let i = 0; i < used.length; i++) if (used[i] && Number.isFinite(vrErr[i]!)) m++;
  if (m === 0) return "linear";
  const v = new Float64Array(m);
  for (let i = 0, k = 0; i < used.length; i++) if (used[i] && Number.isFinite(vrErr[i]!)) v[k++] = vrErr[i]!;
  // the upper median, v[m >> 1] of the sorted values, in linear time
  quickselect(v, m >> 1);
  return v[m >> 1]! > sigmaStar ? "log" : "linear";
}
