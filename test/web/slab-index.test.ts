import { describe, expect, it } from "vitest";
import { slabCandidates, slabIndexOf } from "../../web/slab-index.js";

/** The slab test of the slices, row by row (the brute-force twin). */
function bruteSlab(c: Float64Array, origin: number, half: number): number[] {
  const out: number[] = [];
  for (let i = 0; i < c.length; i++) if (Math.abs(c[i]! - origin) <= half) out.push(i);
  return out;
}

/** The candidates of the index, tested exactly, in index order. */
function indexedSlab(c: Float64Array, origin: number, half: number): number[] {
  const ix = slabIndexOf(c);
  const [from, to] = slabCandidates(ix, origin - half, origin + half);
  const out: number[] = [];
  for (let k = from; k < to; k++) {
    const i = ix.rows[k]!;
    if (Math.abs(c[i]! - origin) <= half) out.push(i);
  }
  return out.sort((a, b) => a - b);
}

describe("slab index", () => {
  let seed = 11;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);

  it("finds exactly the rows the row-by-row slab test finds, with NaN, infinities and ties", () => {
    for (const n of [0, 1, 2, 7, 1000, 20_001]) {
      const c = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const r = rnd();
        c[i] = i % 97 === 3 ? NaN : i % 211 === 5 ? Infinity : i % 13 === 0 ? 12.5 : (r - 0.5) * 300;
      }
      for (const [origin, half] of [
        [0, 10],
        [12.5, 0],
        [149, 5],
        [-160, 20],
        [400, 10],
        [3.7, 1e-9],
        [0, 1000],
      ] as const) {
        expect(indexedSlab(c, origin, half)).toEqual(bruteSlab(c, origin, half));
      }
    }
  });

  it("keeps rows in index order within a bucket and leaves non-finite rows out", () => {
    const c = Float64Array.from([5, NaN, 5, -Infinity, 5, 1, 9]);
    const ix = slabIndexOf(c);
    expect(Array.from(ix.rows).sort((a, b) => a - b)).toEqual([0, 2, 4, 5, 6]);
    const fives = Array.from(ix.rows).filter((i) => c[i] === 5);
    expect(fives).toEqual([0, 2, 4]);
  });

  it("gives nothing for an empty or NaN interval, and every finite row when all values are equal", () => {
    const c = Float64Array.from([2, 2, 2]);
    const ix = slabIndexOf(c);
    expect(slabCandidates(ix, 3, 1)).toEqual([0, 0]);
    expect(slabCandidates(ix, NaN, 1)).toEqual([0, 0]);
    expect(indexedSlab(c, 2, 0)).toEqual([0, 1, 2]);
  });
});
