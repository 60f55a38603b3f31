/**
 * The groups table: one row per friends-of-friends group, computed from the member rows. Browser-safe.
 *
 * - centroid: direction of the mean member unit vector (RA, Dec, degrees);
 * - mean velocity and its error sigma / sqrt(n);
 * - velocity dispersion by the gapper estimator (Beers, Flynn & Gebhardt 1990, AJ 100, 32):
 *   sigma_G = sqrt(pi) / (n (n - 1)) sum_{i=1}^{n-1} i (n - i) (v_(i+1) - v_(i)) over the sorted velocities,
 *   observed, and in the group's rest frame sigma_G / (1 + z_mean) (Danese, De Zotti & di Tullio 1980);
 * - rms projected radius of the members about the centroid at the mean velocity's Hubble distance, Mpc;
 * - distance: inverse-variance mean of ln D of the members with a distance (weights 1 / f^2,
 *   f = sigma_D / D), D_g = exp(mean), sigma_D = D_g / sqrt(sum w) (log-normal errors average in log space,
 *   domain reference section 5.5);
 * - peculiar velocity of the group: exact form v = c (z_mean - z_cos)/(1 + z_cos) with z_cos the redshift of
 *   D_g (Davis & Scrimgeour 2014); error from sigma_D (first order) and from the mean velocity's error.
 */
import { C_KMS } from "../cosmology/constants.js";
import { efunc, redshiftAtDistance, type Cosmology } from "../cosmology/distances.js";
import { DEG } from "../sky/angles.js";
import { lonLatOf } from "../sky/vectors.js";

export interface GroupTable {
  nGroups: number;
  id: Int32Array;
  nMembers: Int32Array;
  raDeg: Float64Array;
  decDeg: Float64Array;
  czMeanKmS: Float64Array;
  czMeanErrKmS: Float64Array;
  sigmaKmS: Float64Array;
  sigmaRestKmS: Float64Array;
  rProjMpc: Float64Array;
  nDist: Int32Array;
  distCMpc: Float64Array;
  distCErrMpc: Float64Array;
  vPecKmS: Float64Array;
  vPecErrKmS: Float64Array;
  /** Member rows of group g: members[memberStart[g] .. memberStart[g + 1]). */
  memberStart: Int32Array;
  members: Int32Array;
}

/** Gapper velocity dispersion (Beers, Flynn & Gebhardt 1990) of sorted values; NaN for fewer than 2. */
export function gapperSigma(sorted: ArrayLike<number>): number {
  const n = sorted.length;
  if (n < 2) return NaN;
  let s = 0;
  for (let i = 1; i < n; i++) s += i * (n - i) * (sorted[i]! - sorted[i - 1]!);
  return (Math.sqrt(Math.PI) / (n * (n - 1))) * s;
}

export interface GroupInput {
  groupId: Int32Array;
  nGroups: number;
  raDeg: Float64Array;
  decDeg: Float64Array;
  czKmS: Float64Array;
  /** Measured comoving distance and fractional error, optional. */
  distCMpc?: Float64Array;
  distFracErr?: Float64Array;
}

export function groupTable(g: GroupInput, c: Cosmology): GroupTable {
  const G = g.nGroups;
  const n = g.groupId.length;
  const count = new Int32Array(G + 1);
  for (let i = 0; i < n; i++) {
    const id = g.groupId[i]!;
    if (id >= 1 && id <= G) count[id] = count[id]! + 1;
  }
  const memberStart = new Int32Array(G + 1);
  for (let k = 0; k < G; k++) memberStart[k + 1] = memberStart[k]! + count[k + 1]!;
  const members = new Int32Array(memberStart[G]!);
  const fill = new Int32Array(G);
  for (let i = 0; i < n; i++) {
    const id = g.groupId[i]!;
    if (id >= 1 && id <= G) members[memberStart[id - 1]! + fill[id - 1]!++] = i;
  }
  const t: GroupTable = {
    nGroups: G,
    id: new Int32Array(G),
    nMembers: new Int32Array(G),
    raDeg: new Float64Array(G),
    decDeg: new Float64Array(G),
    czMeanKmS: new Float64Array(G),
    czMeanErrKmS: new Float64Array(G),
    sigmaKmS: new Float64Array(G),
    sigmaRestKmS: new Float64Array(G),
    rProjMpc: new Float64Array(G),
    nDist: new Int32Array(G),
    distCMpc: new Float64Array(G),
    distCErrMpc: new Float64Array(G),
    vPecKmS: new Float64Array(G),
    vPecErrKmS: new Float64Array(G),
    memberStart,
    members,
  };
  for (let k = 0; k < G; k++) {
    const a = memberStart[k]!;
    const b = memberStart[k + 1]!;
    const m = b - a;
    t.id[k] = k + 1;
    t.nMembers[k] = m;
    let sx = 0;
    let sy = 0;
    let sz = 0;
    const vs = new Float64Array(m);
    let sw = 0;
    let swl = 0;
    let nd = 0;
    for (let q = a; q < b; q++) {
      const i = members[q]!;
      const ra = g.raDeg[i]! * DEG;
      const de = g.decDeg[i]! * DEG;
      sx += Math.cos(de) * Math.cos(ra);
      sy += Math.cos(de) * Math.sin(ra);
      sz += Math.sin(de);
      vs[q - a] = g.czKmS[i]!;
      const d = g.distCMpc?.[i];
      const f = g.distFracErr?.[i];
      if (d !== undefined && f !== undefined && d > 0 && f > 0 && Number.isFinite(d) && Number.isFinite(f)) {
        const w = 1 / (f * f);
        sw += w;
        swl += w * Math.log(d);
        nd++;
      }
    }
    const [ra, dec] = lonLatOf(sx, sy, sz);
    t.raDeg[k] = ra;
    t.decDeg[k] = dec;
    let vm = 0;
    for (let q = 0; q < m; q++) vm += vs[q]!;
    vm /= m;
    vs.sort();
    const sig = gapperSigma(vs);
    t.czMeanKmS[k] = vm;
    t.sigmaKmS[k] = sig;
    t.czMeanErrKmS[k] = sig / Math.sqrt(m);
    const zm = vm / C_KMS;
    t.sigmaRestKmS[k] = sig / (1 + zm);
    // rms projected radius about the centroid
    const len = Math.sqrt(sx * sx + sy * sy + sz * sz);
    let r2 = 0;
    for (let q = a; q < b; q++) {
      const i = members[q]!;
      const ra2 = g.raDeg[i]! * DEG;
      const de2 = g.decDeg[i]! * DEG;
      const dx = Math.cos(de2) * Math.cos(ra2) - sx / len;
      const dy = Math.cos(de2) * Math.sin(ra2) - sy / len;
      const dz = Math.sin(de2) - sz / len;
      r2 += dx * dx + dy * dy + dz * dz;
    }
    t.rProjMpc[k] = (Math.sqrt(r2 / m) * vm) / c.h0;
    t.nDist[k] = nd;
    if (nd > 0) {
      const dg = Math.exp(swl / sw);
      const sd = dg / Math.sqrt(sw);
      t.distCMpc[k] = dg;
      t.distCErrMpc[k] = sd;
      const zc = redshiftAtDistance(dg, "comoving", c);
      const v = (C_KMS * (zm - zc)) / (1 + zc);
      // dz_cos/dD = H0 E(z)/c; d v/d z_cos = -c (1 + z_mean)/(1 + z_cos)^2
      const fromD = ((1 + zm) / ((1 + zc) * (1 + zc))) * c.h0 * efunc(zc, c) * sd;
      const fromV = Number.isFinite(t.czMeanErrKmS[k]!) ? t.czMeanErrKmS[k]! / (1 + zc) : 0;
      t.vPecKmS[k] = v;
      t.vPecErrKmS[k] = Math.sqrt(fromD * fromD + fromV * fromV);
    } else {
      t.distCMpc[k] = NaN;
      t.distCErrMpc[k] = NaN;
      t.vPecKmS[k] = NaN;
      t.vPecErrKmS[k] = NaN;
    }
  }
  return t;
}
