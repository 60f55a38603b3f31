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
export function occupiedAreaSr(pts: SkyPoints | PositionBlock, rows?: Int32Array): number {
  const seen = new Uint8Array(360 * 180);
  const mark = (r: number, d: number) => {
    const zr = Math.min(179, Math.max(0, Math.floor(d / DEG + 90)));
    const cr = Math.min(359, Math.max(0, Math.floor(r / DEG)));
    seen[zr * 360 + cr] = 1;
  };
  if ("p" in pts) {
    const n = rows ? rows.length : pts.length;
    const p = pts.p;
    for (let k = 0; k < n; k++) {
      const i = rows ? rows[k]! : k;
      const r = p[5 * i]!;
      const d = p[5 * i + 1]!;
      if (r !== r || d !== d) continue;
      mark(r, d);
    }
  } else {
    // the arithmetic of mark, written out (this loop runs over every indexed row)
    const ra = pts.raRad;
    const dec = pts.decRad;
    for (let k = 0; k < pts.length; k++) {
      const zr = Math.min(179, Math.max(0, Math.floor(dec[k]! / DEG + 90)));
      const cr = Math.min(359, Math.max(0, Math.floor(ra[k]! / DEG)));
      seen[zr * 360 + cr] = 1;
    }
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

/** RA in degrees to radians in [0, 2 pi) (fmod only for RA outside [0, 360)); the caller checks finiteness. */
function raRadOfDeg(rd: number): number {
  let r = (rd >= 0 && rd < 360 ? rd : rd % 360) * DEG;
  if (r < 0) r += TWO_PI;
  if (r >= TWO_PI) r -= TWO_PI;
  return r;
}
const TWO_PI = 2 * Math.PI;

/** Positions in degrees to SkyPoints. A row with NaN, infinite RA or |Dec| > 90 becomes NaN (never matched). */
export function skyPoints(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>): SkyPoints {
  if (raDeg.length !== decDeg.length) throw new Error(`raDeg has ${raDeg.length} values but decDeg has ${decDeg.length}`);
  const n = raDeg.length;
  const p = new Float64Array(5 * n);
  for (let i = 0; i < n; i++) {
    const rd = raDeg[i]!;
    const dd = decDeg[i]!;
    if (!Number.isFinite(rd) || !(dd >= -90 && dd <= 90)) {
      p.fill(NaN, 5 * i, 5 * i + 5);
      continue;
    }
    const r = raRadOfDeg(rd);
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

/**
 * The rows of a catalogue that have a usable position, compact: row[k] is the catalogue row of entry
 * k, raRad in [0, 2 pi) and decRad its position (the same numbers SkyPoints holds). This is what the
 * engine indexes and queries, and what a sky partition hands to a worker (plain typed arrays).
 */
export interface PositionBlock {
  row: Int32Array;
  raRad: Float64Array;
  decRad: Float64Array;
  length: number;
}

/**
 * The usable rows of positions in degrees (same test and normalisation as skyPoints), in row order:
 * one pass into arrays of the catalogue's length, cut down only when some row is unusable.
 */
export function positionBlock(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>): PositionBlock {
  if (raDeg.length !== decDeg.length) throw new Error(`raDeg has ${raDeg.length} values but decDeg has ${decDeg.length}`);
  const n = raDeg.length;
  let row = new Int32Array(n);
  let ra = new Float64Array(n);
  let dec = new Float64Array(n);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const rd = raDeg[i]!;
    const dd = decDeg[i]!;
    if (!Number.isFinite(rd) || !(dd >= -90 && dd <= 90)) continue;
    row[m] = i;
    ra[m] = raRadOfDeg(rd);
    dec[m] = dd * DEG;
    m++;
  }
  if (m < n) {
    row = row.slice(0, m);
    ra = ra.slice(0, m);
    dec = dec.slice(0, m);
  }
  return { row, raRad: ra, decRad: dec, length: m };
}

/**
 * The usable rows of positions in degrees whose Dec (radians) lies in [loRad, hiRad) (or [loRad,
 * hiRad] with hiInclusive): one sky partition's rows (partitions.ts), read straight from the
 * catalogue's columns, so a worker thread can cut its own band out of shared arrays.
 */
export function bandBlock(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>, loRad: number, hiRad: number, hiInclusive: boolean): PositionBlock {
  if (raDeg.length !== decDeg.length) throw new Error(`raDeg has ${raDeg.length} values but decDeg has ${decDeg.length}`);
  const n = raDeg.length;
  // one pass into arrays of the catalogue's length, returned as views of the part filled: the pages
  // past it are never written, so they take no memory, and no second pass or copy is needed
  const row = new Int32Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const rd = raDeg[i]!;
    const dd = decDeg[i]!;
    if (!Number.isFinite(rd) || !(dd >= -90 && dd <= 90)) continue;
    const d = dd * DEG;
    if (!(d >= loRad && (d < hiRad || (hiInclusive && d <= hiRad)))) continue;
    row[m] = i;
    ra[m] = raRadOfDeg(rd);
    dec[m] = d;
    m++;
  }
  return { row: row.subarray(0, m), raRad: ra.subarray(0, m), decRad: dec.subarray(0, m), length: m };
}

/** The usable rows of SkyPoints (all, or the subset `rows`) as a block, in the given order. */
export function blockOfPoints(pts: SkyPoints, rows?: Int32Array): PositionBlock {
  const n = rows ? rows.length : pts.length;
  const p = pts.p;
  const row = new Int32Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  let m = 0;
  for (let k = 0; k < n; k++) {
    const i = rows ? rows[k]! : k;
    const d = p[5 * i + 1]!;
    if (d !== d) continue;
    row[m] = i;
    ra[m] = p[5 * i]!;
    dec[m] = d;
    m++;
  }
  return { row: row.subarray(0, m), raRad: ra.subarray(0, m), decRad: dec.subarray(0, m), length: m };
}

/**
 * A catalogue indexed on a grid: rows in cell order with their positions copied in that order. Unit
 * vectors are made by the query: for each candidate that passes the declination test when few do
 * (small radii), else once for all rows, kept in xyz.
 */
export interface ZoneIndex {
  grid: ZoneGrid;
  /** sorted position -> row of the indexed catalogue */
  rowOf: Int32Array;
  /** cellStart[c] .. cellStart[c + 1] are the sorted positions in cell c. */
  cellStart: Int32Array;
  /** RA in [0, 2 pi) and Dec, radians, in sorted order */
  raRad: Float64Array;
  decRad: Float64Array;
  /** unit vectors in sorted order, once a query has made them (null before) */
  xyz: Float64Array | null;
  /** number of indexed rows (finite positions) */
  length: number;
}

/** Zone of a usable declination (radians), as the grid arithmetic of cellSortedIndex and sortQueries computes it. */
function zoneIndexOf(decRad: number, invH: number, nZones: number): number {
  const z = Math.floor((decRad + Math.PI / 2) * invH);
  return z < 0 ? 0 : z >= nZones ? nZones - 1 : z;
}

/** Entries per zone of a block, as prefix sums: zoneStart[z] .. zoneStart[z + 1] is zone z. */
function zoneStarts(grid: ZoneGrid, dec: Float64Array, n: number): Int32Array {
  const nZones = grid.nZones;
  const invH = 1 / grid.zoneHeightRad;
  const zoneStart = new Int32Array(nZones + 1);
  for (let k = 0; k < n; k++) zoneStart[zoneIndexOf(dec[k]!, invH, nZones) + 1]!++;
  for (let z = 0; z < nZones; z++) zoneStart[z + 1]! += zoneStart[z]!;
  return zoneStart;
}

/**
 * Builds the index of a block on `grid`. The rows are first moved into zone order (a stable counting
 * pass that writes to one place per zone, where a counting sort into ~1e5 cells writes at random),
 * straight into the index's arrays; then each zone's run, a few thousand entries that stay in cache,
 * is copied out and placed back in RA-cell order.
 */
export function buildZoneIndex(grid: ZoneGrid, blk: PositionBlock): ZoneIndex {
  const n = blk.length;
  const { nZones, nRa, raScale, zoneBase, zoneHeightRad } = grid;
  const nCells = zoneBase[nZones]!;
  const zoneStart = zoneStarts(grid, blk.decRad, n);
  const rowOf = new Int32Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  zoneScatter(zoneStart, nZones, 1 / zoneHeightRad, blk, rowOf, ra, dec);
  const cellStart = new Int32Array(nCells + 1);
  let maxCells = 0;
  let maxRun = 0;
  for (let z = 0; z < nZones; z++) {
    maxCells = Math.max(maxCells, nRa[z]!);
    maxRun = Math.max(maxRun, zoneStart[z + 1]! - zoneStart[z]!);
  }
  const count = new Int32Array(maxCells + 1);
  const runCell = new Int32Array(maxRun);
  const runRow = new Int32Array(maxRun);
  const runRa = new Float64Array(maxRun);
  const runDec = new Float64Array(maxRun);
  for (let z = 0; z < nZones; z++) {
    const lo = zoneStart[z]!;
    const m = zoneStart[z + 1]! - lo;
    const base = zoneBase[z]!;
    const nc = nRa[z]!;
    const sc = raScale[z]!;
    count.fill(0, 0, nc + 1);
    for (let j = 0; j < m; j++) {
      const r = ra[lo + j]!;
      runRow[j] = rowOf[lo + j]!;
      runRa[j] = r;
      runDec[j] = dec[lo + j]!;
      let c = Math.floor(r * sc);
      if (c < 0) c = 0;
      else if (c >= nc) c = nc - 1;
      runCell[j] = c;
      count[c + 1]!++;
    }
    for (let c = 0; c < nc; c++) count[c + 1]! += count[c]!;
    for (let c = 0; c < nc; c++) cellStart[base + c] = lo + count[c]!;
    for (let j = 0; j < m; j++) {
      const t = lo + count[runCell[j]!]!++;
      rowOf[t] = runRow[j]!;
      ra[t] = runRa[j]!;
      dec[t] = runDec[j]!;
    }
  }
  cellStart[nCells] = n;
  return { grid, rowOf, cellStart, raRad: ra, decRad: dec, xyz: null, length: n };
}

/** Unit vectors of the index's rows in sorted order (the arithmetic of skyPoints), made once and kept. */
function indexVectors(index: ZoneIndex): Float64Array {
  if (index.xyz) return index.xyz;
  const n = index.length;
  const ra = index.raRad;
  const dec = index.decRad;
  const xyz = new Float64Array(3 * n);
  for (let t = 0; t < n; t++) {
    const r = ra[t]!;
    const d = dec[t]!;
    const cd = Math.cos(d);
    xyz[3 * t] = cd * Math.cos(r);
    xyz[3 * t + 1] = cd * Math.sin(r);
    xyz[3 * t + 2] = Math.sin(d);
  }
  index.xyz = xyz;
  return xyz;
}

/**
 * Whether a query at this radius should make each candidate's unit vector as it passes the declination
 * test rather than all of them first: when the candidates that pass it (other than true pairs) are
 * expected to number well under one per indexed row. A query scans about (rows per occupied cell) x
 * (1 + 2 Rw / h) candidates and a fraction 2 Rw / h of them passes (h: zone height).
 */
function vectorsPerCandidate(index: ZoneIndex, nQueries: number, Rw: number): boolean {
  const cs = index.cellStart;
  let occupied = 0;
  for (let c = 0; c + 1 < cs.length; c++) if (cs[c + 1]! > cs[c]!) occupied++;
  if (occupied === 0) return true;
  const f = (2 * Rw) / index.grid.zoneHeightRad;
  return nQueries * (index.length / occupied) * (1 + f) * f < 0.25 * index.length;
}

/** One stable counting pass of a block into zone order (zoneStart from zoneStarts): rows and positions moved together. */
function zoneScatter(zoneStart: Int32Array, nZones: number, invH: number, blk: PositionBlock, row: Int32Array, ra: Float64Array, dec: Float64Array): void {
  const fill = zoneStart.slice(0, nZones);
  const n = blk.length;
  const br = blk.row;
  const bra = blk.raRad;
  const bdec = blk.decRad;
  for (let k = 0; k < n; k++) {
    const d = bdec[k]!;
    const t = fill[zoneIndexOf(d, invH, nZones)]!++;
    row[t] = br[k]!;
    ra[t] = bra[k]!;
    dec[t] = d;
  }
}

/**
 * Query points in zone order, so that consecutive queries read the same few zones of the index:
 * a position block (row = the query row) whose unit vectors are computed as the queries run.
 */
export type SortedQueries = PositionBlock;

/**
 * The query block in the grid's zone order (a stable counting pass). The order inside a zone is the
 * block's: consecutive queries then read the same few zones of the index, which is what matters.
 */
export function sortQueries(grid: ZoneGrid, blk: PositionBlock): SortedQueries {
  const n = blk.length;
  const row = new Int32Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  zoneScatter(zoneStarts(grid, blk.decRad, n), grid.nZones, 1 / grid.zoneHeightRad, blk, row, ra, dec);
  return { row, raRad: ra, decRad: dec, length: n };
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
  /** Doubles the capacity, keeping the first `length` entries. */
  grow(): void {
    const c = this.a.length * 2;
    const a = new Int32Array(c);
    a.set(this.a.subarray(0, this.length));
    const b = new Int32Array(c);
    b.set(this.b.subarray(0, this.length));
    const s = new Float64Array(c);
    s.set(this.sepRad.subarray(0, this.length));
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
  const rowOf = index.rowOf;
  const bra = index.raRad;
  const bdec = index.decRad;
  const R = Math.min(radiusRad, Math.PI);
  const Rw = R * (1 + CHORD_SLACK) + EPS_RAD;
  // small radii: a candidate's unit vector is made only when it passes the declination test
  const perCandidate = vectorsPerCandidate(index, q.length, Rw);
  const bx = perCandidate ? new Float64Array(0) : indexVectors(index);
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
  const qra = q.raRad;
  const qdec = q.decRad;
  const qrow = q.row;
  const nq = q.length;
  const invH = 1 / zoneHeightRad;
  // the buffer's arrays in locals while the queries run (written back on growth and at the end)
  let pa = buffer !== null ? buffer.a : new Int32Array(0);
  let pb = buffer !== null ? buffer.b : new Int32Array(0);
  let ps = buffer !== null ? buffer.sepRad : new Float64Array(0);
  let np = buffer !== null ? buffer.length : 0;
  for (let i = 0; i < nq; i++) {
    const ra = qra[i]!;
    const dec = qdec[i]!;
    const row = qrow[i]!;
    // the query's unit vector (as skyPoints computes it), made at its first candidate
    let ax = NaN;
    let ay = NaN;
    let az = NaN;
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
          // a separation is never below the difference in declination
          const dk = bdec[k]!;
          const dd = dk - dec;
          if (dd > Rw || dd < -Rw) continue;
          if (ax !== ax) {
            const cd = Math.cos(dec);
            ax = cd * Math.cos(ra);
            ay = cd * Math.sin(ra);
            az = Math.sin(dec);
          }
          let bxk: number;
          let byk: number;
          let bzk: number;
          if (perCandidate) {
            const r = bra[k]!;
            const cd = Math.cos(dk);
            bxk = cd * Math.cos(r);
            byk = cd * Math.sin(r);
            bzk = Math.sin(dk);
          } else {
            bxk = bx[3 * k]!;
            byk = bx[3 * k + 1]!;
            bzk = bx[3 * k + 2]!;
          }
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
            if (counts !== null) counts[row]!++;
            else {
              if (np === pa.length) {
                buffer!.length = np;
                buffer!.grow();
                pa = buffer!.a;
                pb = buffer!.b;
                ps = buffer!.sepRad;
              }
              pa[np] = row;
              pb[np] = rowOf[k]!;
              ps[np] = sep;
              np++;
            }
          }
        }
      }
    }
  }
  if (buffer !== null) buffer.length = np;
}

/**
 * Sorts pairs by query row, then separation, then indexed row: a radix sort on the query row (one
 * counting pass below 2^14 rows; above, a pass on the high bits into a few dozen buckets, then each
 * bucket, small enough to stay in cache, counting-sorted on the low 14 bits, back into p's arrays),
 * then an insertion sort inside each row's short run. Returns the sorted list, which may be p itself:
 * p's arrays are reused, so p must not be read afterwards.
 */
export function sortPairs(p: PairList, nQueryRows: number): PairList {
  const n = p.length;
  let bits = 1;
  while (bits < 31 && 1 << bits < nQueryRows) bits++;
  const ta = new Int32Array(n);
  const tb = new Int32Array(n);
  const ts = new Float64Array(n);
  let a: Int32Array = ta;
  let b: Int32Array = tb;
  let s: Float64Array = ts;
  if (bits <= LOW_BITS) pairScatter(0, (1 << bits) - 1, p.a, p.b, p.sepRad, ta, tb, ts, 0, n, new Int32Array((1 << bits) + 1));
  else {
    a = p.a;
    b = p.b;
    s = p.sepRad;
    const nHi = 1 << (bits - LOW_BITS);
    const hiStart = new Int32Array(nHi + 1);
    pairScatter(LOW_BITS, nHi - 1, p.a, p.b, p.sepRad, ta, tb, ts, 0, n, hiStart);
    const lowMask = (1 << LOW_BITS) - 1;
    const count = new Int32Array(lowMask + 2);
    for (let h = 0; h < nHi; h++) {
      const lo = h === 0 ? 0 : hiStart[h - 1]!; // after the pass, hiStart[h] is where bucket h ended
      const hi = hiStart[h]!;
      if (hi - lo > 1) {
        count.fill(0);
        pairScatter(0, lowMask, ta, tb, ts, a, b, s, lo, hi, count);
      } else if (hi > lo) {
        a[lo] = ta[lo]!;
        b[lo] = tb[lo]!;
        s[lo] = ts[lo]!;
      }
    }
  }
  let lo = 0;
  while (lo < n) {
    const ai = a[lo]!;
    let hi = lo + 1;
    while (hi < n && a[hi] === ai) hi++;
    if (hi - lo > 32) sortRunBySep(b, s, lo, hi);
    else {
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
    lo = hi;
  }
  return { a, b, sepRad: s, length: n };
}

/** Low bits of the query row that the second pass of sortPairs sorts on (a 64 KiB count table). */
const LOW_BITS = 14;

/**
 * One stable counting pass of pairs lo..hi on digit (a >> shift) & mask, into the same positions of
 * the destination. `count` (mask + 2 zeros) is the work table; afterwards count[d] is the end of digit d.
 */
function pairScatter(shift: number, mask: number, sa: Int32Array, sb: Int32Array, ss: Float64Array, da: Int32Array, db: Int32Array, ds: Float64Array, lo: number, hi: number, count: Int32Array): void {
  count[0] = lo;
  for (let k = lo; k < hi; k++) count[((sa[k]! >> shift) & mask) + 1]!++;
  for (let d = 0; d <= mask; d++) count[d + 1]! += count[d]!;
  for (let k = lo; k < hi; k++) {
    const x = sa[k]!;
    const t = count[(x >> shift) & mask]!++;
    da[t] = x;
    db[t] = sb[k]!;
    ds[t] = ss[k]!;
  }
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
