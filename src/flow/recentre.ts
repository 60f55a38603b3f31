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
 * jointly with a dipole (fitHubbleFlow): the origin's own peculiar velocity u_A appears as a dipole -u_A,
 * and a fit of H0 alone would alias it into H0 because a survey is lopsided as seen from anywhere but us.
 * Errors: a distance error of B moves s by delta D cos lambda while v_AB stays (to first order), so the
 * per-row error is vrErr |cos lambda| (minor form) or vrErr (major form), plus sigmaStar in quadrature.
 * vrErr is read as H0 sigma_D (the error of v_pec that comes from the distance).
 * The fit (minor form, estimator "auto"): in ln D by Gauss-Newton (logDistanceFit) when distance errors
 * dominate, the linear least squares at the observed positions otherwise; the linear fit always gives the
 * starting point. `used` marks the rows offered to the fit; nUsed counts those that entered it.
 * Browser-safe.
 */
import { fitHubbleFlow } from "./hubble.js";

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
  const ex = new Float64Array(n);
  const ey = new Float64Array(n);
  const ez = new Float64Array(n);
  const sig = new Float64Array(n);
  const used = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - ox;
    const dy = y[i]! - oy;
    const dz = z[i]! - oz;
    const si = Math.sqrt(dx * dx + dy * dy + dz * dz);
    s[i] = si;
    vAB[i] = NaN;
    cosL[i] = NaN;
    ex[i] = NaN;
    ey[i] = NaN;
    ez[i] = NaN;
    sig[i] = NaN;
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
    ex[i] = ux;
    ey[i] = uy;
    ez[i] = uz;
    sig[i] = sg;
    if (si <= maxD && si >= minD) used[i] = 1;
  }
  const fitH0 = opts.fitH0 ?? true;
  const sigmaStar = opts.sigmaStar ?? 250;
  const fitDipole = opts.fitDipole ?? true;
  const linearFit = fitHubbleFlow(
    { x: s, y: vAB, ex, ey, ez, sigma: sig, use: used },
    { sigmaStar, fitDipole, ...(fitH0 ? {} : { fixedSlope: opts.h0 }) },
  );
  let h = linearFit.slope;
  let d: [number, number, number] = linearFit.dipole;
  let cov = linearFit.cov;
  let hErr = linearFit.slopeErr;
  let dErr = linearFit.dipoleErr;
  let chi2 = linearFit.chi2;
  let dof = linearFit.dof;
  let nUsed = linearFit.nUsed;
  const estimator = form === "minor" ? chooseEstimator(opts.estimator ?? "auto", vrErr, used, sigmaStar) : "linear";
  if (estimator === "log" && linearFit.ok) {
    const g = logDistanceFit(points, o, used, vAB, { h0: opts.h0, hStart: h, dStart: d, fitH0, fitDipole, sigmaStar });
    if (g.ok) {
      h = g.h;
      d = g.d;
      cov = g.cov;
      hErr = fitH0 ? Math.sqrt(cov[0]!) : 0;
      dErr = fitDipole ? [Math.sqrt(cov[5]!), Math.sqrt(cov[10]!), Math.sqrt(cov[15]!)] : [0, 0, 0];
      chi2 = g.chi2;
      dof = g.dof;
      nUsed = g.nUsed;
    }
  }
  // Residual scatter in km/s at the observed positions, for the final parameters.
  let sumR2 = 0;
  let nR = 0;
  for (let i = 0; i < n; i++) {
    if (!used[i]) continue;
    const r = vAB[i]! - h * s[i]! - d[0] * ex[i]! - d[1] * ey[i]! - d[2] * ez[i]!;
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

interface LogFitResult {
  ok: boolean;
  h: number;
  d: [number, number, number];
  cov: Float64Array;
  chi2: number;
  dof: number;
  nUsed: number;
}

const MAX_ITER = 200;
const FREEZE_AT = 8;

/**
 * The Hubble law seen from origin A with log-normal distance errors, by Gauss-Newton on
 * rho_B = ln(D_obs,B / D_pred,B): D_pred is where B must sit on its own line of sight (unit a) for its
 * radial-only velocity w = V_B a - v_A to satisfy the model from A, F(D) = H s(D)^2 - (w - d).(D a - r_A) = 0
 * (the root away from the point of closest approach D_c = a . r_A; the other root is D_c itself in a pure
 * Hubble flow). Seen from us (r_A = 0) this is D_pred = (V_B - d . a)/H, i.e. the log-distance estimator
 * of Watkins & Feldman 2015 (MNRAS 450, 1868), whose errors are Gaussian for log-normal distance errors.
 * Each step is a linear fit by fitHubbleFlow of y = -kappa rho = dH s + dd . e, kappa = F'(D) D / s,
 * with per-row error |kappa| f (f = vrErr / (h0 D_obs), the fractional distance error) and sigmaStar in
 * quadrature; in a pure Hubble flow kappa = H D cos(lambda), so this is the linear fit made exact in ln D.
 */
function logDistanceFit(
  points: RecentrePoints,
  o: { x: number; y: number; z: number; vx: number; vy: number; vz: number },
  used: Uint8Array,
  vAB: Float64Array,
  opts: { h0: number; hStart: number; dStart: [number, number, number]; fitH0: boolean; fitDipole: boolean; sigmaStar: number },
): LogFitResult {
  const { x, y, z, vr, vrErr } = points;
  const n = x.length;
  const fail: LogFitResult = { ok: false, h: NaN, d: [NaN, NaN, NaN], cov: new Float64Array(16), chi2: NaN, dof: 0, nUsed: 0 };
  let h = opts.fitH0 ? opts.hStart : opts.h0;
  const d: [number, number, number] = opts.fitDipole ? [...opts.dStart] : [0, 0, 0];
  if (!(h > 0)) return fail;
  const X = new Float64Array(n);
  const Y = new Float64Array(n);
  const EX = new Float64Array(n);
  const EY = new Float64Array(n);
  const EZ = new Float64Array(n);
  const SG = new Float64Array(n);
  const use = new Uint8Array(n);
  const rA2 = o.x * o.x + o.y * o.y + o.z * o.z;
  const T = new Float64Array(8);
  // After FREEZE_AT steps the set of rows can only shrink (a row whose root comes and goes would
  // otherwise make a limit cycle); after an overshoot steps are damped (tolerances on the raw step).
  const member = new Uint8Array(used);
  let prevDh = 0;
  let damp = 1;
  for (let it = 0; it < MAX_ITER; it++) {
    for (let i = 0; i < n; i++) {
      use[i] = 0;
      if (!member[i] || !Number.isFinite(vAB[i]!)) continue;
      const dObs = norm3(x[i]!, y[i]!, z[i]!);
      if (!lineTerms(x[i]! / dObs, y[i]! / dObs, z[i]! / dObs, dObs, vr[i]!, o, d, h, rA2, T)) continue;
      const e = vrErr ? vrErr[i]! : 0;
      const f = Number.isFinite(e) ? e / (opts.h0 * dObs) : 0;
      Y[i] = T[0]!;
      X[i] = T[1]!;
      EX[i] = T[2]!;
      EY[i] = T[3]!;
      EZ[i] = T[4]!;
      SG[i] = Math.abs(T[5]!) * f;
      use[i] = 1;
    }
    if (it + 1 >= FREEZE_AT) member.set(use);
    const step = fitHubbleFlow(
      { x: X, y: Y, ex: EX, ey: EY, ez: EZ, sigma: SG, use },
      { sigmaStar: opts.sigmaStar, fitDipole: opts.fitDipole, ...(opts.fitH0 ? {} : { fixedSlope: 0 }) },
    );
    if (!step.ok) return fail;
    const raw = opts.fitH0 ? step.slope : 0;
    // each overshoot (the raw step flips sign) halves the step length from then on
    if (it > 0 && raw * prevDh < 0) damp = Math.max(damp * 0.5, 1 / 4096);
    prevDh = raw;
    const dh = damp * raw;
    h += dh;
    if (opts.fitDipole) {
      d[0] += damp * step.dipole[0];
      d[1] += damp * step.dipole[1];
      d[2] += damp * step.dipole[2];
    }
    if (!(h > 0)) return fail;
    // Converged when the raw step is a negligible fraction of the statistical error (or at round-off);
    // a fit still wobbling after MAX_ITER steps by less than 1% of its error is accepted as it stands.
    const rawD = Math.hypot(...step.dipole);
    const errD = Math.max(...step.dipoleErr);
    const within = (k: number) => Math.abs(raw) <= Math.max(1e-12 * h, k * step.slopeErr) && (!opts.fitDipole || rawD <= Math.max(1e-9, k * errD));
    if (within(1e-7) || (it === MAX_ITER - 1 && within(0.01))) return { ok: true, h, d, cov: step.cov, chi2: step.chi2, dof: step.dof, nUsed: step.nUsed };
  }
  return fail;
}

/**
 * The terms of one row for the log fit at line-of-sight velocity V: writes
 * [y = -kappa rho, s_pred, e_pred (3), kappa, D_pred, cos lambda_pred] into out; false when there is no usable root.
 */
function lineTerms(
  ax: number,
  ay: number,
  az: number,
  dObs: number,
  V: number,
  o: { x: number; y: number; z: number; vx: number; vy: number; vz: number },
  d: [number, number, number],
  h: number,
  rA2: number,
  out: Float64Array,
): boolean {
  // w - d, with w = V_B a - v_A
  const wx = V * ax - o.vx - d[0];
  const wy = V * ay - o.vy - d[1];
  const wz = V * az - o.vz - d[2];
  const q = wx * ax + wy * ay + wz * az;
  const dc = ax * o.x + ay * o.y + az * o.z;
  const px = dc * ax - o.x;
  const py = dc * ay - o.y;
  const pz = dc * az - o.z;
  const b2 = Math.max(0, rA2 - dc * dc);
  const c0 = h * b2 - (wx * px + wy * py + wz * pz);
  const disc = q * q - 4 * h * c0;
  if (!(disc > 0) || q === 0) return false;
  const root = Math.sqrt(disc);
  const fD = q > 0 ? root : -root; // F'(D_pred) = 2 H t - q
  const t = (q + fD) / (2 * h);
  const dp = dc + t;
  if (!(dp > 0)) return false;
  const sx = dp * ax - o.x;
  const sy = dp * ay - o.y;
  const sz = dp * az - o.z;
  const sp = Math.sqrt(sx * sx + sy * sy + sz * sz);
  if (!(sp > 0)) return false;
  const kappa = (fD * dp) / sp;
  out[0] = -kappa * Math.log(dObs / dp);
  out[1] = sp;
  out[2] = sx / sp;
  out[3] = sy / sp;
  out[4] = sz / sp;
  out[5] = kappa;
  out[6] = dp;
  out[7] = (dp - dc) / sp;
  return true;
}

function chooseEstimator(e: "auto" | "log" | "linear", vrErr: Float64Array | undefined, used: Uint8Array, sigmaStar: number): "log" | "linear" {
  if (e !== "auto") return e;
  if (!vrErr) return "linear";
  const v: number[] = [];
  for (let i = 0; i < used.length; i++) if (used[i] && Number.isFinite(vrErr[i]!)) v.push(vrErr[i]!);
  if (v.length === 0) return "linear";
  v.sort((a, b) => a - b);
  return v[v.length >> 1]! > sigmaStar ? "log" : "linear";
}
