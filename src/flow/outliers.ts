/**
 * Outlier peculiar velocities, flagged and never deleted (domain reference section 7). Browser-safe.
 *
 * The model is the fitted flow seen from us (fitFlow: H0 scaling + bulk flow); each row's normalised
 * residual is r_i = res_i / sqrt(sigma_i^2 + sigmaStar^2), res_i = q ln(q / (H D)) (the Gaussian
 * log-distance form of fitFlow, Watkins & Feldman 2015).
 * - "clip" (default): iterative k-sigma clipping: fit on the inliers, flag every row with |r| > k, refit
 *   on the rest, until the flagged set stops changing (a row clipped early comes back when a later fit
 *   accepts it). k = 3.5 by default (3-3.5 is common practice in distance-indicator work).
 * - "mad": the same iteration, but a row is flagged when its robust z, 0.6745 (r - median r) / MAD
 *   (Iglewicz & Hoaglin 1993), exceeds k: the scale comes from the data, not from the stated errors.
 * Rows that cannot be scored (no distance, no redshift, q <= 0) are not flagged; their code says so.
 */
import { fitFlow, type FlowFit, type FlowOptions, type FlowRows } from "./bulkflow.js";

export type OutlierMethod = "clip" | "mad";

/** Per-row status codes. */
export const OUTLIER_NONE = 0;
export const OUTLIER_CLIPPED = 1;
export const OUTLIER_UNSCORED = 2;
/** Not in `use` (e.g. an invalid row): scored against the model when possible, never flagged. */
export const OUTLIER_NOT_USED = 3;

export interface OutlierOptions extends FlowOptions {
  method?: OutlierMethod;
  /** Default 3.5. */
  k?: number;
  /** Default 50. */
  maxIterations?: number;
}

export interface OutlierResult {
  /** 1 = outlier. */
  outlier: Uint8Array;
  /** Signed normalised residual (clip) or robust z (mad) against the final model; NaN when unscored. */
  score: Float64Array;
  /** OUTLIER_* code of each row. */
  code: Uint8Array;
  /** Iteration (1-based) at which each outlier was last flagged, 0 for none. */
  iteration: Int32Array;
  /** The final fit, on the inliers. */
  fit: FlowFit;
  iterations: number;
  converged: boolean;
  nOutliers: number;
  nUnscored: number;
  method: OutlierMethod;
  k: number;
  sigmaStar: number;
  /** MAD method: the final median and MAD of the normalised residuals. */
  median: number;
  mad: number;
}

/** Median of the finite values of a (copy sorted; NaN when none). */
export function median(a: ArrayLike<number>): number {
  const v: number[] = [];
  for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]!)) v.push(a[i]!);
  if (v.length === 0) return NaN;
  v.sort((x, y) => x - y);
  const m = v.length >> 1;
  return v.length % 2 ? v[m]! : 0.5 * (v[m - 1]! + v[m]!);
}

/** Median absolute deviation from the median (unscaled; 1.4826 MAD estimates sigma for Gaussian data). */
export function medianAbsoluteDeviation(a: ArrayLike<number>, med = median(a)): number {
  const d = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) d[i] = Math.abs(a[i]! - med);
  return median(d);
}

/** Robust z of Iglewicz & Hoaglin 1993: 0.6745 (x - median) / MAD; NaN when MAD = 0. */
export function robustZ(x: number, med: number, mad: number): number {
  return mad > 0 ? (0.6745 * (x - med)) / mad : NaN;
}

export function flagOutliers(rows: FlowRows, opts: OutlierOptions = {}): OutlierResult {
  const method = opts.method ?? "clip";
  const k = opts.k ?? 3.5;
  const sigmaStar = opts.sigmaStar ?? 250;
  const maxIt = opts.maxIterations ?? 50;
  const n = rows.lDeg.length;
  const base = rows.use ?? new Uint8Array(n).fill(1);
  const inlier = new Uint8Array(base);
  const iteration = new Int32Array(n);
  const norm = new Float64Array(n);
  const score = new Float64Array(n);
  let fit = fitFlow({ ...rows, use: inlier }, { ...opts, sigmaStar });
  let it = 0;
  let converged = false;
  let med = NaN;
  let mad = NaN;
  while (it < maxIt) {
    it++;
    for (let i = 0; i < n; i++) norm[i] = fit.residual[i]! / fit.sigmaTotal[i]!;
    if (method === "mad") {
      const sel: number[] = [];
      for (let i = 0; i < n; i++) if (base[i] && Number.isFinite(norm[i]!)) sel.push(norm[i]!);
      med = median(sel);
      mad = medianAbsoluteDeviation(sel, med);
    }
    let changed = false;
    for (let i = 0; i < n; i++) {
      const sc = method === "mad" ? robustZ(norm[i]!, med, mad) : norm[i]!;
      score[i] = sc;
      if (!base[i]) continue;
      const out = Number.isFinite(sc) && Math.abs(sc) > k;
      const now = out ? 0 : 1;
      if (now !== inlier[i]) {
        changed = true;
        inlier[i] = now;
      }
      if (out) iteration[i] = it;
    }
    if (!changed) {
      converged = true;
      break;
    }
    fit = fitFlow({ ...rows, use: inlier }, { ...opts, sigmaStar });
    if (!fit.ok) break;
  }
  const outlier = new Uint8Array(n);
  const code = new Uint8Array(n);
  let nOut = 0;
  let nUn = 0;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(score[i]!)) {
      code[i] = base[i] ? OUTLIER_UNSCORED : OUTLIER_NOT_USED;
      if (base[i]) nUn++;
      iteration[i] = 0;
      continue;
    }
    if (!base[i]) {
      code[i] = OUTLIER_NOT_USED;
      iteration[i] = 0;
      continue;
    }
    if (!inlier[i]) {
      outlier[i] = 1;
      code[i] = OUTLIER_CLIPPED;
      nOut++;
    } else iteration[i] = 0;
  }
  return { outlier, score, code, iteration, fit, iterations: it, converged, nOutliers: nOut, nUnscored: nUn, method, k, sigmaStar, median: med, mad };
}
