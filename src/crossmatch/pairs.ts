/**
 * All pairs within a fixed radius between two catalogues (or within one), partition by partition,
 * on the zone engine. This is the single entry point the match, dedupe and diagnostics steps use.
 * A partition (a declination band with its margin, partitions.ts) is a BandJob: plain typed arrays
 * in, a sorted PairList out, no shared state, so bands can run one after another here or on worker
 * threads (threads.ts) and their results merge into the same pair list.
 */
import { bandBlock, blockOfPoints, positionBlock, buildZoneIndex, sortQueries, chooseCellRad, makeZoneGrid, occupiedAreaSr, PairBuffer, queryZoneIndex, sortPairs, DEFAULT_ROWS_PER_CELL, type PairList, type PositionBlock, type SkyPoints } from "./zones.js";
import { bandWindow, partitionEdges, skyPartitions } from "./partitions.js";

export interface PairsOptions {
  /** Number of declination bands to process one after another (default 1: the whole sky at once). */
  partitions?: number;
  /** Grid tuning: indexed rows per cell (default DEFAULT_ROWS_PER_CELL). */
  rowsPerCell?: number;
  /** Called after each partition with (done, total). */
  onProgress?: (done: number, total: number) => void;
}

/** One unit of work: the owned query rows of a band, the indexed rows of its window, the radius. */
export interface BandJob {
  query: PositionBlock;
  index: PositionBlock;
  radiusRad: number;
  /** Rows of the whole query catalogue (the pair sort's key range). */
  nQueryRows: number;
  rowsPerCell: number;
}

/**
 * Every (row of a, row of b) with exact separation <= radiusRad, sorted by a row, then
 * separation, then b row. Rows with NaN positions take part in no pair.
 */
export function pairsWithin(a: SkyPoints, b: SkyPoints, radiusRad: number, opts: PairsOptions = {}): PairList {
  return blockPairs(blockOfPoints(a), blockOfPoints(b), a.length, radiusRad, opts);
}

/** pairsWithin on position blocks; nA is the number of rows of the query catalogue. */
export function blockPairs(a: PositionBlock, b: PositionBlock, nA: number, radiusRad: number, opts: PairsOptions = {}): PairList {
  checkRadius(radiusRad);
  if (a.length + b.length > WARM_ABOVE_ROWS) warmKernels();
  const parts = Math.max(1, Math.floor(opts.partitions ?? 1));
  const rowsPerCell = opts.rowsPerCell ?? DEFAULT_ROWS_PER_CELL;
  if (parts === 1) {
    const out = bandPairs({ query: a, index: b, radiusRad, nQueryRows: nA, rowsPerCell });
    opts.onProgress?.(1, 1);
    return out;
  }
  const jobs = bandJobs(a, b, nA, radiusRad, parts, rowsPerCell);
  const lists = jobs.map((job, p) => {
    const l = bandPairs(job);
    opts.onProgress?.(p + 1, jobs.length);
    return l;
  });
  return mergePairs(lists, nA);
}

export function checkRadius(radiusRad: number): void {
  if (!(radiusRad >= 0) || !Number.isFinite(radiusRad)) throw new Error(`radius must be a finite angle >= 0 (got ${radiusRad} rad)`);
}

/** The band jobs of a match split into `parts` declination bands of about equal numbers of query rows. */
export function bandJobs(a: PositionBlock, b: PositionBlock, nA: number, radiusRad: number, parts: number, rowsPerCell = DEFAULT_ROWS_PER_CELL): BandJob[] {
  return skyPartitions(a, b, radiusRad, partitionEdges(a.decRad, parts)).map((band) => ({ query: band.query, index: band.index, radiusRad, nQueryRows: nA, rowsPerCell }));
}

/** Runs one band: its pairs, sorted by query row, then separation, then indexed row. */
export function bandPairs(job: BandJob): PairList {
  const out = new PairBuffer(Math.max(1024, Math.min(job.query.length, 1 << 22)));
  matchBlock(job.query, job.index, job.radiusRad, out, job.rowsPerCell);
  return sortPairs(out.finish(), job.nQueryRows);
}

/**
 * A band of a match given by the catalogues' own positions in degrees (all rows) and the band edges:
 * the job a worker thread runs on shared arrays, cutting its band out itself (bandBlock).
 */
export interface DegreeBandJob {
  raA: Float64Array;
  decA: Float64Array;
  raB: Float64Array;
  decB: Float64Array;
  /** band edges in radians (partitionEdges) */
  edges: Float64Array;
  band: number;
  radiusRad: number;
  rowsPerCell: number;
}

/** The jobs of a match over `parts` bands of about equal numbers of A rows. */
export function degreeBandJobs(raA: Float64Array, decA: Float64Array, raB: Float64Array, decB: Float64Array, radiusRad: number, parts: number, rowsPerCell = DEFAULT_ROWS_PER_CELL): DegreeBandJob[] {
  checkRadius(radiusRad);
  const edges = partitionEdges(decA, Math.max(1, Math.floor(parts)), Math.PI / 180);
  return Array.from({ length: edges.length - 1 }, (_, band) => ({ raA, decA, raB, decB, edges, band, radiusRad, rowsPerCell }));
}

/** Runs one DegreeBandJob: the band's pairs, sorted as bandPairs sorts them. */
export function degreeBandPairs(job: DegreeBandJob): PairList {
  if (job.raA.length + job.raB.length > WARM_ABOVE_ROWS) warmKernels();
  const w = bandWindow(job.edges, job.band, job.radiusRad);
  const query = bandBlock(job.raA, job.decA, w.qLo, w.qHi, w.qHiInclusive);
  const index = bandBlock(job.raB, job.decB, w.bLo, w.bHi, true);
  return bandPairs({ query, index, radiusRad: job.radiusRad, nQueryRows: job.raA.length, rowsPerCell: job.rowsPerCell });
}

/**
 * One block of work: index the block `index`, query the block `query` in cell order, append pairs
 * (catalogue rows) to out.
 */
export function matchBlock(query: PositionBlock, index: PositionBlock, radiusRad: number, out: PairBuffer, rowsPerCell = DEFAULT_ROWS_PER_CELL): void {
  if (index.length === 0 || query.length === 0) return;
  const area = occupiedAreaSr(index);
  const grid = makeZoneGrid(chooseCellRad(radiusRad, index.length, area, rowsPerCell));
  queryZoneIndex(buildZoneIndex(grid, index), sortQueries(grid, query), radiusRad, out);
}

/**
 * Pair lists of disjoint sets of query rows, each sorted by query row, merged into one sorted list.
 * A few lists (the bands of a match) merge run by run, always taking the list whose next query row
 * is least: every array is read and written in order. Many lists take a counting pass over the query
 * rows that places each row's run (runs keep their own order).
 */
export function mergePairs(lists: PairList[], nQueryRows: number): PairList {
  if (lists.length === 1) return lists[0]!;
  let n = 0;
  for (const l of lists) n += l.length;
  const a = new Int32Array(n);
  const b = new Int32Array(n);
  const s = new Float64Array(n);
  if (lists.length <= RUN_MERGE_LISTS) mergeRuns(lists, a, b, s);
  else placeRuns(lists, nQueryRows, a, b, s);
  return { a, b, sepRad: s, length: n };
}

/** Lists up to which mergePairs merges run by run (each step looks at every list's head). */
const RUN_MERGE_LISTS = 8;

function mergeRuns(lists: PairList[], a: Int32Array, b: Int32Array, s: Float64Array): void {
  const at = new Int32Array(lists.length);
  let o = 0;
  for (;;) {
    let best = -1;
    let bestRow = 0;
    for (let q = 0; q < lists.length; q++) {
      const l = lists[q]!;
      const k = at[q]!;
      if (k < l.length && (best < 0 || l.a[k]! < bestRow)) {
        best = q;
        bestRow = l.a[k]!;
      }
    }
    if (best < 0) return;
    const l = lists[best]!;
    const la = l.a;
    let k = at[best]!;
    // the whole run of this row, and of the following rows while they stay below every other list's head
    let limit = 2147483647;
    for (let q = 0; q < lists.length; q++) {
      if (q === best) continue;
      const m = lists[q]!;
      const kq = at[q]!;
      if (kq < m.length && m.a[kq]! < limit) limit = m.a[kq]!;
    }
    const end = l.length;
    const lb = l.b;
    const ls = l.sepRad;
    while (k < end && (la[k]! === bestRow || la[k]! < limit)) {
      a[o] = la[k]!;
      b[o] = lb[k]!;
      s[o] = ls[k]!;
      o++;
      k++;
    }
    at[best] = k;
  }
}

function placeRuns(lists: PairList[], nQueryRows: number, a: Int32Array, b: Int32Array, s: Float64Array): void {
  const start = new Int32Array(nQueryRows + 1);
  for (const l of lists) for (let k = 0; k < l.length; k++) start[l.a[k]! + 1]!++;
  for (let i = 0; i < nQueryRows; i++) start[i + 1]! += start[i]!;
  for (const l of lists) {
    let t = -1;
    let prev = -1;
    for (let k = 0; k < l.length; k++) {
      const i = l.a[k]!;
      if (i !== prev) {
        t = start[i]!;
        prev = i;
      }
      a[t] = i;
      b[t] = l.b[k]!;
      s[t] = l.sepRad[k]!;
      t++;
    }
  }
}

/** For each row of a, the number of rows of b within radiusRad (NaN rows: 0). */
export function countWithin(a: SkyPoints, b: SkyPoints, radiusRad: number, rowsPerCell = DEFAULT_ROWS_PER_CELL): Int32Array {
  const counts = new Int32Array(a.length);
  if (b.length === 0 || a.length === 0) return counts;
  const bb = blockOfPoints(b);
  if (bb.length === 0) return counts;
  const grid = makeZoneGrid(chooseCellRad(radiusRad / 2, bb.length, occupiedAreaSr(bb), rowsPerCell));
  queryZoneIndex(buildZoneIndex(grid, bb), sortQueries(grid, blockOfPoints(a)), radiusRad, counts);
  return counts;
}

/** Rows (both sides) above which the first pair search of a thread warms the kernels first (warmKernels). */
const WARM_ABOVE_ROWS = 200000;
let warmed = false;

/** Warms the kernels now when a pair search with at least `rows` rows would (a thread with time to spare). */
export function warmKernelsFor(rows: number): void {
  if (rows > WARM_ABOVE_ROWS) warmKernels();
}

/**
 * Runs the pair kernels, once per thread, on small seeded inputs of odd sizes (a few milliseconds).
 * V8 compiles a hot loop while it runs on the first large input, and when the loop's tail has never
 * run it can fall into repeated de-optimisation there; a few small runs first avoid that. The query
 * side has more than 2^14 rows (most without a position) so the pair sort's two-pass path runs too.
 */
export function warmKernels(): void {
  if (warmed) return;
  warmed = true;
  let seed = 20261201;
  const u = (): number => (seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 4294967296;
  const radiusRad = (2 / 3600) * (Math.PI / 180);
  for (let w = 0; w < 3; w++) {
    const nA = 20001 + 2 * w;
    const usedA = 1001 + 2 * w;
    const nB = 999 + 2 * w;
    const raA = new Float64Array(nA).fill(NaN);
    const decA = new Float64Array(nA).fill(NaN);
    for (let i = 0; i < usedA; i++) {
      raA[i] = 360 * u();
      decA[i] = (Math.asin(2 * u() - 1) * 180) / Math.PI;
    }
    const raB = new Float64Array(nB);
    const decB = new Float64Array(nB);
    for (let j = 0; j < nB; j++) {
      const copy = j < 0.7 * nB;
      raB[j] = copy ? (raA[j]! + (u() - 0.5) * 4e-4 + 360) % 360 : 360 * u();
      decB[j] = copy ? Math.max(-90, Math.min(90, decA[j]! + (u() - 0.5) * 4e-4)) : (Math.asin(2 * u() - 1) * 180) / Math.PI;
    }
    for (const job of degreeBandJobs(raA, decA, raB, decB, radiusRad, 2)) degreeBandPairs(job);
    blockPairs(positionBlock(raA, decA), positionBlock(raB, decB), nA, radiusRad);
  }
}
