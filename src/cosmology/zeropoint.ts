/**
 * Zero points of distance catalogues and the combination of their distance moduli.
 *
 * Offset of catalogue B against a reference A from the galaxies both measured (mu finite in both,
 * errors finite and positive): d_i = mu_B,i - mu_A,i with sigma_i^2 = sigma_A,i^2 + sigma_B,i^2,
 *   offset = sum(w d)/sum(w), w = 1/sigma^2, its error 1/sqrt(sum w) (formal), chi2/dof of the d_i
 *   about the offset, the weighted scatter, and the median of d (weighted least squares; common
 *   practice). Robust estimate: iterative kappa-sigma clipping of the normalised residuals
 *   (d_i - centre)/sigma_i from the median of d, the kept ones refitted until the set is stable
 *   (kappa = 3 by default); NaN when no galaxy lies within kappa sigma of the median.
 * Applying the offset (combine.ts applies the clipped one) puts B on A's scale: mu_B' = mu_B - offset. The offset's own error is
 * common to every galaxy of B (a correlated systematic): it is reported, not added per galaxy.
 *
 * Combination per galaxy: inverse-variance weighted mean of the available moduli,
 *   mu = sum(w mu)/sum(w), sigma_mu = 1/sqrt(sum w), n_dist = number used,
 *   chi2 = sum(w (mu_k - mu)^2) (n_dist - 1 degrees of freedom; NaN for one measurement).
 * A modulus without a usable error is used only when no modulus of that galaxy has one (then the
 * plain mean, with NaN error).
 */

export interface ZeroPointOptions {
  /** Clipping threshold on |residual|/sigma. */
  kappa?: number;
  maxIterations?: number;
}

/** The statistics of one zero-point offset (also carried per catalogue by the combine step). */
export interface ZeroPointStats {
  /** Weighted mean of mu_B - mu_A over the shared galaxies (mag); NaN if none shared. */
  offsetMag: number;
  offsetErrMag: number;
  nShared: number;
  /** chi^2 per degree of freedom of the differences about the offset (NaN for n < 2). */
  chi2Dof: number;
  /** Weighted standard deviation of the differences (mag). */
  scatterMag: number;
  medianMag: number;
  /** The kappa-sigma clipped weighted mean, its error and how many were rejected. */
  clippedOffsetMag: number;
  clippedOffsetErrMag: number;
  nRejected: number;
  kappa: number;
}

export interface ZeroPointOffset extends ZeroPointStats {
  /** Row indices of the shared galaxies (Int32Array) and 1 where clipping rejected them. */
  shared: Int32Array;
  rejected: Uint8Array;
}

function usable(mu: number, err: number): boolean {
  return Number.isFinite(mu) && Number.isFinite(err) && err > 0;
}

function weightedMean(d: Float64Array, w: Float64Array, keep: Uint8Array): [number, number, number] {
  let sw = 0;
  let swd = 0;
  let n = 0;
  for (let i = 0; i < d.length; i++) {
    if (!keep[i]) continue;
    sw += w[i]!;
    swd += w[i]! * d[i]!;
    n++;
  }
  return n === 0 ? [NaN, NaN, 0] : [swd / sw, 1 / Math.sqrt(sw), n];
}

function median(xs: Float64Array): number {
  if (xs.length === 0) return NaN;
  const s = Float64Array.from(xs).sort();
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

/** The zero-point offset of B relative to A (mu_B - mu_A) from the rows both measured. */
export function zeroPointOffset(
  muA: ArrayLike<number>,
  errA: ArrayLike<number>,
  muB: ArrayLike<number>,
  errB: ArrayLike<number>,
  options: ZeroPointOptions = {},
): ZeroPointOffset {
  const kappa = options.kappa ?? 3;
  const maxIterations = options.maxIterations ?? 20;
  const n = muA.length;
  const rows: number[] = [];
  for (let i = 0; i < n; i++) if (usable(muA[i]!, errA[i]!) && usable(muB[i]!, errB[i]!)) rows.push(i);
  const m = rows.length;
  const shared = Int32Array.from(rows);
  const d = new Float64Array(m);
  const w = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const i = rows[k]!;
    d[k] = muB[i]! - muA[i]!;
    w[k] = 1 / (errA[i]! ** 2 + errB[i]! ** 2);
  }
  const all = new Uint8Array(m).fill(1);
  const [off, offErr] = weightedMean(d, w, all);
  let chi2 = 0;
  let sw = 0;
  for (let k = 0; k < m; k++) {
    chi2 += w[k]! * (d[k]! - off) ** 2;
    sw += w[k]!;
  }
  // Clipping: reject |d - centre|/sigma > kappa, refit the kept ones, until stable. The first centre
  // is the median, not the mean: one gross blunder (a typo of 30 mag) drags the mean so far that
  // every galaxy would sit outside kappa sigma of it.
  const keep = new Uint8Array(m).fill(1);
  let [cOff, cErr] = [median(d), offErr];
  for (let it = 0; it < maxIterations && m > 0; it++) {
    let changed = false;
    for (let k = 0; k < m; k++) {
      const out = Math.abs(d[k]! - cOff) * Math.sqrt(w[k]!) > kappa;
      if (keep[k] && out) {
        keep[k] = 0;
        changed = true;
      } else if (!keep[k] && !out) {
        keep[k] = 1;
        changed = true;
      }
    }
    if (!changed && it > 0) break;
    const r = weightedMean(d, w, keep);
    if (r[2] === 0) {
      // nothing within kappa sigma of the median: no clipped offset
      [cOff, cErr] = [NaN, NaN];
      break;
    }
    [cOff, cErr] = r;
  }
  const rejected = new Uint8Array(m);
  let nRejected = 0;
  for (let k = 0; k < m; k++) if (!keep[k]) {
    rejected[k] = 1;
    nRejected++;
  }
  return {
    offsetMag: off,
    offsetErrMag: offErr,
    nShared: m,
    chi2Dof: m > 1 ? chi2 / (m - 1) : NaN,
    scatterMag: m > 1 ? Math.sqrt(((chi2 / sw) * m) / (m - 1)) : NaN,
    medianMag: median(d),
    clippedOffsetMag: cOff,
    clippedOffsetErrMag: cErr,
    nRejected,
    kappa,
    shared,
    rejected,
  };
}

export interface CombinedModuli {
  muMag: Float64Array;
  muErrMag: Float64Array;
  /** Number of moduli combined (0: none, mu NaN). */
  nDist: Int32Array;
  /** chi^2 of the moduli about the combined value (n_dist - 1 d.o.f.; NaN below 2). */
  chi2: Float64Array;
}

/**
 * Combines k modulus columns row by row. offsetsMag[k] is subtracted from column k first (0 or
 * NaN: none). errs[k] may be undefined (no error column).
 */
export function combineModuli(mus: ArrayLike<number>[], errs: (ArrayLike<number> | undefined)[], offsetsMag?: number[]): CombinedModuli {
  const n = mus[0]?.length ?? 0;
  const out: CombinedModuli = { muMag: new Float64Array(n), muErrMag: new Float64Array(n), nDist: new Int32Array(n), chi2: new Float64Array(n) };
  const k = mus.length;
  const val = new Float64Array(k);
  const wt = new Float64Array(k);
  for (let i = 0; i < n; i++) {
    let nErr = 0;
    let nAny = 0;
    for (let j = 0; j < k; j++) {
      const o = offsetsMag?.[j];
      const m = mus[j]![i]! - (o !== undefined && Number.isFinite(o) ? o : 0);
      const e = errs[j] ? errs[j]![i]! : NaN;
      val[j] = m;
      wt[j] = Number.isFinite(m) ? (usable(m, e) ? 1 / (e * e) : 0) : -1;
      if (wt[j]! > 0) nErr++;
      if (wt[j]! >= 0) nAny++;
    }
    let sw = 0;
    let swm = 0;
    let used = 0;
    if (nErr > 0) {
      for (let j = 0; j < k; j++) if (wt[j]! > 0) {
        sw += wt[j]!;
        swm += wt[j]! * val[j]!;
        used++;
      }
      const mu = swm / sw;
      let chi2 = 0;
      for (let j = 0; j < k; j++) if (wt[j]! > 0) chi2 += wt[j]! * (val[j]! - mu) ** 2;
      out.muMag[i] = mu;
      out.muErrMag[i] = 1 / Math.sqrt(sw);
      out.chi2[i] = used > 1 ? chi2 : NaN;
    } else if (nAny > 0) {
      for (let j = 0; j < k; j++) if (wt[j] === 0) {
        swm += val[j]!;
        used++;
      }
      out.muMag[i] = swm / used;
      out.muErrMag[i] = NaN;
      out.chi2[i] = NaN;
    } else {
      out.muMag[i] = NaN;
      out.muErrMag[i] = NaN;
      out.chi2[i] = NaN;
    }
    out.nDist[i] = used;
  }
  return out;
}

export interface NetworkZeroPoints {
  /** Offset of each catalogue against the reference (reference 0); NaN when not linked to it. */
  offsetsMag: Float64Array;
  offsetsErrMag: Float64Array;
  /** Covariance of the offsets, k x k row-major (reference row and column 0; NaN when not linked). */
  covariance: Float64Array;
  /** 1 where the catalogue is linked to the reference through shared galaxies (directly or not). */
  linked: Uint8Array;
  /** Galaxies with two or more usable moduli (the ones that constrain the offsets). */
  nGalaxies: number;
  /** chi^2 of all moduli about their galaxies' means after the offsets, and its degrees of freedom. */
  chi2: number;
  dof: number;
}

/**
 * All offsets at once from every galaxy measured more than once (a network solution): the model
 * mu_kg = m_g + delta_k + noise, delta_ref = 0, with each galaxy's m_g profiled out, is linear in
 * delta; weighted least squares gives, over galaxies g and their catalogues j, l (W_g = sum w):
 *   A_jl = sum_g (w_j [j = l] - w_j w_l / W_g),  b_j = sum_g (w_j mu_j - w_j sum_l w_l mu_l / W_g),
 *   delta = A^-1 b, Cov = A^-1 (common practice for zero-point ties; with two catalogues it is
 *   exactly the weighted mean of the differences of zeroPointOffset). A catalogue that shares
 *   galaxies only with another non-reference catalogue is still tied to the reference through it.
 */
export function zeroPointNetwork(mus: ArrayLike<number>[], errs: ArrayLike<number>[], reference: number): NetworkZeroPoints {
  const k = mus.length;
  const n = mus[0]?.length ?? 0;
  const A = new Float64Array(k * k);
  const b = new Float64Array(k);
  const w = new Float64Array(k);
  const m = new Float64Array(k);
  // Links between catalogues, for connectivity (union-find on k items).
  const parent = Int32Array.from({ length: k }, (_, i) => i);
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]!]!;
      x = parent[x]!;
    }
    return x;
  };
  let nGalaxies = 0;
  let nMeas = 0;
  for (let g = 0; g < n; g++) {
    let W = 0;
    let Wm = 0;
    let cnt = 0;
    let first = -1;
    for (let j = 0; j < k; j++) {
      const mu = mus[j]![g]!;
      const e = errs[j]![g]!;
      if (usable(mu, e)) {
        w[j] = 1 / (e * e);
        m[j] = mu;
        W += w[j]!;
        Wm += w[j]! * mu;
        cnt++;
        if (first < 0) first = j;
        else parent[find(j)] = find(first);
      } else w[j] = 0;
    }
    if (cnt < 2) continue;
    nGalaxies++;
    nMeas += cnt;
    for (let j = 0; j < k; j++) {
      if (w[j] === 0) continue;
      b[j]! += w[j]! * m[j]! - (w[j]! * Wm) / W;
      for (let l = 0; l < k; l++) if (w[l] !== 0) A[j * k + l]! += (j === l ? w[j]! : 0) - (w[j]! * w[l]!) / W;
    }
  }
  const linked = new Uint8Array(k);
  for (let j = 0; j < k; j++) linked[j] = find(j) === find(reference) ? 1 : 0;
  // Unknowns: linked catalogues other than the reference.
  const idx: number[] = [];
  for (let j = 0; j < k; j++) if (linked[j] && j !== reference) idx.push(j);
  const p = idx.length;
  const M = new Float64Array(p * p);
  const rhs = new Float64Array(p);
  for (let a = 0; a < p; a++) {
    rhs[a] = b[idx[a]!]!;
    for (let c = 0; c < p; c++) M[a * p + c] = A[idx[a]! * k + idx[c]!]!;
  }
  const inv = invertSymmetric(M, p);
  const offsetsMag = new Float64Array(k).fill(NaN);
  const offsetsErrMag = new Float64Array(k).fill(NaN);
  const covariance = new Float64Array(k * k).fill(NaN);
  offsetsMag[reference] = 0;
  offsetsErrMag[reference] = 0;
  for (let j = 0; j < k; j++) if (linked[j]) {
    covariance[reference * k + j] = 0;
    covariance[j * k + reference] = 0;
  }
  for (let a = 0; a < p; a++) {
    let s = 0;
    for (let c = 0; c < p; c++) s += inv[a * p + c]! * rhs[c]!;
    offsetsMag[idx[a]!] = s;
    offsetsErrMag[idx[a]!] = Math.sqrt(inv[a * p + a]!);
    for (let c = 0; c < p; c++) covariance[idx[a]! * k + idx[c]!] = inv[a * p + c]!;
  }
  // chi^2 of the moduli about their galaxies' weighted means once the offsets are removed.
  let chi2 = 0;
  for (let g = 0; g < n; g++) {
    let W = 0;
    let Wm = 0;
    let cnt = 0;
    for (let j = 0; j < k; j++) {
      const mu = mus[j]![g]!;
      const e = errs[j]![g]!;
      const o = offsetsMag[j]!;
      if (usable(mu, e) && Number.isFinite(o)) {
        w[j] = 1 / (e * e);
        m[j] = mu - o;
        W += w[j]!;
        Wm += w[j]! * m[j]!;
        cnt++;
      } else w[j] = 0;
    }
    if (cnt < 2) continue;
    const mean = Wm / W;
    for (let j = 0; j < k; j++) if (w[j] !== 0) chi2 += w[j]! * (m[j]! - mean) ** 2;
  }
  return { offsetsMag, offsetsErrMag, covariance, linked, nGalaxies, chi2, dof: nMeas - nGalaxies - p };
}

/** Inverse of a small symmetric positive-definite matrix by Gauss-Jordan with partial pivoting (NaN if singular). */
function invertSymmetric(M: Float64Array, p: number): Float64Array {
  const a = Float64Array.from(M);
  const inv = new Float64Array(p * p);
  for (let i = 0; i < p; i++) inv[i * p + i] = 1;
  for (let col = 0; col < p; col++) {
    let piv = col;
    for (let r = col + 1; r < p; r++) if (Math.abs(a[r * p + col]!) > Math.abs(a[piv * p + col]!)) piv = r;
    const d = a[piv * p + col]!;
    if (!(Math.abs(d) > 0)) return new Float64Array(p * p).fill(NaN);
    if (piv !== col) {
      for (let c = 0; c < p; c++) {
        [a[col * p + c], a[piv * p + c]] = [a[piv * p + c]!, a[col * p + c]!];
        [inv[col * p + c], inv[piv * p + c]] = [inv[piv * p + c]!, inv[col * p + c]!];
      }
    }
    for (let c = 0; c < p; c++) {
      a[col * p + c]! /= d;
      inv[col * p + c]! /= d;
    }
    for (let r = 0; r < p; r++) {
      if (r === col) continue;
      const f = a[r * p + col]!;
      if (f === 0) continue;
      for (let c = 0; c < p; c++) {
        a[r * p + c]! -= f * a[col * p + c]!;
        inv[r * p + c]! -= f * inv[col * p + c]!;
      }
    }
  }
  return inv;
}
