/**
 * The Copernican check: does another origin see the same Hubble law as we do? Browser-safe.
 * Compares H0 fitted from here and from there (both by recentre, with a dipole) and the residual scatter
 * about each fit. dH = H_there - H_here, sigma = sqrt(err_here^2 + err_there^2) (conservative for the
 * shared data: the two fits use the same galaxies), z = dH / sigma.
 * Verdict: "consistent" for |z| <= 2, "tension" for 2 < |z| <= 3, "inconsistent" beyond 3, "undetermined"
 * when either fit failed (common practice for 2- and 3-sigma thresholds).
 * Note: on mocks with 18% distance errors and a 380 km/s bulk flow the errors from another galaxy came
 * out ~30% too small (radial-only velocities cannot carry the flow's tangential part; without a bulk flow
 * they were right); a z near 2 is not by itself a detection.
 */
export type CopernicanVerdict = "consistent" | "tension" | "inconsistent" | "undetermined";

export interface CopernicanCheck {
  verdict: CopernicanVerdict;
  dH: number;
  dHErr: number;
  z: number;
  /** residual rms there / here. */
  scatterRatio: number;
}

export function copernicanCheck(here: { h0: number; err: number; rms: number }, there: { h0: number; err: number; rms: number }): CopernicanCheck {
  const dH = there.h0 - here.h0;
  const dHErr = Math.sqrt(here.err * here.err + there.err * there.err);
  const z = dH / dHErr;
  const scatterRatio = there.rms / here.rms;
  if (!Number.isFinite(z)) return { verdict: "undetermined", dH, dHErr, z, scatterRatio };
  const a = Math.abs(z);
  return { verdict: a <= 2 ? "consistent" : a <= 3 ? "tension" : "inconsistent", dH, dHErr, z, scatterRatio };
}
