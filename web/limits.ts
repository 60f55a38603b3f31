/**
 * Plot limits from robust quantiles. For speed at 1e5 rows the quantiles are taken on a regular
 * stride sample of at most MAX_SAMPLE finite values (limits only decide the axes, never a result),
 * and cached per origin view: re-centring computes them once for all panels.
 */
import { quickselect } from "d3-array";
import type { OriginView } from "./origin.js";

export const MAX_SAMPLE = 20_000;

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
    quickselect(s, lo);
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
  const [ext] = sampledQuantiles(o.x, [0.99], (x, i) => Math.max(Math.abs(x), Math.abs(o.y[i]!), Math.abs(o.z[i]!)));
  const out = { sMax: sMax!, vLo: vLo!, vHi: vHi!, uAbs: uAbs!, extentMpc: Number.isFinite(ext!) ? Math.max(1, ext! * 1.05) : 100 };
  cache.set(o, out);
  return out;
}
