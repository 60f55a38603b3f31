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
import type { SkyPoints } from "./zones.js";

/** Slack added to the margin (radians), as in the zone engine's windows. */
const MARGIN_EPS_RAD = 1e-12;

export interface SkyPartition {
  /** index of the band, 0 = southernmost */
  id: number;
  decLoRad: number;
  decHiRad: number;
  /** query rows owned by the band (finite positions only), increasing */
  queryRows: Int32Array;
  /** indexed rows inside the band widened by the margin, increasing */
  indexRows: Int32Array;
}

/**
 * Band edges (radians, increasing, first -pi/2, last +pi/2) that split the query rows' declinations
 * into `count` bands of about equal numbers of rows.
 */
export function partitionEdges(q: SkyPoints, count: number): Float64Array {
  const k = Math.max(1, Math.floor(count));
  const decs: number[] = [];
  for (let i = 0; i < q.length; i++) {
    const d = q.p[5 * i + 1]!;
    if (d === d) decs.push(d);
  }
  const sorted = Float64Array.from(decs).sort();
  const edges = new Float64Array(k + 1);
  edges[0] = -Math.PI / 2;
  edges[k] = Math.PI / 2;
  for (let p = 1; p < k; p++) {
    const at = Math.floor((p * sorted.length) / k);
    const e = sorted.length ? sorted[Math.min(at, sorted.length - 1)]! : -Math.PI / 2 + (p * Math.PI) / k;
    edges[p] = Math.max(e, edges[p - 1]!);
  }
  return edges;
}

/** The partitions for query points q and indexed points b at radius R, for the given band edges. */
export function skyPartitions(q: SkyPoints, b: SkyPoints, radiusRad: number, edges: Float64Array): SkyPartition[] {
  const k = edges.length - 1;
  const margin = radiusRad + MARGIN_EPS_RAD;
  const out: SkyPartition[] = [];
  for (let p = 0; p < k; p++) {
    const lo = edges[p]!;
    const hi = edges[p + 1]!;
    const last = p === k - 1;
    const qRows: number[] = [];
    for (let i = 0; i < q.length; i++) {
      const d = q.p[5 * i + 1]!;
      if (d >= lo && (d < hi || (last && d <= hi))) qRows.push(i);
    }
    const bRows: number[] = [];
    for (let j = 0; j < b.length; j++) {
      const d = b.p[5 * j + 1]!;
      if (d >= lo - margin && d <= hi + margin) bRows.push(j);
    }
    out.push({ id: p, decLoRad: lo, decHiRad: hi, queryRows: Int32Array.from(qRows), indexRows: Int32Array.from(bRows) });
  }
  return out;
}
