/**
 * Diagnostics to trust a match: counts, the separation histogram, the expected number of chance
 * pairs, and a radius suggested by the separation distribution.
 *
 * Chance pairs: for each A row, the surface density of B around it, Sigma_i, is counted in a cap of
 * radius r_loc holding about DENSITY_ROWS rows of B on average (the row's own chosen counterparts
 * are taken out); the probability that an unrelated B row falls within the match radius r is then
 * P_i = 1 - exp(-pi r^2 Sigma_i) (Poisson; domain reference §11, common practice), and the expected
 * number of chance pairs is the sum of P_i over the A rows with a position.
 *
 * Suggested radius: the separations of all pairs within r_fit = FIT_FACTOR x the search radius are
 * binned and fitted, by Poisson maximum likelihood, with a Rayleigh core (true pairs with circular
 * Gaussian errors, p(r) = (r / s^2) exp(-r^2 / 2 s^2); Pineau et al. 2017, A&A 597, A89) on a background
 * growing as r dr (unrelated rows at uniform density; domain reference §11 "choosing the radius from
 * the histogram"). The suggestion is the 99 % completeness radius 3.0349 s (from F(r) = 1 - exp(-r^2/2s^2)),
 * unless the expected contamination there exceeds MAX_CONTAMINATION, in which case it is the radius
 * where the contamination reaches that limit (and its completeness is reported). In a crowded field
 * the contamination can exceed the limit at every radius (background and core both grow as r^2 at
 * small r); the suggestion then stays at the 99 % radius and the note says so.
 *
 * The local density is smoothed over r_loc (about 0.18 deg at 200 rows per deg^2), so clumps much
 * smaller than r_loc are diluted: in cluster cores the chance estimate is a lower bound.
 */
import { ARCSEC, DEG } from "../sky/angles.js";
import { countWithin, pairsWithin } from "./pairs.js";
import type { MatchResult } from "./match.js";
import { occupiedAreaSr, type SkyPoints } from "./zones.js";

/** B rows expected in the density cap (Poisson noise ~ 1/sqrt(20) = 22 % per row, averaged over rows). */
export const DENSITY_ROWS = 20;
/** r_fit / search radius. */
export const FIT_FACTOR = 3;
/** Contamination the suggested radius may reach. */
export const MAX_CONTAMINATION = 0.01;
/** Rayleigh radius holding 99 % of true pairs, in units of s: sqrt(-2 ln 0.01) (domain reference §11, computed). */
export const RAYLEIGH_R99 = Math.sqrt(-2 * Math.log(0.01));
const HIST_BINS = 20;
const FIT_BINS = 60;
const SQ_DEG_PER_SR = (180 / Math.PI) ** 2;

export interface Histogram {
  binEdgesArcsec: number[];
  counts: number[];
}

export interface ChanceEstimate {
  method: string;
  densityRadiusDeg: number;
  meanDensityPerDeg2: number;
  expectedChancePairs: number;
  /** expected chance pairs / chosen matches */
  expectedChanceFraction: number;
}

export interface RadiusSuggestion {
  method: string;
  fitRadiusArcsec: number;
  pairsInFit: number;
  sigmaArcsec: number | null;
  truePairs: number | null;
  backgroundPerDeg2: number | null;
  r99Arcsec: number | null;
  suggestedArcsec: number | null;
  completenessAtSuggested: number | null;
  contaminationAtSuggested: number | null;
  note: string;
}

/** Histogram of the chosen matches' separations over [0, maxArcsec]. */
export function separationHistogram(r: MatchResult, maxArcsec: number, bins = HIST_BINS): Histogram {
  const edges = Array.from({ length: bins + 1 }, (_, k) => (maxArcsec * k) / bins);
  const counts = new Array<number>(bins).fill(0);
  for (let t = 0; t < r.chosen.length; t++) {
    const s = r.candidates.sepRad[r.chosen[t]!]! / ARCSEC;
    const k = maxArcsec > 0 ? Math.min(bins - 1, Math.floor((s / maxArcsec) * bins)) : 0;
    counts[k]!++;
  }
  return { binEdgesArcsec: edges, counts };
}

/**
 * Expected chance pairs. `radiusArcsecOfRow` gives the acceptance radius used for each A row
 * (R, or the sigma radius); rows with NaN radius or position are skipped.
 */
export function chancePairs(r: MatchResult, radiusArcsecOfRow: (i: number) => number): ChanceEstimate {
  const a = r.pointsA;
  const b = r.pointsB;
  const areaB = Math.max(occupiedAreaSr(b), 1e-12);
  const globalDensity = Math.max(r.usableB, 1) / areaB; // per sr
  const capRad = Math.min(Math.PI / 2, Math.sqrt(DENSITY_ROWS / (Math.PI * globalDensity)));
  const capArea = 2 * Math.PI * (1 - Math.cos(capRad));
  const counts = countWithin(a, b, capRad);
  const own = new Int32Array(r.nA);
  for (let t = 0; t < r.chosen.length; t++) own[r.candidates.a[r.chosen[t]!]!]!++;
  let expected = 0;
  let densitySum = 0;
  let n = 0;
  for (let i = 0; i < r.nA; i++) {
    if (a.p[5 * i + 1] !== a.p[5 * i + 1]) continue;
    const sigma = Math.max(0, counts[i]! - own[i]!) / capArea;
    const rr = radiusArcsecOfRow(i) * ARCSEC;
    if (!(rr >= 0)) continue;
    expected += 1 - Math.exp(-Math.PI * rr * rr * sigma);
    densitySum += sigma;
    n++;
  }
  return {
    method: `P = 1 - exp(-pi r^2 Sigma) per A row, Sigma = B rows (less the row's chosen counterparts) in a cap of ${(capRad / DEG).toFixed(3)} deg around it`,
    densityRadiusDeg: capRad / DEG,
    meanDensityPerDeg2: n ? densitySum / n / SQ_DEG_PER_SR : 0,
    expectedChancePairs: expected,
    expectedChanceFraction: r.chosen.length ? expected / r.chosen.length : 0,
  };
}

/** Fits the separation distribution of all pairs within FIT_FACTOR x the search radius and suggests a radius. */
export function suggestRadius(a: SkyPoints, b: SkyPoints, searchRadiusArcsec: number, usableA: number): RadiusSuggestion {
  const fitArcsec = FIT_FACTOR * searchRadiusArcsec;
  const pairs = pairsWithin(a, b, fitArcsec * ARCSEC);
  const counts = new Float64Array(FIT_BINS);
  for (let k = 0; k < pairs.length; k++) {
    const s = pairs.sepRad[k]! / ARCSEC;
    counts[Math.min(FIT_BINS - 1, Math.floor((s / fitArcsec) * FIT_BINS))]! += 1;
  }
  const base: RadiusSuggestion = {
    method:
      "Poisson ML fit of the binned separations of all pairs within r_fit: Rayleigh core (circular Gaussian errors; Pineau et al. 2017, A&A 597, A89) plus a background proportional to r dr (uniform unrelated rows); suggested = 99 % completeness radius 3.0349 sigma, reduced to where contamination reaches 1 % if needed",
    fitRadiusArcsec: fitArcsec,
    pairsInFit: pairs.length,
    sigmaArcsec: null,
    truePairs: null,
    backgroundPerDeg2: null,
    r99Arcsec: null,
    suggestedArcsec: null,
    completenessAtSuggested: null,
    contaminationAtSuggested: null,
    note: "",
  };
  if (!(fitArcsec > 0) || pairs.length < 20) return { ...base, note: "too few pairs to fit (fewer than 20 within r_fit)" };
  const fit = fitRayleighPlusBackground(counts, fitArcsec);
  if (fit.truePairs < 10) return { ...base, note: "no Rayleigh core found: the pairs look unrelated", truePairs: fit.truePairs };
  const s = fit.sigma;
  const F = (r: number) => 1 - Math.exp(-(r * r) / (2 * s * s));
  const contamination = (r: number) => {
    const bg = fit.background * (r / fitArcsec) ** 2;
    const tr = fit.truePairs * F(r);
    return bg + tr > 0 ? bg / (bg + tr) : 0;
  };
  const r99 = RAYLEIGH_R99 * s;
  let suggested = r99;
  let note = "99 % completeness radius";
  if (contamination(r99) > MAX_CONTAMINATION && contamination(r99 * 1e-6) > MAX_CONTAMINATION) {
    note = "99 % completeness radius; contamination exceeds 1 % at every radius (crowded field): use --max-dv or --select one-to-one";
  } else if (contamination(r99) > MAX_CONTAMINATION) {
    let lo = 0;
    let hi = r99;
    for (let it = 0; it < 60; it++) {
      const mid = (lo + hi) / 2;
      if (contamination(mid) > MAX_CONTAMINATION) hi = mid;
      else lo = mid;
    }
    suggested = lo;
    note = "reduced from the 99 % completeness radius to keep contamination at 1 %";
  }
  if (r99 > searchRadiusArcsec) note += "; larger than the search radius: the true pairs' tail is cut, re-run with a larger --radius";
  const bgDensity = usableA > 0 ? fit.background / (usableA * Math.PI * fitArcsec * fitArcsec) * 3600 * 3600 : 0;
  return {
    ...base,
    sigmaArcsec: s,
    truePairs: fit.truePairs,
    backgroundPerDeg2: bgDensity,
    r99Arcsec: r99,
    suggestedArcsec: suggested,
    completenessAtSuggested: F(suggested),
    contaminationAtSuggested: contamination(suggested),
    note,
  };
}

/**
 * Poisson ML fit of binned separations on [0, rMax]: mu_j = Nt (F(r_j+1) - F(r_j)) + Nb (r_j+1^2 - r_j^2) / rMax^2,
 * F the Rayleigh CDF of scale sigma. (Nt, Nb) by EM for each sigma on a log grid, then refined.
 */
export function fitRayleighPlusBackground(counts: Float64Array, rMax: number): { sigma: number; truePairs: number; background: number; logLikelihood: number } {
  const nb = counts.length;
  const total = counts.reduce((s, x) => s + x, 0);
  const g = new Float64Array(nb);
  for (let j = 0; j < nb; j++) g[j] = ((j + 1) ** 2 - j ** 2) / (nb * nb);
  const evalSigma = (sigma: number) => {
    const f = new Float64Array(nb);
    let prev = 0;
    for (let j = 0; j < nb; j++) {
      const r = ((j + 1) * rMax) / nb;
      const F = 1 - Math.exp(-(r * r) / (2 * sigma * sigma));
      f[j] = F - prev;
      prev = F;
    }
    const Fmax = prev;
    let nt = total / 2;
    let nbg = total / 2;
    for (let it = 0; it < 200; it++) {
      let st = 0;
      let sb = 0;
      for (let j = 0; j < nb; j++) {
        const mu = nt * f[j]! + nbg * g[j]!;
        if (mu <= 0) continue;
        st += (counts[j]! * nt * f[j]!) / mu;
        sb += (counts[j]! * nbg * g[j]!) / mu;
      }
      nt = Fmax > 0 ? st / Fmax : 0;
      nbg = sb;
    }
    let ll = 0;
    for (let j = 0; j < nb; j++) {
      const mu = nt * f[j]! + nbg * g[j]!;
      if (mu > 0) ll += counts[j]! * Math.log(mu) - mu;
      else if (counts[j]! > 0) ll -= 1e300;
    }
    return { sigma, truePairs: nt, background: nbg, logLikelihood: ll };
  };
  const lo = rMax / nb / 4;
  const hi = rMax * 2;
  const steps = 120;
  let best = evalSigma(lo);
  let bestK = 0;
  for (let k = 1; k <= steps; k++) {
    const e = evalSigma(lo * (hi / lo) ** (k / steps));
    if (e.logLikelihood > best.logLikelihood) {
      best = e;
      bestK = k;
    }
  }
  // golden-section refinement between the neighbours of the best grid point
  let a = Math.log(lo) + (Math.max(0, bestK - 1) / steps) * Math.log(hi / lo);
  let c = Math.log(lo) + (Math.min(steps, bestK + 1) / steps) * Math.log(hi / lo);
  const phi = (Math.sqrt(5) - 1) / 2;
  for (let it = 0; it < 40; it++) {
    const x1 = c - phi * (c - a);
    const x2 = a + phi * (c - a);
    if (evalSigma(Math.exp(x1)).logLikelihood > evalSigma(Math.exp(x2)).logLikelihood) c = x2;
    else a = x1;
  }
  const refined = evalSigma(Math.exp((a + c) / 2));
  return refined.logLikelihood >= best.logLikelihood ? refined : best;
}
