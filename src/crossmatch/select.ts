/**
 * From pairs within the search radius to chosen matches.
 *
 * Each pair gets a score: (sep / r)^2, where r is the pair's acceptance radius (R, or K * sigma_pair
 * with per-source errors, the smaller of the two when both are given), plus (dv / V)^2 when a
 * velocity limit V is given. Pairs with sep > r or |dv| > V are rejected. Lower is better; with a
 * velocity limit the score is the combined score the one-to-one order uses, so the velocity
 * difference breaks positional near-ties.
 *
 * Modes: "nearest" (each A row's best candidate; a B row may serve several A rows), "all" (every
 * accepted pair), "one-to-one" (global greedy in order of increasing score, then separation, then
 * A row, then B row: a pair is taken when neither row is used yet, so a good pair is never shadowed
 * by a worse one).
 *
 * Ambiguous: a chosen pair (a, b) with score s is ambiguous when some other accepted pair that shares
 * a or b has score <= s + delta (default AMBIGUITY_DELTA). With Gaussian errors and r = k sigma,
 * a score gap delta is a likelihood ratio exp(k^2 delta / 2) between the two pairs: for k = 3 and
 * delta = 0.25, about 3.1, i.e. the chosen pair is less than ~3 times as likely as its competitor.
 */
import type { PairList } from "./zones.js";

export type SelectMode = "nearest" | "all" | "one-to-one";
export const SELECT_MODES: readonly SelectMode[] = ["nearest", "all", "one-to-one"];

/** Default score gap below which a competing candidate makes a match ambiguous (see the module note). */
export const AMBIGUITY_DELTA = 0.25;

export interface ScoreOptions {
  /** Hard radius R in radians; undefined when only --sigma is given. */
  radiusRad?: number;
  /** K for sep <= K sqrt(sA^2 + sB^2). */
  sigmaK?: number;
  /** Per-row positional error (1-sigma, per axis), radians; NaN when unknown. */
  errARad?: Float64Array;
  errBRad?: Float64Array;
  /** Velocities (km/s) per row; NaN when unknown. */
  vAKmS?: Float64Array;
  vBKmS?: Float64Array;
  /** Velocity limit V in km/s. */
  maxDvKmS?: number;
}

/** Accepted candidates, sorted by A row, then score, then separation, then B row. */
export interface Candidates {
  a: Int32Array;
  b: Int32Array;
  sepRad: Float64Array;
  /** v_B - v_A in km/s; NaN when either velocity is unknown or no velocities were given. */
  dvKmS: Float64Array;
  score: Float64Array;
  length: number;
  /** pairs rejected by the per-source error test */
  rejectedBySigma: number;
  /** pairs rejected by the velocity limit */
  rejectedByDv: number;
  /** pairs rejected because sigma mode had no error for a row and no --radius to fall back on */
  rejectedNoError: number;
  /** accepted pairs whose velocity could not be checked (a velocity missing): dv term set to 1 */
  uncheckedDv: number;
}

/** Applies the acceptance tests and scores the pairs. */
export function scoreCandidates(p: PairList, o: ScoreOptions): Candidates {
  const n = p.length;
  if (o.sigmaK === undefined && o.maxDvKmS === undefined) {
    const fast = radiusOnly(p, o);
    if (fast) return fast;
  }
  const keep = new Int32Array(n);
  const score = new Float64Array(n);
  const dv = new Float64Array(n);
  const useSigma = o.sigmaK !== undefined;
  const K = o.sigmaK ?? 0;
  const R = o.radiusRad ?? Infinity;
  const V = o.maxDvKmS;
  const haveV = o.vAKmS !== undefined && o.vBKmS !== undefined;
  let kept = 0;
  let rejectedBySigma = 0;
  let rejectedByDv = 0;
  let rejectedNoError = 0;
  let uncheckedDv = 0;
  for (let k = 0; k < n; k++) {
    const i = p.a[k]!;
    const j = p.b[k]!;
    const sep = p.sepRad[k]!;
    let r = R;
    if (useSigma) {
      const sa = o.errARad?.[i] ?? NaN;
      const sb = o.errBRad?.[j] ?? NaN;
      const sp = K * Math.sqrt(sa * sa + sb * sb);
      if (sp === sp) {
        if (sp < r) r = sp;
      } else if (r === Infinity) {
        rejectedNoError++;
        continue;
      }
      if (sep > r) {
        rejectedBySigma++;
        continue;
      }
    }
    if (sep > r) continue;
    const d = haveV ? o.vBKmS![j]! - o.vAKmS![i]! : NaN;
    let s = r > 0 ? (sep / r) * (sep / r) : 0;
    if (V !== undefined) {
      if (d === d) {
        if (Math.abs(d) > V) {
          rejectedByDv++;
          continue;
        }
        s += V > 0 ? (d / V) * (d / V) : 0;
      } else {
        s += 1;
        uncheckedDv++;
      }
    }
    keep[kept] = k;
    score[kept] = s;
    dv[kept] = d;
    kept++;
  }
  if (kept === n && !useSigma && V === undefined) {
    // radius alone: every pair is kept and the score follows the separation, so p's order stands
    return { a: p.a, b: p.b, sepRad: p.sepRad, dvKmS: dv, score, length: n, rejectedBySigma, rejectedByDv, rejectedNoError, uncheckedDv };
  }
  // p is sorted by (a, sep, b); re-sort each A row's run by (score, sep, b).
  const out: Candidates = {
    a: new Int32Array(kept),
    b: new Int32Array(kept),
    sepRad: new Float64Array(kept),
    dvKmS: new Float64Array(kept),
    score: new Float64Array(kept),
    length: kept,
    rejectedBySigma,
    rejectedByDv,
    rejectedNoError,
    uncheckedDv,
  };
  const order = iota(kept);
  let lo = 0;
  while (lo < kept) {
    let hi = lo + 1;
    const ai = p.a[keep[lo]!]!;
    while (hi < kept && p.a[keep[hi]!] === ai) hi++;
    if (hi - lo > 1 && (useSigma || V !== undefined)) {
      const run = order.subarray(lo, hi);
      run.sort((x, y) => score[x]! - score[y]! || p.sepRad[keep[x]!]! - p.sepRad[keep[y]!]! || p.b[keep[x]!]! - p.b[keep[y]!]!);
    }
    lo = hi;
  }
  for (let t = 0; t < kept; t++) {
    const u = order[t]!;
    const k = keep[u]!;
    out.a[t] = p.a[k]!;
    out.b[t] = p.b[k]!;
    out.sepRad[t] = p.sepRad[k]!;
    out.dvKmS[t] = dv[u]!;
    out.score[t] = score[u]!;
  }
  return out;
}

/**
 * The radius-only case when every pair is within R (pairs from the engine at that radius): all are
 * kept in their order, with the general path's score and dv; undefined when a pair lies beyond R.
 */
function radiusOnly(p: PairList, o: ScoreOptions): Candidates | undefined {
  const n = p.length;
  const R = o.radiusRad ?? Infinity;
  const sep = p.sepRad;
  for (let k = 0; k < n; k++) if (!(sep[k]! <= R)) return undefined;
  const score = new Float64Array(n);
  const dv = new Float64Array(n);
  if (R > 0) {
    for (let k = 0; k < n; k++) {
      const x = sep[k]! / R;
      score[k] = x * x;
    }
  }
  const vA = o.vAKmS;
  const vB = o.vBKmS;
  if (vA !== undefined && vB !== undefined) {
    for (let k = 0; k < n; k++) dv[k] = vB[p.b[k]!]! - vA[p.a[k]!]!;
  } else dv.fill(NaN);
  return { a: p.a, b: p.b, sepRad: p.sepRad, dvKmS: dv, score, length: n, rejectedBySigma: 0, rejectedByDv: 0, rejectedNoError: 0, uncheckedDv: 0 };
}

/** Candidates per A row (Int32Array of length nA). */
export function candidateCounts(c: Candidates, nA: number): Int32Array {
  const n = new Int32Array(nA);
  for (let k = 0; k < c.length; k++) n[c.a[k]!]!++;
  return n;
}

/** The chosen candidates (indices into c), in increasing order (so grouped by A row). */
export function selectMatches(c: Candidates, mode: SelectMode, nA: number, nB: number): Int32Array {
  if (mode === "all") return iota(c.length);
  if (mode === "nearest") {
    let m = 0;
    for (let k = 0; k < c.length; k++) if (k === 0 || c.a[k] !== c.a[k - 1]) m++;
    const out = new Int32Array(m);
    m = 0;
    for (let k = 0; k < c.length; k++) if (k === 0 || c.a[k] !== c.a[k - 1]) out[m++] = k;
    return out;
  }
  // one-to-one: global greedy
  const order = iota(c.length);
  order.sort((x, y) => c.score[x]! - c.score[y]! || c.sepRad[x]! - c.sepRad[y]! || c.a[x]! - c.a[y]! || c.b[x]! - c.b[y]!);
  const usedB = new Uint8Array(nB);
  const usedA = new Uint8Array(nA);
  const chosen: number[] = [];
  for (let t = 0; t < order.length; t++) {
    const k = order[t]!;
    const i = c.a[k]!;
    const j = c.b[k]!;
    if (usedB[j] || usedA[i]) continue;
    usedB[j] = 1;
    usedA[i] = 1;
    chosen.push(k);
  }
  return Int32Array.from(chosen).sort();
}

/** 1 where the chosen candidate is ambiguous (see the module note), for each entry of `chosen`. */
export function ambiguity(c: Candidates, chosen: Int32Array, nA: number, nB: number, delta = AMBIGUITY_DELTA): Uint8Array {
  void nA;
  // A side: candidates are sorted by A row then score, so a row's best is the first of its run and
  // its second-best the next one. B side: the best and second-best candidate of each B row, kept as
  // candidate index + 1 (0: none; an unset score is Infinity), the first of equal scores winning.
  const ca = c.a;
  const cb = c.b;
  const score = c.score;
  const n = c.length;
  const best1 = new Int32Array(nB);
  const best2 = new Int32Array(nB);
  for (let k = 0; k < n; k++) {
    const s = score[k]!;
    const j = cb[k]!;
    const b1 = best1[j]!;
    if (s < (b1 === 0 ? Infinity : score[b1 - 1]!)) {
      best2[j] = b1;
      best1[j] = k + 1;
    } else {
      const b2 = best2[j]!;
      if (s < (b2 === 0 ? Infinity : score[b2 - 1]!)) best2[j] = k + 1;
    }
  }
  const out = new Uint8Array(chosen.length);
  let lo = 0; // start of the A run holding the current chosen candidate (chosen is increasing)
  for (let t = 0; t < chosen.length; t++) {
    const k = chosen[t]!;
    if (t === 0 || ca[k] !== ca[lo]) {
      lo = k;
      while (lo > 0 && ca[lo - 1] === ca[k]) lo--;
    }
    const s = score[k]!;
    const j = cb[k]!;
    let rivalA: number;
    if (k !== lo) rivalA = score[lo]!;
    else rivalA = lo + 1 < n && ca[lo + 1] === ca[lo] ? score[lo + 1]! : Infinity;
    const other = best1[j]! === k + 1 ? best2[j]! : best1[j]!;
    const rivalB = other === 0 ? Infinity : score[other - 1]!;
    out[t] = rivalA <= s + delta || rivalB <= s + delta ? 1 : 0;
  }
  return out;
}

/** 0, 1, ..., n - 1 */
function iota(n: number): Int32Array {
  const out = new Int32Array(n);
  for (let k = 0; k < n; k++) out[k] = k;
  return out;
}
