/**
 * Sky frames as data: each frame is a rotation from ICRS with its citation beside its constants.
 * A rotation's inverse is its transpose. Adding a frame means adding one entry to FRAMES.
 */
import { unitVector, lonLatOf } from "./vectors.js";

export type Mat3 = readonly [number, number, number, number, number, number, number, number, number];
export type SkyFrame = "icrs" | "galactic" | "supergalactic";

/**
 * ICRS -> Galactic, the IAU 1958 system realised in ICRS by the Hipparcos Catalogue
 * (ESA 1997, ESA SP-1200 Vol. 1 §1.5.3): NGP at (192.85948, +27.12825) deg, l_Omega = 32.93192 deg.
 * Entries as in ERFA eraIcrs2g (recomputed from the three angles; domain reference §3.1).
 */
export const ICRS_TO_GALACTIC: Mat3 = [
  -0.054875560416215368, -0.873437090234885049, -0.483835015548713227,
  +0.494109427875583674, -0.444829629960011178, +0.746982244497218891,
  -0.867666149019004701, -0.198076373431201528, +0.455983776175066922,
];

/**
 * Galactic -> supergalactic (de Vaucouleurs et al. 1976, RC2; as stated by Lahav et al. 2000,
 * MNRAS 312, 166): north SG pole at (l, b) = (47.37, +6.32) deg, SGL zero at (137.37, 0) deg.
 * Rows built from the definition: x = unit(137.37, 0), z = unit(47.37, 6.32), y = z cross x.
 */
export const GALACTIC_TO_SUPERGALACTIC: Mat3 = buildFromPoleAndOrigin(47.37, 6.32, 137.37, 0);

export const ICRS_TO_SUPERGALACTIC: Mat3 = multiply(GALACTIC_TO_SUPERGALACTIC, ICRS_TO_GALACTIC);

const IDENTITY: Mat3 = [1, 0, 0, 0, 1, 0, 0, 0, 1];

/** Rotation from ICRS to each frame. */
export const FRAMES: Record<SkyFrame, Mat3> = {
  icrs: IDENTITY,
  galactic: ICRS_TO_GALACTIC,
  supergalactic: ICRS_TO_SUPERGALACTIC,
};

function buildFromPoleAndOrigin(poleLon: number, poleLat: number, originLon: number, originLat: number): Mat3 {
  const z = unitVector(poleLon, poleLat);
  const x = unitVector(originLon, originLat);
  const y: [number, number, number] = [z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0]];
  return [x[0], x[1], x[2], y[0], y[1], y[2], z[0], z[1], z[2]];
}

export function multiply(a: Mat3, b: Mat3): Mat3 {
  const o = new Array<number>(9);
  for (let r = 0; r < 3; r++)
    for (let c = 0; c < 3; c++) o[3 * r + c] = a[3 * r]! * b[c]! + a[3 * r + 1]! * b[3 + c]! + a[3 * r + 2]! * b[6 + c]!;
  return o as unknown as Mat3;
}

export function transpose(m: Mat3): Mat3 {
  return [m[0], m[3], m[6], m[1], m[4], m[7], m[2], m[5], m[8]];
}

/** The rotation taking vectors in `from` to vectors in `to`. */
export function rotation(from: SkyFrame, to: SkyFrame): Mat3 {
  return multiply(FRAMES[to], transpose(FRAMES[from]));
}

export function rotate(m: Mat3, x: number, y: number, z: number): [number, number, number] {
  return [m[0] * x + m[1] * y + m[2] * z, m[3] * x + m[4] * y + m[5] * z, m[6] * x + m[7] * y + m[8] * z];
}

/** One position from frame `from` to frame `to`, degrees in and out. */
export function convertPosition(lonDeg: number, latDeg: number, from: SkyFrame, to: SkyFrame): [number, number] {
  const [x, y, z] = unitVector(lonDeg, latDeg);
  const [a, b, c] = rotate(rotation(from, to), x, y, z);
  return lonLatOf(a, b, c);
}

/** Columns of positions from one frame to another. NaN in gives NaN out. */
export function convertPositions(
  lonDeg: ArrayLike<number>,
  latDeg: ArrayLike<number>,
  from: SkyFrame,
  to: SkyFrame,
): { lonDeg: Float64Array; latDeg: Float64Array } {
  const m = rotation(from, to);
  const n = lonDeg.length;
  const lon = new Float64Array(n);
  const lat = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const [x, y, z] = unitVector(lonDeg[i]!, latDeg[i]!);
    const [a, b, c] = rotate(m, x, y, z);
    if (Number.isNaN(a + b + c)) {
      lon[i] = NaN;
      lat[i] = NaN;
      continue;
    }
    const [p, q] = lonLatOf(a, b, c);
    lon[i] = p;
    lat[i] = q;
  }
  return { lonDeg: lon, latDeg: lat };
}
