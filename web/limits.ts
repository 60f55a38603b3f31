/**
 * Plot limits from robust quantiles. For speed at 1e5 rows the quantiles are taken on a regular
 * stride sample of at most MAX_SAMPLE finite values (limits only decide the axes, never a result),
 * and cached per origin view: re-centring computes them once for all panels.
 */
import type { OriginView } from "./origin.js";

export const MAX_SAMPLE = 20_000;

/**
 * Puts the k-th smallest of a[left..right] at a[k], smaller ones before it and larger ones after: the
 * Floyd-Rivest selection of d3-array's quickselect, specialised to finite numbers in a Float64Array
 * (d3's comparator wrapper, nested again at each recursion, made it 3-4 times slower on these samples).
 */
function selectInPlace(a: Float64Array, k: number, left: number, right: number): void {
  while (right > left) {
    if (right - left > 600) {
      const n = right - left + 1;
      const m = k - left + 1;
      const z = Math.log(n);
      const s = 0.5 * Math.exp((2 * z) / 3);
      const sd = 0.5 * Math.sqrt((z * s * (n - s)) / n) * (m - n / 2 < 0 ? -1 : 1);
      selectInPlace(a, k, Math.max(left, Math.floor(k - (m * s) / n + sd)), Math.min(right, Math.floor(k + ((n - m) * s) / n + sd)));
    }
    const t = a[k]!;
    let i = left;
    let j = right;
    let x = a[left]!;
    a[left] = a[k]!;
    a[k] = x;
    if (a[right]! > t) {
      x = a[left]!;
      a[left] = a[right]!;
      a[right] = x;
    }
    while (i < j) {
      x = a[i]!;
      a[i] = a[j]!;
      a[j] = x;
      ++i;
      --j;
      while (a[i]! < t) ++i;
      while (a[j]! > t) --j;
    }
    if (a[left] === t) {
      x = a[left]!;
      a[left] = a[j]!;
      a[j] = x;
    } else {
      ++j;
      x = a[j]!;
      a[j] = a[right]!;
      a[right] = x;
    }
    if (j <= k) left = j + 1;
    if (k <= j) right = j - 1;
  }
}

/** Quantiles (linear interpolation, R-7, as d3.quantile) of f(a[i]) over finite values; NaN when none. */
export function sampledQuantiles(a: ArrayLike<number>, qs: number[], f: (x: number, i: number) => number = (x) => x): number[] {
  const n = a.length;
  const step = Math.max(1, Math.ceil(n / MAX_SAMPLE));
  const buf = new Float64Array(Math.ceil(n / step));
  let m = 0;
  for (let i = 0; i < n; i += step) {
    const v = f(a[i]!, i);
    if (Number.isFinite(v)) buf[m++] = v;
  }
  const s = buf.subarray(0, m);
  // order statistics by quickselect (linear time; the sample is partly ordered by each call)
  return qs.map((q) => {
    if (m === 0) return NaN;
    const h = (m - 1) * q;
    const lo = Math.floor(h);
    selectInPlace(s, lo, 0, m - 1);
    let next = s[lo]!;
    if (lo + 1 < m) {
      next = Infinity;
      for (let k = lo + 1; k < m; k++) if (s[k]! < next) next = s[k]!;
    }
    return s[lo]! + (next - s[lo]!) * (h - lo);
  });
}

export interface OriginLimits {
  /** 99.8th percentile of the distance from the origin, Mpc. */
  sMax: number;
  /** 0.1th and 99.9th percentiles of the radial velocity seen from the origin, km/s. */
  vLo: number;
  vHi: number;
  /** 99th percentile of |v - H s|, km/s. */
  uAbs: number;
  /** Half-width of the slices' window: 1.05 x the 99th percentile of max(|x|, |y|, |z|) about the origin, Mpc. */
  extentMpc: number;
}

const cache = new WeakMap<OriginView, OriginLimits>();

export function originLimits(o: OriginView): OriginLimits {
  const c = cache.get(o);
  if (c) return c;
  const [sMax] = sampledQuantiles(o.s, [0.998]);
  const [vLo, vHi] = sampledQuantiles(o.v, [0.001, 0.999]);
  const [uAbs] = sampledQuantiles(o.u, [0.99], Math.abs);
  // positions about the origin as sg - origin, value for value what o.x, o.y, o.z hold (without making them)
  const { x: sx, y: sy, z: sz } = o.sg;
  const [ext] = sampledQuantiles(sx, [0.99], (x, i) => Math.max(Math.abs(x - o.ox), Math.abs(sy[i]! - o.oy), Math.abs(sz[i]! - o.oz)));
  const out = { sMax: sMax!, vLo: vLo!, vHi: vHi!, uAbs: uAbs!, extentMpc: Number.isFinite(ext!) ? Math.max(1, ext! * 1.05) : 100 };
  cache.set(o, out);
  return out;
}
