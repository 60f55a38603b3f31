/**
 * All pairs within a fixed radius between two catalogues (or within one), partition by partition,
 * on the zone engine. This is the single entry point the match, dedupe and diagnostics steps use.
 */
import { buildZoneIndex, sortQueries, chooseCellRad, makeZoneGrid, occupiedAreaSr, PairBuffer, queryZoneIndex, sortPairs, DEFAULT_ROWS_PER_CELL, type PairList, type SkyPoints } from "./zones.js";
import { partitionEdges, skyPartitions } from "./partitions.js";

export interface PairsOptions {
  /** Number of declination bands to process one after another (default 1: the whole sky at once). */
  partitions?: number;
  /** Grid tuning: indexed rows per cell (default DEFAULT_ROWS_PER_CELL). */
  rowsPerCell?: number;
  /** Called after each partition with (done, total). */
  onProgress?: (done: number, total: number) => void;
}

/**
 * Every (row of a, row of b) with exact separation <= radiusRad, sorted by a row, then
 * separation, then b row. Rows with NaN positions take part in no pair.
 */
export function pairsWithin(a: SkyPoints, b: SkyPoints, radiusRad: number, opts: PairsOptions = {}): PairList {
  if (!(radiusRad >= 0) || !Number.isFinite(radiusRad)) throw new Error(`radius must be a finite angle >= 0 (got ${radiusRad} rad)`);
  const parts = Math.max(1, Math.floor(opts.partitions ?? 1));
  const out = new PairBuffer(Math.max(1024, Math.min(a.length, 1 << 22)));
  if (parts === 1) {
    matchBlock(a, b, radiusRad, out, undefined, undefined, opts.rowsPerCell);
    opts.onProgress?.(1, 1);
  } else {
    const bands = skyPartitions(a, b, radiusRad, partitionEdges(a, parts));
    for (const band of bands) {
      matchBlock(a, b, radiusRad, out, band.queryRows, band.indexRows, opts.rowsPerCell);
      opts.onProgress?.(band.id + 1, bands.length);
    }
  }
  return sortPairs(out.finish(), a.length);
}

/**
 * One block of work: index `indexRows` of b (all when omitted), query `queryRows` of a (all when
 * omitted) in cell order, append pairs to out. A block is what a worker or a remote task runs.
 */
export function matchBlock(a: SkyPoints, b: SkyPoints, radiusRad: number, out: PairBuffer, queryRows?: Int32Array, indexRows?: Int32Array, rowsPerCell = DEFAULT_ROWS_PER_CELL): void {
  const nIndexed = indexRows ? indexRows.length : b.length;
  if (nIndexed === 0) return;
  const area = occupiedAreaSr(b, indexRows);
  const grid = makeZoneGrid(chooseCellRad(radiusRad, nIndexed, area, rowsPerCell));
  const index = buildZoneIndex(grid, b, indexRows);
  if (index.length === 0) return;
  queryZoneIndex(index, sortQueries(grid, a, queryRows), radiusRad, out);
}

/** For each row of a, the number of rows of b within radiusRad (NaN rows: 0). */
export function countWithin(a: SkyPoints, b: SkyPoints, radiusRad: number, rowsPerCell = DEFAULT_ROWS_PER_CELL): Int32Array {
  const counts = new Int32Array(a.length);
  if (b.length === 0 || a.length === 0) return counts;
  const grid = makeZoneGrid(chooseCellRad(radiusRad / 2, b.length, occupiedAreaSr(b), rowsPerCell));
  const index = buildZoneIndex(grid, b);
  queryZoneIndex(index, sortQueries(grid, a), radiusRad, counts);
  return counts;
}
