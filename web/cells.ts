/**
 * Points as colour-bin cells: the part of drawing that is arithmetic on typed arrays (no DOM), so that
 * the page and its fit worker run the same code. A cell buffer holds one byte per device pixel, colour
 * bin + 1 (0 = nothing); draw.ts turns the cells into pixels and composites them.
 *
 *  - binOf: the colour bin of a value on the symmetric velocity scale (colour.ts bins with it);
 *  - writeSquares: points as squares of cells, unknown values first, rows in index order;
 *  - hubbleCells: the Hubble diagram's two point clouds (diagram and residual panel) from s, v and u.
 */

/** Number of colour bins (colour.ts's N_BINS; here so that the worker needs no DOM module). */
export const CELL_BINS = 31;

/** The bin of x on the scale -lim .. +lim (clamped); CELL_BINS for a value that is not finite. */
export function binOf(x: number, lim: number): number {
  if (!Number.isFinite(x)) return CELL_BINS;
  const t = (Math.max(-lim, Math.min(lim, x)) + lim) / (2 * lim);
  return Math.min(CELL_BINS - 1, Math.floor(t * CELL_BINS));
}

/** Where squares were written: the device-pixel rectangle [x0, x1) x [y0, y1) (empty when x1 <= x0), and the rows drawn. */
export interface CellBox {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
  drawn: number;
}

/**
 * Writes each row's square (size x size cells, corner round(p * k + o), clamped to the W x H buffer) as
 * bin + 1: first the rows of bin CELL_BINS (unknown value), then those of bins below it, each pass in
 * index order, so a measured value is drawn over an unknown one and a later row over an earlier one.
 * Rows of other bins (255: not drawn) and rows without a position are skipped. `rows` (increasing)
 * limits both passes to those rows; `unknownRows` (increasing), when given, lists the unknown rows
 * for the first pass (else it scans every row).
 */
export function writeSquares(
  cells: Uint8Array,
  W: number,
  H: number,
  px: Float64Array,
  py: Float64Array,
  bin: Uint8Array,
  k: number,
  ox: number,
  oy: number,
  size: number,
  rows: Int32Array | null,
  unknownRows: Int32Array | null,
): CellBox {
  let bx0 = W;
  let by0 = H;
  let bx1 = 0;
  let by1 = 0;
  let drawn = 0;
  const n = bin.length;
  // A square whose corner rounds to [1, W - size] x [1, H - size] lies wholly in the buffer: there the
  // corner is floor(v + 0.5) (Math.round of v >= 0.5) and no clamp is needed.
  const xFast = W - size + 0.5;
  const yFast = H - size + 0.5;
  for (let pass = 0; pass < 2; pass++) {
    const list = rows ?? (pass === 0 ? unknownRows : null);
    const m = list ? list.length : n;
    for (let j = 0; j < m; j++) {
      const i = list ? list[j]! : j;
      const b = bin[i]!;
      if (pass === 0 ? b !== CELL_BINS : b >= CELL_BINS) continue;
      const colour = b + 1;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      drawn++;
      const vx = x * k + ox;
      const vy = y * k + oy;
      if (vx >= 0.5 && vy >= 0.5 && vx < xFast && vy < yFast) {
        const x0 = (vx + 0.5) | 0;
        const y0 = (vy + 0.5) | 0;
        if (x0 < bx0) bx0 = x0;
        if (x0 + size > bx1) bx1 = x0 + size;
        if (y0 < by0) by0 = y0;
        if (y0 + size > by1) by1 = y0 + size;
        let q = y0 * W + x0;
        if (size === 3) {
          // the common case (1.5 px points at 1x), unrolled
          cells[q] = colour;
          cells[q + 1] = colour;
          cells[q + 2] = colour;
          q += W;
          cells[q] = colour;
          cells[q + 1] = colour;
          cells[q + 2] = colour;
          q += W;
          cells[q] = colour;
          cells[q + 1] = colour;
          cells[q + 2] = colour;
          continue;
        }
        for (let yy = 0; yy < size; yy++, q += W) for (let xx = q, end = q + size; xx < end; xx++) cells[xx] = colour;
        continue;
      }
      // near or beyond an edge: clamped to the buffer
      const x0 = Math.max(0, Math.round(vx));
      const y0 = Math.max(0, Math.round(vy));
      const x1 = Math.min(W, x0 + size);
      const y1 = Math.min(H, y0 + size);
      if (x0 >= x1 || y0 >= y1) continue;
      if (x0 < bx0) bx0 = x0;
      if (x1 > bx1) bx1 = x1;
      if (y0 < by0) by0 = y0;
      if (y1 > by1) by1 = y1;
      for (let yy = y0; yy < y1; yy++) {
        const row = yy * W;
        for (let xx = row + x0, end = row + x1; xx < end; xx++) cells[xx] = colour;
      }
    }
  }
  return { x0: bx0, y0: by0, x1: bx1, y1: by1, drawn };
}

/** The pixels of a mark at one device scale: offsets from the centre pixel and their alpha (0-255). */
export interface MarkMask {
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
export function maskFor(kind: "ring" | "cross", radius: number, lineWidth: number, alpha: number, scale: number): MarkMask {
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

/** A device-pixel rectangle [x0, x1) x [y0, y1) that marks were written in (grown by stampMarks). */
export interface MarkBox {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

/**
 * Stamps `mask` in colour rgb (0xBBGGRR) at each of `rows` that has a position (px, py CSS px; device
 * position v * k + offset, floored) into buf (RGBA pixels, W x H): where marks overlap the more opaque
 * pixel wins. Grows `box` to cover what was written.
 */
export function stampMarks(buf: Uint32Array, W: number, H: number, px: Float64Array, py: Float64Array, rows: Int32Array, mask: MarkMask, rgb: number, k: number, e0: number, f0: number, box: MarkBox): void {
  const e = mask.ext;
  const at = offsetsOf(mask, W);
  const alpha = mask.alpha;
  const np = alpha.length;
  let { x0: bx0, y0: by0, x1: bx1, y1: by1 } = box;
  for (let j = 0; j < rows.length; j++) {
    const i = rows[j]!;
    const x = px[i]!;
    const y = py[i]!;
    if (x !== x || y !== y) continue;
    const vx = x * k + e0;
    const vy = y * k + f0;
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
    for (let q = 0; q < np; q++) {
      const X = cx + mask.dx[q]!;
      const Y = cy + mask.dy[q]!;
      if (X < 0 || Y < 0 || X >= W || Y >= H) continue;
      const p = Y * W + X;
      const a = alpha[q]!;
      // overlapping marks: the more opaque pixel wins
      if (a > buf[p]! >>> 24) buf[p] = ((a << 24) | rgb) >>> 0;
      if (X < bx0) bx0 = X;
      if (X >= bx1) bx1 = X + 1;
      if (Y < by0) by0 = Y;
      if (Y >= by1) by1 = Y + 1;
    }
  }
  box.x0 = bx0;
  box.y0 = by0;
  box.x1 = bx1;
  box.y1 = by1;
}

/** Slots of the Hubble job's parameters (a Float64Array, shared with the worker). */
export const HJ_N = 0;
export const HJ_XA = 1; // screen x = xa s + xb (CSS px), y = ya v + yb, residual y = ra u + rb
export const HJ_XB = 2;
export const HJ_YA = 3;
export const HJ_YB = 4;
export const HJ_RA = 5;
export const HJ_RB = 6;
export const HJ_LIM = 7; // colour scale limit (km/s)
export const HJ_K = 8; // device px per CSS px
export const HJ_OX = 9; // device offset of a square's corner
export const HJ_OY = 10;
export const HJ_SIZE = 11;
export const HJ_W = 12; // canvas, device px
export const HJ_H = 13;
export const HJ_ORIGIN_ROW = 14;
export const HJ_E = 15; // device offset of CSS (0, 0) (the canvas transform's e, f)
export const HJ_F = 16;
export const HJ_MARKS = 17; // 1: stamp the group rings and outlier crosses too (into marksMain, marksRes)
export const HJ_R = 18; // point radius, CSS px (the marks are sized from it)
export const HJ_NG = 19; // rows in groupRows, outlierRows
export const HJ_NO = 20;
export const HJ_RING_RGB = 21; // 0xBBGGRR of the rings and crosses
export const HJ_CROSS_RGB = 22;
/** Outputs: main box (4), residual box (4), rows drawn, rows with unknown distance or velocity, main and residual marks' boxes (4 + 4). */
export const HJ_OUT = 24;
export const HJ_SLOTS = 48;

export interface HubbleJob {
  P: Float64Array;
  s: Float64Array;
  v: Float64Array;
  u: Float64Array;
  /** Outputs: screen positions (CSS px, NaN when not drawn), the rows' bins, and the two cell buffers (W x H each). */
  px: Float64Array;
  py: Float64Array;
  rx: Float64Array;
  ry: Float64Array;
  bin: Uint8Array;
  cellsMain: Uint8Array;
  cellsRes: Uint8Array;
  /** The residual panel's bins when it is made on its own (part 2). */
  binRes?: Uint8Array;
  /** With P[HJ_MARKS]: the rows marked as group members and as outliers (draw.ts markedRows), and the RGBA buffers the marks are stamped into. */
  groupRows?: Int32Array;
  outlierRows?: Int32Array;
  marksMain?: Uint32Array;
  marksRes?: Uint32Array;
}

/**
 * The Hubble diagram's points: each row's position in the diagram (s, v) and in the residual panel
 * (s, u), its colour bin of u, and both clouds written as cells (writeSquares), with P[HJ_MARKS] the
 * group rings and outlier crosses stamped as drawMarks does; boxes and counts go to P[HJ_OUT ...].
 * Every row of px, py, rx, ry and bin is written. `part` 1 makes the diagram alone (px, py, bin,
 * cellsMain, marksMain, counts), 2 the residual panel alone (rx, ry, binRes, cellsRes, marksRes): the
 * two parts write disjoint outputs, so two threads can run them at once; 0 makes both.
 */
export function hubbleCells(job: HubbleJob, part: 0 | 1 | 2 = 0): void {
  const { P, s: S, v: V, u: U, px, py, rx, ry } = job;
  const n = P[HJ_N]!;
  const xa = P[HJ_XA]!;
  const xb = P[HJ_XB]!;
  const ya = P[HJ_YA]!;
  const yb = P[HJ_YB]!;
  const ra = P[HJ_RA]!;
  const rb = P[HJ_RB]!;
  const lim = P[HJ_LIM]!;
  const originRow = P[HJ_ORIGIN_ROW]!;
  const doMain = part !== 2;
  const doRes = part !== 1;
  const bin = part === 2 ? job.binRes! : job.bin;
  let unknown = 0;
  for (let i = 0; i < n; i++) {
    const s = S[i]!;
    const v = V[i]!;
    bin[i] = binOf(U[i]!, lim);
    if (!Number.isFinite(s) || !Number.isFinite(v)) {
      if (i !== originRow) unknown++;
      if (doMain) {
        px[i] = NaN;
        py[i] = NaN;
      }
      if (doRes) {
        rx[i] = NaN;
        ry[i] = NaN;
      }
      continue;
    }
    const x = xa * s + xb;
    if (doMain) {
      px[i] = x;
      py[i] = ya * v + yb;
    }
    if (doRes) {
      rx[i] = x;
      ry[i] = ra * U[i]! + rb;
    }
  }
  const W = P[HJ_W]!;
  const H = P[HJ_H]!;
  const k = P[HJ_K]!;
  const ox = P[HJ_OX]!;
  const oy = P[HJ_OY]!;
  const size = P[HJ_SIZE]!;
  const b = bin.subarray(0, n);
  const { groupRows, outlierRows } = job;
  const stamp = P[HJ_MARKS] && groupRows && outlierRows && job.marksMain && job.marksRes && W * H <= job.marksMain.length;
  const r = P[HJ_R]!;
  const ring = stamp ? maskFor("ring", r + 1.5, 0.8, 0.7, k) : null;
  const cross = stamp ? maskFor("cross", r + 2.5, 1.2, 1, k) : null;
  // one panel's cells and, as draw.ts drawMarks stamps them, its rings and then its crosses
  const panel = (cells: Uint8Array, marks: Uint32Array | undefined, qx: Float64Array, qy: Float64Array, at: number, marksAt: number) => {
    const box = writeSquares(cells, W, H, qx, qy, b, k, ox, oy, size, null, null);
    const m: MarkBox = { x0: W, y0: H, x1: 0, y1: 0 };
    if (ring && cross && marks && groupRows && outlierRows) {
      const e = P[HJ_E]!;
      const f = P[HJ_F]!;
      stampMarks(marks, W, H, qx, qy, groupRows.subarray(0, P[HJ_NG]!), ring, P[HJ_RING_RGB]!, k, e, f, m);
      stampMarks(marks, W, H, qx, qy, outlierRows.subarray(0, P[HJ_NO]!), cross, P[HJ_CROSS_RGB]!, k, e, f, m);
    }
    P.set([box.x0, box.y0, box.x1, box.y1], at);
    P.set([m.x0, m.y0, m.x1, m.y1], marksAt);
    return box;
  };
  if (doMain) {
    const main = panel(job.cellsMain, job.marksMain, px, py, HJ_OUT, HJ_OUT + 10);
    P[HJ_OUT + 8] = main.drawn;
    P[HJ_OUT + 9] = unknown;
  }
  if (doRes) panel(job.cellsRes, job.marksRes, rx, ry, HJ_OUT + 4, HJ_OUT + 14);
}

/** Slots of a slice job's parameters (a Float64Array, shared with the worker). */
export const SJ_N = 0;
export const SJ_IA = 1; // the axes (0 = SGX, 1 = SGY, 2 = SGZ) across, up, and across the slab
export const SJ_IB = 2;
export const SJ_IC = 3;
export const SJ_OA = 4; // the origin's coordinates on those axes (the positions are sg - origin)
export const SJ_OB = 5;
export const SJ_OC = 6;
export const SJ_HALF = 7; // half the slab, Mpc
export const SJ_CA = 8; // window centre and half-width, Mpc
export const SJ_CB = 9;
export const SJ_R = 10;
export const SJ_XA = 11; // screen x = xa a + xb (CSS px), y = ya b + yb
export const SJ_XB = 12;
export const SJ_YA = 13;
export const SJ_YB = 14;
export const SJ_KV = 15; // line length per km/s of u over s (px)
export const SJ_LIM = 16;
export const SJ_K = 17; // device px per CSS px, squares' corner offset and size, canvas size
export const SJ_OX = 18;
export const SJ_OY = 19;
export const SJ_SIZE = 20;
export const SJ_W = 21;
export const SJ_H = 22;
/** Outputs: box (4), rows drawn, rows in the slab (m), rows with an unknown position. */
export const SJ_OUT = 24;
export const SJ_SLOTS = 32;

export interface SliceJob {
  P: Float64Array;
  /** Supergalactic positions about us (the catalogue's), and s, u seen from the origin. */
  sg: [Float64Array, Float64Array, Float64Array];
  s: Float64Array;
  u: Float64Array;
  /** Outputs: every row's screen position (NaN outside the slab and window), the rows drawn in index order, their bins. */
  px: Float64Array;
  py: Float64Array;
  rows: Int32Array;
  bin: Uint8Array;
  /** Velocity lines bin by bin: bin b's are q in [lineStart[b], lineStart[b + 1]), xy[4q..4q+3] = x, y, dx, dy. */
  lineStart: Int32Array;
  xy: Float64Array;
  cells: Uint8Array;
}

/**
 * A slice's rows and points: the rows in the slab |c| <= half and the window (one pass over the columns
 * in sequence, positions sg - origin), their screen positions and bins, the velocity lines of the rows
 * with s > 0 and a finite u (u k / s px along the direction from the origin), grouped by bin in index
 * order, and the points as cells (writeSquares over those rows).
 */
export function sliceCells(job: SliceJob): void {
  const { P, px, py, rows, bin, lineStart, xy, s: S, u: U } = job;
  const n = P[SJ_N]!;
  const A = job.sg[P[SJ_IA]!]!;
  const B = job.sg[P[SJ_IB]!]!;
  const C = job.sg[P[SJ_IC]!]!;
  const oa = P[SJ_OA]!;
  const ob = P[SJ_OB]!;
  const oc = P[SJ_OC]!;
  const half = P[SJ_HALF]!;
  const ca = P[SJ_CA]!;
  const cb = P[SJ_CB]!;
  const R = P[SJ_R]!;
  const xa = P[SJ_XA]!;
  const xb = P[SJ_XB]!;
  const ya = P[SJ_YA]!;
  const yb = P[SJ_YB]!;
  const lim = P[SJ_LIM]!;
  let m = 0;
  let unknown = 0;
  for (let i = 0; i < n; i++) {
    const a = A[i]! - oa;
    const b = B[i]! - ob;
    const c = C[i]! - oc;
    px[i] = NaN;
    py[i] = NaN;
    if (!Number.isFinite(a + b + c)) {
      unknown++;
      continue;
    }
    if (Math.abs(c) > half || Math.abs(a - ca) > R || Math.abs(b - cb) > R) continue;
    px[i] = xa * a + xb;
    py[i] = ya * b + yb;
    rows[m++] = i;
  }
  // the lines, placed bin by bin by counting
  const kv = P[SJ_KV]!;
  lineStart.fill(0);
  for (let j = 0; j < m; j++) {
    const i = rows[j]!;
    const bn = binOf(U[i]!, lim);
    bin[i] = bn;
    if (bn >= CELL_BINS) continue;
    const s = S[i]!;
    if (!(s > 0) || !Number.isFinite(U[i]!)) continue;
    lineStart[bn + 1]!++;
  }
  for (let bn = 0; bn < CELL_BINS; bn++) lineStart[bn + 1]! += lineStart[bn]!;
  const fill = lineStart.slice(0, CELL_BINS);
  for (let j = 0; j < m; j++) {
    const i = rows[j]!;
    const bn = bin[i]!;
    if (bn >= CELL_BINS) continue;
    const s = S[i]!;
    const u = U[i]!;
    if (!(s > 0) || !Number.isFinite(u)) continue;
    const L = (u * kv) / s;
    const q = 4 * fill[bn]!++;
    xy[q] = px[i]!;
    xy[q + 1] = py[i]!;
    xy[q + 2] = (A[i]! - oa) * L;
    xy[q + 3] = -(B[i]! - ob) * L;
  }
  const box = writeSquares(job.cells, P[SJ_W]!, P[SJ_H]!, px, py, bin, P[SJ_K]!, P[SJ_OX]!, P[SJ_OY]!, P[SJ_SIZE]!, rows.subarray(0, m), null);
  P.set([box.x0, box.y0, box.x1, box.y1, box.drawn, m, unknown], SJ_OUT);
}

/** Drawing jobs of one redraw: job kinds (the Hubble diagram's two parts, or SLICE_JOB + the slice's number) in the order they are needed. */
export const HUBBLE_MAIN_JOB = 8;
export const HUBBLE_RES_JOB = 9;
export const SLICE_JOB = 1;

/**
 * Runs drawing jobs on another thread (fit-threads.ts) while the page draws: start() queues jobs
 * (their P and inputs written), finish(k) returns once the k-th of them has run (here, if the worker
 * has not taken it yet).
 */
export interface DrawJobs {
  readonly hubble: HubbleJob;
  readonly slices: SliceJob[];
  /** Hands the jobs to the worker in this order; false when it cannot take them now (then run them here). */
  start(kinds: number[]): boolean;
  /** Returns once the k-th job of the last start() has run. */
  finish(k: number): void;
  /** Returns once every job of the last start() has run, and closes the run. */
  finishAll(): void;
}
