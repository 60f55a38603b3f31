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


/**
 * A seeded synthetic pair with known truth. A: `n` galaxies, uniform in a 10 x 10 degree field at
 * dec 0 plus `clumps` crowded clumps (clumpSize galaxies within clumpRadiusArcsec, a cluster core
 * with a velocity dispersion of 800 km/s). B: a fraction `kept` of A jittered by jitterArcsec per axis
 * and 30 km/s in cz, plus unrelated rows (uniform, cz uniform in 2000-20000 km/s) to make up nB.
 * truthB[j] = the A row B row j came from, -1 for an unrelated row.
 */
export function syntheticPair(o: { n: number; nB: number; kept: number; jitterArcsec: number; clumps: number; clumpSize: number; clumpRadiusArcsec: number; seed: number }) {
  const src = randomLcg(o.seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);
  const raA = new Float64Array(o.n);
  const decA = new Float64Array(o.n);
  const czA = new Float64Array(o.n);
  let i = 0;
  for (let c = 0; c < o.clumps; c++) {
    const cr = 100 + 10 * u();
    const cd = -5 + 10 * u();
    const cz = 4000 + 10000 * u();
    for (let m = 0; m < o.clumpSize && i < o.n; m++, i++) {
      const rr = o.clumpRadiusArcsec * Math.sqrt(u()) / 3600;
      const th = 2 * Math.PI * u();
      decA[i] = cd + rr * Math.sin(th);
      raA[i] = cr + (rr * Math.cos(th)) / Math.cos(cd * DEG);
      czA[i] = cz + 800 * g();
    }
  }
  for (; i < o.n; i++) {
    raA[i] = 100 + 10 * u();
    decA[i] = Math.asin(Math.sin(-5 * DEG) + (Math.sin(5 * DEG) - Math.sin(-5 * DEG)) * u()) / DEG;
    czA[i] = 2000 + 18000 * u();
  }
  const raB = new Float64Array(o.nB);
  const decB = new Float64Array(o.nB);
  const czB = new Float64Array(o.nB);
  const truthB = new Int32Array(o.nB).fill(-1);
  let j = 0;
  for (let a = 0; a < o.n && j < o.nB; a++) {
    if (u() >= o.kept) continue;
    decB[j] = decA[a]! + (o.jitterArcsec * g()) / 3600;
    raB[j] = raA[a]! + (o.jitterArcsec * g()) / 3600 / Math.cos(decA[a]! * DEG);
    czB[j] = czA[a]! + 30 * g();
    truthB[j] = a;
    j++;
  }
  for (; j < o.nB; j++) {
    raB[j] = 100 + 10 * u();
    decB[j] = Math.asin(Math.sin(-5 * DEG) + (Math.sin(5 * DEG) - Math.sin(-5 * DEG)) * u()) / DEG;
    czB[j] = 2000 + 18000 * u();
  }
  return { raA, decA, czA, raB, decB, czB, truthB };
}
