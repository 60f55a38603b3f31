/**
 * Canvas drawing shared by the panels: points batched by colour bin (one fill per bin), and the marks
 * drawn on top: outliers (a cross), group members (a ring), the selection (white rings, the rest dimmed),
 * the row under the pointer.
 */
import * as d3 from "d3";
import type { BinnedColours, VelocityScale } from "./colour.js";
import { binAll, binByColour, GROUP_RING, N_BINS, OUTLIER_MARK, SELECTED_RING } from "./colour.js";
import type { ViewState } from "./state.js";
import { maskFor, stampMarks, writeSquares, type CellBox, type MarkBox, type MarkMask } from "./cells.js";

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

const markedCache = new WeakMap<ViewState["data"], { groupMembers: Int32Array; outliers: Int32Array }>();

/** The rows that carry a mark (members of groups of 2 or more, outliers), listed once per catalogue. */
export function markedRows(d: ViewState["data"]): { groupMembers: Int32Array; outliers: Int32Array } {
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
  const box: MarkBox = { x0: W, y0: H, x1: 0, y1: 0 };
  const style = markStyle(r, k);
  const marked = markedRows(d);
  stampMarks(buf, W, H, px, py, marked.groupMembers, style.ring, style.ringRgb, k, t.e, t.f, box);
  stampMarks(buf, W, H, px, py, marked.outliers, style.cross, style.crossRgb, k, t.e, t.f, box);
  stampSelection(buf, W, H, state, px, py, r, t, box);
  composite(ctx, L, box.x0, box.y0, box.x1, box.y1, 1);
}

/** The selection rings (when rows are selected) into the layer buffer, within `box`. */
function stampSelection(buf: Uint32Array, W: number, H: number, state: ViewState, px: Float64Array, py: Float64Array, r: number, t: DOMMatrix, box: MarkBox): void {
  if (state.nSelected > 0) stampMarks(buf, W, H, px, py, state.selectedRows, maskFor("ring", r + 1, 1, 1, t.a), pixelOf(SELECTED_RING) & 0xffffff, t.a, t.e, t.f, box);
}

/**
 * drawMarks with the group rings and outlier crosses already stamped (by the worker: cells.ts
 * hubbleCells) into `stamped` (a buffer the size of ctx's canvas) within `box`: they are moved into the
 * pixel layer (and cleared there), the selection rings stamped on top, and the whole composited once.
 */
export function drawStampedMarks(ctx: CanvasRenderingContext2D, state: ViewState, px: Float64Array, py: Float64Array, r: number, stamped: Uint32Array, at: MarkBox): void {
  const W = ctx.canvas.width;
  const H = ctx.canvas.height;
  const t = ctx.getTransform();
  const L = layerFor(W, H);
  const buf = L.buf;
  const box: MarkBox = { ...at };
  for (let yy = at.y0; yy < at.y1; yy++) {
    const a = yy * W + at.x0;
    const e = yy * W + at.x1;
    buf.set(stamped.subarray(a, e), a);
    stamped.fill(0, a, e);
  }
  stampSelection(buf, W, H, state, px, py, r, t, box);
  composite(ctx, L, box.x0, box.y0, box.x1, box.y1, 1);
}

/** The marks' masks and colours for group members and outliers: drawMarks stamps them, and hubble.ts hands them to the worker's stamps. */
export function markStyle(r: number, k: number): { ring: MarkMask; cross: MarkMask; ringRgb: number; crossRgb: number } {
  return { ring: maskFor("ring", r + 1.5, 0.8, 0.7, k), cross: maskFor("cross", r + 2.5, 1.2, 1, k), ringRgb: pixelOf(GROUP_RING) & 0xffffff, crossRgb: pixelOf(OUTLIER_MARK) & 0xffffff };
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
