/**
 * H0 and the bulk flow from here: the monopole (H0 scaling) and dipole (bulk flow) of the velocity field
 * seen from us, by the same kernel that measures them from any other origin (recentre with the origin at
 * us, which is fitHubbleFlow iterated in ln D). Browser-safe.
 *
 * Each row: Galactic position r = D n (D = measured comoving distance), line-of-sight velocity
 * V = H_ref D + u with u = c (z_obs - z_cos)/(1 + z_cos) the exact peculiar velocity at H_ref (domain
 * reference section 10.1(a), Davis & Scrimgeour 2014). The fit is V = H D_pred + B . n with Gaussian
 * errors in ln D (Watkins & Feldman 2015 form), weights 1/(sigma^2 + sigmaStar^2), sigma = H D f,
 * f = the fractional distance error (Kaiser 1988 maximum likelihood for the dipole). H_ref is then set to the
 * fitted H and the fit repeated until H changes by less than 1e-6 km/s/Mpc, so the result does not depend
 * on the starting H_ref.
 * The distance cut (maxDistMpc) is made on the redshift distance D_C(z_obs), never on the measured distance
 * (a cut on a noisy distance biases the fit).
 */
import { C_KMS } from "../cosmology/constants.js";
import { comovingDistanceMpc, redshiftsAtDistances, type Cosmology } from "../cosmology/distances.js";
import { rotation, rotate } from "../sky/frames.js";
import { lonLatOf } from "../sky/vectors.js";
import { DEG } from "../sky/angles.js";
import { recentre } from "./recentre.js";

export interface FlowRows {
  /** Galactic longitude and latitude, degrees. */
  lDeg: Float64Array;
  bDeg: Float64Array;
  /** Measured comoving distance, Mpc. */
  distCMpc: Float64Array;
  /** Fractional distance error sigma_D / D (e.g. dist_err_mpc / dist_mpc). */
  distFracErr: Float64Array;
  /** Observed CMB-frame redshift, c z in km/s. */
  czCmbKmS: Float64Array;
  /** 1 = use the row (e.g. valid and not an outlier). Default all. */
  use?: Uint8Array;
}

export interface FlowOptions {
  /** Starting H0 and the cosmology for z_cos; the fit iterates H0 away from it. Default 70, 0.3. */
  cosmology?: Cosmology;
  /** Default 250 km/s. */
  sigmaStar?: number;
  /** Only rows with redshift distance D_C(z_obs) <= this, Mpc. */
  maxDistMpc?: number;
  /** Fit the bulk flow (default true); false fits H0 alone. */
  fitDipole?: boolean;
}

export interface FlowFit {
  ok: boolean;
  h0: number;
  h0Err: number;
  /** Bulk flow, Galactic Cartesian km/s. */
  bulkGal: [number, number, number];
  /** Covariance of the bulk flow, row-major 3 x 3, (km/s)^2. */
  bulkCov: Float64Array;
  /** Covariance of (H0, vx, vy, vz), row-major 4 x 4. */
  cov: Float64Array;
  amplitude: number;
  /** First-order error of |B| from the covariance (|B| is biased high when it is not well above its error). */
  amplitudeErr: number;
  lDeg: number;
  bDeg: number;
  sglDeg: number;
  sgbDeg: number;
  nUsed: number;
  chi2: number;
  dof: number;
  /** Unweighted rms of the velocity residuals, km/s. */
  residualRms: number;
  /** Rows that entered the fit. */
  used: Uint8Array;
  /**
   * Model residual in ln D scaled to km/s, q ln(q / (H D)) with q = V - B . n (the Watkins & Feldman 2015
   * form: Gaussian for log-normal distance errors); NaN where unusable (D <= 0, q <= 0, NaN input).
   */
  residual: Float64Array;
  /** sqrt((q f)^2 + sigmaStar^2), km/s. */
  sigmaTotal: Float64Array;
  /** Positions and velocities used (Galactic Cartesian), for callers that want to re-centre. */
  points: { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr: Float64Array };
  iterations: number;
}

/** Galactic Cartesian positions D n and line-of-sight velocities H D + u (exact u at cosmology c). */
export function flowPoints(rows: FlowRows, c: Cosmology): { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr: Float64Array } {
  const n = rows.lDeg.length;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const z = new Float64Array(n);
  const vr = new Float64Array(n);
  const vrErr = new Float64Array(n);
  const zCosOf = redshiftsAtDistances(rows.distCMpc, "comoving", c);
  for (let i = 0; i < n; i++) {
    const l = rows.lDeg[i]! * DEG;
    const b = rows.bDeg[i]! * DEG;
    const d = rows.distCMpc[i]!;
    const cb = Math.cos(b);
    x[i] = d * cb * Math.cos(l);
    y[i] = d * cb * Math.sin(l);
    z[i] = d * Math.sin(b);
    const zObs = rows.czCmbKmS[i]! / C_KMS;
    const zCos = d > 0 ? zCosOf[i]! : NaN;
    vr[i] = c.h0 * d + (C_KMS * (zObs - zCos)) / (1 + zCos);
    vrErr[i] = c.h0 * d * rows.distFracErr[i]!;
  }
  return { x, y, z, vr, vrErr };
}

/** The measured distances of the rows in `use` (NaN elsewhere): a group's members with a trusted distance place it. */
export function trustedDistances(rows: FlowRows): Float64Array {
  const use = rows.use;
  return use ? Float64Array.from(rows.distCMpc, (d, i) => (use[i] ? d : NaN)) : Float64Array.from(rows.distCMpc);
}

/**
 * Why row i of `rows` cannot enter the flow fit, or "" when it can: the one test fitFlow applies
 * (callers name the reason of a row left out with it). The names are the flow columns' defaults.
 */
export function flowRowProblem(rows: FlowRows, i: number, opts: Pick<FlowOptions, "maxDistMpc" | "cosmology"> = {}): string {
  if (rows.use && !rows.use[i]) return "left out (invalid, or an outlier)";
  if (!Number.isFinite(rows.lDeg[i]! + rows.bDeg[i]!)) return "no usable position";
  if (!Number.isFinite(rows.czCmbKmS[i]!)) return "no usable redshift (cz_cmb)";
  if (!(rows.distCMpc[i]! > 0)) return "no usable distance (dist_c_mpc)";
  if (!(rows.distFracErr[i]! >= 0)) return "no usable distance error (dist_c_err_mpc)";
  const maxD = opts.maxDistMpc ?? Infinity;
  if (maxD < Infinity && !(comovingDistanceMpc(Math.max(0, rows.czCmbKmS[i]!) / C_KMS, opts.cosmology ?? { h0: 70, omegaM: 0.3 }) <= maxD)) return `beyond the distance cut (D_C(z_obs) > ${maxD} Mpc)`;
  return "";
}

/** Why row i is not in a fit: flowRowProblem, or, for a row it passed, that the log-distance residual had no value. */
export function whyNotFitted(rows: FlowRows, i: number, opts: Pick<FlowOptions, "maxDistMpc" | "cosmology"> = {}): string {
  return flowRowProblem(rows, i, opts) || "no log-distance residual (cz_cmb <= 0)";
}

export function fitFlow(rows: FlowRows, opts: FlowOptions = {}): FlowFit {
  const base = opts.cosmology ?? { h0: 70, omegaM: 0.3 };
  const sigmaStar = opts.sigmaStar ?? 250;
  const fitDipole = opts.fitDipole ?? true;
  const n = rows.lDeg.length;
  const use = new Uint8Array(n);
  const test: Pick<FlowOptions, "maxDistMpc" | "cosmology"> = { cosmology: base };
  if (opts.maxDistMpc !== undefined) test.maxDistMpc = opts.maxDistMpc;
  for (let i = 0; i < n; i++) use[i] = flowRowProblem(rows, i, test) === "" ? 1 : 0;
  let h = base.h0;
  let pts = flowPoints(rows, base);
  let r = recentre({ ...pts, use }, { x: 0, y: 0, z: 0, vr: 0 }, { h0: h, sigmaStar, fitDipole });
  let iterations = 1;
  while (iterations < 20 && Number.isFinite(r.h0There) && Math.abs(r.h0There - h) > 1e-6) {
    h = r.h0There;
    pts = flowPoints(rows, { h0: h, omegaM: base.omegaM });
    r = recentre({ ...pts, use }, { x: 0, y: 0, z: 0, vr: 0 }, { h0: h, sigmaStar, fitDipole });
    iterations++;
  }
  const B: [number, number, number] = r.dipole;
  const bulkCov = new Float64Array(9);
  for (let a = 0; a < 3; a++) for (let c = 0; c < 3; c++) bulkCov[a * 3 + c] = r.cov[(a + 1) * 4 + (c + 1)]!;
  const amp = Math.hypot(...B);
  let q = 0;
  for (let a = 0; a < 3; a++) for (let c = 0; c < 3; c++) q += B[a]! * bulkCov[a * 3 + c]! * B[c]!;
  const [l, b] = amp > 0 ? lonLatOf(...B) : [NaN, NaN];
  const [sgl, sgb] = amp > 0 ? lonLatOf(...rotate(rotation("galactic", "supergalactic"), ...B)) : [NaN, NaN];
  const residual = new Float64Array(n);
  const sigmaTotal = new Float64Array(n);
  const hFit = r.h0There;
  for (let i = 0; i < n; i++) {
    const d = rows.distCMpc[i]!;
    const [res, sig] = logResidual(pts.vr[i]!, d, (B[0] * pts.x[i]! + B[1] * pts.y[i]! + B[2] * pts.z[i]!) / d, hFit, rows.distFracErr[i]!, sigmaStar);
    residual[i] = res;
    sigmaTotal[i] = sig;
  }
  const ok = Number.isFinite(hFit) && r.nUsed > (fitDipole ? 4 : 1);
  return {
    ok,
    h0: hFit,
    h0Err: r.h0ThereErr,
    bulkGal: B,
    bulkCov,
    cov: r.cov,
    amplitude: amp,
    amplitudeErr: amp > 0 ? Math.sqrt(q) / amp : NaN,
    lDeg: l,
    bDeg: b,
    sglDeg: sgl,
    sgbDeg: sgb,
    nUsed: r.nUsed,
    chi2: r.chi2,
    dof: r.dof,
    residualRms: r.residualRmsThere,
    // offered to the fit and fitted: a row whose log-distance residual has no value (cz <= 0) did not enter it
    used: Uint8Array.from(r.used, (u, i) => (u && Number.isFinite(residual[i]!) ? 1 : 0)),
    residual,
    sigmaTotal,
    points: pts,
    iterations,
  };
}

/**
 * One row's residual from the model (H, B . n) seen from us, as used by the fit and by outlier flagging:
 * [q ln(q / (H D)), sqrt((q f)^2 + sigmaStar^2)] with q = V - B . n. NaN residual where q <= 0 or D <= 0.
 */
export function logResidual(vrKmS: number, distMpc: number, bulkRadialKmS: number, h0: number, fracErr: number, sigmaStar: number): [number, number] {
  const q = vrKmS - bulkRadialKmS;
  const e = Number.isFinite(fracErr) ? q * fracErr : NaN;
  const sig = Math.sqrt(e * e + sigmaStar * sigmaStar);
  if (!(q > 0) || !(distMpc > 0) || !(h0 > 0)) return [NaN, sig];
  return [q * Math.log(q / (h0 * distMpc)), sig];
}
