/**
 * Canvas drawing shared by the panels: points batched by colour bin (one fill per bin), and the marks
 * drawn on top: outliers (a cross), group members (a ring), the selection (white rings, the rest dimmed),
 * the row under the pointer.
 */
import * as d3 from "d3";
import type { BinnedColours, VelocityScale } from "./colour.js";
import { binAll, binByColour, GROUP_RING, N_BINS, OUTLIER_MARK, SELECTED_RING } from "./colour.js";
import type { ViewState } from "./state.js";
import { writeSquares, type CellBox } from "./cells.js";

/** A reusable pixel layer the size of the canvas: points are written straight into its buffer. */
interface Layer {
  canvas: HTMLCanvasElement;
  ctx: CanvasRenderingContext2D;
  img: ImageData;
  buf: Uint32Array;
  /** Points are first written here as colour bin + 1 (0 = none): a quarter of the memory of buf, so the
   * scattered writes of 1e5 points stay in cache; one pass over the rectangle written then colours buf. */
  bins: Uint8Array;
}
/** One layer per canvas size in use (the panels differ in size; re-making a layer per draw is slow). */
const layers = new Map<string, Layer>();

function layerFor(w: number, h: number): Layer {
  const key = `${w}x${h}`;
  let layer = layers.get(key);
  if (layer) return layer;
  if (layers.size >= 8) layers.clear(); // sizes left behind by window resizes
  const canvas = document.createElement("canvas");
  canvas.width = w;
  canvas.height = h;
  const ctx = canvas.getContext("2d")!;
  const img = ctx.createImageData(w, h);
  layer = { canvas, ctx, img, buf: new Uint32Array(img.data.buffer), bins: new Uint8Array(w * h) };
  layers.set(key, layer);
  return layer;
}

const rgbaCache = new Map<string, number>();
/** A CSS colour as one RGBA pixel in the platform's (little-endian) byte order. */
function pixelOf(colour: string): number {
  let v = rgbaCache.get(colour);
  if (v === undefined) {
    const c = d3.rgb(colour);
    v = ((255 << 24) | (Math.round(c.b) << 16) | (Math.round(c.g) << 8) | Math.round(c.r)) >>> 0;
    rgbaCache.set(colour, v);
  }
  return v;
}

/**
 * Uploads the rectangle [x0, x1) x [y0, y1) of the layer, composites it onto ctx (device pixels,
 * honouring ctx's clip, at `alpha`) and clears it in the layer for the next use.
 */
function composite(ctx: CanvasRenderingContext2D, L: Layer, x0: number, y0: number, x1: number, y1: number, alpha: number): void {
  if (!(x1 > x0 && y1 > y0)) return;
  const W = L.img.width;
  const w = x1 - x0;
  const h = y1 - y0;
  L.ctx.putImageData(L.img, 0, 0, x0, y0, w, h);
  for (let yy = y0; yy < y1; yy++) L.buf.fill(0, yy * W + x0, yy * W + x1);
  ctx.save();
  ctx.setTransform(1, 0, 0, 1, 0, 0);
  ctx.globalAlpha = alpha;
  ctx.drawImage(L.canvas, x0, y0, w, h, x0, y0, w, h);
  ctx.restore();
}

/**
 * Draws the rows of `bins` (only those in `rows`, increasing, when given) at (px, py) as squares of
 * half-size r (CSS px); returns how many had a position. The squares are written into a pixel buffer
 * and composited onto the canvas in one drawImage (honouring its clip and `alpha`) of the rectangle
 * they cover: one fillRect per point is ten times slower in a software-rendered canvas at 1e5 points.
 */
export function drawBinnedPoints(
  ctx: CanvasRenderingContext2D,
  px: Float64Array,
  py: Float64Array,
  bins: BinnedColours,
  r: number,
  alpha = 1,
  rows?: Int32Array,
): number {
  const W = ctx.canvas.width;
  const H = ctx.canvas.height;
  const t = ctx.getTransform();
  const k = t.a;
  const L = layerFor(W, H);
  const { size, ox, oy } = squareOf(ctx, r);
  // Unknown values (bin N_BINS) first, so galaxies with a measured velocity are drawn over them; rows in
  // index order within each pass (the columns are read in sequence; no colour is always on top).
  // (no unknown row: the first pass has nothing to look for; else it looks through the bins)
  const noUnknown = bins.start[N_BINS] === bins.start[N_BINS + 1];
  const box = writeSquares(L.bins, W, H, px, py, bins.bin, k, ox, oy, size, rows ?? null, noUnknown ? NO_ROWS : null);
  compositeCells(ctx, L.bins, box, bins.colours, alpha);
  return box.drawn;
}

const NO_ROWS = new Int32Array(0);

/** Device size and corner offset of the squares of half-size r (CSS px) on ctx. */
export function squareOf(ctx: CanvasRenderingContext2D, r: number): { size: number; ox: number; oy: number } {
  const t = ctx.getTransform();
  const k = t.a;
  return { size: Math.max(1, Math.round(2 * r * k)), ox: t.e - r * k, oy: t.f - r * k };
}

/**
 * Turns the cells of `box` (bin + 1 per device pixel, a buffer the size of ctx's canvas) into colours,
 * clears them, and composites the rectangle onto ctx (honouring its clip and `alpha`).
 */
export function compositeCells(ctx: CanvasRenderingContext2D, cells: Uint8Array, box: CellBox, colours: string[], alpha: number): void {
  const W = ctx.canvas.width;
  const L = layerFor(W, ctx.canvas.height);
  const buf = L.buf;
  const colourOf = new Uint32Array(N_BINS + 2);
  for (let c = 0; c <= N_BINS; c++) colourOf[c + 1] = pixelOf(colours[c]!);
  // the bins written become colours (bin 0 of colourOf, 0, is "none"), and the cells are cleared
  for (let yy = box.y0; yy < box.y1; yy++) {
    for (let q = yy * W + box.x0, end = yy * W + box.x1; q < end; q++) {
      const c = cells[q]!;
      if (c === 0) continue;
      buf[q] = colourOf[c]!;
      cells[q] = 0;
    }
  }
  composite(ctx, L, box.x0, box.y0, box.x1, box.y1, alpha);
}

/** The pixels of a mark at one device scale: offsets from the centre pixel and their alpha (0-255). */
interface MarkMask {
  dx: Int16Array;
  dy: Int16Array;
  alpha: Uint8Array;
  /** No offset is larger than this in x or y. */
  ext: number;
}
const masks = new Map<string, MarkMask>();

/**
 * A ring of radius `radius`, or a cross of half-size `radius` (CSS px), as pixel coverage: 1 within
 * half the line width of the curve, falling to 0 over one pixel (a box-filtered stroke).
 */
function maskFor(kind: "ring" | "cross", radius: number, lineWidth: number, alpha: number, scale: number): MarkMask {
  const key = `${kind} ${radius} ${lineWidth} ${alpha} ${scale}`;
  let m = masks.get(key);
  if (m) return m;
  const R = radius * scale;
  const hw = (lineWidth * scale) / 2;
  const ext = Math.ceil(R + hw + 1);
  const dx: number[] = [];
  const dy: number[] = [];
  const a: number[] = [];
  for (let y = -ext; y <= ext; y++) {
    for (let x = -ext; x <= ext; x++) {
      let dist: number;
      if (kind === "ring") dist = Math.abs(Math.hypot(x, y) - R);
      else dist = Math.max(Math.abs(Math.abs(x) - Math.abs(y)) / Math.SQRT2, Math.max(Math.abs(x), Math.abs(y)) - R);
      const cover = Math.min(1, Math.max(0, hw + 0.5 - dist));
      if (cover <= 0) continue;
      dx.push(x);
      dy.push(y);
      a.push(Math.round(255 * alpha * cover));
    }
  }
  m = { dx: Int16Array.from(dx), dy: Int16Array.from(dy), alpha: Uint8Array.from(a), ext };
  if (masks.size > 64) masks.clear();
  masks.set(key, m);
  return m;
}

const offsetCache = new WeakMap<MarkMask, { width: number; at: Int32Array }>();

/** The mask's pixels as offsets dy * width + dx in a buffer of that row width. */
function offsetsOf(m: MarkMask, width: number): Int32Array {
  const c = offsetCache.get(m);
  if (c && c.width === width) return c.at;
  const at = new Int32Array(m.alpha.length);
  for (let q = 0; q < at.length; q++) at[q] = m.dy[q]! * width + m.dx[q]!;
  offsetCache.set(m, { width, at });
  return at;
}

const markedCache = new WeakMap<ViewState["data"], { groupMembers: Int32Array; outliers: Int32Array }>();

/** The rows that carry a mark (members of groups of 2 or more, outliers), listed once per catalogue. */
function markedRows(d: ViewState["data"]): { groupMembers: Int32Array; outliers: Int32Array } {
  let m = markedCache.get(d);
  if (m) return m;
  const g: number[] = [];
  const o: number[] = [];
  for (let i = 0; i < d.n; i++) {
    if (d.has.group_id && d.groupId[i]! >= 0 && d.groupSize[i]! >= 2) g.push(i);
    if (d.has.outlier && d.outlier[i] !== 0) o.push(i);
  }
  m = { groupMembers: Int32Array.from(g), outliers: Int32Array.from(o) };
  markedCache.set(d, m);
  return m;
}

/**
 * Outlier crosses and group rings for drawn rows, the selection rings on top: written into the pixel
 * layer and composited once (a path of 1e4 arcs is slow in a software-rendered canvas).
 */
export function drawMarks(ctx: CanvasRenderingContext2D, state: ViewState, px: Float64Array, py: Float64Array, r: number): void {
  const d = state.data;
  const W = ctx.canvas.width;
  const H = ctx.canvas.height;
  const t = ctx.getTransform();
  const k = t.a;
  const L = layerFor(W, H);
  const buf = L.buf;
  let bx0 = W;
  let by0 = H;
  let bx1 = 0;
  let by1 = 0;
  const stampAll = (mask: MarkMask, colour: string, rows: Int32Array) => {
    const rgb = pixelOf(colour) & 0xffffff;
    const e = mask.ext;
    const at = offsetsOf(mask, W);
    const alpha = mask.alpha;
    const np = alpha.length;
    for (let j = 0; j < rows.length; j++) {
      const i = rows[j]!;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      const vx = x * k + t.e;
      const vy = y * k + t.f;
      if (vx >= e && vy >= e && vx < W - e && vy < H - e) {
        // the whole mark is on the canvas (floor(v) - e >= 0 and floor(v) + e < W): no test per pixel
        const cx = vx | 0;
        const cy = vy | 0;
        const c0 = cy * W + cx;
        for (let q = 0; q < np; q++) {
          const p = c0 + at[q]!;
          const a = alpha[q]!;
          if (a > buf[p]! >>> 24) buf[p] = ((a << 24) | rgb) >>> 0;
        }
        if (cx - e < bx0) bx0 = cx - e;
        if (cx + e >= bx1) bx1 = cx + e + 1;
        if (cy - e < by0) by0 = cy - e;
        if (cy + e >= by1) by1 = cy + e + 1;
        continue;
      }
      const cx = Math.floor(vx);
      const cy = Math.floor(vy);
      for (let q = 0; q < mask.alpha.length; q++) {
        const X = cx + mask.dx[q]!;
        const Y = cy + mask.dy[q]!;
        if (X < 0 || Y < 0 || X >= W || Y >= H) continue;
        const p = Y * W + X;
        const a = mask.alpha[q]!;
        // overlapping marks: the more opaque pixel wins
        if (a > buf[p]! >>> 24) buf[p] = ((a << 24) | rgb) >>> 0;
        if (X < bx0) bx0 = X;
        if (X >= bx1) bx1 = X + 1;
        if (Y < by0) by0 = Y;
        if (Y >= by1) by1 = Y + 1;
      }
    }
  };
  const marked = markedRows(d);
  stampAll(maskFor("ring", r + 1.5, 0.8, 0.7, k), GROUP_RING, marked.groupMembers);
  stampAll(maskFor("cross", r + 2.5, 1.2, 1, k), OUTLIER_MARK, marked.outliers);
  if (state.nSelected > 0) stampAll(maskFor("ring", r + 1, 1, 1, k), SELECTED_RING, state.selectedRows);
  composite(ctx, L, bx0, by0, bx1, by1, 1);
}

/** A ring around the hovered row and a marker for the origin. */
export function drawHover(ctx: CanvasRenderingContext2D, x: number, y: number, colour: string, radius = 6): void {
  if (!Number.isFinite(x) || !Number.isFinite(y)) return;
  ctx.strokeStyle = colour;
  ctx.lineWidth = 2;
  ctx.beginPath();
  ctx.arc(x, y, radius, 0, 2 * Math.PI);
  ctx.stroke();
}

/** When a selection exists, unselected points are drawn at this opacity. */
export const DIM_ALPHA = 0.22;

/**
 * All rows with a position, coloured by `values` on `scale`; with a selection, the rest dimmed and the
 * selected rows drawn again on top. `rows` (increasing), when given, lists every row with a position.
 * Returns the bins of the full pass and the number drawn.
 */
export function drawPointsWithSelection(
  ctx: CanvasRenderingContext2D,
  state: ViewState,
  px: Float64Array,
  py: Float64Array,
  values: Float64Array,
  scale: VelocityScale,
  r: number,
  rows?: Int32Array,
): { bins: BinnedColours; drawn: number } {
  const bins = binAll(values, scale);
  const drawn = drawBinnedPoints(ctx, px, py, bins, r, state.nSelected > 0 ? DIM_ALPHA : 1, rows);
  if (state.nSelected > 0) drawBinnedPoints(ctx, px, py, binByColour(values, scale, state.selected), r + 0.5, 1, rows);
  return { bins, drawn };
}
