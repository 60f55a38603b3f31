/**
 * The infall profile around a cluster: mean radial velocity relative to the cluster, minus the Hubble
 * flow, against distance from its centre, in the cluster's rest frame (domain reference section 10.4:
 * the re-centring machinery applied with A = the cluster). Browser-safe.
 *
 * It re-centres on the cluster with the major-infall form of Karachentsev & Kashibadze 2006 (each galaxy's
 * motion relative to the cluster taken along the line joining them, which is what spherical infall is),
 * so w = v_AB - H s is the radial peculiar velocity relative to the centre (negative = falling in).
 * Rows seen nearly side-on from the cluster (|cos lambda| < minCosLambda) are left out, as the form
 * divides by cos lambda. Per bin: number of galaxies, mean s, mean w with error sd / sqrt(n), median w.
 */
import { recentre, type RecentreOrigin, type RecentrePoints } from "./recentre.js";
import { median } from "./outliers.js";

export interface InfallOptions {
  h0: number;
  /** Bin edges in Mpc from the centre, increasing. */
  edgesMpc: Float64Array;
  /** Default 0.3. */
  minCosLambda?: number;
  /** Fit H0 as seen from the cluster (true) or hold it at h0 (false, default). */
  fitH0?: boolean;
}

export interface InfallProfile {
  /** Number of bins = edges - 1. */
  n: Int32Array;
  rMeanMpc: Float64Array;
  vMeanKmS: Float64Array;
  vErrKmS: Float64Array;
  vMedianKmS: Float64Array;
  edgesMpc: Float64Array;
  /** H used for the Hubble flow subtracted. */
  h0: number;
  /** Per row: the bin (0-based) or -1. */
  bin: Int32Array;
  /** Per row: v_AB - H s (NaN where not used). */
  wKmS: Float64Array;
}

export function infallProfile(points: RecentrePoints, origin: RecentreOrigin, o: InfallOptions): InfallProfile {
  const edges = o.edgesMpc;
  const nb = Math.max(0, edges.length - 1);
  const r = recentre(points, origin, {
    h0: o.h0,
    form: "major",
    minCosLambda: o.minCosLambda ?? 0.3,
    fitDipole: false,
    fitH0: o.fitH0 ?? false,
    maxDistMpc: edges[edges.length - 1] ?? 0,
  });
  const h = o.fitH0 && Number.isFinite(r.h0There) ? r.h0There : o.h0;
  const n = r.s.length;
  const bin = new Int32Array(n).fill(-1);
  const w = new Float64Array(n).fill(NaN);
  const cnt = new Int32Array(nb);
  const sumS = new Float64Array(nb);
  const sumW = new Float64Array(nb);
  const sumW2 = new Float64Array(nb);
  for (let i = 0; i < n; i++) {
    const v = r.vAB[i]!;
    const s = r.s[i]!;
    if (!Number.isFinite(v)) continue;
    // binary search the bin
    let lo = 0;
    let hi = edges.length - 1;
    if (!(s >= edges[0]! && s < edges[hi]!)) continue;
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (s >= edges[mid]!) lo = mid;
      else hi = mid;
    }
    const wi = v - h * s;
    bin[i] = lo;
    w[i] = wi;
    cnt[lo] = cnt[lo]! + 1;
    sumS[lo] = sumS[lo]! + s;
    sumW[lo] = sumW[lo]! + wi;
    sumW2[lo] = sumW2[lo]! + wi * wi;
  }
  const out: InfallProfile = {
    n: cnt,
    rMeanMpc: new Float64Array(nb),
    vMeanKmS: new Float64Array(nb),
    vErrKmS: new Float64Array(nb),
    vMedianKmS: new Float64Array(nb),
    edgesMpc: edges,
    h0: h,
    bin,
    wKmS: w,
  };
  const perBin: number[][] = Array.from({ length: nb }, () => []);
  for (let i = 0; i < n; i++) if (bin[i]! >= 0) perBin[bin[i]!]!.push(w[i]!);
  for (let k = 0; k < nb; k++) {
    const m = cnt[k]!;
    out.rMeanMpc[k] = m > 0 ? sumS[k]! / m : NaN;
    const mean = m > 0 ? sumW[k]! / m : NaN;
    out.vMeanKmS[k] = mean;
    out.vErrKmS[k] = m > 1 ? Math.sqrt(Math.max(0, sumW2[k]! / m - mean * mean) * (m / (m - 1)) / m) : NaN;
    out.vMedianKmS[k] = median(perBin[k]!);
  }
  return out;
}
