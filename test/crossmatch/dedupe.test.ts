import { describe, expect, it } from "vitest";
import { randomLcg, randomUniform } from "d3-random";
import { dedupe, representatives } from "../../src/crossmatch/dedupe.js";
import { bruteGroups, bruteSelfPairs } from "../../src/crossmatch/brute.js";
import { skyPoints } from "../../src/crossmatch/zones.js";
import { ARCSEC } from "../../src/sky/angles.js";
import { hardSky } from "./sky-fixtures.js";

/** Relabels groups by order of first row, so two labellings can be compared. */
function canonical(label: ArrayLike<number>): number[] {
  const map = new Map<number, number>();
  return Array.from(label, (g) => {
    if (!map.has(g)) map.set(g, map.size);
    return map.get(g)!;
  });
}

describe("dedupe against the brute-force twin", () => {
  for (const radiusArcsec of [0.5, 3, 20]) {
    it(`links the same rows as flooding over all pairs within ${radiusArcsec} arcsec (poles, seam, clumps, duplicates)`, () => {
      const S = hardSky(900, 3);
      const r = dedupe(S.ra, S.dec, undefined, { radiusArcsec, partitions: 2 });
      const pairs = bruteSelfPairs(skyPoints(S.ra, S.dec), radiusArcsec * ARCSEC);
      const want = canonical(bruteGroups(S.ra.length, pairs.a, pairs.b));
      expect(Array.from(r.group)).toEqual(want);
      expect(r.links).toBe(pairs.length);
      expect(r.duplicateGroups).toBeGreaterThan(0);
      // sizes are the group counts
      const count = new Map<number, number>();
      for (const g of want) count.set(g, (count.get(g) ?? 0) + 1);
      expect(Array.from(r.size)).toEqual(want.map((g) => count.get(g)!));
    });
  }

  it("with a velocity limit, links only pairs within it (rows without a velocity link on position)", () => {
    const S = hardSky(600, 4);
    const u = randomUniform.source(randomLcg(9))(0, 1);
    const v = Float64Array.from(S.ra, (_, i) => (i % 9 === 0 ? NaN : 3000 + 2000 * u()));
    const r = dedupe(S.ra, S.dec, v, { radiusArcsec: 3, maxDvKmS: 400 });
    const pairs = bruteSelfPairs(skyPoints(S.ra, S.dec), 3 * ARCSEC);
    const ka: number[] = [];
    const kb: number[] = [];
    for (let k = 0; k < pairs.length; k++) {
      const d = v[pairs.b[k]!]! - v[pairs.a[k]!]!;
      if (Number.isNaN(d) || Math.abs(d) <= 400) {
        ka.push(pairs.a[k]!);
        kb.push(pairs.b[k]!);
      }
    }
    expect(Array.from(r.group)).toEqual(canonical(bruteGroups(S.ra.length, ka, kb)));
    expect(r.rejectedByDv).toBe(pairs.length - ka.length);
  });

  it("links a chain transitively even when its ends are farther apart than the radius", () => {
    // 1" steps in Dec (1/3600 deg): ends 3" apart, radius 1.5"
    const dec = [0, 1, 2, 3].map((k) => 10 + k / 3600);
    const r = dedupe([50, 50, 50, 50], dec, undefined, { radiusArcsec: 1.5 });
    expect(Array.from(r.group)).toEqual([0, 0, 0, 0]);
    expect(r.largest).toBe(4);
  });

  it("the representative of an object is its first valid row", () => {
    const group = Int32Array.of(0, 0, 1, 0, 1, 2);
    const valid = Uint8Array.of(0, 1, 0, 1, 0, 1);
    expect(Array.from(representatives(group, 3, valid))).toEqual([1, 2, 5]);
  });

  it("handles an empty catalogue and a single row", () => {
    expect(dedupe([], [], undefined, { radiusArcsec: 1 }).nGroups).toBe(0);
    const one = dedupe([1], [1], undefined, { radiusArcsec: 1 });
    expect(Array.from(one.group)).toEqual([0]);
    expect(Array.from(one.size)).toEqual([1]);
  });
});
