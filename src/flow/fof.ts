/**
 * Friends-of-friends groups in redshift space (Huchra & Geller 1982, ApJ 257, 423; domain reference
 * section 8). Browser-safe; typed arrays only.
 *
 * Galaxies i, j with velocities V_i, V_j (km/s) and angular separation theta are friends when, with
 * V = (V_i + V_j)/2,
 *   D_ij = 2 sin(theta/2) V / H0 <= D_L(V) = D0 R(V)   and   |V_i - V_j| <= V_L(V) = V0 R(V);
 * groups are the connected components (union-find). Scalings of R(V):
 * - "hg82": the luminosity-function scaling of Huchra & Geller 1982 for a magnitude-limited survey,
 *   R = [ int_-inf^M_ij Phi dM / int_-inf^M_lim Phi dM ]^(-1/3), M_ij = m_lim - 25 - 5 log10(V/H0),
 *   M_lim = m_lim - 25 - 5 log10(V_f/H0), Phi a Schechter function (form as stated in the domain
 *   reference; the scaling formula and D0 are marked there as from memory). R = 1 at V = V_f.
 * - "constant": R = 1 everywhere (the constant linking length used for volume-limited samples, e.g. the
 *   2dFGRS groups of Tago et al.; authors from memory).
 * Defaults: D0 = 0.52 h^-1 Mpc (HG82, from memory) expressed in Mpc at the chosen H0, V0 = 350 km/s
 * (Ramella, Pisani & Geller 1997, AJ 113, 483), V_f = 1000 km/s, m_lim = 14.5 (the CfA survey limit,
 * from memory), Schechter M* = -19.2 + 5 log10 h, alpha = -1.1 (a CfA-type luminosity function, from
 * memory). Every parameter is an option and is reported with the result.
 *
 * The index: galaxies are binned on a grid of cells over their unit vectors, each cell's members sorted
 * by V; a galaxy looks only at the cells within its largest possible chord and, inside each, at the
 * velocity window [V_i, V_i + V_L,max] by binary search. fofBrute is the O(N^2) twin used as the oracle.
 */
import { DEG } from "../sky/angles.js";

export type FofScaling = "hg82" | "constant";

export interface FofOptions {
  /** km/s/Mpc. Default 70. */
  h0?: number;
  /** Projected linking length at V_f, Mpc. Default 0.52 / h (HG82's 0.52 h^-1 Mpc). */
  d0Mpc?: number;
  /** Velocity linking length at V_f, km/s. Default 350. */
  v0KmS?: number;
  scaling?: FofScaling;
  /** Fiducial velocity where R = 1, km/s. Default 1000. */
  vFidKmS?: number;
  /** Survey apparent-magnitude limit. Default 14.5. */
  mLim?: number;
  /** Schechter M* (absolute magnitude at the chosen H0). Default -19.2 + 5 log10(h). */
  mStar?: number;
  /** Schechter faint-end slope. Default -1.1. */
  alpha?: number;
  /** Components with at least this many members get a group id. Default 3. */
  minMembers?: number;
}

export interface FofSettings {
  h0: number;
  d0Mpc: number;
  v0KmS: number;
  scaling: FofScaling;
  vFidKmS: number;
  mLim: number;
  mStar: number;
  alpha: number;
  minMembers: number;
}

export interface FofResult {
  /** Component root label of each row (the smallest row index of its component); -1 for unusable rows. */
  component: Int32Array;
  /** 1-based group id for components of >= minMembers members (numbered by their smallest row), -1 otherwise. */
  groupId: Int32Array;
  /** Size of each row's component (1 for isolated galaxies, 0 for unusable rows). */
  groupSize: Int32Array;
  nGroups: number;
  /** Number of candidate pairs given the exact friend test (a measure of the index's work). */
  pairsTested: number;
  settings: FofSettings;
}

export function fofSettings(o: FofOptions = {}): FofSettings {
  const h0 = o.h0 ?? 70;
  const h = h0 / 100;
  return {
    h0,
    d0Mpc: o.d0Mpc ?? 0.52 / h,
    v0KmS: o.v0KmS ?? 350,
    scaling: o.scaling ?? "hg82",
    vFidKmS: o.vFidKmS ?? 1000,
    mLim: o.mLim ?? 14.5,
    mStar: o.mStar ?? -19.2 + 5 * Math.log10(h),
    alpha: o.alpha ?? -1.1,
    minMembers: o.minMembers ?? 3,
  };
}

/**
 * Cumulative Schechter luminosity function in magnitudes, int_-inf^M Phi(M') dM' (phi* = 1):
 * Phi(M) = 0.4 ln10 10^(0.4 (alpha+1)(M* - M)) exp(-10^(0.4 (M* - M))). Composite Simpson on
 * [M* - 12, M] (the integrand is below 1e-200 before M* - 12).
 */
export function schechterCumulative(mag: number, mStar: number, alpha: number): number {
  const lo = mStar - 12;
  if (!(mag > lo)) return 0;
  const steps = 2000;
  const h = (mag - lo) / steps;
  const f = (m: number) => {
    const x = Math.pow(10, 0.4 * (mStar - m));
    return 0.4 * Math.LN10 * Math.pow(x, alpha + 1) * Math.exp(-x);
  };
  let s = f(lo) + f(mag);
  for (let k = 1; k < steps; k++) s += (k % 2 ? 4 : 2) * f(lo + k * h);
  return (s * h) / 3;
}

/** The linking-length scale R(V), from a cumulative luminosity function tabulated once per call. */
export interface LinkingScale {
  (vKmS: number): number;
}

export function linkingScale(s: FofSettings, vMinKmS: number, vMaxKmS: number): LinkingScale {
  if (s.scaling === "constant") return () => 1;
  const absMag = (v: number) => s.mLim - 25 - 5 * Math.log10(v / s.h0);
  // Cumulative Schechter function on a 0.002 mag grid by the trapezoid rule (relative error < 1e-6).
  const lo = s.mStar - 12;
  const vLo = Math.max(1e-3, Math.min(vMinKmS, s.vFidKmS) * 0.999);
  const hiMag = Math.max(absMag(vLo), absMag(s.vFidKmS)) + 0.01;
  const h = 0.002;
  const K = Math.max(2, Math.ceil((hiMag - lo) / h) + 1);
  const cum = new Float64Array(K);
  const f = (m: number) => {
    const x = Math.pow(10, 0.4 * (s.mStar - m));
    return 0.4 * Math.LN10 * Math.pow(x, s.alpha + 1) * Math.exp(-x);
  };
  let prev = f(lo);
  for (let k = 1; k < K; k++) {
    const cur = f(lo + k * h);
    cum[k] = cum[k - 1]! + 0.5 * h * (prev + cur);
    prev = cur;
  }
  const cumAt = (m: number) => {
    const t = (m - lo) / h;
    if (t <= 0) return 0;
    if (t >= K - 1) return schechterCumulative(m, s.mStar, s.alpha);
    const k = Math.floor(t);
    const w = t - k;
    return cum[k]! * (1 - w) + cum[k + 1]! * w;
  };
  const norm = cumAt(absMag(s.vFidKmS));
  void vMaxKmS;
  return (v: number) => {
    if (!(v > 0)) return NaN;
    const num = cumAt(absMag(v));
    return num > 0 ? Math.cbrt(norm / num) : Infinity;
  };
}

/** Union-find with union by size and path halving. */
export class UnionFind {
  readonly parent: Int32Array;
  readonly size: Int32Array;
  constructor(n: number) {
    this.parent = new Int32Array(n);
    this.size = new Int32Array(n).fill(1);
    for (let i = 0; i < n; i++) this.parent[i] = i;
  }
  find(i: number): number {
    const p = this.parent;
    while (p[i] !== i) {
      p[i] = p[p[i]!]!;
      i = p[i]!;
    }
    return i;
  }
  union(a: number, b: number): void {
    let ra = this.find(a);
    let rb = this.find(b);
    if (ra === rb) return;
    if (this.size[ra]! < this.size[rb]!) [ra, rb] = [rb, ra];
    this.parent[rb] = ra;
    this.size[ra] = this.size[ra]! + this.size[rb]!;
  }
}

interface Prepared {
  n: number;
  ux: Float64Array;
  uy: Float64Array;
  uz: Float64Array;
  v: Float64Array;
  ok: Uint8Array;
  scale: LinkingScale;
  settings: FofSettings;
}

function prepare(raDeg: Float64Array, decDeg: Float64Array, vKmS: Float64Array, o: FofOptions): Prepared {
  const settings = fofSettings(o);
  const n = raDeg.length;
  const ux = new Float64Array(n);
  const uy = new Float64Array(n);
  const uz = new Float64Array(n);
  const ok = new Uint8Array(n);
  let vMin = Infinity;
  let vMax = -Infinity;
  for (let i = 0; i < n; i++) {
    const a = raDeg[i]! * DEG;
    const d = decDeg[i]! * DEG;
    const c = Math.cos(d);
    ux[i] = c * Math.cos(a);
    uy[i] = c * Math.sin(a);
    uz[i] = Math.sin(d);
    const v = vKmS[i]!;
    if (Number.isFinite(ux[i]! + uy[i]! + uz[i]!) && v > 0) {
      ok[i] = 1;
      if (v < vMin) vMin = v;
      if (v > vMax) vMax = v;
    }
  }
  const scale = linkingScale(settings, Number.isFinite(vMin) ? vMin : 1, Number.isFinite(vMax) ? vMax : 2);
  return { n, ux, uy, uz, v: vKmS, ok, scale, settings };
}

/** The friend test of HG82 for rows i and j (both usable). */
function friends(p: Prepared, i: number, j: number): boolean {
  const vi = p.v[i]!;
  const vj = p.v[j]!;
  const vm = 0.5 * (vi + vj);
  const r = p.scale(vm);
  if (!(Math.abs(vi - vj) <= p.settings.v0KmS * r)) return false;
  const dx = p.ux[i]! - p.ux[j]!;
  const dy = p.uy[i]! - p.uy[j]!;
  const dz = p.uz[i]! - p.uz[j]!;
  const chord = Math.sqrt(dx * dx + dy * dy + dz * dz); // = 2 sin(theta/2)
  return (chord * vm) / p.settings.h0 <= p.settings.d0Mpc * r;
}

function finish(p: Prepared, uf: UnionFind, pairsTested: number): FofResult {
  const n = p.n;
  const component = new Int32Array(n).fill(-1);
  const groupSize = new Int32Array(n);
  const minRow = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    if (!p.ok[i]) continue;
    const r = uf.find(i);
    if (minRow[r] === -1) minRow[r] = i; // rows visited in order: the first is the smallest
    component[i] = minRow[r]!;
    groupSize[i] = uf.size[r]!;
  }
  const groupId = new Int32Array(n).fill(-1);
  const idOfRoot = new Int32Array(n).fill(-1);
  let nGroups = 0;
  for (let i = 0; i < n; i++) {
    if (!p.ok[i] || groupSize[i]! < p.settings.minMembers) continue;
    const c = component[i]!;
    if (idOfRoot[c] === -1) idOfRoot[c] = ++nGroups;
    groupId[i] = idOfRoot[c]!;
  }
  return { component, groupId, groupSize, nGroups, pairsTested, settings: p.settings };
}

/** Friends-of-friends with the cell index. NaN positions or V <= 0 leave a row ungrouped (component -1). */
export function friendsOfFriends(raDeg: Float64Array, decDeg: Float64Array, vKmS: Float64Array, o: FofOptions = {}): FofResult {
  const p = prepare(raDeg, decDeg, vKmS, o);
  const n = p.n;
  const uf = new UnionFind(n);
  const s = p.settings;
  // Usable rows sorted by V (ties by row): rank gives each pair one owner.
  const rows: number[] = [];
  let vMax = 0;
  for (let i = 0; i < n; i++) if (p.ok[i]) {
    rows.push(i);
    if (p.v[i]! > vMax) vMax = p.v[i]!;
  }
  if (rows.length === 0) return finish(p, uf, 0);
  rows.sort((a, b) => p.v[a]! - p.v[b]! || a - b);
  const rank = new Int32Array(n).fill(-1);
  rows.forEach((r, k) => (rank[r] = k));
  const byV = Int32Array.from(rows);
  // Largest velocity link anywhere: R is non-decreasing in V for the HG82 form, so R(vMax) bounds it.
  const vlMax = s.v0KmS * Math.max(p.scale(vMax), p.scale(p.v[byV[0]!]!) || 0);
  // Largest chord of row i: D0 R(V_hi) H0 / V_i, with V_hi = V_i + vlMax/2 the largest pair mean.
  const chordMax = new Float64Array(n);
  const chords: number[] = [];
  for (const i of rows) {
    const vi = p.v[i]!;
    const c = (s.d0Mpc * p.scale(vi + vlMax / 2) * s.h0) / vi;
    chordMax[i] = c;
    chords.push(c);
  }
  chords.sort((a, b) => a - b);
  const cell = Math.min(0.5, Math.max(1e-4, chords[chords.length >> 1]!));
  const K = Math.ceil(2 / cell) + 2;
  const keyOf = (ix: number, iy: number, iz: number) => (ix * K + iy) * K + iz;
  const cix = new Int32Array(n);
  const ciy = new Int32Array(n);
  const ciz = new Int32Array(n);
  for (const i of rows) {
    cix[i] = Math.floor((p.ux[i]! + 1) / cell);
    ciy[i] = Math.floor((p.uy[i]! + 1) / cell);
    ciz[i] = Math.floor((p.uz[i]! + 1) / cell);
  }
  // Cells as runs of a key-then-V ordering.
  const order = Int32Array.from(rows);
  const key = new Float64Array(n);
  for (const i of rows) key[i] = keyOf(cix[i]!, ciy[i]!, ciz[i]!);
  order.sort((a, b) => key[a]! - key[b]! || rank[a]! - rank[b]!);
  const cellStart = new Map<number, number>();
  const cellEnd = new Map<number, number>();
  for (let k = 0; k < order.length; k++) {
    const kk = key[order[k]!]!;
    if (!cellStart.has(kk)) cellStart.set(kk, k);
    cellEnd.set(kk, k + 1);
  }
  let pairsTested = 0;
  const MAX_REACH = 6;
  for (const i of rows) {
    const vi = p.v[i]!;
    const vHi = vi + vlMax;
    const reach = Math.ceil(chordMax[i]! / cell);
    const c2 = chordMax[i]! * chordMax[i]! * (1 + 1e-12);
    if (reach > MAX_REACH || !Number.isFinite(reach)) {
      // Nearby galaxies with huge angular links: walk the velocity window of the global order.
      for (let k = rank[i]! + 1; k < byV.length; k++) {
        const j = byV[k]!;
        if (p.v[j]! > vHi) break;
        pairsTested++;
        if (friends(p, i, j)) uf.union(i, j);
      }
      continue;
    }
    for (let ax = cix[i]! - reach; ax <= cix[i]! + reach; ax++)
      for (let ay = ciy[i]! - reach; ay <= ciy[i]! + reach; ay++)
        for (let az = ciz[i]! - reach; az <= ciz[i]! + reach; az++) {
          const kk = keyOf(ax, ay, az);
          const st = cellStart.get(kk);
          if (st === undefined) continue;
          const en = cellEnd.get(kk)!;
          // first member with rank > rank[i] (members are in rank order inside a cell)
          let lo = st;
          let hi = en;
          while (lo < hi) {
            const mid = (lo + hi) >> 1;
            if (rank[order[mid]!]! <= rank[i]!) lo = mid + 1;
            else hi = mid;
          }
          for (let k = lo; k < en; k++) {
            const j = order[k]!;
            if (p.v[j]! > vHi) break;
            // necessary condition first (cheap): the chord bound of row i
            const dx = p.ux[i]! - p.ux[j]!;
            const dy = p.uy[i]! - p.uy[j]!;
            const dz = p.uz[i]! - p.uz[j]!;
            if (dx * dx + dy * dy + dz * dz > c2) continue;
            pairsTested++;
            if (friends(p, i, j)) uf.union(i, j);
          }
        }
  }
  return finish(p, uf, pairsTested);
}

/** The O(N^2) twin: every pair tested. For tests and benchmarks only. */
export function fofBrute(raDeg: Float64Array, decDeg: Float64Array, vKmS: Float64Array, o: FofOptions = {}): FofResult {
  const p = prepare(raDeg, decDeg, vKmS, o);
  const uf = new UnionFind(p.n);
  let tested = 0;
  for (let i = 0; i < p.n; i++) {
    if (!p.ok[i]) continue;
    for (let j = i + 1; j < p.n; j++) {
      if (!p.ok[j]) continue;
      tested++;
      if (friends(p, i, j)) uf.union(i, j);
    }
  }
  return finish(p, uf, tested);
}
