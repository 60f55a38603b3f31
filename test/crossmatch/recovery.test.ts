import { describe, expect, it } from "vitest";
import { crossMatch, matchCounts } from "../../src/crossmatch/match.js";
import { chancePairs, suggestRadius, RAYLEIGH_R99 } from "../../src/crossmatch/diagnostics.js";
import { syntheticPair } from "./sky-fixtures.js";

/**
 * Completeness = true pairs recovered / true pairs; purity = correct chosen pairs / chosen pairs.
 * The truth is the generator's input (seeded), so these are statistical recovery checks.
 */
function score(r: ReturnType<typeof crossMatch>, truthB: Int32Array) {
  let correct = 0;
  for (let t = 0; t < r.chosen.length; t++) {
    const k = r.chosen[t]!;
    if (truthB[r.candidates.b[k]!] === r.candidates.a[k]) correct++;
  }
  let truePairs = 0;
  for (let j = 0; j < truthB.length; j++) if (truthB[j]! >= 0) truePairs++;
  return { completeness: correct / truePairs, purity: r.chosen.length ? correct / r.chosen.length : 0, chosen: r.chosen.length };
}

describe("recovery on a seeded synthetic pair with known truth", () => {
  // 20 000 galaxies in 100 deg^2 (200 per deg^2), 40 clumps of 60 within 15": cluster cores where
  // neighbours sit a few arcsec apart. B keeps 70 % jittered by 0.5" per axis plus 30 % unrelated rows.
  const S = syntheticPair({ n: 20000, nB: 20000, kept: 0.7, jitterArcsec: 0.5, clumps: 40, clumpSize: 60, clumpRadiusArcsec: 15, seed: 99 });
  const A = { raDeg: S.raA, decDeg: S.decA, velocityKmS: S.czA };
  const B = { raDeg: S.raB, decDeg: S.decB, velocityKmS: S.czB };

  it("one-to-one at 2 arcsec: completeness >= 0.98 and purity >= 0.98 on position alone", () => {
    // measured (seed 99): completeness 0.9870, purity 0.9878
    const r = crossMatch(A, B, { radiusArcsec: 2, select: "one-to-one" });
    const s = score(r, S.truthB);
    expect(s.completeness).toBeGreaterThanOrEqual(0.98);
    expect(s.purity).toBeGreaterThanOrEqual(0.98);
  });

  it("a 300 km/s velocity limit raises purity in the crowded cores (>= 0.995) without losing completeness", () => {
    // measured (seed 99): completeness 0.9983, purity 0.9986; 30 km/s jitter vs 800 km/s core dispersion
    const plain = score(crossMatch(A, B, { radiusArcsec: 2, select: "one-to-one" }), S.truthB);
    const r = crossMatch(A, B, { radiusArcsec: 2, select: "one-to-one", maxDvKmS: 300 });
    const s = score(r, S.truthB);
    expect(s.purity).toBeGreaterThanOrEqual(0.995);
    expect(s.purity).toBeGreaterThan(plain.purity);
    expect(s.completeness).toBeGreaterThanOrEqual(plain.completeness);
    expect(matchCounts(r).rejectedByDv).toBeGreaterThan(0);
  });

  it("nearest at 2 arcsec recovers as many true pairs as one-to-one but is less pure", () => {
    // measured (seed 99): nearest completeness 0.9911, purity 0.9675; with --max-dv 300: 0.9987, 0.9925
    const n = score(crossMatch(A, B, { radiusArcsec: 2, select: "nearest" }), S.truthB);
    const o = score(crossMatch(A, B, { radiusArcsec: 2, select: "one-to-one" }), S.truthB);
    expect(n.completeness).toBeGreaterThanOrEqual(o.completeness - 0.005);
    expect(n.purity).toBeLessThanOrEqual(o.purity);
  });

  it("the suggested radius recovers the jitter in the crowded field: Rayleigh sigma 0.5 arcsec within 5 %", () => {
    // Only B is jittered, by 0.5" per axis, so the Rayleigh scale of the true separations is 0.5".
    const r = crossMatch(A, B, { radiusArcsec: 2 });
    const s = suggestRadius(r.pointsA, r.pointsB, 2, r.usableA);
    // measured (seed 99): sigma 0.5031"; the clumps make contamination > 1 % at every radius
    expect(s.sigmaArcsec).not.toBeNull();
    expect(Math.abs(s.sigmaArcsec! / 0.5 - 1)).toBeLessThan(0.05);
    expect(s.suggestedArcsec).toBe(s.r99Arcsec);
    expect(s.note).toMatch(/crowded/);
  });
});

describe("diagnostics on a seeded uniform field with known truth", () => {
  // 20 000 A and 20 000 B rows in 100 deg^2 (B: 200 rows per deg^2), no clumps.
  const S = syntheticPair({ n: 20000, nB: 20000, kept: 0.7, jitterArcsec: 0.5, clumps: 0, clumpSize: 0, clumpRadiusArcsec: 0, seed: 5 });
  const A = { raDeg: S.raA, decDeg: S.decA };
  const B = { raDeg: S.raB, decDeg: S.decB };

  it("fits sigma, the background density and the suggested radius", () => {
    const r = crossMatch(A, B, { radiusArcsec: 3 });
    const s = suggestRadius(r.pointsA, r.pointsB, 3, r.usableA);
    // truth: sigma = 0.5" (generator input); background = 200 per deg^2 less the counterpart, ~200
    // measured (seed 5): sigma 0.4989", background 192 per deg^2, suggested 1.514" at contamination 1.5e-4
    expect(Math.abs(s.sigmaArcsec! / 0.5 - 1)).toBeLessThan(0.05);
    expect(Math.abs(s.backgroundPerDeg2! / 200 - 1)).toBeLessThan(0.25);
    expect(Math.abs(s.r99Arcsec! - RAYLEIGH_R99 * s.sigmaArcsec!)).toBeLessThan(1e-12);
    // contamination at 1.5" is ~ 1e-4, far below 1 %, so the suggestion is the 99 % radius
    expect(s.suggestedArcsec).toBe(s.r99Arcsec);
    expect(Math.abs(s.completenessAtSuggested! - 0.99)).toBeLessThan(1e-9);
  });

  it("the expected chance pairs match the unrelated pairs found within the radius, within 25 %", () => {
    // at 10": P = 1 - exp(-pi r^2 Sigma) = 4.8e-3 per row for Sigma = 200 per deg^2, ~97 pairs over 20 000 rows
    // measured (seed 5): expected 95.6, unrelated pairs found 88
    const r = crossMatch(A, B, { radiusArcsec: 10, select: "all" });
    const c = chancePairs(r, () => 10);
    let unrelated = 0;
    for (let k = 0; k < r.candidates.length; k++) if (S.truthB[r.candidates.b[k]!] !== r.candidates.a[k]) unrelated++;
    expect(unrelated).toBeGreaterThan(50);
    expect(Math.abs(c.expectedChancePairs / unrelated - 1)).toBeLessThan(0.25);
    expect(Math.abs(c.meanDensityPerDeg2 / 200 - 1)).toBeLessThan(0.1);
  });
});
