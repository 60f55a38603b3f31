/**
 * The Hubble law plus a dipole by weighted least squares, with the full covariance: the one kernel
 * that measures H0 both from here (`flow`) and from any other origin (`recentre`).
 *
 * Model: y_i = a x_i + d . e_i + noise, weights w_i = 1 / (sigma_i^2 + sigmaStar^2)
 * (maximum likelihood for Gaussian errors, Kaiser 1988, MNRAS 231, 149; the joint H0 + dipole form of
 * domain reference section 9.2). Normal equations A p = b with A = sum w f f^T, f = (x, ex, ey, ez);
 * p = A^-1 b, Cov(p) = A^-1 (weights taken as true inverse variances; chi2/dof is reported to judge that).
 *
 * `x` is what multiplies the slope: a distance in Mpc (then a is H in km/s/Mpc), or a velocity scale
 * (then a is a fractional scaling, as in `fitFlow`). The dipole may be left out (fitDipole: false) or
 * the slope fixed (fixedSlope). Rows with a NaN in x, y, e or sigma, or use[i] = 0, are left out.
 * Browser-safe; no allocation per row beyond the output residual column.
 */

export interface HubbleFitRows {
  /** Regressor of the slope (Mpc for a Hubble constant). */
  x: Float64Array;
  /** Velocity, km/s. */
  y: Float64Array;
  /** Unit direction of each row for the dipole (any Cartesian frame). */
  ex: Float64Array;
  ey: Float64Array;
  ez: Float64Array;
  /** Per-row error of y, km/s (sigmaStar is added in quadrature). Default 0. */
  sigma?: Float64Array;
  /** 1 = use the row. Default all. */
  use?: Uint8Array;
}

export interface HubbleFitOptions {
  /** Non-linear scatter added in quadrature to every error, km/s. Default 250. */
  sigmaStar?: number;
  /** Fit the dipole. Default true. */
  fitDipole?: boolean;
  /** Hold the slope at this value and fit the dipole alone. */
  fixedSlope?: number;
}

export interface HubbleFit {
  /** Fitted slope (NaN when the fit is singular or has too few rows). */
  slope: number;
  slopeErr: number;
  dipole: [number, number, number];
  dipoleErr: [number, number, number];
  /** Covariance of (slope, dx, dy, dz), row-major 4 x 4; rows of parameters not fitted are 0. */
  cov: Float64Array;
  nUsed: number;
  chi2: number;
  /** nUsed minus the number of fitted parameters. */
  dof: number;
  /** Unweighted rms of the residuals of the used rows, km/s. */
  residualRms: number;
  /** y - model for every row with finite inputs (used or not), NaN otherwise. */
  residual: Float64Array;
  /** sqrt(sigma^2 + sigmaStar^2) of every row, km/s. */
  sigmaTotal: Float64Array;
  ok: boolean;
}

/** Inverts a symmetric positive-definite p x p matrix (row-major) by Gauss-Jordan with partial pivoting. */
export function invertSymmetric(a: Float64Array, p: number): Float64Array | null {
  const m = new Float64Array(a);
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) inv[i * p + i] = 1;
  let scale = 0;
  for (let i = 0; i < p; i++) scale = Math.max(scale, Math.abs(m[i * p + i]!));
  if (!(scale > 0)) return null;
  for (let c = 0; c < p; c++) {
    let piv = c;
    for (let r = c + 1; r < p; r++) if (Math.abs(m[r * p + c]!) > Math.abs(m[piv * p + c]!)) piv = r;
    const pv = m[piv * p + c]!;
    if (!(Math.abs(pv) > 1e-13 * scale)) return null;
    if (piv !== c) {
      for (let k = 0; k < p; k++) {
        let t = m[c * p + k]!;
        m[c * p + k] = m[piv * p + k]!;
        m[piv * p + k] = t;
        t = inv[c * p + k]!;
        inv[c * p + k] = inv[piv * p + k]!;
        inv[piv * p + k] = t;
      }
    }
    for (let k = 0; k < p; k++) {
      m[c * p + k] = m[c * p + k]! / pv;
      inv[c * p + k] = inv[c * p + k]! / pv;
    }
    for (let r = 0; r < p; r++) {
      if (r === c) continue;
      const f = m[r * p + c]!;
      if (f === 0) continue;
      for (let k = 0; k < p; k++) {
        m[r * p + k] = m[r * p + k]! - f * m[c * p + k]!;
        inv[r * p + k] = inv[r * p + k]! - f * inv[c * p + k]!;
      }
    }
  }
  return inv;
}

export function fitHubbleFlow(rows: HubbleFitRows, opts: HubbleFitOptions = {}): HubbleFit {
  const sigmaStar = opts.sigmaStar ?? 250;
  const fitDipole = opts.fitDipole ?? true;
  const fixed = opts.fixedSlope;
  const fitSlope = fixed === undefined;
  const { x, y, ex, ey, ez, sigma, use } = rows;
  const n = y.length;
  const sums = new HubbleSums();
  const sigmaTotal = new Float64Array(n);
  const ss2 = sigmaStar * sigmaStar;
  const okRow = (i: number) => {
    const s = sigma ? sigma[i]! : 0;
    return Number.isFinite(x[i]!) && Number.isFinite(y[i]!) && Number.isFinite(ex[i]! + ey[i]! + ez[i]!) && Number.isFinite(s);
  };
  for (let i = 0; i < n; i++) {
    const s = sigma ? sigma[i]! : 0;
    sigmaTotal[i] = Math.sqrt(s * s + ss2);
    if ((use && !use[i]) || !okRow(i)) continue;
    const v2 = s * s + ss2;
    // No error at all (noise-free checks): equal weights.
    sums.add(x[i]!, y[i]! - (fitSlope ? 0 : fixed * x[i]!), ex[i]!, ey[i]!, ez[i]!, v2 > 0 ? 1 / v2 : 1);
  }
  const nUsed = sums.rows;
  const sol = sums.solve(fitSlope, fitDipole);
  const params = sol.params;
  if (!fitSlope) params[0] = fixed;
  const { cov, ok, nParams: p } = sol;
  const residual = new Float64Array(n);
  let chi2 = 0;
  let sumR2 = 0;
  for (let i = 0; i < n; i++) {
    if (!okRow(i)) {
      residual[i] = NaN;
      continue;
    }
    const r = y[i]! - params[0]! * x[i]! - params[1]! * ex[i]! - params[2]! * ey[i]! - params[3]! * ez[i]!;
    residual[i] = r;
    if (use && !use[i]) continue;
    sumR2 += r * r;
    if (sigmaTotal[i]! > 0) chi2 += (r * r) / (sigmaTotal[i]! * sigmaTotal[i]!);
  }
  const err = (k: number) => (ok ? Math.sqrt(cov[k * 4 + k]!) : NaN);
  return {
    slope: params[0]!,
    slopeErr: fitSlope ? err(0) : 0,
    dipole: [params[1]!, params[2]!, params[3]!],
    dipoleErr: fitDipole ? [err(1), err(2), err(3)] : [0, 0, 0],
    cov,
    nUsed,
    chi2: ok ? chi2 : NaN,
    dof: nUsed - p,
    residualRms: nUsed > 0 && ok ? Math.sqrt(sumR2 / nUsed) : NaN,
    residual,
    sigmaTotal,
    ok,
  };
}

/**
 * Running sums of the normal equations of y = a x + d . e with weights w (A = sum w f f^T, b = sum w f y,
 * f = (x, ex, ey, ez)), for kernels that make their rows on the fly; fitHubbleFlow is built on it.
 * No allocation per row.
 */
export class HubbleSums {
  /** A, row-major 4 x 4 (upper triangle filled by add, mirrored by solve). */
  readonly A = new Float64Array(16);
  readonly b = new Float64Array(4);
  /** sum w y^2: with b and A, chi2 of any parameters without a second pass. */
  wyy = 0;
  rows = 0;

  reset(): void {
    this.A.fill(0);
    this.b.fill(0);
    this.wyy = 0;
    this.rows = 0;
  }

  add(x: number, y: number, ex: number, ey: number, ez: number, w: number): void {
    const A = this.A;
    const b = this.b;
    const wx = w * x;
    const wex = w * ex;
    const wey = w * ey;
    const wez = w * ez;
    b[0] = b[0]! + wx * y;
    b[1] = b[1]! + wex * y;
    b[2] = b[2]! + wey * y;
    b[3] = b[3]! + wez * y;
    A[0] = A[0]! + wx * x;
    A[1] = A[1]! + wx * ex;
    A[2] = A[2]! + wx * ey;
    A[3] = A[3]! + wx * ez;
    A[5] = A[5]! + wex * ex;
    A[6] = A[6]! + wex * ey;
    A[7] = A[7]! + wex * ez;
    A[10] = A[10]! + wey * ey;
    A[11] = A[11]! + wey * ez;
    A[15] = A[15]! + wez * ez;
    this.wyy += w * y * y;
    this.rows++;
  }

  /**
   * Solves for the fitted parameters (slot 0 = slope, 1..3 = dipole; slots not fitted are 0 in params
   * and in cov). chi2 = sum w (y - f . p)^2 of the solution, from the sums.
   */
  solve(fitSlope: boolean, fitDipole: boolean): { params: number[]; cov: Float64Array; ok: boolean; nParams: number; chi2: number } {
    const idx: number[] = [];
    if (fitSlope) idx.push(0);
    if (fitDipole) idx.push(1, 2, 3);
    const p = idx.length;
    const full = this.A;
    const A = new Float64Array(p * p);
    for (let a = 0; a < p; a++) for (let c = 0; c < p; c++) {
      const i = Math.min(idx[a]!, idx[c]!);
      const j = Math.max(idx[a]!, idx[c]!);
      A[a * p + c] = full[i * 4 + j]!;
    }
    const cov = new Float64Array(16);
    const params = [0, 0, 0, 0];
    let ok = true;
    let chi2 = this.wyy;
    if (p > 0) {
      const inv = this.rows >= p ? invertSymmetric(A, p) : null;
      if (!inv) {
        ok = false;
        for (const k of idx) params[k] = NaN;
        chi2 = NaN;
      } else {
        for (let a = 0; a < p; a++) {
          let s = 0;
          for (let c = 0; c < p; c++) s += inv[a * p + c]! * this.b[idx[c]!]!;
          params[idx[a]!] = s;
          for (let c = 0; c < p; c++) cov[idx[a]! * 4 + idx[c]!] = inv[a * p + c]!;
        }
        // chi2 = wyy - 2 p.b + p^T A p = wyy - p.b at the solution of A p = b
        for (let a = 0; a < p; a++) chi2 -= params[idx[a]!]! * this.b[idx[a]!]!;
      }
    }
    return { params, cov, ok, nParams: p, chi2 };
  }
}
