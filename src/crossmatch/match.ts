/**
 * Cross-matching two catalogues on typed arrays: pairs within the search radius (zone engine),
 * acceptance tests and scores (select.ts), the chosen matches, their ambiguity, and the joined rows.
 *
 * Radius and per-source errors: with --radius R alone a pair is accepted when sep <= R; with
 * --sigma K alone when sep <= K sqrt(sA^2 + sB^2) (the search radius is then K times the largest
 * combined error present); with both, when both hold (R is a hard cap, and a pair lacking an error
 * falls back on R alone). Without R, a pair lacking an error is rejected and counted.
 */
import { ARCSEC } from "../sky/angles.js";
import { blockPairs, degreeBandJobs, degreeBandPairs, mergePairs, type DegreeBandJob } from "./pairs.js";
import { ambiguity, candidateCounts, scoreCandidates, selectMatches, AMBIGUITY_DELTA, type Candidates, type SelectMode } from "./select.js";
import { positionBlock, skyPoints, type PairList, type SkyPoints } from "./zones.js";

export type JoinMode = "inner" | "left" | "outer";
export const JOIN_MODES: readonly JoinMode[] = ["inner", "left", "outer"];

/** One side of a match, as columns. */
export interface MatchSide {
  raDeg: ArrayLike<number>;
  decDeg: ArrayLike<number>;
  /** 1-sigma positional error per axis, arcsec (NaN unknown). */
  posErrArcsec?: Float64Array;
  /** Velocity cz (km/s), NaN unknown. */
  velocityKmS?: Float64Array;
}

export interface MatchOptions {
  radiusArcsec?: number;
  sigmaK?: number;
  maxDvKmS?: number;
  select?: SelectMode;
  ambiguityDelta?: number;
  partitions?: number;
  onProgress?: (done: number, total: number) => void;
}

export interface MatchResult {
  /** The accepted candidates (all pairs passing the tests), sorted by A row then score. */
  candidates: Candidates;
  /** Indices into candidates of the chosen matches, increasing. */
  chosen: Int32Array;
  /** 1 where chosen[t] is ambiguous. */
  ambiguous: Uint8Array;
  /** Accepted candidates per A row. */
  nCandidates: Int32Array;
  /** Search radius actually used, arcsec. */
  searchRadiusArcsec: number;
  nA: number;
  nB: number;
  /** Rows with a usable position. */
  usableA: number;
  usableB: number;
  /** Unit vectors of every row (made on first read). */
  readonly pointsA: SkyPoints;
  readonly pointsB: SkyPoints;
}

/** Matches A against B. Throws (plain Error) on an option the kernel cannot use; the CLI checks options first. */
export function crossMatch(a: MatchSide, b: MatchSide, o: MatchOptions): MatchResult {
  const search = searchRadiusArcsec(a, b, o);
  const blockA = positionBlock(a.raDeg, a.decDeg);
  const blockB = positionBlock(b.raDeg, b.decDeg);
  const nA = a.raDeg.length;
  const pairs = blockPairs(blockA, blockB, nA, search * ARCSEC, { partitions: o.partitions, onProgress: o.onProgress });
  return finishMatch({ a, b, o, nA, nB: b.raDeg.length, usableA: blockA.length, usableB: blockB.length, search }, pairs);
}

/** Runs band jobs and returns each band's sorted pairs, in job order (threads.ts runs them on worker threads). */
export type BandRunner = (jobs: DegreeBandJob[]) => Promise<PairList[]>;

/** The runner that runs every band on this thread, one after another. */
export const runBandsHere: BandRunner = async (jobs) => jobs.map(degreeBandPairs);

/**
 * crossMatch with the sky cut into `bands` declination bands handed to `runBands` (e.g. worker
 * threads). The result is identical to crossMatch's: the pair list is the same whatever the banding.
 */
export async function crossMatchBanded(a: MatchSide, b: MatchSide, o: MatchOptions, bands: number, runBands: BandRunner = runBandsHere): Promise<MatchResult> {
  const search = searchRadiusArcsec(a, b, o);
  const jobs = degreeBandJobs(float64(a.raDeg), float64(a.decDeg), float64(b.raDeg), float64(b.decDeg), search * ARCSEC, Math.max(bands, Math.floor(o.partitions ?? 1)));
  const lists = await runBands(jobs);
  o.onProgress?.(jobs.length, jobs.length);
  const nA = a.raDeg.length;
  return finishMatch({ a, b, o, nA, nB: b.raDeg.length, usableA: countUsable(a), usableB: countUsable(b), search }, mergePairs(lists, nA));
}

function float64(x: ArrayLike<number>): Float64Array {
  return x instanceof Float64Array ? x : Float64Array.from(x);
}

/** Rows with a usable position (the test of skyPoints and positionBlock). */
function countUsable(s: MatchSide): number {
  let n = 0;
  for (let i = 0; i < s.raDeg.length; i++) {
    const d = s.decDeg[i]!;
    if (Number.isFinite(s.raDeg[i]!) && d >= -90 && d <= 90) n++;
  }
  return n;
}

interface PreparedMatch {
  a: MatchSide;
  b: MatchSide;
  o: MatchOptions;
  nA: number;
  nB: number;
  usableA: number;
  usableB: number;
  search: number;
}

function finishMatch(m: PreparedMatch, pairs: PairList): MatchResult {
  const { a, b, o, nA, nB } = m;
  const candidates = scoreCandidates(pairs, {
    radiusRad: o.radiusArcsec === undefined ? undefined : o.radiusArcsec * ARCSEC,
    sigmaK: o.sigmaK,
    errARad: a.posErrArcsec && scaled(a.posErrArcsec, ARCSEC),
    errBRad: b.posErrArcsec && scaled(b.posErrArcsec, ARCSEC),
    vAKmS: a.velocityKmS,
    vBKmS: b.velocityKmS,
    maxDvKmS: o.maxDvKmS,
  });
  const chosen = selectMatches(candidates, o.select ?? "nearest", nA, nB);
  const amb = ambiguity(candidates, chosen, nA, nB, o.ambiguityDelta ?? AMBIGUITY_DELTA);
  // unit vectors of every row are only needed by the diagnostics: made on first use
  let pointsA: SkyPoints | undefined;
  let pointsB: SkyPoints | undefined;
  return {
    candidates,
    chosen,
    ambiguous: amb,
    nCandidates: candidateCounts(candidates, nA),
    searchRadiusArcsec: m.search,
    nA,
    nB,
    usableA: m.usableA,
    usableB: m.usableB,
    get pointsA() {
      return (pointsA ??= skyPoints(a.raDeg, a.decDeg));
    },
    get pointsB() {
      return (pointsB ??= skyPoints(b.raDeg, b.decDeg));
    },
  };
}

/** The radius the engine searches: R, or K times the largest combined error when only --sigma is given. */
export function searchRadiusArcsec(a: MatchSide, b: MatchSide, o: MatchOptions): number {
  if (o.radiusArcsec !== undefined) return o.radiusArcsec;
  if (o.sigmaK === undefined) throw new Error("a radius or a sigma factor is needed");
  const ma = maxFinite(a.posErrArcsec);
  const mb = maxFinite(b.posErrArcsec);
  if (!(ma > 0 || mb > 0)) throw new Error("--sigma needs positional errors in at least one catalogue");
  return o.sigmaK * Math.sqrt(ma * ma + mb * mb);
}

/** Output rows of a join: A row, B row and chosen-candidate index, each -1 where absent. */
export interface JoinedRows {
  rowA: Int32Array;
  rowB: Int32Array;
  /** index into MatchResult.chosen (-1 for an unmatched row) */
  match: Int32Array;
  length: number;
}

/**
 * inner: the chosen matches in A order (several rows per A row in mode "all");
 * left: every A row once per match, or once with no B; outer: left plus every B row no match uses,
 * in B order.
 */
export function joinRows(r: MatchResult, join: JoinMode): JoinedRows {
  // fields read once into locals: the hot loops then touch typed arrays only
  const ca = r.candidates.a;
  const cb = r.candidates.b;
  const chosen = r.chosen;
  const nA = r.nA;
  const nB = r.nB;
  const m = chosen.length;
  const usedB = new Uint8Array(nB);
  const matchedA = new Uint8Array(nA);
  for (let u = 0; u < m; u++) {
    const k = chosen[u]!;
    usedB[cb[k]!] = 1;
    matchedA[ca[k]!] = 1;
  }
  let n = m;
  if (join !== "inner") for (let i = 0; i < nA; i++) if (!matchedA[i]) n++;
  if (join === "outer") for (let j = 0; j < nB; j++) if (!usedB[j]) n++;
  const rowA = new Int32Array(n);
  const rowB = new Int32Array(n);
  const match = new Int32Array(n);
  let o = 0;
  let t = 0;
  if (join === "inner") {
    for (; t < m; t++) {
      const k = chosen[t]!;
      rowA[o] = ca[k]!;
      rowB[o] = cb[k]!;
      match[o++] = t;
    }
  } else {
    for (let i = 0; i < nA; i++) {
      if (!matchedA[i]) {
        rowA[o] = i;
        rowB[o] = -1;
        match[o++] = -1;
        continue;
      }
      while (t < m && ca[chosen[t]!] === i) {
        rowA[o] = i;
        rowB[o] = cb[chosen[t]!]!;
        match[o++] = t;
        t++;
      }
    }
    if (join === "outer") {
      for (let j = 0; j < nB; j++) {
        if (usedB[j]) continue;
        rowA[o] = -1;
        rowB[o] = j;
        match[o++] = -1;
      }
    }
  }
  return { rowA, rowB, match, length: n };
}

/** Summary counts of a match. */
export interface MatchCounts {
  rowsA: number;
  rowsB: number;
  usableA: number;
  usableB: number;
  /** accepted candidate pairs */
  candidatePairs: number;
  /** chosen pairs */
  matchedPairs: number;
  /** A rows / B rows in at least one chosen pair */
  matchedA: number;
  matchedB: number;
  unmatchedA: number;
  unmatchedB: number;
  ambiguous: number;
  /** A rows with more than one accepted candidate */
  multipleCandidatesA: number;
  rejectedBySigma: number;
  rejectedByDv: number;
  rejectedNoError: number;
  uncheckedDv: number;
}

export function matchCounts(r: MatchResult): MatchCounts {
  const c = r.candidates;
  const ca = c.a;
  const cb = c.b;
  const chosen = r.chosen;
  const ambiguous = r.ambiguous;
  const nCandidates = r.nCandidates;
  const usedA = new Uint8Array(r.nA);
  const usedB = new Uint8Array(r.nB);
  let amb = 0;
  let matchedA = 0;
  let matchedB = 0;
  // rows counted as they are first marked (this runs once, cold: no second pass over every row)
  for (let t = 0; t < chosen.length; t++) {
    const k = chosen[t]!;
    const i = ca[k]!;
    const j = cb[k]!;
    if (usedA[i] === 0) {
      usedA[i] = 1;
      matchedA++;
    }
    if (usedB[j] === 0) {
      usedB[j] = 1;
      matchedB++;
    }
    amb += ambiguous[t]!;
  }
  let multi = 0;
  for (let i = 0; i < nCandidates.length; i++) if (nCandidates[i]! > 1) multi++;
  return {
    rowsA: r.nA,
    rowsB: r.nB,
    usableA: r.usableA,
    usableB: r.usableB,
    candidatePairs: c.length,
    matchedPairs: r.chosen.length,
    matchedA,
    matchedB,
    unmatchedA: r.nA - matchedA,
    unmatchedB: r.nB - matchedB,
    ambiguous: amb,
    multipleCandidatesA: multi,
    rejectedBySigma: c.rejectedBySigma,
    rejectedByDv: c.rejectedByDv,
    rejectedNoError: c.rejectedNoError,
    uncheckedDv: c.uncheckedDv,
  };
}

function scaled(x: Float64Array, f: number): Float64Array {
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = x[i]! * f;
  return out;
}

function maxFinite(x: Float64Array | undefined): number {
  let m = 0;
  if (!x) return 0;
  for (let i = 0; i < x.length; i++) {
    const v = x[i]!;
    if (v > m && Number.isFinite(v)) m = v;
  }
  return m;
}
