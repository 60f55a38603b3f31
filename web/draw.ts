/**
 * Canvas drawing shared by the panels: points batched by colour bin (one fill per bin), and the marks
 * drawn on top: outliers (a cross), group members (a ring), the selection (white rings, the rest dimmed),
 * the row under the pointer.
 */
import type { BinnedColours, VelocityScale } from "./colour.js";
import { binAll, binByColour, GROUP_RING, N_BINS, OUTLIER_MARK, SELECTED_RING } from "./colour.js";
import type { ViewState } from "./state.js";

/** Draws the rows of `bins` at (px, py) as squares of half-size r; returns how many had a position. */
export function drawBinnedPoints(
  ctx: CanvasRenderingContext2D,
  px: Float64Array,
  py: Float64Array,
  bins: BinnedColours,
  r: number,
  alpha = 1,
): number {
  let drawn = 0;
  const d = 2 * r;
  ctx.globalAlpha = alpha;
  for (let b = 0; b <= N_BINS; b++) {
    const a = bins.start[b]!;
    const e = bins.start[b + 1]!;
    if (a === e) continue;
    ctx.fillStyle = bins.colours[b]!;
    for (let k = a; k < e; k++) {
      const i = bins.order[k]!;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      ctx.fillRect(x - r, y - r, d, d);
      drawn++;
    }
  }
  ctx.globalAlpha = 1;
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
