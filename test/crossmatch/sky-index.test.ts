import { describe, expect, it } from "vitest";
import { randomLcg, randomUniform } from "d3-random";
import { SkyIndex, nearestSkyBrute } from "../../src/crossmatch/sky-index.js";
import { separationDeg } from "../../src/sky/separation.js";

/** Separations agree to 1e-12 deg (float64 round-off of the atan2 form, far below any catalogue's precision). */
const SEP_TOL_DEG = 1e-12;

/** Positions uniform on the sphere plus crowds at both poles and on the RA 0/360 seam. */
function sky(n: number, seed: number): { ra: Float64Array; dec: Float64Array } {
  const u = randomUniform.source(randomLcg(seed))(0, 1);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const kind = i % 5;
    if (kind === 0) {
      ra[i] = 360 * u();
      dec[i] = 90 - 0.5 * u(); // north polar cap
    } else if (kind === 1) {
      ra[i] = 360 * u();
      dec[i] = -90 + 0.5 * u();
    } else if (kind === 2) {
      ra[i] = (360 + (u() - 0.5)) % 360; // within 0.5 deg of RA 0
      dec[i] = 40 * (u() - 0.5);
    } else {
      ra[i] = 360 * u();
      dec[i] = (Math.asin(2 * u() - 1) * 180) / Math.PI;
    }
  }
  ra[7] = 0;
  dec[7] = 90;
  ra[8] = 123;
  dec[8] = 90; // the same point as row 7 written differently
  ra[9] = 359.9999999;
  dec[9] = 0;
  return { ra, dec };
}

describe("SkyIndex", () => {
  it("nearest agrees with the brute-force twin at the poles, on the seam and elsewhere", () => {
    const { ra, dec } = sky(2000, 21);
    const idx = new SkyIndex(ra, dec);
    const q = sky(1500, 22);
    for (let k = 0; k < q.ra.length; k++) {
      const lim = k % 2 === 0 ? 180 : 0.3;
      const got = idx.nearest(q.ra[k]!, q.dec[k]!, lim);
      const want = nearestSkyBrute(ra, dec, q.ra[k]!, q.dec[k]!, lim);
      if (want.row < 0) {
        expect(got.row).toBe(-1);
        continue;
      }
      // A different row is allowed only when it is exactly as far (a tie).
      expect(Math.abs(got.sepDeg - want.sepDeg)).toBeLessThan(SEP_TOL_DEG);
      expect(Math.abs(separationDeg(ra[got.row]!, dec[got.row]!, q.ra[k]!, q.dec[k]!) - got.sepDeg)).toBeLessThan(SEP_TOL_DEG);
    }
  });

  it("within returns exactly the rows inside the radius, nearest first", () => {
    const { ra, dec } = sky(2000, 31);
    const idx = new SkyIndex(ra, dec);
    const q = sky(300, 32);
    for (let k = 0; k < q.ra.length; k++) {
      const r = 0.05 + 2 * (k / q.ra.length);
      const got = Array.from(idx.within(q.ra[k]!, q.dec[k]!, r)).sort((a, b) => a - b);
      const want: number[] = [];
      for (let i = 0; i < ra.length; i++) if (separationDeg(ra[i]!, dec[i]!, q.ra[k]!, q.dec[k]!) <= r) want.push(i);
      expect(got).toEqual(want);
    }
  });

  it("finds a neighbour across RA 0/360, which raw RA in [0, 360) would miss", () => {
    const idx = new SkyIndex([359.9999, 180], [10, 10]);
    const hit = idx.nearest(0.0001, 10, 1);
    expect(hit.row).toBe(0);
    // 0.0002 deg of RA at dec 10 deg: 0.0002 * cos(10 deg) of arc (small-angle, common practice)
    expect(Math.abs(hit.sepDeg - 0.0002 * Math.cos((10 * Math.PI) / 180))).toBeLessThan(1e-10);
  });

  it("a radius above 180 degrees is clamped: the antipode is found", () => {
    const idx = new SkyIndex([200], [-30]);
    const hit = idx.nearest(20, 30, 1000);
    expect(hit.row).toBe(0);
    expect(Math.abs(hit.sepDeg - 180)).toBeLessThan(1e-9);
  });

  it("ties go to the lower row (an exact duplicate)", () => {
    const idx = new SkyIndex([10, 50, 50, 50], [0, 20, 20, 20]);
    expect(idx.nearest(50.1, 20.1).row).toBe(1);
    expect(Array.from(idx.within(50.1, 20.1, 1))).toEqual([1, 2, 3]);
  });

  it("the pole written with two RAs is one position", () => {
    const idx = new SkyIndex([0, 123], [90, 90]);
    const a = idx.nearest(45, 89.5);
    expect(Math.abs(a.sepDeg - 0.5)).toBeLessThan(1e-9);
  });

  it("returns row -1 for an empty index, a NaN query, or nothing within the radius", () => {
    expect(new SkyIndex([], []).nearest(10, 10).row).toBe(-1);
    const idx = new SkyIndex([10, NaN], [10, 5]);
    expect(idx.indexedLength).toBe(1);
    expect(idx.nearest(NaN, 10).row).toBe(-1);
    expect(idx.nearest(10, 11, 0.5).row).toBe(-1);
    expect(idx.nearest(10, 11).row).toBe(0);
    expect(Array.from(idx.within(10, 10, 0.1, 5))).toEqual([0]);
  });
});
