/**
 * Brute-force O(N * M) twins of every cross-match step: the test oracle and the benchmark baseline.
 * Written for obviousness, not speed: each one tests every pair with the same predicate as the
 * engine (exact atan2 separation <= R on the same unit vectors) and then applies its rule directly
 * (scanning for minima instead of sorting, flooding instead of union-find).
 */
import { angleBetween } from "../sky/vectors.js";
import type { PairList, SkyPoints } from "./zones.js";

/** Every pair with separation <= radiusRad, sorted by a, then separation, then b. */
export function brutePairs(a: SkyPoints, b: SkyPoints, radiusRad: number): PairList {
  const pa: number[] = [];
  const pb: number[] = [];
  const ps: number[] = [];
  for (let i = 0; i < a.length; i++) {
    const ai = 5 * i;
    if (a.p[ai + 1] !== a.p[ai + 1]) continue;
    const row: [number, number][] = [];
    for (let j = 0; j < b.length; j++) {
      const bj = 5 * j;
      if (b.p[bj + 1] !== b.p[bj + 1]) continue;
      const s = angleBetween(a.p[ai + 2]!, a.p[ai + 3]!, a.p[ai + 4]!, b.p[bj + 2]!, b.p[bj + 3]!, b.p[bj + 4]!);
      if (s <= radiusRad) row.push([j, s]);
    }
    row.sort((x, y) => x[1] - y[1] || x[0] - y[0]);
    for (const [j, s] of row) {
      pa.push(i);
      pb.push(j);
      ps.push(s);
    }
  }
  return { a: Int32Array.from(pa), b: Int32Array.from(pb), sepRad: Float64Array.from(ps), length: pa.length };
}

/** Pairs of one catalogue with itself: i < j only. */
export function bruteSelfPairs(a: SkyPoints, radiusRad: number): PairList {
  const all = brutePairs(a, a, radiusRad);
  const keep: number[] = [];
  for (let k = 0; k < all.length; k++) if (all.a[k]! < all.b[k]!) keep.push(k);
  return {
    a: Int32Array.from(keep, (k) => all.a[k]!),
    b: Int32Array.from(keep, (k) => all.b[k]!),
    sepRad: Float64Array.from(keep, (k) => all.sepRad[k]!),
    length: keep.length,
  };
}

/** A scored candidate as the brute-force selections see it. */
export interface BruteCandidate {
  a: number;
  b: number;
  sepRad: number;
  score: number;
}

/** Nearest: for each a, the candidate of least (score, separation, b). One per a. */
export function bruteNearest(c: BruteCandidate[]): BruteCandidate[] {
  const best = new Map<number, BruteCandidate>();
  for (const x of c) {
    const y = best.get(x.a);
    if (!y || better(x, y)) best.set(x.a, x);
  }
  return [...best.values()].sort((x, y) => x.a - y.a);
}

/** One-to-one: repeatedly take the best remaining candidate whose a and b are both unused. */
export function bruteOneToOne(c: BruteCandidate[]): BruteCandidate[] {
  const usedA = new Set<number>();
  const usedB = new Set<number>();
  const chosen: BruteCandidate[] = [];
  for (;;) {
    let pick: BruteCandidate | undefined;
    for (const x of c) {
      if (usedA.has(x.a) || usedB.has(x.b)) continue;
      if (!pick || better(x, pick) || (x.score === pick.score && x.sepRad === pick.sepRad && x.b === pick.b && x.a < pick.a)) pick = x;
    }
    if (!pick) break;
    chosen.push(pick);
    usedA.add(pick.a);
    usedB.add(pick.b);
  }
  return chosen.sort((x, y) => x.a - y.a);
}

function better(x: BruteCandidate, y: BruteCandidate): boolean {
  if (x.score !== y.score) return x.score < y.score;
  if (x.sepRad !== y.sepRad) return x.sepRad < y.sepRad;
  if (x.a !== y.a) return x.a < y.a;
  return x.b < y.b;
}

/** Groups of rows linked transitively by the given pairs: label = smallest row of the group, flooded. */
export function bruteGroups(n: number, pa: ArrayLike<number>, pb: ArrayLike<number>): Int32Array {
  const label = Int32Array.from({ length: n }, (_, i) => i);
  let changed = true;
  while (changed) {
    changed = false;
    for (let k = 0; k < pa.length; k++) {
      const i = pa[k]!;
      const j = pb[k]!;
      const m = Math.min(label[i]!, label[j]!);
      if (label[i] !== m || label[j] !== m) {
        label[i] = m;
        label[j] = m;
        changed = true;
      }
    }
  }
  return label;
}

/** The acceptance tests and scores of select.ts, written out plainly over every pair of a and b. */
export function bruteCandidates(
  a: SkyPoints,
  b: SkyPoints,
  o: { radiusRad?: number; sigmaK?: number; errARad?: Float64Array; errBRad?: Float64Array; vAKmS?: Float64Array; vBKmS?: Float64Array; maxDvKmS?: number },
): BruteCandidate[] {
  const out: BruteCandidate[] = [];
  const search = o.radiusRad ?? Math.PI;
  const all = brutePairs(a, b, search);
  for (let k = 0; k < all.length; k++) {
    const i = all.a[k]!;
    const j = all.b[k]!;
    const sep = all.sepRad[k]!;
    let r = o.radiusRad ?? Infinity;
    if (o.sigmaK !== undefined) {
      const sa = o.errARad?.[i] ?? NaN;
      const sb = o.errBRad?.[j] ?? NaN;
      const sp = o.sigmaK * Math.sqrt(sa * sa + sb * sb);
      if (Number.isNaN(sp) && r === Infinity) continue;
      if (!Number.isNaN(sp) && sp < r) r = sp;
    }
    if (!(sep <= r)) continue;
    let score = r > 0 ? (sep / r) * (sep / r) : 0;
    if (o.maxDvKmS !== undefined) {
      const d = o.vAKmS && o.vBKmS ? o.vBKmS[j]! - o.vAKmS[i]! : NaN;
      if (Number.isNaN(d)) score += 1;
      else if (Math.abs(d) > o.maxDvKmS) continue;
      else score += o.maxDvKmS > 0 ? (d / o.maxDvKmS) * (d / o.maxDvKmS) : 0;
    }
    out.push({ a: i, b: j, sepRad: sep, score });
  }
  return out;
}

/** Ambiguity of each chosen candidate: another candidate sharing its a or b with score <= s + delta. */
export function bruteAmbiguous(all: BruteCandidate[], chosen: BruteCandidate[], delta: number): boolean[] {
  return chosen.map((x) => all.some((y) => y !== x && !(y.a === x.a && y.b === x.b) && (y.a === x.a || y.b === x.b) && y.score <= x.score + delta));
}
