/**
 * The fixed-radius engine: the zones algorithm (Gray, Szalay, Thakar et al. 2007, "Cross-matching
 * astronomical catalogs with the zones algorithm", MSR-TR-2006-52 / arXiv cs/0701171).
 *
 * The sky is cut into declination zones of height h; each zone into RA cells of about h of arc.
 * The indexed catalogue is counting-sorted into cell order and its unit vectors are copied in that
 * order, so a query walks contiguous memory. A query at (ra, dec) scans, in every zone that meets
 * [dec - R, dec + R], the cells that meet [ra - alpha, ra + alpha], alpha = asin(sin R / cos dec)
 * (the RA half-width of a cap of radius R; the whole zone when the cap reaches a pole), wrapping
 * across RA 0/360. Candidates pass a chord test (|u - v|^2 <= (2 sin(R/2))^2, loosened by a few ulps)
 * and are then kept by their exact separation atan2(|u x v|, u . v) <= R. Every window is widened by
 * EPS_RAD so rounding in the cell arithmetic can only add candidates, never lose one: the pair set
 * is exactly { (i, j) : atan2 separation <= R }, the same predicate as the brute-force twin.
 *
 * Memory is linear: the grid has at most ~4 cells per indexed row (plus a constant), and the
 * output grows by doubling. Pure and browser-safe; no per-row objects.
 */
import { DEG } from "../sky/angles.js";
import { angleBetween } from "../sky/vectors.js";

/** Widening of every search window (radians): 1e-12 rad = 2e-7 arcsec, far above float64 round-off of the cell arithmetic. */
const EPS_RAD = 1e-12;
/** Loosening of the chord test (relative); the exact atan2 test decides. */
const CHORD_SLACK = 1e-9;
/** Indexed rows per cell that the grid aims at (tuned in bench/crossmatch.bench.ts). */
export const DEFAULT_ROWS_PER_CELL = 6;

export interface ZoneGrid {
  /** Zone height in radians. */
  zoneHeightRad: number;
  nZones: number;
  /** RA cells in each zone. */
  nRa: Int32Array;
  /** Cells per radian of RA in each zone (nRa / 2 pi). */
  raScale: Float64Array;
  /** First cell id of each zone; zoneBase[nZones] = total cells. */
  zoneBase: Int32Array;
}

/** A grid whose zones are cellRad high and whose cells are about cellRad wide. */
export function makeZoneGrid(cellRad: number): ZoneGrid {
  if (!(cellRad > 0)) throw new Error(`zone height must be positive (got ${cellRad})`);
  const h = Math.min(cellRad, Math.PI);
  const nZones = Math.max(1, Math.ceil(Math.PI / h));
  const zoneHeightRad = Math.PI / nZones;
  const nRa = new Int32Array(nZones);
  const raScale = new Float64Array(nZones);
  const zoneBase = new Int32Array(nZones + 1);
  for (let z = 0; z < nZones; z++) {
    const lo = -Math.PI / 2 + z * zoneHeightRad;
    const hi = lo + zoneHeightRad;
    // widest circle of the zone: the edge nearest the equator (or the equator itself)
    const cosMax = lo <= 0 && hi >= 0 ? 1 : Math.cos(Math.min(Math.abs(lo), Math.abs(hi)));
    const n = Math.max(1, Math.min(1 << 20, Math.floor((2 * Math.PI * cosMax) / zoneHeightRad)));
    nRa[z] = n;
    raScale[z] = n / (2 * Math.PI);
    zoneBase[z + 1] = zoneBase[z]! + n;
  }
  return { zoneHeightRad, nZones, nRa, raScale, zoneBase };
}

/**
 * The zone height for indexing nIndexed rows spread over areaSr steradians and querying at radius R:
 * about rowsPerCell rows per cell (default 6), never fewer than ~R (a query then meets at most 2-3 zones), and
 * never more than ~4 cells per row over the whole sky (memory stays linear).
 */
export function chooseCellRad(radiusRad: number, nIndexed: number, areaSr: number, rowsPerCell = DEFAULT_ROWS_PER_CELL): number {
  const area = Math.max(areaSr, 1e-12);
  const density = Math.max(nIndexed, 1) / area;
  const byDensity = Math.sqrt(rowsPerCell / density);
  const floorForMemory = Math.sqrt((4 * Math.PI) / (4 * Math.max(nIndexed, 1) + 4096));
  return Math.min(Math.PI, Math.max(byDensity, floorForMemory, radiusRad));
}

/**
 * Area (steradians) occupied by positions, on a 1 x 1 degree grid of (RA, Dec) boxes: the sum of the
 * areas of the boxes holding at least one row. Used to size the grid for surveys that cover part of the sky.
 */
export function occupiedAreaSr(pts: SkyPoints, rows?: Int32Array): number {
  const seen = new Uint8Array(360 * 180);
  const n = rows ? rows.length : pts.length;
  const p = pts.p;
  for (let k = 0; k < n; k++) {
    const i = rows ? rows[k]! : k;
    const r = p[5 * i]!;
    const d = p[5 * i + 1]!;
    if (r !== r || d !== d) continue;
    const zr = Math.min(179, Math.max(0, Math.floor((d / DEG) + 90)));
    const cr = Math.min(359, Math.max(0, Math.floor(r / DEG)));
    seen[zr * 360 + cr] = 1;
  }
  let area = 0;
  for (let z = 0; z < 180; z++) {
    const band = (Math.sin((z - 89) * DEG) - Math.sin((z - 90) * DEG)) * DEG; // area of one 1-degree box in this band
    for (let c = 0; c < 360; c++) if (seen[z * 360 + c]) area += band;
  }
  return area;
}

/** Zone of a declination in radians, clamped to the grid. */
export function zoneOf(grid: ZoneGrid, decRad: number): number {
  const z = Math.floor((decRad + Math.PI / 2) / grid.zoneHeightRad);
  return z < 0 ? 0 : z >= grid.nZones ? grid.nZones - 1 : z;
}

/** Cell id of a position (ra in [0, 2 pi)), or -1 for NaN. */
export function cellOf(grid: ZoneGrid, raRad: number, decRad: number): number {
  if (raRad !== raRad || decRad !== decRad) return -1;
  const z = zoneOf(grid, decRad);
  const n = grid.nRa[z]!;
  let c = Math.floor(raRad * grid.raScale[z]!);
  if (c < 0) c = 0;
  else if (c >= n) c = n - 1;
  return grid.zoneBase[z]! + c;
}

/**
 * Sky positions prepared once, interleaved so that one row is one read:
 * p[5i .. 5i + 4] = [RA in [0, 2 pi), Dec, x, y, z] in radians and unit-vector components.
 * A row without a usable position is all NaN.
 */
export interface SkyPoints {
  p: Float64Array;
  length: number;
}

/** Stride of SkyPoints.p. */
export const STRIDE = 5;

/** Dec (radians) of row i; NaN when the row has no position. */
export function decOf(pts: SkyPoints, i: number): number {
  return pts.p[5 * i + 1]!;
}

/** Positions in degrees to SkyPoints. A row with NaN, infinite RA or |Dec| > 90 becomes NaN (never matched). */
export function skyPoints(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>): SkyPoints {
  if (raDeg.length !== decDeg.length) throw new Error(`raDeg has ${raDeg.length} values but decDeg has ${decDeg.length}`);
  const n = raDeg.length;
  const p = new Float64Array(5 * n);
  const TWO_PI = 2 * Math.PI;
  for (let i = 0; i < n; i++) {
    const rd = raDeg[i]!;
    const dd = decDeg[i]!;
    if (!Number.isFinite(rd) || !(dd >= -90 && dd <= 90)) {
      p.fill(NaN, 5 * i, 5 * i + 5);
      continue;
    }
    let r = (rd >= 0 && rd < 360 ? rd : rd % 360) * DEG; // fmod only for RA outside [0, 360)
    if (r < 0) r += TWO_PI;
    if (r >= TWO_PI) r -= TWO_PI;
    const d = dd * DEG;
    const c = Math.cos(d);
    p[5 * i] = r;
    p[5 * i + 1] = d;
    p[5 * i + 2] = c * Math.cos(r);
    p[5 * i + 3] = c * Math.sin(r);
    p[5 * i + 4] = Math.sin(d);
  }
  return { p, length: n };
}

/** A catalogue indexed on a grid: rows in cell order with their unit vectors copied in that order. */
export interface ZoneIndex {
  grid: ZoneGrid;
  /** sorted position -> row of the indexed catalogue */
  rowOf: Int32Array;
  /** cellStart[c] .. cellStart[c + 1] are the sorted positions in cell c. */
  cellStart: Int32Array;
  /** unit vectors in sorted order */
  xyz: Float64Array;
  /** number of indexed rows (finite positions) */
  length: number;
}

/** Counting sort of rows (all, or the subset `rows`) into cell order. Rows with NaN positions are left out. */
export function cellOrder(grid: ZoneGrid, pts: SkyPoints, rows?: Int32Array): { order: Int32Array; cellStart: Int32Array } {
  const nCells = grid.zoneBase[grid.nZones]!;
  const count = new Int32Array(nCells + 1);
  const m = rows ? rows.length : pts.length;
  const cell = new Int32Array(m);
  let kept = 0;
  for (let k = 0; k < m; k++) {
    const i = rows ? rows[k]! : k;
    const c = cellOf(grid, pts.p[5 * i]!, pts.p[5 * i + 1]!);
    cell[k] = c;
    if (c >= 0) {
      count[c + 1]!++;
      kept++;
    }
  }
  for (let c = 0; c < nCells; c++) count[c + 1]! += count[c]!;
  const cellStart = count.slice();
  const order = new Int32Array(kept);
  for (let k = 0; k < m; k++) {
    const c = cell[k]!;
    if (c >= 0) order[count[c]!++] = rows ? rows[k]! : k;
  }
  return { order, cellStart };
}

/** Builds the index of `pts` (or of the subset `rows`) on `grid`. */
export function buildZoneIndex(grid: ZoneGrid, pts: SkyPoints, rows?: Int32Array): ZoneIndex {
  const { order, cellStart } = cellOrder(grid, pts, rows);
  const n = order.length;
  const xyz = new Float64Array(3 * n);
  const src = pts.p;
  for (let k = 0; k < n; k++) {
    const i = order[k]!;
    xyz[3 * k] = src[5 * i + 2]!;
    xyz[3 * k + 1] = src[5 * i + 3]!;
    xyz[3 * k + 2] = src[5 * i + 4]!;
  }
  return { grid, rowOf: order, cellStart, xyz, length: n };
}

/** Query points gathered into cell order, so that a sweep over them reads memory in order. */
export interface SortedQueries {
  /** sorted position -> query row */
  rowOf: Int32Array;
  /** stride 5, as SkyPoints.p, in sorted order */
  p: Float64Array;
  length: number;
}

/** Gathers the query rows (all, or `rows`) with finite positions into the grid's cell order. */
export function sortQueries(grid: ZoneGrid, q: SkyPoints, rows?: Int32Array): SortedQueries {
  const { order } = cellOrder(grid, q, rows);
  const n = order.length;
  const p = new Float64Array(5 * n);
  const src = q.p;
  for (let k = 0; k < n; k++) {
    const i = 5 * order[k]!;
    const o = 5 * k;
    p[o] = src[i]!;
    p[o + 1] = src[i + 1]!;
    p[o + 2] = src[i + 2]!;
    p[o + 3] = src[i + 3]!;
    p[o + 4] = src[i + 4]!;
  }
  return { rowOf: order, p, length: n };
}

/** Pairs found by a query: parallel arrays, `length` of them used. */
export interface PairList {
  /** query row */
  a: Int32Array;
  /** indexed row */
  b: Int32Array;
  /** exact separation, radians */
  sepRad: Float64Array;
  length: number;
}

/** A growable PairList. */
export class PairBuffer {
  a: Int32Array;
  b: Int32Array;
  sepRad: Float64Array;
  length = 0;
  constructor(capacity = 1024) {
    const c = Math.max(16, capacity | 0);
    this.a = new Int32Array(c);
    this.b = new Int32Array(c);
    this.sepRad = new Float64Array(c);
  }
  push(a: number, b: number, sepRad: number): void {
    if (this.length === this.a.length) this.grow();
    const k = this.length++;
    this.a[k] = a;
    this.b[k] = b;
    this.sepRad[k] = sepRad;
  }
  private grow(): void {
    const c = this.a.length * 2;
    const a = new Int32Array(c);
    a.set(this.a);
    const b = new Int32Array(c);
    b.set(this.b);
    const s = new Float64Array(c);
    s.set(this.sepRad);
    this.a = a;
    this.b = b;
    this.sepRad = s;
  }
  /** The pairs as views of the first `length` entries (no copy; the buffer must not be pushed to afterwards). */
  finish(): PairList {
    return { a: this.a.subarray(0, this.length), b: this.b.subarray(0, this.length), sepRad: this.sepRad.subarray(0, this.length), length: this.length };
  }
}

/**
 * Every (query row, indexed row) pair with exact separation <= radiusRad, appended to `out`
 * (or, when `out` is an Int32Array indexed by query row, only counted there).
 * Queries are visited in their sorted (cell) order, so consecutive queries read neighbouring memory.
 * Pairs come out grouped by query row, in no particular order within a row.
 */
export function queryZoneIndex(index: ZoneIndex, q: SortedQueries, radiusRad: number, out: PairBuffer | Int32Array): void {
  const counts = out instanceof Int32Array ? out : null;
  const buffer = out instanceof PairBuffer ? out : null;
  if (!(radiusRad >= 0)) throw new Error(`radius must be >= 0 radians (got ${radiusRad})`);
  const grid = index.grid;
  const { nZones, nRa, raScale, zoneBase, zoneHeightRad } = grid;
  const cellStart = index.cellStart;
  const bx = index.xyz;
  const rowOf = index.rowOf;
  const R = Math.min(radiusRad, Math.PI);
  const Rw = R * (1 + CHORD_SLACK) + EPS_RAD;
  const chord = 2 * Math.sin(Math.min(Rw, Math.PI) / 2);
  const chord2 = chord * chord * (1 + CHORD_SLACK) + 1e-30;
  // Counting only: below this chord the pair is inside R whatever the rounding, so atan2 is skipped.
  const chordIn = 2 * Math.sin((R * (1 - 1e-6)) / 2);
  const chord2In = chordIn * chordIn;
  const HALF_PI = Math.PI / 2;
  // RA half-width of the cap, for a query anywhere in zone z: asin(sin R / cos |dec|max); -1 = whole zone.
  const alphaOfZone = new Float64Array(nZones);
  for (let z = 0; z < nZones; z++) {
    const lo = -HALF_PI + z * zoneHeightRad;
    const dmax = Math.max(Math.abs(lo), Math.abs(lo + zoneHeightRad)) + EPS_RAD;
    if (dmax + Rw >= HALF_PI) {
      alphaOfZone[z] = -1;
      continue;
    }
    const s = Math.sin(Rw) / Math.cos(dmax);
    alphaOfZone[z] = s >= 1 ? -1 : Math.asin(s) + EPS_RAD;
  }
  const qp = q.p;
  const qrow = q.rowOf;
  const nq = q.length;
  const invH = 1 / zoneHeightRad;
  for (let i = 0; i < nq; i++) {
    const ra = qp[5 * i]!;
    const dec = qp[5 * i + 1]!;
    const ax = qp[5 * i + 2]!;
    const ay = qp[5 * i + 3]!;
    const az = qp[5 * i + 4]!;
    const row = qrow[i]!;
    let zq = Math.floor((dec + HALF_PI) * invH);
    if (zq >= nZones) zq = nZones - 1;
    let z0 = Math.floor((dec - Rw + HALF_PI) * invH);
    let z1 = Math.floor((dec + Rw + HALF_PI) * invH);
    if (z0 < 0) z0 = 0;
    if (z1 >= nZones) z1 = nZones - 1;
    const alpha = alphaOfZone[zq]!;
    for (let z = z0; z <= z1; z++) {
      const base = zoneBase[z]!;
      const n = nRa[z]!;
      let c0 = 0;
      let c1 = n - 1;
      let wrapLo = -1;
      let wrapHi = -2;
      if (alpha >= 0) {
        const sc = raScale[z]!;
        c0 = Math.floor((ra - alpha) * sc);
        c1 = Math.floor((ra + alpha) * sc);
        if (c1 - c0 + 1 >= n) {
          c0 = 0;
          c1 = n - 1;
        } else if (c0 < 0) {
          wrapLo = c0 + n;
          wrapHi = n - 1;
          c0 = 0;
        } else if (c1 >= n) {
          wrapLo = 0;
          wrapHi = c1 - n;
          c1 = n - 1;
        }
      }
      // main range, then the part that wrapped across RA 0/360
      for (let pass = 0; pass < 2; pass++) {
        let lo: number;
        let hi: number;
        if (pass === 0) {
          lo = cellStart[base + c0]!;
          hi = cellStart[base + c1 + 1]!;
        } else {
          if (wrapHi < wrapLo) break;
          lo = cellStart[base + wrapLo]!;
          hi = cellStart[base + wrapHi + 1]!;
        }
        for (let k = lo; k < hi; k++) {
          const bxk = bx[3 * k]!;
          const byk = bx[3 * k + 1]!;
          const bzk = bx[3 * k + 2]!;
          const dx = bxk - ax;
          const dy = byk - ay;
          const dz = bzk - az;
          const d2 = dx * dx + dy * dy + dz * dz;
          if (d2 > chord2) continue;
          if (counts !== null && d2 < chord2In) {
            counts[row]!++;
            continue;
          }
          const sep = angleBetween(ax, ay, az, bxk, byk, bzk);
          if (sep <= R) {
            if (counts) counts[row]!++;
            else buffer!.push(row, rowOf[k]!, sep);
          }
        }
      }
    }
  }
}

/**
 * Sorts pairs by query row, then separation, then indexed row (counting sort on the query row,
 * insertion sort inside each row's short run). Returns a new PairList.
 */
export function sortPairs(p: PairList, nQueryRows: number): PairList {
  const n = p.length;
  const start = new Int32Array(nQueryRows + 1);
  for (let k = 0; k < n; k++) start[p.a[k]! + 1]!++;
  for (let i = 0; i < nQueryRows; i++) start[i + 1]! += start[i]!;
  const fill = start.slice(0, nQueryRows);
  const a = new Int32Array(n);
  const b = new Int32Array(n);
  const s = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    const i = p.a[k]!;
    const t = fill[i]!++;
    a[t] = i;
    b[t] = p.b[k]!;
    s[t] = p.sepRad[k]!;
  }
  for (let i = 0; i < nQueryRows; i++) {
    const lo = start[i]!;
    const hi = start[i + 1]!;
    if (hi - lo > 32) {
      sortRunBySep(b, s, lo, hi);
      continue;
    }
    for (let t = lo + 1; t < hi; t++) {
      const bt = b[t]!;
      const st = s[t]!;
      let u = t - 1;
      while (u >= lo && (s[u]! > st || (s[u] === st && b[u]! > bt))) {
        b[u + 1] = b[u]!;
        s[u + 1] = s[u]!;
        u--;
      }
      b[u + 1] = bt;
      s[u + 1] = st;
    }
  }
  return { a, b, sepRad: s, length: n };
}

/** Sorts b[lo..hi) and s[lo..hi) together by (s, b): for the long runs of crowded fields. */
function sortRunBySep(b: Int32Array, s: Float64Array, lo: number, hi: number): void {
  const idx = new Int32Array(hi - lo);
  for (let t = 0; t < idx.length; t++) idx[t] = lo + t;
  idx.sort((x, y) => s[x]! - s[y]! || b[x]! - b[y]!);
  const bb = new Int32Array(idx.length);
  const ss = new Float64Array(idx.length);
  for (let t = 0; t < idx.length; t++) {
    bb[t] = b[idx[t]!]!;
    ss[t] = s[idx[t]!]!;
  }
  b.set(bb, lo);
  s.set(ss, lo);
}

/** The separation of the pair that an angle in degrees or arcsec gives, for readability at call sites. */
export function radiusRadOfArcsec(arcsec: number): number {
  return (arcsec / 3600) * DEG;
}
