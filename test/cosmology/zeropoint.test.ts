import { describe, expect, it } from "vitest";
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { combineModuli, zeroPointNetwork, zeroPointOffset } from "../../src/cosmology/zeropoint.js";

/**
 * Two synthetic catalogues of one invented sky: N galaxies with true moduli uniform in [32, 37];
 * catalogue A measures a random 60 % with sigma = 0.40 mag, catalogue B a random 50 % with
 * sigma = 0.30 mag and a zero point shifted by +offset. Truth is the generator's input.
 */
function synthetic(seed: number, n: number, offset: number, outliers = 0) {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);
  const muA = new Float64Array(n).fill(NaN);
  const muB = new Float64Array(n).fill(NaN);
  const eA = new Float64Array(n).fill(NaN);
  const eB = new Float64Array(n).fill(NaN);
  let planted = 0;
  for (let i = 0; i < n; i++) {
    const truth = 32 + 5 * u();
    if (u() < 0.6) {
      muA[i] = truth + 0.4 * g();
      eA[i] = 0.4;
    }
    if (u() < 0.5) {
      muB[i] = truth + offset + 0.3 * g();
      eB[i] = 0.3;
      if (planted < outliers && Number.isFinite(muA[i]!)) {
        muB[i]! += 4; // a wrong cross-identification
        planted++;
      }
    }
  }
  return { muA, muB, eA, eB };
}

describe("zero-point offset between two catalogues", () => {
  it("recovers a +0.15 mag offset from the shared galaxies of two seeded catalogues", () => {
    // Seed 20260101, N = 2000: about 600 shared galaxies; pair sigma 0.5 mag, so the formal
    // error is ~0.5/sqrt(600) = 0.020 mag. Truth: +0.150 mag (generator input).
    const { muA, muB, eA, eB } = synthetic(20260101, 2000, 0.15);
    const r = zeroPointOffset(muA, eA, muB, eB);
    expect(r.nShared).toBeGreaterThan(500);
    expect(r.nShared).toBeLessThan(700);
    expect(Math.abs(r.offsetErrMag - 0.5 / Math.sqrt(r.nShared))).toBeLessThan(1e-12);
    expect(Math.abs(r.offsetMag - 0.15)).toBeLessThan(3 * r.offsetErrMag);
    // The errors are right, so chi2/dof is near 1 and the scatter near 0.5 mag.
    expect(Math.abs(r.chi2Dof - 1)).toBeLessThan(0.15);
    expect(Math.abs(r.scatterMag - 0.5)).toBeLessThan(0.04);
    expect(Math.abs(r.medianMag - 0.15)).toBeLessThan(4 * 1.25 * r.offsetErrMag);
  });

  it("the offset is unbiased over many seeds: mean of 40 trials within 3 sigma/sqrt(40) of truth", () => {
    const trials = 40;
    let sum = 0;
    let err = 0;
    for (let s = 0; s < trials; s++) {
      const { muA, muB, eA, eB } = synthetic(1000 + s, 600, -0.2);
      const r = zeroPointOffset(muA, eA, muB, eB);
      sum += r.offsetMag;
      err = r.offsetErrMag;
    }
    expect(Math.abs(sum / trials - -0.2)).toBeLessThan((3 * err) / Math.sqrt(trials));
  });

  it("clipping removes planted 4 mag outliers that bias the plain mean", () => {
    // 12 wrong identifications shifted by +4 mag among ~600 shared: the plain mean moves by
    // ~12 * 4 / 600 = 0.08 mag; the 3-sigma clipped mean returns to the truth.
    const { muA, muB, eA, eB } = synthetic(7, 2000, 0.15, 12);
    const r = zeroPointOffset(muA, eA, muB, eB);
    expect(r.offsetMag - 0.15).toBeGreaterThan(0.05);
    expect(r.nRejected).toBeGreaterThanOrEqual(12);
    expect(r.nRejected).toBeLessThan(20);
    expect(Math.abs(r.clippedOffsetMag - 0.15)).toBeLessThan(3 * r.clippedOffsetErrMag);
  });

  it("one gross blunder (a typo of 30 mag) neither moves the clipped offset nor rejects every galaxy", () => {
    // 20 invented shared galaxies with B = A + 0.14 mag (sigma 0.1 each), one B modulus typed 3.35
    // for 33.5: the plain mean moves by about -30/20 = -1.5 mag; clipping from the median keeps 19
    const muA = Float64Array.from({ length: 20 }, (_, i) => 33 + 0.1 * i);
    const muB = muA.map((x, i) => x + 0.14 + 0.02 * ((i % 5) - 2));
    muB[7] = 3.35;
    const e = new Float64Array(20).fill(0.1);
    const r = zeroPointOffset(muA, e, muB, e);
    expect(r.offsetMag).toBeLessThan(-1.3);
    expect(r.nRejected).toBe(1);
    expect(r.clippedOffsetMag).toBeCloseTo(0.14, 2);
    // nothing within kappa sigma of the median: no clipped offset at all
    const wild = zeroPointOffset([30, 31, 32], [0.01, 0.01, 0.01], [30, 32, 34], [0.01, 0.01, 0.01]);
    expect(wild.nRejected).toBe(2);
    expect(wild.clippedOffsetMag).toBe(1);
    const none = zeroPointOffset([30, 31], [0.01, 0.01], [30, 33], [0.01, 0.01]);
    expect(none.nRejected).toBe(2);
    expect(Number.isNaN(none.clippedOffsetMag)).toBe(true);
  });

  it("reports NaN and zero shared when the catalogues have no galaxy in common", () => {
    const r = zeroPointOffset([30, NaN], [0.1, NaN], [NaN, 31], [NaN, 0.1]);
    expect(r.nShared).toBe(0);
    expect(Number.isNaN(r.offsetMag)).toBe(true);
    expect(Number.isNaN(r.clippedOffsetMag)).toBe(true);
  });

  it("one shared galaxy gives its difference with NaN chi2", () => {
    const r = zeroPointOffset([30], [0.3], [30.5], [0.4]);
    expect(r.nShared).toBe(1);
    expect(r.offsetMag).toBeCloseTo(0.5, 12);
    expect(r.offsetErrMag).toBeCloseTo(0.5, 12);
    expect(Number.isNaN(r.chi2Dof)).toBe(true);
  });

  it("rows without a usable error are not shared", () => {
    const r = zeroPointOffset([30, 31], [0.3, 0], [30.2, 31.2], [0.3, 0.3]);
    expect(r.nShared).toBe(1);
    expect(Array.from(r.shared)).toEqual([0]);
  });
});

describe("combining moduli", () => {
  it("takes the inverse-variance weighted mean and its error", () => {
    // w = 1/0.16, 1/0.09: mu = (35/0.16 + 35.5/0.09)/(1/0.16 + 1/0.09), sigma = 1/sqrt(sum w) = 0.24.
    const c = combineModuli([[35], [35.5]], [[0.4], [0.3]]);
    const w1 = 1 / 0.16;
    const w2 = 1 / 0.09;
    expect(c.muMag[0]).toBeCloseTo((35 * w1 + 35.5 * w2) / (w1 + w2), 12);
    expect(c.muErrMag[0]).toBeCloseTo(0.24, 12);
    expect(c.nDist[0]).toBe(2);
    expect(c.chi2[0]).toBeCloseTo(w1 * (35 - c.muMag[0]!) ** 2 + w2 * (35.5 - c.muMag[0]!) ** 2, 12);
  });

  it("subtracts the offsets first, so an applied offset brings B onto A's scale", () => {
    const c = combineModuli([[35], [35.15]], [[0.3], [0.3]], [0, 0.15]);
    expect(c.muMag[0]).toBeCloseTo(35, 12);
    expect(c.chi2[0]).toBeCloseTo(0, 12);
  });

  it("keeps single measurements, ignores error-less ones next to measured ones, and averages error-less ones alone", () => {
    const c = combineModuli(
      [
        [35, 35, NaN, 33, NaN],
        [NaN, 36, NaN, 34, NaN],
      ],
      [[0.2, 0.2, NaN, NaN, NaN], undefined],
    );
    expect(c.muMag[0]).toBe(35);
    expect(c.nDist[0]).toBe(1);
    expect(Number.isNaN(c.chi2[0]!)).toBe(true);
    expect(c.muMag[1]).toBe(35);
    expect(c.nDist[1]).toBe(1);
    expect(Number.isNaN(c.muMag[2]!)).toBe(true);
    expect(c.nDist[2]).toBe(0);
    expect(c.muMag[3]).toBe(33.5);
    expect(c.nDist[3]).toBe(2);
    expect(Number.isNaN(c.muErrMag[3]!)).toBe(true);
  });

  it("combining the two seeded catalogues after the offset gives moduli centred on A's scale", () => {
    const { muA, muB, eA, eB } = synthetic(20260101, 2000, 0.15);
    const r = zeroPointOffset(muA, eA, muB, eB);
    const c = combineModuli([muA, muB], [eA, eB], [0, r.offsetMag]);
    // Mean chi2 of the two-measurement rows is ~1 (one degree of freedom) once the offset is removed.
    let s = 0;
    let m = 0;
    for (let i = 0; i < c.chi2.length; i++) if (c.nDist[i] === 2) {
      s += c.chi2[i]!;
      m++;
    }
    expect(m).toBe(r.nShared);
    expect(Math.abs(s / m - 1)).toBeLessThan(0.15);
  });

  it("empty input gives empty output", () => {
    expect(combineModuli([], []).muMag.length).toBe(0);
    expect(combineModuli([[]], [[]]).muMag.length).toBe(0);
  });
});

/**
 * Three invented catalogues over one sky (seeded): truth uniform in [32, 37]; each catalogue k
 * measures galaxy g with probability frac[k] inside its own slice of the galaxy list, with error
 * sigma[k] and zero point offset[k]. The slices decide who overlaps whom.
 */
function three(seed: number, n: number, offset: number[], sigma: number[], slices: [number, number][]) {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);
  const mus = offset.map(() => new Float64Array(n).fill(NaN));
  const errs = offset.map(() => new Float64Array(n).fill(NaN));
  for (let i = 0; i < n; i++) {
    const t = 32 + 5 * u();
    for (let k = 0; k < offset.length; k++) {
      const [lo, hi] = slices[k]!;
      if (i >= lo * n && i < hi * n && u() < 0.7) {
        mus[k]![i] = t + offset[k]! + sigma[k]! * g();
        errs[k]![i] = sigma[k]!;
      }
    }
  }
  return { mus, errs };
}

describe("network zero points", () => {
  it("equals the pairwise weighted mean for two catalogues (twin check)", () => {
    const { muA, muB, eA, eB } = synthetic(20260101, 2000, 0.15);
    const pair = zeroPointOffset(muA, eA, muB, eB);
    const net = zeroPointNetwork([muA, muB], [eA, eB], 0);
    expect(net.offsetsMag[0]).toBe(0);
    expect(Math.abs(net.offsetsMag[1]! - pair.offsetMag)).toBeLessThan(1e-12);
    expect(Math.abs(net.offsetsErrMag[1]! - pair.offsetErrMag)).toBeLessThan(1e-12);
    expect(net.nGalaxies).toBe(pair.nShared);
    // chi2 about the means equals the pairwise chi2 (one degree of freedom a galaxy, minus one offset).
    expect(Math.abs(net.chi2 / net.dof - pair.chi2Dof)).toBeLessThan(1e-9);
  });

  it("ties a catalogue that shares galaxies only with a third one to the reference", () => {
    // Seed 314, 6000 galaxies: a covers the first 40 %, b the middle 20-80 %, c the last 35 %; a and c never
    // overlap. Truth: offsets b - a = +0.20, c - a = -0.10 mag (generator input).
    const { mus, errs } = three(314, 6000, [0, 0.2, -0.1], [0.35, 0.3, 0.4], [[0, 0.4], [0.2, 0.8], [0.65, 1]]);
    expect(zeroPointOffset(mus[0]!, errs[0]!, mus[2]!, errs[2]!).nShared).toBe(0);
    const net = zeroPointNetwork(mus, errs, 0);
    expect(Array.from(net.linked)).toEqual([1, 1, 1]);
    expect(Math.abs(net.offsetsMag[1]! - 0.2)).toBeLessThan(3 * net.offsetsErrMag[1]!);
    expect(Math.abs(net.offsetsMag[2]! - -0.1)).toBeLessThan(3 * net.offsetsErrMag[2]!);
    // c's error includes b's: it is larger than b's.
    expect(net.offsetsErrMag[2]!).toBeGreaterThan(net.offsetsErrMag[1]!);
    expect(Math.abs(net.chi2 / net.dof - 1)).toBeLessThan(0.1);
  });

  it("leaves a catalogue with no link to the reference at NaN", () => {
    const { mus, errs } = three(2, 1000, [0, 0.1, 0.3], [0.3, 0.3, 0.3], [[0, 0.5], [0, 0.5], [0.6, 1]]);
    const net = zeroPointNetwork(mus, errs, 1);
    expect(Array.from(net.linked)).toEqual([1, 1, 0]);
    expect(net.offsetsMag[1]).toBe(0);
    expect(Number.isNaN(net.offsetsMag[2]!)).toBe(true);
    expect(Math.abs(net.offsetsMag[0]! - -0.1)).toBeLessThan(3 * net.offsetsErrMag[0]!);
  });
});
