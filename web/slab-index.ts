/**
 * Rows by one coordinate, for the slices' slabs: a counting sort of the rows into equal-width buckets of
 * the coordinate, made once per column (the supergalactic positions about us do not change with the
 * origin), so that a slab lo <= c <= hi touches only the rows of the buckets it overlaps instead of every
 * row. Rows keep index order within a bucket; rows with a non-finite coordinate are in no bucket.
 */

export interface SlabIndex {
  /** Lower edge and width of bucket 0; bucket b holds the rows with floor((c - lo) / width) = b. */
  lo: number;
  width: number;
  /** Bucket b's rows are rows[start[b]] .. rows[start[b + 1] - 1]. */
  start: Int32Array;
  rows: Int32Array;
}

/** Rows per bucket on average: small enough that the buckets at a slab's edges add few rows to test. */
const ROWS_PER_BUCKET = 32;

const cache = new WeakMap<Float64Array, SlabIndex>();

export function slabIndexOf(c: Float64Array): SlabIndex {
  let ix = cache.get(c);
  if (ix) return ix;
  const n = c.length;
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < n; i++) {
    const v = c[i]!;
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  const nb = lo < hi ? Math.max(1, Math.ceil(n / ROWS_PER_BUCKET)) : 1;
  const width = lo < hi ? (hi - lo) / nb : 1;
  const bucket = new Int32Array(n);
  const start = new Int32Array(nb + 1);
  for (let i = 0; i < n; i++) {
    const v = c[i]!;
    // NaN and infinities are outside [lo, hi]: no bucket
    const b = v >= lo && v <= hi ? Math.min(nb - 1, Math.floor((v - lo) / width)) : -1;
    bucket[i] = b;
    if (b >= 0) start[b + 1]!++;
  }
  for (let b = 0; b < nb; b++) start[b + 1]! += start[b]!;
  const fill = start.slice(0, nb);
  const rows = new Int32Array(start[nb]!);
  for (let i = 0; i < n; i++) {
    const b = bucket[i]!;
    if (b >= 0) rows[fill[b]!++] = i;
  }
  ix = { lo: Number.isFinite(lo) ? lo : 0, width, start, rows };
  cache.set(c, ix);
  return ix;
}

/**
 * The rows that may have lo <= c <= hi: those of every bucket the interval overlaps, with one bucket
 * more on each side so that rounding in the bucket edges can never leave a row out. The caller tests
 * each row exactly. Returns [from, to) in ix.rows (the buckets are contiguous there).
 */
export function slabCandidates(ix: SlabIndex, lo: number, hi: number): [number, number] {
  const nb = ix.start.length - 1;
  if (!(hi >= lo)) return [0, 0];
  const b0 = Math.max(0, Math.floor((lo - ix.lo) / ix.width) - 1);
  const b1 = Math.min(nb - 1, Math.floor((hi - ix.lo) / ix.width) + 1);
  if (b1 < b0) return [0, 0];
  return [ix.start[b0]!, ix.start[b1 + 1]!];
}
