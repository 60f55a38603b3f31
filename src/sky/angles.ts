/** Angle constants and small helpers. Degrees at the API, radians inside. */
export const DEG = Math.PI / 180;
export const RAD = 180 / Math.PI;
export const ARCSEC = DEG / 3600;
export const ARCMIN = DEG / 60;

/** x reduced to [0, 360). */
export function wrap360(xDeg: number): number {
  const r = xDeg % 360;
  return r < 0 ? r + 360 : r === 360 ? 0 : r;
}

/** x reduced to [-180, 180). */
export function wrap180(xDeg: number): number {
  return wrap360(xDeg + 180) - 180;
}

/** Smallest absolute difference of two angles in degrees, in [0, 180]. For tests and comparisons. */
export function angleDiffDeg(aDeg: number, bDeg: number): number {
  return Math.abs(wrap180(aDeg - bDeg));
}

export function clamp(x: number, lo: number, hi: number): number {
  return x < lo ? lo : x > hi ? hi : x;
}
