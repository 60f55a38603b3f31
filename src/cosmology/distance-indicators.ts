/**
 * Measured distances from what distance-indicator catalogues publish: a distance modulus mu, a
 * distance in Mpc, or a log-distance ratio eta. Each gives the distance, its kind (luminosity,
 * comoving, angular), a first-order symmetric error, and the 1-sigma bounds.
 *
 *  - mu (mag): D_L = 10^((mu - 25)/5) Mpc (Hogg 1999 eq. 25), luminosity distance.
 *    sigma_D = D ln(10)/5 sigma_mu (first order, 0.4605 D sigma_mu); bounds
 *    D_lo = 10^((mu - sigma_mu - 25)/5), D_hi = 10^((mu + sigma_mu - 25)/5): a Gaussian error in mu
 *    is log-normal in D, so the bounds are asymmetric (for sigma_mu = 0.4 mag: -16.8 % / +20.2 %).
 *  - dist (Mpc): taken as a luminosity distance unless another kind is stated; the error column is
 *    used as given, bounds D -+ sigma_D (the catalogue's error is assumed linear, symmetric).
 *  - eta (dex): eta = log10(D_C(z_obs)/D_true), with z_obs the CMB-frame redshift and D_true the
 *    comoving distance (Springob et al. 2014, MNRAS 445, 2677; domain reference §5.3), so
 *    D_true = D_C(z_obs) 10^(-eta), a comoving distance; sigma_D = D ln(10) sigma_eta; bounds
 *    D_C(z_obs) 10^(-eta -+ sigma_eta). The cosmology used for D_C(z_obs) must be the survey's.
 *
 * Kernels: NaN in gives NaN out; a non-positive distance is NaN; a missing or negative error gives
 * NaN error and NaN bounds (the distance itself stays).
 */
import { comovingDistanceMpc, type Cosmology, type DistanceKind } from "./distances.js";

export const DISTANCE_SOURCES = ["mu", "dist", "eta"] as const;
export type DistanceSource = (typeof DISTANCE_SOURCES)[number];

export interface MeasuredDistances {
  /** The kind of every value below. */
  kind: DistanceKind;
  distMpc: Float64Array;
  /** First-order symmetric 1-sigma error. */
  distErrMpc: Float64Array;
  /** 1-sigma lower and upper bounds (asymmetric for mu and eta). */
  distLoMpc: Float64Array;
  distHiMpc: Float64Array;
}

const LN10 = Math.LN10;

function errOk(e: number): boolean {
  return e >= 0 && Number.isFinite(e);
}

function alloc(n: number, kind: DistanceKind): MeasuredDistances {
  return { kind, distMpc: new Float64Array(n), distErrMpc: new Float64Array(n), distLoMpc: new Float64Array(n), distHiMpc: new Float64Array(n) };
}

/** D_L from mu (mag) and sigma_mu (mag; may be absent). */
export function distancesFromModulus(mu: ArrayLike<number>, muErr?: ArrayLike<number>): MeasuredDistances {
  const n = mu.length;
  const out = alloc(n, "luminosity");
  for (let i = 0; i < n; i++) {
    const m = mu[i]!;
    const e = muErr ? muErr[i]! : NaN;
    const d = Number.isFinite(m) ? Math.pow(10, (m - 25) / 5) : NaN;
    out.distMpc[i] = d;
    const ok = errOk(e) && Number.isFinite(d);
    out.distErrMpc[i] = ok ? (d * LN10 * e) / 5 : NaN;
    out.distLoMpc[i] = ok ? Math.pow(10, (m - e - 25) / 5) : NaN;
    out.distHiMpc[i] = ok ? Math.pow(10, (m + e - 25) / 5) : NaN;
  }
  return out;
}

/** A distance column in Mpc, of the stated kind (luminosity by default). */
export function distancesFromColumn(distMpc: ArrayLike<number>, distErrMpc?: ArrayLike<number>, kind: DistanceKind = "luminosity"): MeasuredDistances {
  const n = distMpc.length;
  const out = alloc(n, kind);
  for (let i = 0; i < n; i++) {
    const x = distMpc[i]!;
    const d = x > 0 && Number.isFinite(x) ? x : NaN;
    const e = distErrMpc ? distErrMpc[i]! : NaN;
    out.distMpc[i] = d;
    const ok = errOk(e) && Number.isFinite(d);
    out.distErrMpc[i] = ok ? e : NaN;
    out.distLoMpc[i] = ok && d - e > 0 ? d - e : NaN;
    out.distHiMpc[i] = ok ? d + e : NaN;
  }
  return out;
}

/**
 * Comoving distances from eta (dex) and the CMB-frame redshifts the survey used to define it.
 */
export function distancesFromEta(eta: ArrayLike<number>, etaErr: ArrayLike<number> | undefined, zObs: ArrayLike<number>, c: Cosmology): MeasuredDistances {
  const n = eta.length;
  const out = alloc(n, "comoving");
  for (let i = 0; i < n; i++) {
    const h = eta[i]!;
    const z = zObs[i]!;
    const dz = z > 0 ? comovingDistanceMpc(z, c) : NaN;
    const d = Number.isFinite(h) ? dz * Math.pow(10, -h) : NaN;
    const e = etaErr ? etaErr[i]! : NaN;
    out.distMpc[i] = d;
    const ok = errOk(e) && Number.isFinite(d);
    out.distErrMpc[i] = ok ? d * LN10 * e : NaN;
    out.distLoMpc[i] = ok ? dz * Math.pow(10, -h - e) : NaN;
    out.distHiMpc[i] = ok ? dz * Math.pow(10, -h + e) : NaN;
  }
  return out;
}

/** The inverse of distancesFromModulus: mu = 5 log10(D_L/Mpc) + 25. */
export function modulusOfLuminosityDistance(distMpc: ArrayLike<number>): Float64Array {
  const out = new Float64Array(distMpc.length);
  for (let i = 0; i < distMpc.length; i++) {
    const d = distMpc[i]!;
    out[i] = d > 0 ? 5 * Math.log10(d) + 25 : NaN;
  }
  return out;
}

/** The inverse of distancesFromEta: eta = log10(D_C(z_obs)/D_C). */
export function etaOfComovingDistance(distCMpc: ArrayLike<number>, zObs: ArrayLike<number>, c: Cosmology): Float64Array {
  const out = new Float64Array(distCMpc.length);
  for (let i = 0; i < distCMpc.length; i++) {
    const d = distCMpc[i]!;
    const z = zObs[i]!;
    out[i] = d > 0 && z > 0 ? Math.log10(comovingDistanceMpc(z, c) / d) : NaN;
  }
  return out;
}
