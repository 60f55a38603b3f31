/**
 * Sky partitions: declination bands that can be matched independently of one another.
 *
 * Partition p owns the query rows with dec in [edge[p], edge[p + 1]) (the last band also owns
 * dec = +90) and sees the indexed rows with dec in [edge[p] - margin, edge[p + 1] + margin], with
 * margin = R (plus round-off slack). Because an angular separation is never smaller than the
 * difference in declination, every pair within R of an owned query row is inside that window, and
 * because each query row has exactly one owner, each pair is found exactly once. This is the unit a
 * distributed engine schedules (see DEVELOPERS.md, "Scaling out"): a band's rows plus its margin
 * rows are all it needs, and results concatenate.
 */
import type { PositionBlock } from "./zones.js";

/** Slack added to the margin (radians), as in the zone engine's windows. */
const MARGIN_EPS_RAD = 1e-12;
/** Declination bins of the histogram that places the band edges. */
const EDGE_BINS = 1 << 14;

export interface SkyPartition {
  /** index of the band, 0 = southernmost */
  id: number;
  decLoRad: number;
  decHiRad: number;
  /** query rows owned by the band, in their block order (row = the block's row ids) */
  query: PositionBlock;
  /** indexed rows inside the band widened by the margin, in their block order */
  index: PositionBlock;
}

/**
 * Band edges (radians, increasing, first -pi/2, last +pi/2) that split declinations `dec` (radians,
 * or degrees with radPerUnit = pi / 180; NaN and out-of-range values are skipped) into `count` bands
 * of about equal numbers of rows: edges fall on the boundaries of a histogram of EDGE_BINS
 * declination bins (one pass, no sort), so each band holds its share to within one bin.
 */
export function partitionEdges(dec: ArrayLike<number>, count: number, radPerUnit = 1): Float64Array {
  const k = Math.max(1, Math.floor(count));
  const edges = new Float64Array(k + 1);
  edges[0] = -Math.PI / 2;
  edges[k] = Math.PI / 2;
  if (k === 1) return edges;
  const width = Math.PI / EDGE_BINS;
  const hist = new Int32Array(EDGE_BINS);
  let n = 0;
  for (let i = 0; i < dec.length; i++) {
    const d = dec[i]! * radPerUnit;
    if (!(d >= -Math.PI / 2 && d <= Math.PI / 2)) continue;
    let bin = Math.floor((d + Math.PI / 2) / width);
    if (bin >= EDGE_BINS) bin = EDGE_BINS - 1;
    hist[bin]!++;
    n++;
  }
  let bin = 0;
  let below = 0; // rows in bins < bin
  for (let p = 1; p < k; p++) {
    if (n === 0) {
      edges[p] = -Math.PI / 2 + (p * Math.PI) / k;
      continue;
    }
    const want = (p * n) / k;
    while (bin < EDGE_BINS && below + hist[bin]! <= want) below += hist[bin++]!;
    // the edge is the boundary (below or above the bin holding the quantile) nearer to it
    const e = bin < EDGE_BINS && want - below > below + hist[bin]! - want ? bin + 1 : bin;
    edges[p] = Math.min(Math.max(-Math.PI / 2 + e * width, edges[p - 1]!), Math.PI / 2);
  }
  return edges;
}

/**
 * The declination windows of band p: the query rows it owns, [qLo, qHi) ([qLo, qHi] for the last
 * band), and the indexed rows it needs, [bLo, bHi] (the band widened by the margin R).
 */
export function bandWindow(edges: Float64Array, p: number, radiusRad: number): { qLo: number; qHi: number; qHiInclusive: boolean; bLo: number; bHi: number } {
  const margin = radiusRad + MARGIN_EPS_RAD;
  const lo = edges[p]!;
  const hi = edges[p + 1]!;
  return { qLo: lo, qHi: hi, qHiInclusive: p === edges.length - 2, bLo: lo - margin, bHi: hi + margin };
}

/** The band owning declination d (the last band with edge <= d; an empty band owns nothing). */
function ownerBand(edges: Float64Array, d: number): number {
  let lo = 0;
  let hi = edges.length - 2; // last band
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (edges[mid]! <= d) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/**
 * The partitions for query rows q and indexed rows b at radius R, for the given band edges: one pass
 * over each block, each band's rows copied out in block order (plain typed arrays a worker can take).
 */
export function skyPartitions(q: PositionBlock, b: PositionBlock, radiusRad: number, edges: Float64Array): SkyPartition[] {
  const k = edges.length - 1;
  const margin = radiusRad + MARGIN_EPS_RAD;
  // query rows: exactly one owner each
  const owner = new Int32Array(q.length);
  const nq = new Int32Array(k);
  for (let i = 0; i < q.length; i++) {
    const p = ownerBand(edges, q.decRad[i]!);
    owner[i] = p;
    nq[p]!++;
  }
  const qBlocks = Array.from({ length: k }, (_, p) => emptyBlock(nq[p]!));
  const qFill = new Int32Array(k);
  for (let i = 0; i < q.length; i++) {
    const p = owner[i]!;
    put(qBlocks[p]!, qFill[p]!++, q, i);
  }
  // indexed rows: every band whose window [lo - margin, hi + margin] holds the row (usually one, two near an edge)
  const nb = new Int32Array(k);
  const first = new Int32Array(b.length);
  for (let j = 0; j < b.length; j++) {
    const d = b.decRad[j]!;
    let p = ownerBand(edges, d - margin);
    while (p > 0 && edges[p]! >= d - margin) p--; // the window is closed: a band ending exactly at d - margin sees the row
    first[j] = p;
    for (; p < k && edges[p]! - margin <= d; p++) if (d <= edges[p + 1]! + margin) nb[p]!++;
  }
  const bBlocks = Array.from({ length: k }, (_, p) => emptyBlock(nb[p]!));
  const bFill = new Int32Array(k);
  for (let j = 0; j < b.length; j++) {
    const d = b.decRad[j]!;
    for (let p = first[j]!; p < k && edges[p]! - margin <= d; p++) if (d <= edges[p + 1]! + margin) put(bBlocks[p]!, bFill[p]!++, b, j);
  }
  const out: SkyPartition[] = [];
  for (let p = 0; p < k; p++) out.push({ id: p, decLoRad: edges[p]!, decHiRad: edges[p + 1]!, query: qBlocks[p]!, index: bBlocks[p]! });
  return out;
}

function emptyBlock(n: number): PositionBlock {
  return { row: new Int32Array(n), raRad: new Float64Array(n), decRad: new Float64Array(n), length: n };
}

function put(dst: PositionBlock, t: number, src: PositionBlock, i: number): void {
  dst.row[t] = src.row[i]!;
  dst.raRad[t] = src.raRad[i]!;
  dst.decRad[t] = src.decRad[i]!;
}
