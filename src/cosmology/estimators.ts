/**
 * Peculiar-velocity estimators from an observed redshift (in the chosen frame, normally CMB) and a
 * measured distance (MeasuredDistances). First the cosmological redshift z_cos of the distance is
 * found by inverting the distance-redshift relation of the SAME kind (luminosity, comoving, angular)
 * and cosmology; then, with D_C = D_C(z_cos), D_L = D_L(z_cos):
 *
 *  - "exact": v = c (z_obs - z_cos)/(1 + z_cos), from (1 + z_obs) = (1 + z_cos)(1 + v/c)
 *    (Davis & Scrimgeour 2014, MNRAS 442, 1117; Davis et al. 2011, ApJ 741, 67).
 *  - "linear": v = c z_obs - H0 D_C, the low-z approximation (Davis & Scrimgeour 2014 eq. 1) with
 *    the comoving distance (the one that obeys the Hubble law exactly, Wright 2006, PASP 118, 1711).
 *    It is biased by ~+100 km/s at z ~ 0.04 (Davis & Scrimgeour 2014).
 *  - "log": v = c z_mod ln(c z_mod/(H0 D_L)) (Watkins & Feldman 2015, MNRAS 450, 1868), with
 *    z_mod = z [1 + (1 - q0) z/2 - (1 - q0 - 3 q0^2 + j0) z^2/6], q0 = 3 Omega_m/2 - 1, j0 = 1
 *    (their higher-z form; the series is the D_L expansion of Visser 2004; form from memory, as
 *    noted in the domain reference §5.4). Needs z_obs > 0. Its errors are Gaussian when the
 *    distance errors are log-normal; it is a statistical estimator, not a per-object transform.
 *
 * Errors (first order), sigma_zcos = sigma_D / (dD/dz at z_cos) for the distance's kind, and the
 * redshift error sigma_z (0 when absent):
 *  - exact:  sigma_v^2 = [c (1 + z_obs)/(1 + z_cos)^2 sigma_zcos]^2 + [c sigma_z/(1 + z_cos)]^2
 *  - linear: sigma_v^2 = [H0 sigma_DC]^2 + [c sigma_z]^2, sigma_DC = sigma_zcos dD_C/dz
 *  - log:    sigma_v^2 = [c z_mod sigma_DL/D_L]^2 + [c (ln(c z_mod/(H0 D_L)) + 1) (dz_mod/dz) sigma_z]^2,
 *            sigma_DL = sigma_zcos dD_L/dz (so the first term is c z_mod (ln 10/5) sigma_mu for mu input)
 * Bounds: v_lo and v_hi are the estimator evaluated at the far and near 1-sigma distance bounds
 * (v_lo = v(D_hi), v_hi = v(D_lo)), which keeps the asymmetry of log-normal distance errors.
 */
import { C_KMS } from "./constants.js";
import {
  comovingDistanceMpc,
  distanceDerivativeMpc,
  hubbleDistanceMpc,
  efunc,
  redshiftsAtDistances,
  type Cosmology,
  type DistanceKind,
} from "./distances.js";
import type { MeasuredDistances } from "./distance-indicators.js";

export const ESTIMATORS = ["exact", "linear", "log"] as const;
export type Estimator = (typeof ESTIMATORS)[number];

export interface PeculiarVelocities {
  /** Cosmological redshift of the measured distance. */
  zCos: Float64Array;
  /** Comoving and luminosity distances at z_cos, with their 1-sigma errors. */
  distCMpc: Float64Array;
  distCErrMpc: Float64Array;
  distLMpc: Float64Array;
  distLErrMpc: Float64Array;
  vPecKmS: Float64Array;
  vPecErrKmS: Float64Array;
  /** The estimator at the far and near 1-sigma distance bounds. */
  vPecLoKmS: Float64Array;
  vPecHiKmS: Float64Array;
  /** The 1-sigma distance bounds as luminosity distances (D_L at z_cos of each bound). */
  distLLoMpc: Float64Array;
  distLHiMpc: Float64Array;
}

/** The Watkins & Feldman 2015 modified redshift and its derivative dz_mod/dz. */
export function modifiedRedshift(z: number, c: Cosmology, q0 = 1.5 * c.omegaM - 1, j0 = 1): [number, number] {
  const a = 0.5 * (1 - q0);
  const b = (1 - q0 - 3 * q0 * q0 + j0) / 6;
  return [z * (1 + a * z - b * z * z), 1 + 2 * a * z - 3 * b * z * z];
}

/** One velocity by `estimator` from z_obs, z_cos (and the distances at z_cos). */
function velocity(estimator: Estimator, zObs: number, zCos: number, dC: number, dL: number, c: Cosmology): number {
  if (estimator === "exact") return (C_KMS * (zObs - zCos)) / (1 + zCos);
  if (estimator === "linear") return C_KMS * zObs - c.h0 * dC;
  if (!(zObs > 0)) return NaN;
  const czm = C_KMS * modifiedRedshift(zObs, c)[0];
  return czm * Math.log(czm / (c.h0 * dL));
}

/** [v, D_L] at the cosmological redshift zc of one distance (for the bounds). */
function velocityAtRedshift(estimator: Estimator, zObs: number, zc: number, c: Cosmology): [number, number] {
  if (!Number.isFinite(zc)) return [NaN, NaN];
  const dC = comovingDistanceMpc(zc, c);
  return [velocity(estimator, zObs, zc, dC, (1 + zc) * dC, c), (1 + zc) * dC];
}

/**
 * Peculiar velocities of every row. zObs: redshifts in the frame of the analysis (CMB normally);
 * zObsErr: their errors (absent or NaN = 0). NaN where the redshift or the distance is unusable.
 */
export function peculiarVelocities(
  zObs: ArrayLike<number>,
  zObsErr: ArrayLike<number> | undefined,
  dist: MeasuredDistances,
  estimator: Estimator,
  c: Cosmology,
): PeculiarVelocities {
  const n = zObs.length;
  const out: PeculiarVelocities = {
    zCos: new Float64Array(n),
    distCMpc: new Float64Array(n),
    distCErrMpc: new Float64Array(n),
    distLMpc: new Float64Array(n),
    distLErrMpc: new Float64Array(n),
    vPecKmS: new Float64Array(n),
    vPecErrKmS: new Float64Array(n),
    vPecLoKmS: new Float64Array(n),
    vPecHiKmS: new Float64Array(n),
    distLLoMpc: new Float64Array(n),
    distLHiMpc: new Float64Array(n),
  };
  const dh = hubbleDistanceMpc(c);
  // the cosmological redshifts of the distances and of their far and near bounds, in three batches
  const zCos = redshiftsAtDistances(dist.distMpc, dist.kind, c);
  const zFar = redshiftsAtDistances(dist.distHiMpc, dist.kind, c);
  const zNear = redshiftsAtDistances(dist.distLoMpc, dist.kind, c);
  for (let i = 0; i < n; i++) {
    const z = zObs[i]!;
    const ez = zObsErr ? zObsErr[i]! : 0;
    const sz = Number.isFinite(ez) && ez > 0 ? ez : 0;
    const zc = zCos[i]!;
    const dC = Number.isFinite(zc) ? comovingDistanceMpc(zc, c) : NaN;
    const dL = (1 + zc) * dC;
    // sigma of z_cos from the distance error of its own kind.
    const sZc = dist.distErrMpc[i]! / distanceDerivativeMpc(zc, dist.kind, c);
    const dCdz = dh / efunc(zc, c);
    const sDC = sZc * dCdz;
    const sDL = sZc * (dC + (1 + zc) * dCdz);
    out.zCos[i] = zc;
    out.distCMpc[i] = dC;
    out.distLMpc[i] = dL;
    out.distCErrMpc[i] = sDC;
    out.distLErrMpc[i] = sDL;
    const v = Number.isFinite(z) ? velocity(estimator, z, zc, dC, dL, c) : NaN;
    out.vPecKmS[i] = v;
    let sv: number;
    if (estimator === "exact") {
      const a = (C_KMS * (1 + z) * sZc) / ((1 + zc) * (1 + zc));
      const b = (C_KMS * sz) / (1 + zc);
      sv = Math.hypot(a, b);
    } else if (estimator === "linear") {
      sv = Math.hypot(c.h0 * sDC, C_KMS * sz);
    } else {
      const [zm, dzm] = modifiedRedshift(z, c);
      const czm = C_KMS * zm;
      sv = Math.hypot((czm * sDL) / dL, C_KMS * (Math.log(czm / (c.h0 * dL)) + 1) * dzm * sz);
    }
    out.vPecErrKmS[i] = Number.isFinite(v) ? sv : NaN;
    const [vFar, dFar] = velocityAtRedshift(estimator, z, zFar[i]!, c);
    const [vNear, dNear] = velocityAtRedshift(estimator, z, zNear[i]!, c);
    out.vPecLoKmS[i] = Number.isFinite(v) ? vFar : NaN;
    out.vPecHiKmS[i] = Number.isFinite(v) ? vNear : NaN;
    out.distLLoMpc[i] = dNear;
    out.distLHiMpc[i] = dFar;
  }
  return out;
}
