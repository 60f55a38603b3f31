/**
 * Unit vectors on the sphere. A catalogue's positions become one interleaved Float64Array
 * [x0, y0, z0, x1, ...] so kernels walk memory in order. Always float64: float32 loses
 * all precision below ~1 arcmin (domain reference §1).
 */
import { DEG, RAD } from "./angles.js";

/** Unit vector of (lon, lat) in degrees. */
export function unitVector(lonDeg: number, latDeg: number): [number, number, number] {
  const a = lonDeg * DEG;
  const d = latDeg * DEG;
  const c = Math.cos(d);
  return [c * Math.cos(a), c * Math.sin(a), Math.sin(d)];
}

/** Interleaved unit vectors for columns of (lon, lat) in degrees. NaN in gives NaN out. */
export function unitVectors(lonDeg: ArrayLike<number>, latDeg: ArrayLike<number>, out?: Float64Array): Float64Array {
  const n = lonDeg.length;
  const v = out ?? new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    const a = lonDeg[i]! * DEG;
    const d = latDeg[i]! * DEG;
    const c = Math.cos(d);
    v[3 * i] = c * Math.cos(a);
    v[3 * i + 1] = c * Math.sin(a);
    v[3 * i + 2] = Math.sin(d);
  }
  return v;
}

/** (lon, lat) in degrees of a vector (need not be unit); lon in [0, 360). */
export function lonLatOf(x: number, y: number, z: number): [number, number] {
  let lon = Math.atan2(y, x) * RAD;
  if (lon < 0) lon += 360;
  if (lon >= 360) lon -= 360;
  const lat = Math.atan2(z, Math.hypot(x, y)) * RAD;
  return [lon, lat];
}

/** Chord length between two unit vectors for an angle: 2 sin(theta/2). */
export function chordOfAngle(thetaRad: number): number {
  return 2 * Math.sin(Math.min(thetaRad, Math.PI) / 2);
}

/** Angle (radians) between two vectors by atan2(|u x v|, u . v): stable from 0 to pi. */
export function angleBetween(ax: number, ay: number, az: number, bx: number, by: number, bz: number): number {
  const cx = ay * bz - az * by;
  const cy = az * bx - ax * bz;
  const cz = ax * by - ay * bx;
  return Math.atan2(hypot3(cx, cy, cz), ax * bx + ay * by + az * bz);
}

/**
 * Math.hypot(x, y, z) by the same arithmetic as V8's (each term scaled by the largest, squares added
 * with Kahan compensation, then sqrt times the largest), so the result is the same number, without
 * the builtin's per-call cost (several times the rest of angleBetween in the cross-match's inner loop).
 * Checked equal to Math.hypot in test/sky/vectors.test.ts.
 */
export function hypot3(x: number, y: number, z: number): number {
  const a = Math.abs(x);
  const b = Math.abs(y);
  const c = Math.abs(z);
  if (a !== a || b !== b || c !== c) return a === Infinity || b === Infinity || c === Infinity ? Infinity : NaN;
  let max = a > b ? a : b;
  if (c > max) max = c;
  if (max === Infinity) return Infinity;
  if (max === 0) return 0;
  let n = a / max;
  let sum = n * n;
  n = b / max;
  let summand = n * n;
  const pre = sum + summand;
  const comp = pre - sum - summand;
  sum = pre;
  n = c / max;
  summand = n * n - comp;
  sum += summand;
  return Math.sqrt(sum) * max;
}
