import { describe, expect, it } from "vitest";
import { randomLcg, randomUniform, randomNormal } from "d3-random";
import { PlaneIndex, nearestPlaneBrute, withinPlaneBrute } from "../../src/crossmatch/plane-index.js";

function cloud(n: number, seed: number): { x: Float64Array; y: Float64Array } {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1000);
  const g = randomNormal.source(src)(500, 3);
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // a third of the points in a tight clump, some exact duplicates, the rest uniform
    if (i % 3 === 0) {
      x[i] = g();
      y[i] = g();
    } else if (i % 17 === 0 && i > 0) {
      x[i] = x[i - 1]!;
      y[i] = y[i - 1]!;
    } else {
      x[i] = Math.round(u()); // integer grid: many equal coordinates and equal distances
      y[i] = Math.round(u());
    }
  }
  return { x, y };
}

describe("PlaneIndex", () => {
  it("nearest agrees with the brute-force twin, ties included, with and without a distance limit", () => {
    const { x, y } = cloud(3001, 7);
    const idx = new PlaneIndex(x, y);
    const q = randomUniform.source(randomLcg(8))(-50, 1050);
    for (let k = 0; k < 2000; k++) {
      const qx = k % 5 === 0 ? Math.round(q()) : q();
      const qy = k % 5 === 0 ? Math.round(q()) : q();
      const lim = k % 2 === 0 ? Infinity : 5;
      expect(idx.nearest(qx, qy, lim)).toBe(nearestPlaneBrute(x, y, qx, qy, lim));
    }
  });

  it("within agrees with the brute-force twin and includes the box edges", () => {
    const { x, y } = cloud(3001, 11);
    const idx = new PlaneIndex(x, y);
    const q = randomUniform.source(randomLcg(12))(0, 1000);
    for (let k = 0; k < 500; k++) {
      const a = Math.round(q());
      const b = Math.round(q());
      const w = k % 3 === 0 ? 0 : Math.round(q() / 10);
      expect(Array.from(idx.within(a, b, a + w, b + w))).toEqual(Array.from(withinPlaneBrute(x, y, a, b, a + w, b + w)));
    }
  });

  it("withinRadius returns exactly the rows at distance <= r", () => {
    const { x, y } = cloud(1001, 3);
    const idx = new PlaneIndex(x, y);
    const got = Array.from(idx.withinRadius(500, 500, 4));
    const want: number[] = [];
    for (let i = 0; i < x.length; i++) if (Math.hypot(x[i]! - 500, y[i]! - 500) <= 4) want.push(i);
    expect(got).toEqual(want);
  });

  it("an exact duplicate goes to the lower row", () => {
    const idx = new PlaneIndex([5, 1, 1], [5, 2, 2]);
    expect(idx.nearest(1, 2)).toBe(1);
    expect(idx.nearest(1.1, 2.1, 0.5)).toBe(1);
  });

  it("returns -1 and empty arrays for an empty index", () => {
    const idx = new PlaneIndex([], []);
    expect(idx.nearest(0, 0)).toBe(-1);
    expect(idx.within(-1, -1, 1, 1).length).toBe(0);
  });

  it("works with one point and respects maxDist on the boundary", () => {
    const idx = new PlaneIndex([3], [4]);
    expect(idx.nearest(0, 0)).toBe(0);
    expect(idx.nearest(0, 0, 5)).toBe(0); // distance exactly 5 (3-4-5 triangle): included
    expect(idx.nearest(0, 0, 4.999)).toBe(-1);
  });

  it("skips points with NaN coordinates but keeps row numbers", () => {
    const idx = new PlaneIndex([NaN, 10, 0], [0, NaN, 0]);
    expect(idx.indexedLength).toBe(1);
    expect(idx.nearest(0.1, 0.1)).toBe(2);
    expect(Array.from(idx.within(-100, -100, 100, 100))).toEqual([2]);
    expect(idx.nearest(NaN, 0)).toBe(-1);
  });

  it("refuses x and y of different lengths", () => {
    expect(() => new PlaneIndex([1, 2], [1])).toThrow(/x has 2 values but y has 1/);
  });
});
