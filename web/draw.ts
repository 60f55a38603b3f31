/**
 * Canvas drawing shared by the panels: points batched by colour bin (one fill per bin), and the marks
 * drawn on top: outliers (a cross), group members (a ring), the selection (white rings, the rest dimmed),
 * the row under the pointer.
 */
import * as d3 from "d3";
import type { BinnedColours, VelocityScale } from "./colour.js";
import { binAll, binByColour, GROUP_RING, N_BINS, OUTLIER_MARK, SELECTED_RING } from "./colour.js";
import type { ViewState } from "./state.js";

/** A reusable pixel layer the size of the canvas: points are written straight into its buffer. */
interface Layer {
  canvas: HTMLCanvasElement;
  ctx: CanvasRenderingContext2D;
  img: ImageData;
  buf: Uint32Array;
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
  layer = { canvas, ctx, img, buf: new Uint32Array(img.data.buffer) };
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
 * Draws the rows of `bins` at (px, py) as squares of half-size r (CSS px); returns how many had a
 * position. The squares are written into a pixel buffer and composited onto the canvas in one
 * drawImage (honouring its clip and `alpha`) of the rectangle they cover: one fillRect per point is
 * ten times slower in a software-rendered canvas at 1e5 points.
 */
export function drawBinnedPoints(
  ctx: CanvasRenderingContext2D,
  px: Float64Array,
  py: Float64Array,
  bins: BinnedColours,
  r: number,
  alpha = 1,
): number {
  const W = ctx.canvas.width;
  const H = ctx.canvas.height;
  const t = ctx.getTransform();
  const k = t.a;
  const L = layerFor(W, H);
  const buf = L.buf;
  const size = Math.max(1, Math.round(2 * r * k));
  const ox = t.e - r * k;
  const oy = t.f - r * k;
  let drawn = 0;
  // the pixel rows and columns written, so that only they are cleared, uploaded and composited
  let bx0 = W;
  let by0 = H;
  let bx1 = 0;
  let by1 = 0;
  // Unknown values (bin N_BINS) first, so galaxies with a measured velocity are drawn over them.
  for (let j = 0; j <= N_BINS; j++) {
    const b = j === 0 ? N_BINS : j - 1;
    const a = bins.start[b]!;
    const e = bins.start[b + 1]!;
    if (a === e) continue;
    const colour = pixelOf(bins.colours[b]!);
    for (let q = a; q < e; q++) {
      const i = bins.order[q]!;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      drawn++;
      const x0 = Math.max(0, Math.round(x * k + ox));
      const y0 = Math.max(0, Math.round(y * k + oy));
      const x1 = Math.min(W, x0 + size);
      const y1 = Math.min(H, y0 + size);
      if (x0 >= x1 || y0 >= y1) continue;
      if (x0 < bx0) bx0 = x0;
      if (x1 > bx1) bx1 = x1;
      if (y0 < by0) by0 = y0;
      if (y1 > by1) by1 = y1;
      for (let yy = y0; yy < y1; yy++) {
        const row = yy * W;
        for (let xx = row + x0, end = row + x1; xx < end; xx++) buf[xx] = colour;
      }
    }
  }
  if (bx1 > bx0 && by1 > by0) {
    const w = bx1 - bx0;
    const h = by1 - by0;
    L.ctx.putImageData(L.img, 0, 0, bx0, by0, w, h);
    for (let yy = by0; yy < by1; yy++) buf.fill(0, yy * W + bx0, yy * W + bx1);
    ctx.save();
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.globalAlpha = alpha;
    ctx.drawImage(L.canvas, bx0, by0, w, h, bx0, by0, w, h);
    ctx.restore();
  }
  return drawn;
}

/** Outlier crosses and group rings for drawn rows; the selection and hover on top. */
export function drawMarks(ctx: CanvasRenderingContext2D, state: ViewState, px: Float64Array, py: Float64Array, r: number): void {
  const d = state.data;
  const n = d.n;
  if (d.has.group_id) {
    ctx.strokeStyle = GROUP_RING;
    ctx.lineWidth = 0.8;
    ctx.globalAlpha = 0.7;
    ctx.beginPath();
    for (let i = 0; i < n; i++) {
      if (d.groupId[i]! < 0 || d.groupSize[i]! < 2) continue;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      ctx.moveTo(x + r + 1.5, y);
      ctx.arc(x, y, r + 1.5, 0, 2 * Math.PI);
    }
    ctx.stroke();
    ctx.globalAlpha = 1;
  }
  if (d.has.outlier) {
    ctx.strokeStyle = OUTLIER_MARK;
    ctx.lineWidth = 1.2;
    ctx.beginPath();
    const k = r + 2.5;
    for (let i = 0; i < n; i++) {
      if (!d.outlier[i]) continue;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      ctx.moveTo(x - k, y - k);
      ctx.lineTo(x + k, y + k);
      ctx.moveTo(x - k, y + k);
      ctx.lineTo(x + k, y - k);
    }
    ctx.stroke();
  }
  if (state.nSelected > 0) {
    ctx.strokeStyle = SELECTED_RING;
    ctx.lineWidth = 1;
    ctx.beginPath();
    for (const i of state.selectedRows) {
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      ctx.moveTo(x + r + 1, y);
      ctx.arc(x, y, r + 1, 0, 2 * Math.PI);
    }
    ctx.stroke();
  }
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
 * selected rows drawn again on top. Returns the bins of the full pass and the number drawn.
 */
export function drawPointsWithSelection(
  ctx: CanvasRenderingContext2D,
  state: ViewState,
  px: Float64Array,
  py: Float64Array,
  values: Float64Array,
  scale: VelocityScale,
  r: number,
): { bins: BinnedColours; drawn: number } {
  const bins = binAll(values, scale);
  const drawn = drawBinnedPoints(ctx, px, py, bins, r, state.nSelected > 0 ? DIM_ALPHA : 1);
  if (state.nSelected > 0) drawBinnedPoints(ctx, px, py, binByColour(values, scale, state.selected), r + 0.5, 1);
  return { bins, drawn };
}
