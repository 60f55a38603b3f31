/**
 * The one owner of geokdbush: the nearest catalogue rows to one sky position (re-centring on a
 * position, lookup by coordinates). For matching whole catalogues use the zone engine (zones.ts):
 * one geokdbush query per row is about 20 times slower.
 *
 * Traps handled here (STYLE.md rule 7):
 * - geokdbush wants longitudes in [-180, 180): RA in [0, 360) gives wrong neighbours, so every RA
 *   is wrapped with wrap180 on the way in (rows and queries alike);
 * - its radius is a distance in km on a 6371 km sphere and must not exceed half the circumference,
 *   so radii are clamped to 180 degrees before conversion;
 * - its distances are haversine; every candidate's separation is recomputed by the atan2 (Vincenty)
 *   form and the answer is ordered by that exact separation, ties to the lower row.
 * Rows with a non-finite RA or Dec are not indexed and never returned.
 */
import KDBush from "kdbush";
import { around } from "geokdbush";
import { DEG, RAD, wrap180 } from "../sky/angles.js";
import { separationRad } from "../sky/separation.js";

/** geokdbush's sphere radius in km (its source: `const earthRadius = 6371`). */
const GEOKDBUSH_RADIUS_KM = 6371;
/**
 * Slack added to geokdbush's haversine radius so that its rounding never drops a row that is
 * inside the radius by the exact formula; the exact test is applied afterwards. 1e-9 km is 3e-5 arcsec.
 */
const SLACK_KM = 1e-9;

export interface SkyHit {
  /** Row in the arrays given to the constructor; -1 when nothing was found. */
  row: number;
  /** Exact separation in degrees; NaN when nothing was found. */
  sepDeg: number;
}

export class SkyIndex {
  readonly length: number;
  readonly indexedLength: number;
  private readonly tree: KDBush;
  private readonly rowOf: Int32Array;
  private readonly raRad: Float64Array;
  private readonly decRad: Float64Array;

  constructor(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>) {
    if (raDeg.length !== decDeg.length) throw new Error(`SkyIndex: raDeg has ${raDeg.length} values but decDeg has ${decDeg.length}`);
    const n = raDeg.length;
    let m = 0;
    for (let i = 0; i < n; i++) if (usable(raDeg[i]!, decDeg[i]!)) m++;
    this.length = n;
    this.indexedLength = m;
    this.rowOf = new Int32Array(m);
    this.raRad = new Float64Array(n).fill(NaN);
    this.decRad = new Float64Array(n).fill(NaN);
    this.tree = new KDBush(m, 64, Float64Array);
    for (let i = 0; i < n; i++) {
      const ra = raDeg[i]!;
      const dec = decDeg[i]!;
      if (!usable(ra, dec)) continue;
      this.raRad[i] = ra * DEG;
      this.decRad[i] = dec * DEG;
      this.rowOf[this.tree.add(wrap180(ra), dec)] = i;
    }
    this.tree.finish();
  }

  /** The nearest row to (raDeg, decDeg) within maxSepDeg (default: the whole sky). */
  nearest(raDeg: number, decDeg: number, maxSepDeg = 180): SkyHit {
    const none: SkyHit = { row: -1, sepDeg: NaN };
    if (this.indexedLength === 0 || !usable(raDeg, decDeg) || !(maxSepDeg >= 0)) return none;
    const lon = wrap180(raDeg);
    const first = around(this.tree, lon, decDeg, 1, kmOfDeg(maxSepDeg) + SLACK_KM);
    if (first.length === 0) return none;
    // geokdbush orders by haversine; gather every row that could tie by the exact formula.
    const r0 = this.sepRadOf(this.rowOf[first[0]!]!, raDeg, decDeg);
    const rows = this.candidates(lon, decDeg, Math.min(r0 * RAD, maxSepDeg));
    let best = -1;
    let bestSep = Infinity;
    for (let k = 0; k < rows.length; k++) {
      const row = rows[k]!;
      const s = this.sepRadOf(row, raDeg, decDeg);
      if (s < bestSep || (s === bestSep && row < best)) {
        best = row;
        bestSep = s;
      }
    }
    if (best < 0 || bestSep * RAD > maxSepDeg) return none;
    return { row: best, sepDeg: bestSep * RAD };
  }

  /**
   * The rows within radiusDeg of (raDeg, decDeg) (boundary included, by the exact separation),
   * nearest first, ties to the lower row; at most maxResults of them.
   */
  within(raDeg: number, decDeg: number, radiusDeg: number, maxResults = Infinity): Int32Array {
    if (this.indexedLength === 0 || !usable(raDeg, decDeg) || !(radiusDeg >= 0)) return new Int32Array(0);
    const rows = this.candidates(wrap180(raDeg), decDeg, radiusDeg);
    const sep = new Float64Array(rows.length);
    let kept = 0;
    for (let k = 0; k < rows.length; k++) {
      const s = this.sepRadOf(rows[k]!, raDeg, decDeg) * RAD;
      if (s <= radiusDeg) {
        rows[kept] = rows[k]!;
        sep[kept++] = s;
      }
    }
    const order = Array.from({ length: kept }, (_, k) => k).sort((a, b) => sep[a]! - sep[b]! || rows[a]! - rows[b]!);
    const out = new Int32Array(Math.min(kept, maxResults));
    for (let k = 0; k < out.length; k++) out[k] = rows[order[k]!]!;
    return out;
  }

  /** Exact separation in degrees between a row and a position; NaN for an unindexed row. */
  separationDeg(row: number, raDeg: number, decDeg: number): number {
    return this.sepRadOf(row, raDeg, decDeg) * RAD;
  }

  /** Rows geokdbush finds within radiusDeg (clamped to 180 degrees) plus slack; unordered by exact separation. */
  private candidates(lon: number, latDeg: number, radiusDeg: number): Int32Array {
    const ids = around(this.tree, lon, latDeg, Infinity, kmOfDeg(radiusDeg) + SLACK_KM);
    const rows = new Int32Array(ids.length);
    for (let k = 0; k < ids.length; k++) rows[k] = this.rowOf[ids[k]!]!;
    return rows;
  }

  private sepRadOf(row: number, raDeg: number, decDeg: number): number {
    return separationRad(this.raRad[row]!, this.decRad[row]!, raDeg * DEG, decDeg * DEG);
  }
}

function usable(raDeg: number, decDeg: number): boolean {
  return Number.isFinite(raDeg) && Number.isFinite(decDeg) && decDeg >= -90 && decDeg <= 90;
}

/** Degrees of arc to km on geokdbush's sphere, clamped to half a great circle. */
function kmOfDeg(deg: number): number {
  return Math.min(deg, 180) * DEG * GEOKDBUSH_RADIUS_KM;
}

/** Brute-force twin of SkyIndex.nearest: the test oracle. */
export function nearestSkyBrute(raDeg: ArrayLike<number>, decDeg: ArrayLike<number>, qRaDeg: number, qDecDeg: number, maxSepDeg = 180): SkyHit {
  let best = -1;
  let bestSep = Infinity;
  for (let i = 0; i < raDeg.length; i++) {
    if (!usable(raDeg[i]!, decDeg[i]!)) continue;
    const s = separationRad(raDeg[i]! * DEG, decDeg[i]! * DEG, qRaDeg * DEG, qDecDeg * DEG) * RAD;
    if (s <= maxSepDeg && s < bestSep) {
      best = i;
      bestSep = s;
    }
  }
  return best < 0 ? { row: -1, sepDeg: NaN } : { row: best, sepDeg: bestSep };
}
