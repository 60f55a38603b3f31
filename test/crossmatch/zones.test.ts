import { describe, expect, it } from "vitest";
import { randomLcg } from "d3-random";
import { skyPoints, sortPairs, type PairList } from "../../src/crossmatch/zones.js";
import { pairsWithin } from "../../src/crossmatch/pairs.js";
import { brutePairs } from "../../src/crossmatch/brute.js";
import { ARCSEC } from "../../src/sky/angles.js";
import { hardSky, withCopies } from "./sky-fixtures.js";

/** 1e-9 arcsec: a hundred times the float64 resolution of a separation between unit vectors. */
const SUB_MAS_TOL_ARCSEC = 1e-9;

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
      for (const partitions of [1, 3, 12]) {
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

  it("reads RA outside [0, 360) modulo 360", () => {
    const a = skyPoints([-0.0001, 360.0001, 725], [0, 0, 0]);
    const b = skyPoints([359.9999, 0.0001, 5], [0, 0, 0]);
    expect(asTriples(pairsWithin(a, b, 0.01 * ARCSEC))).toEqual(["0-0", "1-1", "2-2"]);
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

  for (const nRows of [1000, 100000]) {
    it(`sortPairs orders scattered pairs of ${nRows} query rows by row, then separation, then indexed row`, () => {
      // seeded pairs with repeated rows, tied separations and one long run; oracle: Array.prototype.sort
      const u = randomLcg(99);
      const n = 30000;
      const pa = new Int32Array(n);
      const pb = new Int32Array(n);
      const ps = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        pa[k] = k < 40 ? 7 : Math.floor(u() * nRows);
        pb[k] = k;
        ps[k] = Math.floor(u() * 8) * 1e-6;
      }
      const want = Array.from({ length: n }, (_, k) => k).sort((x, y) => pa[x]! - pa[y]! || ps[x]! - ps[y]! || pb[x]! - pb[y]!);
      const [wa, wb, ws] = [want.map((k) => pa[k]!), want.map((k) => pb[k]!), want.map((k) => ps[k]!)];
      const got = sortPairs({ a: pa, b: pb, sepRad: ps, length: n }, nRows); // may reuse pa, pb, ps
      expect(Array.from(got.a)).toEqual(wa);
      expect(Array.from(got.b)).toEqual(wb);
      expect(Array.from(got.sepRad)).toEqual(ws);
    });
  }
});
