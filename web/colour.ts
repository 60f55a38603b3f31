/**
 * Colours of the view. Peculiar velocities on a diverging scale centred at zero with symmetric
 * limits: approaching (negative) cool blues, receding (positive) warm oranges and reds, a pale
 * neutral at zero that stands out on the dark plot background. Palette of our own.
 */
import * as d3 from "d3";
import { binOf, CELL_BINS } from "./cells.js";

/** From -limit to +limit. */
export const VPEC_STOPS = ["#2a4f9a", "#3f86c6", "#8fc2e3", "#e9e4d8", "#f4b980", "#e0713a", "#a82c1b"];
export const UNKNOWN_COLOUR = "#8a8f98";
export const BACKGROUND = "#13161b";
export const INK = "#d9dde3";
export const FAINT_INK = "#6f7680";
export const SELECTED_RING = "#ffffff";
export const OUTLIER_MARK = "#f6e05e";
export const GROUP_RING = "#b8a6ff";
export const ORIGIN_MARK = "#5ef0c1";

const interp = d3.piecewise(d3.interpolateLab, VPEC_STOPS);

export type VelocityScale = d3.ScaleDiverging<string> & { limit: number };

/** The diverging scale with limits -limit, 0, +limit, clamped. */
export function velocityScale(limitKmS: number): VelocityScale {
  const s = d3.scaleDiverging(interp).domain([-limitKmS, 0, limitKmS]).clamp(true) as VelocityScale;
  s.limit = limitKmS;
  return s;
}

/**
 * Symmetric limit: the 95th percentile of |v| over finite values, rounded up to a multiple of 50 km/s;
 * 500 km/s when nothing is known (common practice: a few hundred km/s is the usual range of v_pec).
 */
export function symmetricLimitKmS(v: ArrayLike<number>): number {
  const a: number[] = [];
  for (let i = 0; i < v.length; i++) {
    const x = v[i]!;
    if (Number.isFinite(x)) a.push(Math.abs(x));
  }
  if (a.length === 0) return 500;
  const q = d3.quantile(a, 0.95) ?? 500;
  return Math.max(50, Math.ceil(q / 50) * 50);
}

/** Number of colour bins used to batch canvas drawing (one fillStyle per bin). */
export const N_BINS = CELL_BINS;
/** Bin of an unknown value. */
export const UNKNOWN_BIN = N_BINS;

export interface BinnedColours {
  /** Row order sorted by bin (counting sort; made when first read), and where each bin starts in it; bin N_BINS = unknown. */
  readonly order: Int32Array;
  start: Int32Array;
  colours: string[];
  /** Each row's bin (255: not drawn). */
  bin: Uint8Array;
}

/**
 * Rows (those with draw[i] = 1, or all) grouped by colour bin, so that a canvas pass sets the fill
 * once per bin instead of once per point.
 */
export function binByColour(v: ArrayLike<number>, scale: VelocityScale, draw?: Uint8Array): BinnedColours {
  const n = v.length;
  const bin = new Uint8Array(n);
  const count = new Int32Array(N_BINS + 2);
  const lim = scale.limit;
  for (let i = 0; i < n; i++) {
    if (draw && !draw[i]) {
      bin[i] = 255;
      continue;
    }
    const b = binOf(v[i]!, lim);
    bin[i] = b;
    count[b + 1]!++;
  }
  for (let b = 1; b < N_BINS + 2; b++) count[b]! += count[b - 1]!;
  const start = count;
  const colours = coloursOf(scale);
  // the row order is made when first asked for (the vector export): drawing needs only the bins
  let order: Int32Array | null = null;
  return {
    start,
    colours,
    bin,
    get order(): Int32Array {
      if (order) return order;
      const fill = start.slice(0, N_BINS + 1);
      order = new Int32Array(start[N_BINS + 1]!);
      for (let i = 0; i < n; i++) {
        const b = bin[i]!;
        if (b === 255) continue;
        order[fill[b]!++] = i;
      }
      return order;
    },
  };
}

const colourCache = new WeakMap<VelocityScale, string[]>();

/** The colour of each bin (its centre on the scale), then UNKNOWN_COLOUR. */
export function coloursOf(scale: VelocityScale): string[] {
  let colours = colourCache.get(scale);
  if (colours) return colours;
  const lim = scale.limit;
  colours = [];
  for (let b = 0; b < N_BINS; b++) colours.push(scale(-lim + ((b + 0.5) / N_BINS) * 2 * lim));
  colours.push(UNKNOWN_COLOUR);
  colourCache.set(scale, colours);
  return colours;
}

/**
 * binAll(v, scale) made only when its rows are first asked for (the vector export): a panel whose
 * points come as cells needs only the colours.
 */
export function binsWhenAsked(v: Float64Array, scale: VelocityScale): BinnedColours {
  const all = () => binAll(v, scale);
  return {
    colours: coloursOf(scale),
    get start() {
      return all().start;
    },
    get bin() {
      return all().bin;
    },
    get order() {
      return all().order;
    },
  };
}

const binCache = new WeakMap<object, { scale: VelocityScale; bins: BinnedColours }>();

/** binByColour of all rows, cached per values array and scale (re-centring makes new arrays). */
export function binAll(v: Float64Array, scale: VelocityScale): BinnedColours {
  const c = binCache.get(v);
  if (c && c.scale === scale) return c.bins;
  const bins = binByColour(v, scale);
  binCache.set(v, { scale, bins });
  return bins;
}
