import { describe, expect, it } from "vitest";
import { randomLcg, randomUniform, randomNormal } from "d3-random";
import { skyPoints, type PairList } from "../../src/crossmatch/zones.js";
import { pairsWithin } from "../../src/crossmatch/pairs.js";
import { brutePairs } from "../../src/crossmatch/brute.js";
import { ARCSEC, DEG } from "../../src/sky/angles.js";

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

/** 1e-9 arcsec: a hundred times the float64 resolution of a separation between unit vectors. */
const SUB_MAS_TOL_ARCSEC = 1e-9;

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

function asTriples(p: PairList): string[] {
  const out: string[] = [];
  for (let k = 0; k < p.length; k++) out.push(`${p.a[k]}-${p.b[k]}`);
  return out;
}

describe("pairsWithin (zone engine)", () => {
  for (const [label, radiusArcsec] of [
    ["2 arcsec", 2],
    ["0.01 arcsec", 0.01],
    ["1 degree", 3600],
    ["40 degrees", 144000],
  ] as const) {
    it(`finds exactly the brute-force pair set at ${label}, poles, seam, clumps and duplicates included`, () => {
      const A = hardSky(701, 1);
      const B = withCopies(hardSky(553, 2), A, 100);
      const a = skyPoints(A.ra, A.dec);
      const b = skyPoints(B.ra, B.dec);
      const R = radiusArcsec * ARCSEC;
      const want = brutePairs(a, b, R);
      expect(want.length).toBeGreaterThan(50); // clumps and duplicates guarantee pairs at every radius
      for (const partitions of [1, 3]) {
        const got = pairsWithin(a, b, R, { partitions });
        expect(asTriples(got)).toEqual(asTriples(want));
        // separations are the same numbers (same formula on the same vectors)
        expect(Array.from(got.sepRad)).toEqual(Array.from(want.sepRad));
      }
    });
  }

  it("finds pairs on both sides of RA 0/360 and across the pole", () => {
    const a = skyPoints([359.99995, 0, 45], [0, 89.99999, -89.99999]);
    const b = skyPoints([0.00005, 180, 225], [0, 89.99999, -89.99999]);
    const got = pairsWithin(a, b, 0.5 * ARCSEC);
    // 0.0001 deg of RA on the equator = 0.36 arcsec; pole pairs: 2 * 1e-5 deg = 0.072 arcsec
    expect(asTriples(got)).toEqual(["0-0", "1-1", "2-2"]);
    expect(Math.abs(got.sepRad[0]! / ARCSEC - 0.36)).toBeLessThan(1e-9);
    expect(Math.abs(got.sepRad[1]! / ARCSEC - 0.072)).toBeLessThan(1e-9);
  });

  it("returns no pairs for empty catalogues and a zero radius keeps exact duplicates only", () => {
    const e = skyPoints([], []);
    const one = skyPoints([10], [20]);
    expect(pairsWithin(e, one, ARCSEC).length).toBe(0);
    expect(pairsWithin(one, e, ARCSEC).length).toBe(0);
    const two = skyPoints([10, 10.0000001], [20, 20]);
    expect(asTriples(pairsWithin(one, two, 0))).toEqual(["0-0"]);
  });

  it("keeps sub-milliarcsecond separations exact", () => {
    // 1e-7 deg apart in Dec = 0.36 mas: the atan2 form keeps it (domain reference §1 measured table, computed with mpmath)
    const a = skyPoints([30], [30]);
    const b = skyPoints([30], [30.0000001]);
    const got = pairsWithin(a, b, 0.001 * ARCSEC);
    expect(got.length).toBe(1);
    // float64 unit vectors resolve ~1e-16 rad = 2e-11 arcsec (domain reference §0: IEEE-754 binary64)
    expect(Math.abs(got.sepRad[0]! / ARCSEC - 3.6e-4)).toBeLessThan(SUB_MAS_TOL_ARCSEC);
  });

  it("refuses a negative or infinite radius", () => {
    const one = skyPoints([10], [20]);
    expect(() => pairsWithin(one, one, -1)).toThrow(/radius/);
    expect(() => pairsWithin(one, one, Infinity)).toThrow(/radius/);
  });
});
