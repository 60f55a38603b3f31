/** Seeded random catalogues shared by the cross-match tests (no tests in this file). */
import { randomLcg, randomUniform, randomNormal } from "d3-random";
import { DEG } from "../../src/sky/angles.js";

/**
 * Random catalogues that stress the engine: uniform sky, both polar caps, the RA 0/360 seam,
 * dense clumps (many rows within a few arcsec) and exact duplicates.
 */
export function hardSky(n: number, seed: number, spreadArcsec = 3): { ra: Float64Array; dec: Float64Array } {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, spreadArcsec / 3600);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  const centres: [number, number][] = [
    [0, 89.9995],
    [180, -89.9999],
    [359.9995, 10],
    [0.0002, -45],
    [123.4, 56.7],
  ];
  for (let i = 0; i < n; i++) {
    const kind = i % 7;
    if (kind < 3) {
      const [cr, cd] = centres[i % centres.length]!;
      let d = cd + g();
      let r = cr + g() / Math.max(Math.cos(cd * DEG), 1e-3);
      if (d > 90) {
        d = 180 - d;
        r += 180;
      }
      if (d < -90) {
        d = -180 - d;
        r += 180;
      }
      ra[i] = ((r % 360) + 360) % 360;
      dec[i] = d;
    } else if (kind === 3 && i > 0) {
      ra[i] = ra[i - 1]!; // exact duplicate
      dec[i] = dec[i - 1]!;
    } else {
      ra[i] = 360 * u();
      dec[i] = Math.asin(2 * u() - 1) / DEG;
    }
  }
  ra[n - 1] = NaN; // a row without a position takes part in nothing
  return { ra, dec };
}

/** b followed by exact copies of the first k rows of a (exact cross-catalogue duplicates). */
export function withCopies(b: { ra: Float64Array; dec: Float64Array }, a: { ra: Float64Array; dec: Float64Array }, k: number) {
  const ra = new Float64Array(b.ra.length + k);
  const dec = new Float64Array(b.ra.length + k);
  ra.set(b.ra);
  dec.set(b.dec);
  ra.set(a.ra.subarray(0, k), b.ra.length);
  dec.set(a.dec.subarray(0, k), b.ra.length);
  return { ra, dec };
}

