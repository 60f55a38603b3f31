/**
 * The one owner of kdbush for flat 2-D points: screen or projected coordinates, e.g. the web view
 * picking the point under the cursor. Browser-safe (no node: imports).
 *
 * Points with a non-finite coordinate are left out of the index (they can never be found) but keep
 * their row numbers: every result is a row of the arrays given to the constructor.
 * Ties (equal distance) go to the lower row, so answers never depend on the tree's internal order.
 */
import KDBush from "kdbush";

/** Leaf size of the tree: kdbush's default. */
const NODE_SIZE = 64;

export class PlaneIndex {
  /** Number of rows given to the constructor (indexed or not). */
  readonly length: number;
  /** Number of rows in the tree (finite x and y). */
  readonly indexedLength: number;
  private readonly tree: KDBush;
  /** Tree id -> row. */
  private readonly rowOf: Int32Array;

  constructor(x: ArrayLike<number>, y: ArrayLike<number>) {
    if (x.length !== y.length) throw new Error(`PlaneIndex: x has ${x.length} values but y has ${y.length}`);
    const n = x.length;
    let m = 0;
    for (let i = 0; i < n; i++) if (Number.isFinite(x[i]!) && Number.isFinite(y[i]!)) m++;
    this.length = n;
    this.indexedLength = m;
    this.rowOf = new Int32Array(m);
    this.tree = new KDBush(m, NODE_SIZE, Float64Array);
    for (let i = 0; i < n; i++) {
      const xi = x[i]!;
      const yi = y[i]!;
      if (!Number.isFinite(xi) || !Number.isFinite(yi)) continue;
      this.rowOf[this.tree.add(xi, yi)] = i;
    }
    this.tree.finish();
  }

  /** Rows with minX <= x <= maxX and minY <= y <= maxY (bounds included), in increasing row order. */
  within(minX: number, minY: number, maxX: number, maxY: number): Int32Array {
    if (this.indexedLength === 0 || !(minX <= maxX) || !(minY <= maxY)) return new Int32Array(0);
    const ids = this.tree.range(minX, minY, maxX, maxY);
    const out = new Int32Array(ids.length);
    for (let k = 0; k < ids.length; k++) out[k] = this.rowOf[ids[k]!]!;
    return out.sort();
  }

  /** Rows within Euclidean distance r of (x, y) (boundary included), in increasing row order. */
  withinRadius(x: number, y: number, r: number): Int32Array {
    if (this.indexedLength === 0 || !(r >= 0) || !Number.isFinite(x) || !Number.isFinite(y)) return new Int32Array(0);
    const ids = this.tree.within(x, y, r);
    const out = new Int32Array(ids.length);
    for (let k = 0; k < ids.length; k++) out[k] = this.rowOf[ids[k]!]!;
    return out.sort();
  }

  /**
   * The row nearest to (x, y) within maxDist (boundary included), or -1 when there is none.
   * Equal distances go to the lower row.
   */
  nearest(x: number, y: number, maxDist = Infinity): number {
    if (this.indexedLength === 0 || !Number.isFinite(x) || !Number.isFinite(y) || !(maxDist >= 0)) return -1;
    const s: NearestState = { qx: x, qy: y, bestD2: maxDist === Infinity ? Infinity : maxDist * maxDist, bestRow: -1 };
    this.search(s, 0, this.tree.ids.length - 1, 0);
    return s.bestRow;
  }

  /** Branch-and-bound descent of kdbush's kd-sorted arrays (median at (left + right) >> 1, axes alternate). */
  private search(s: NearestState, left: number, right: number, axis: number): void {
    const { ids, coords } = this.tree;
    if (right - left <= NODE_SIZE) {
      for (let i = left; i <= right; i++) this.consider(s, coords[2 * i]!, coords[2 * i + 1]!, ids[i]!);
      return;
    }
    const m = (left + right) >> 1;
    const mx = coords[2 * m]!;
    const my = coords[2 * m + 1]!;
    this.consider(s, mx, my, ids[m]!);
    const diff = axis === 0 ? s.qx - mx : s.qy - my;
    // Points on the median's coordinate can sit on either side, so both sides are searched when diff = 0.
    if (diff <= 0) {
      this.search(s, left, m - 1, 1 - axis);
      if (diff * diff <= s.bestD2) this.search(s, m + 1, right, 1 - axis);
    } else {
      this.search(s, m + 1, right, 1 - axis);
      if (diff * diff <= s.bestD2) this.search(s, left, m - 1, 1 - axis);
    }
  }

  private consider(s: NearestState, px: number, py: number, id: number): void {
    const dx = px - s.qx;
    const dy = py - s.qy;
    const d2 = dx * dx + dy * dy;
    if (d2 > s.bestD2) return;
    const row = this.rowOf[id]!;
    if (d2 < s.bestD2 || s.bestRow < 0 || row < s.bestRow) {
      s.bestD2 = d2;
      s.bestRow = row;
    }
  }
}

interface NearestState {
  qx: number;
  qy: number;
  bestD2: number;
  bestRow: number;
}

/** Brute-force twin of PlaneIndex.nearest: the test oracle. */
export function nearestPlaneBrute(x: ArrayLike<number>, y: ArrayLike<number>, qx: number, qy: number, maxDist = Infinity): number {
  let best = -1;
  let bestD2 = maxDist * maxDist;
  if (!Number.isFinite(qx) || !Number.isFinite(qy) || !(maxDist >= 0)) return -1;
  for (let i = 0; i < x.length; i++) {
    const dx = x[i]! - qx;
    const dy = y[i]! - qy;
    const d2 = dx * dx + dy * dy;
    if (d2 <= bestD2 && (best < 0 || d2 < bestD2)) {
      best = i;
      bestD2 = d2;
    }
  }
  return best;
}

/** Brute-force twin of PlaneIndex.within: the test oracle. */
export function withinPlaneBrute(x: ArrayLike<number>, y: ArrayLike<number>, minX: number, minY: number, maxX: number, maxY: number): Int32Array {
  const out: number[] = [];
  for (let i = 0; i < x.length; i++) {
    const xi = x[i]!;
    const yi = y[i]!;
    if (xi >= minX && xi <= maxX && yi >= minY && yi <= maxY) out.push(i);
  }
  return Int32Array.from(out);
}
