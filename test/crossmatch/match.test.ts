import { describe, expect, it } from "vitest";
import { randomLcg, randomUniform } from "d3-random";
import { crossMatch, joinRows, matchCounts, type JoinMode, type MatchOptions } from "../../src/crossmatch/match.js";
import { SELECT_MODES, AMBIGUITY_DELTA, type SelectMode } from "../../src/crossmatch/select.js";
import { bruteAmbiguous, bruteCandidates, bruteNearest, bruteOneToOne, type BruteCandidate } from "../../src/crossmatch/brute.js";
import { skyPoints } from "../../src/crossmatch/zones.js";
import { ARCSEC } from "../../src/sky/angles.js";
import { hardSky, withCopies } from "./sky-fixtures.js";

function extras(n: number, seed: number) {
  const u = randomUniform.source(randomLcg(seed))(0, 1);
  const err = new Float64Array(n);
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    err[i] = i % 11 === 0 ? NaN : 0.2 + 1.5 * u(); // arcsec, some unknown
    v[i] = i % 13 === 0 ? NaN : 5000 + 1500 * (u() - 0.5); // km/s, some unknown
  }
  return { err, v };
}

function bruteChoice(all: BruteCandidate[], mode: SelectMode): BruteCandidate[] {
  if (mode === "all") return [...all].sort((x, y) => x.a - y.a || x.score - y.score || x.sepRad - y.sepRad || x.b - y.b);
  return mode === "nearest" ? bruteNearest(all) : bruteOneToOne(all);
}

function bruteJoin(chosen: BruteCandidate[], nA: number, nB: number, join: JoinMode): string[] {
  const rows: string[] = [];
  if (join === "inner") return chosen.map((c) => `${c.a}:${c.b}`);
  for (let i = 0; i < nA; i++) {
    const mine = chosen.filter((c) => c.a === i);
    if (mine.length === 0) rows.push(`${i}:-1`);
    for (const c of mine) rows.push(`${i}:${c.b}`);
  }
  if (join === "outer") for (let j = 0; j < nB; j++) if (!chosen.some((c) => c.b === j)) rows.push(`-1:${j}`);
  return rows;
}

const OPTION_SETS: [string, Omit<MatchOptions, "select">][] = [
  ["radius 4 arcsec", { radiusArcsec: 4 }],
  ["radius 4 arcsec with a 300 km/s velocity limit", { radiusArcsec: 4, maxDvKmS: 300 }],
  ["sigma 3 alone", { sigmaK: 3 }],
  ["sigma 3 capped at 2 arcsec, with a 500 km/s limit", { sigmaK: 3, radiusArcsec: 2, maxDvKmS: 500 }],
];

describe("crossMatch against the brute-force twins", () => {
  const A = hardSky(401, 5);
  const B = withCopies(hardSky(357, 6), A, 60);
  const ea = extras(A.ra.length, 7);
  const eb = extras(B.ra.length, 8);
  const pa = skyPoints(A.ra, A.dec);
  const pb = skyPoints(B.ra, B.dec);
  for (const [label, opts] of OPTION_SETS) {
    for (const mode of SELECT_MODES) {
      it(`--select ${mode}, ${label}: same chosen pairs, ambiguity and joins as brute force`, () => {
        const r = crossMatch(
          { raDeg: A.ra, decDeg: A.dec, posErrArcsec: ea.err, velocityKmS: ea.v },
          { raDeg: B.ra, decDeg: B.dec, posErrArcsec: eb.err, velocityKmS: eb.v },
          { ...opts, select: mode, partitions: mode === "all" ? 3 : 1 },
        );
        const scale = (x: Float64Array) => x.map((e) => e * ARCSEC);
        const all = bruteCandidates(pa, pb, {
          radiusRad: opts.radiusArcsec === undefined ? undefined : opts.radiusArcsec * ARCSEC,
          sigmaK: opts.sigmaK,
          errARad: scale(ea.err),
          errBRad: scale(eb.err),
          vAKmS: ea.v,
          vBKmS: eb.v,
          maxDvKmS: opts.maxDvKmS,
        });
        expect(all.length).toBeGreaterThan(100);
        expect(r.candidates.length).toBe(all.length);
        const want = bruteChoice(all, mode);
        const got = Array.from(r.chosen, (k) => `${r.candidates.a[k]}:${r.candidates.b[k]}`);
        expect(got).toEqual(want.map((c) => `${c.a}:${c.b}`));
        const gotAmb = Array.from(r.ambiguous, (x) => x === 1);
        expect(gotAmb).toEqual(bruteAmbiguous(all, want, AMBIGUITY_DELTA));
        // the counts: distinct rows of each side among the brute-force choice (rows repeat under "all")
        const counts = matchCounts(r);
        expect([counts.matchedPairs, counts.matchedA, counts.matchedB]).toEqual([want.length, new Set(want.map((c) => c.a)).size, new Set(want.map((c) => c.b)).size]);
        expect(counts.unmatchedA + counts.matchedA).toBe(A.ra.length);
        for (const join of ["inner", "left", "outer"] as const) {
          const j = joinRows(r, join);
          expect(Array.from(j.rowA, (x, t) => `${x}:${j.rowB[t]}`)).toEqual(bruteJoin(want, A.ra.length, B.ra.length, join));
        }
      });
    }
  }

  it("one-to-one never uses a row twice and nearest may", () => {
    const r1 = crossMatch({ raDeg: A.ra, decDeg: A.dec }, { raDeg: B.ra, decDeg: B.dec }, { radiusArcsec: 4, select: "one-to-one" });
    const usedB = Array.from(r1.chosen, (k) => r1.candidates.b[k]);
    expect(new Set(usedB).size).toBe(usedB.length);
    const rn = crossMatch({ raDeg: A.ra, decDeg: A.dec }, { raDeg: B.ra, decDeg: B.dec }, { radiusArcsec: 4, select: "nearest" });
    const usedBn = Array.from(rn.chosen, (k) => rn.candidates.b[k]);
    expect(new Set(usedBn).size).toBeLessThan(usedBn.length); // clumps: several A rows share a nearest B
  });
});

describe("crossMatch on small cases", () => {
  it("one-to-one gives the good pair first, so it is never shadowed by a worse one", () => {
    // A0 is 1.0" from B0; A1 is 0.5" from B0 and 1.5" from B1. Greedy by A row would give A0-B0 and
    // leave A1 with B1; the global order takes A1-B0 (0.5") first, then A0 has nothing left.
    const A = { raDeg: [10, 10], decDeg: [0, 0.5 / 3600 + 1 / 3600] };
    const B = { raDeg: [10, 10], decDeg: [1 / 3600, 1 / 3600 + 2 / 3600] };
    const r = crossMatch(A, B, { radiusArcsec: 2, select: "one-to-one" });
    const pairs = Array.from(r.chosen, (k) => [r.candidates.a[k], r.candidates.b[k]]);
    expect(pairs).toEqual([[1, 0]]);
  });

  it("a velocity limit rejects the positional nearest in favour of the true counterpart", () => {
    // A0 at cz 5000; B0 0.3" away at cz 9000 (foreground/background), B1 1.2" away at cz 5030.
    const A = { raDeg: [150], decDeg: [20], velocityKmS: Float64Array.of(5000) };
    const B = { raDeg: [150, 150], decDeg: [20 + 0.3 / 3600, 20 - 1.2 / 3600], velocityKmS: Float64Array.of(9000, 5030) };
    const plain = crossMatch(A, B, { radiusArcsec: 2 });
    expect(plain.candidates.b[plain.chosen[0]!]).toBe(0);
    const withDv = crossMatch(A, B, { radiusArcsec: 2, maxDvKmS: 500 });
    expect(withDv.candidates.b[withDv.chosen[0]!]).toBe(1);
    expect(withDv.candidates.dvKmS[withDv.chosen[0]!]).toBe(30);
    expect(matchCounts(withDv).rejectedByDv).toBe(1);
  });

  it("flags a match as ambiguous when a second candidate is almost as good, and not otherwise", () => {
    const A = { raDeg: [0, 0], decDeg: [0, 10] };
    // row 0: candidates at 0.5" and 0.6" (scores 0.0625 and 0.09 at R = 2"): ambiguous
    // row 1: candidates at 0.2" and 1.9" (scores 0.01 and 0.9025): not ambiguous
    const B = { raDeg: [0, 0, 0, 0], decDeg: [0.5 / 3600, -0.6 / 3600, 10 + 0.2 / 3600, 10 - 1.9 / 3600] };
    const r = crossMatch(A, B, { radiusArcsec: 2 });
    expect(Array.from(r.ambiguous)).toEqual([1, 0]);
    expect(Array.from(r.nCandidates)).toEqual([2, 2]);
  });

  it("handles empty catalogues and rows without positions", () => {
    const r = crossMatch({ raDeg: [], decDeg: [] }, { raDeg: [1], decDeg: [1] }, { radiusArcsec: 1 });
    expect(r.chosen.length).toBe(0);
    expect(joinRows(r, "outer").length).toBe(1);
    const r2 = crossMatch({ raDeg: [NaN, 1], decDeg: [1, 1] }, { raDeg: [1], decDeg: [1] }, { radiusArcsec: 1 });
    expect(Array.from(joinRows(r2, "left").rowB)).toEqual([-1, 0]);
    expect(matchCounts(r2).usableA).toBe(1);
  });
});
