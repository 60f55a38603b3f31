/**
 * Duplicates within one catalogue: rows closer than R on the sky (and, with a velocity limit,
 * closer than V in velocity) are linked, and links are followed transitively (friends-of-friends on
 * the sky, by union-find), so a chain A-B-C is one object even when A and C are farther apart than R.
 *
 * Every row keeps its place; each gets dup_group (the object it belongs to, numbered 0, 1, ... in
 * order of the object's first row) and dup_size (rows in that object, 1 for a unique row).
 *
 * Collapse rule: one row per object, the object's representative: its first row in file order that
 * is valid (valid = true), or its first row when none is valid. Its values survive unchanged; no value
 * is averaged or taken from another row. The collapsed table is in order of the representatives.
 */
import { ARCSEC } from "../sky/angles.js";
import { pairsWithin } from "./pairs.js";
import { skyPoints } from "./zones.js";

export interface DedupeOptions {
  radiusArcsec: number;
  maxDvKmS?: number;
  partitions?: number;
}

export interface DedupeResult {
  /** object of each row, 0-based, in order of first row */
  group: Int32Array;
  /** rows in the object of each row */
  size: Int32Array;
  nGroups: number;
  /** links within R (and V) */
  links: number;
  /** links rejected by the velocity limit */
  rejectedByDv: number;
  /** links kept although a velocity was missing (no check possible) */
  uncheckedDv: number;
  /** objects of two rows or more */
  duplicateGroups: number;
  /** rows that belong to such objects */
  duplicateRows: number;
  /** largest object */
  largest: number;
}

export function dedupe(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>, velocityKmS: Float64Array | undefined, o: DedupeOptions): DedupeResult {
  const pts = skyPoints(raDeg, decDeg);
  const n = pts.length;
  const pairs = pairsWithin(pts, pts, o.radiusArcsec * ARCSEC, { partitions: o.partitions });
  const parent = new Int32Array(n);
  for (let i = 0; i < n; i++) parent[i] = i;
  let links = 0;
  let rejectedByDv = 0;
  let uncheckedDv = 0;
  for (let k = 0; k < pairs.length; k++) {
    const i = pairs.a[k]!;
    const j = pairs.b[k]!;
    if (i >= j) continue;
    if (o.maxDvKmS !== undefined) {
      const d = velocityKmS ? velocityKmS[j]! - velocityKmS[i]! : NaN;
      if (d !== d) uncheckedDv++;
      else if (Math.abs(d) > o.maxDvKmS) {
        rejectedByDv++;
        continue;
      }
    }
    links++;
    union(parent, i, j);
  }
  return groupsOf(parent, links, rejectedByDv, uncheckedDv);
}

/** Union-find with path halving; the root is always the smaller row, so roots are first rows. */
function find(parent: Int32Array, i: number): number {
  while (parent[i] !== i) {
    parent[i] = parent[parent[i]!]!;
    i = parent[i]!;
  }
  return i;
}

function union(parent: Int32Array, i: number, j: number): void {
  const ri = find(parent, i);
  const rj = find(parent, j);
  if (ri === rj) return;
  if (ri < rj) parent[rj] = ri;
  else parent[ri] = rj;
}

function groupsOf(parent: Int32Array, links: number, rejectedByDv: number, uncheckedDv: number): DedupeResult {
  const n = parent.length;
  const group = new Int32Array(n);
  const idOfRoot = new Int32Array(n).fill(-1);
  let nGroups = 0;
  for (let i = 0; i < n; i++) {
    const r = find(parent, i);
    if (idOfRoot[r] === -1) idOfRoot[r] = nGroups++;
    group[i] = idOfRoot[r]!;
  }
  const count = new Int32Array(nGroups);
  for (let i = 0; i < n; i++) count[group[i]!]!++;
  const size = new Int32Array(n);
  let duplicateGroups = 0;
  let duplicateRows = 0;
  let largest = 0;
  for (let g = 0; g < nGroups; g++) {
    const c = count[g]!;
    if (c > 1) {
      duplicateGroups++;
      duplicateRows += c;
    }
    if (c > largest) largest = c;
  }
  for (let i = 0; i < n; i++) size[i] = count[group[i]!]!;
  return { group, size, nGroups, links, rejectedByDv, uncheckedDv, duplicateGroups, duplicateRows, largest };
}

/** The representative row of each object (see the collapse rule), in increasing row order. */
export function representatives(group: Int32Array, nGroups: number, valid?: Uint8Array): Int32Array {
  const firstValid = new Int32Array(nGroups).fill(-1);
  const first = new Int32Array(nGroups).fill(-1);
  for (let i = 0; i < group.length; i++) {
    const g = group[i]!;
    if (first[g] === -1) first[g] = i;
    if (firstValid[g] === -1 && (!valid || valid[i])) firstValid[g] = i;
  }
  const out = new Int32Array(nGroups);
  for (let g = 0; g < nGroups; g++) out[g] = firstValid[g]! >= 0 ? firstValid[g]! : first[g]!;
  return out.sort();
}
