/**
 * Slices through the supergalactic Cartesian volume, centred on the current origin: the SGX-SGY plane
 * and the other two, each a slab |third coordinate| <= thickness / 2. Each galaxy is a dot with a line
 * along the direction from the origin, of length u / H Mpc (u = radial peculiar velocity seen from the
 * origin; outward = receding), coloured on the sky map's scale.
 */
import * as d3 from "d3";
import { CanvasPanel, type PanelActions } from "./panel.js";
import type { ViewState } from "./state.js";
import { BACKGROUND, binAll, FAINT_INK, INK, N_BINS, ORIGIN_MARK, type BinnedColours, type VelocityScale } from "./colour.js";
import { drawMarks, drawPointsWithSelection } from "./draw.js";
import { originLimits } from "./limits.js";

export type Plane = "xy" | "xz" | "yz";
const AXES: Record<Plane, [0 | 1 | 2, 0 | 1 | 2, 0 | 1 | 2]> = { xy: [0, 1, 2], xz: [0, 2, 1], yz: [1, 2, 0] };
const NAMES = ["SGX", "SGY", "SGZ"];
const M = { left: 44, right: 10, top: 22, bottom: 34 };

/** Line segments by colour bin: bin b's lines are q in [start[b], start[b+1]), xy[4q..4q+3] = x, y, dx, dy. */
interface SliceLines {
  start: Int32Array;
  xy: Float64Array;
}

export class SlicePanel extends CanvasPanel {
  readonly plane: Plane;
  readonly scale: VelocityScale;

  /** Zoom factor and window centre (Mpc, in the panel's two coordinates about the origin). */
  private zoom = 1;
  private centre: [number, number] = [0, 0];
  private pxPerMpc = 1;

  /** Velocity lines of the last draw (the vector export writes them out), in lineBuf. */
  private lines: SliceLines | null = null;
  private lineBuf = new Float64Array(0);
  /** The rows of the last draw, in index order (its first part). */
  private slabRows = new Int32Array(0);

  /** Velocity lines of the last draw, one SVG path per colour bin, when there are at most 20 000 rows. */
  override vectorExtras(): string {
    const bins = this.bins;
    const L = this.lines;
    if (!bins || !L || bins.start[N_BINS + 1]! > 20_000) return super.vectorExtras();
    let lineSvg = "";
    for (let bn = 0; bn < N_BINS; bn++) {
      if (L.start[bn] === L.start[bn + 1]) continue;
      let d = "";
      for (let q = L.start[bn]!; q < L.start[bn + 1]!; q++) {
        const [x, y, dx, dy] = L.xy.subarray(4 * q, 4 * q + 4);
        d += `M${x!.toFixed(1)},${y!.toFixed(1)}l${dx!.toFixed(1)},${dy!.toFixed(1)}`;
      }
      lineSvg += `<path fill="none" stroke="${bins.colours[bn]}" stroke-opacity="0.9" d="${d}"/>`;
    }
    return lineSvg + super.vectorExtras();
  }

  /**
   * The velocity lines of the drawn rows, bin by bin: each from (x, y) by (dx, dy) CSS px, u / H Mpc
   * along the direction from the origin (k = px per km/s).
   */
  private velocityLines(bins: BinnedColours, k: number, rows: Int32Array): SliceLines {
    const o = this.state.origin;
    const [ia, ib] = AXES[this.plane];
    const cols = [o.x, o.y, o.z];
    const A = cols[ia]!;
    const B = cols[ib]!;
    const px = this.px;
    const py = this.py;
    // the drawn rows in index order, placed bin by bin by counting
    const n = rows.length;
    const bin = bins.bin;
    const count = new Int32Array(N_BINS + 1);
    for (let j = 0; j < n; j++) {
      const i = rows[j]!;
      const bn = bin[i]!;
      if (bn >= N_BINS || px[i] !== px[i]) continue; // unknown colour, or not in the slab
      const s = o.s[i]!;
      if (!(s > 0) || !Number.isFinite(o.u[i]!)) continue;
      count[bn + 1]!++;
    }
    for (let bn = 0; bn < N_BINS; bn++) count[bn + 1]! += count[bn]!;
    const start = count.slice();
    const m = start[N_BINS]!;
    // one buffer per panel, grown when needed (a fresh 4 n array per draw cost more than the lines)
    if (this.lineBuf.length < 4 * m) this.lineBuf = new Float64Array(Math.max(4 * m, 2 * this.lineBuf.length));
    const xy = this.lineBuf;
    for (let j = 0; j < n; j++) {
      const i = rows[j]!;
      const bn = bin[i]!;
      if (bn >= N_BINS || px[i] !== px[i]) continue;
      const s = o.s[i]!;
      const u = o.u[i]!;
      if (!(s > 0) || !Number.isFinite(u)) continue;
      const L = (u * k) / s;
      const q = 4 * count[bn]!++;
      xy[q] = px[i]!;
      xy[q + 1] = py[i]!;
      xy[q + 2] = A[i]! * L;
      xy[q + 3] = -B[i]! * L;
    }
    return { start, xy: xy.subarray(0, 4 * m) };
  }

  protected override zoomAt(x: number, y: number, factor: number): boolean {
    const k = Math.min(50, Math.max(1, this.zoom * factor));
    if (k === this.zoom) return false;
    // Keep the point under the pointer fixed: its Mpc coordinates before and after are equal.
    const cx = M.left + (this.width - M.left - M.right) / 2;
    const cy = M.top + (this.height - M.top - M.bottom) / 2;
    const ax = this.centre[0] + (x - cx) / this.pxPerMpc;
    const ay = this.centre[1] - (y - cy) / this.pxPerMpc;
    const s = this.zoom / k;
    this.centre = k === 1 ? [0, 0] : [ax - (ax - this.centre[0]) * s, ay - (ay - this.centre[1]) * s];
    this.zoom = k;
    return true;
  }

  protected override panBy(dx: number, dy: number): boolean {
    if (this.zoom === 1) return false;
    this.centre = [this.centre[0] - dx / this.pxPerMpc, this.centre[1] + dy / this.pxPerMpc];
    return true;
  }

  protected override resetView(): boolean {
    if (this.zoom === 1) return false;
    this.zoom = 1;
    this.centre = [0, 0];
    return true;
  }

  constructor(parent: HTMLElement, state: ViewState, actions: PanelActions, scale: VelocityScale, plane: Plane, tools: HTMLElement[]) {
    const [a, b, c] = AXES[plane];
    super(parent, state, actions, { id: `slice-${plane}`, title: `${NAMES[a]}–${NAMES[b]} slice (|${NAMES[c]}| ≤ half the slab)`, tools });
    this.plane = plane;
    this.scale = scale;
    this.pointRadius = 1.3;
  }

  protected draw(ctx: CanvasRenderingContext2D): number {
    const st = this.state;
    const d = st.data;
    const o = st.origin;
    const [ia, ib, ic] = AXES[this.plane];
    const cols = [o.x, o.y, o.z];
    const A = cols[ia]!;
    const B = cols[ib]!;
    const C = cols[ic]!;
    const R = originLimits(o).extentMpc / this.zoom;
    const w = this.width;
    const h = this.height;
    const side = Math.max(10, Math.min(w - M.left - M.right, h - M.top - M.bottom));
    const cx = M.left + (w - M.left - M.right) / 2;
    const cy = M.top + (h - M.top - M.bottom) / 2;
    const [ca, cb] = this.centre;
    const sx = d3.scaleLinear().domain([ca - R, ca + R]).range([cx - side / 2, cx + side / 2]);
    const sy = d3.scaleLinear().domain([cb - R, cb + R]).range([cy + side / 2, cy - side / 2]);
    this.pxPerMpc = side / (2 * R);
    const half = st.slabMpc / 2;
    const H = Number.isFinite(o.h0) ? o.h0 : st.h0Ref;
    const px = this.px;
    const py = this.py;
    const xb = sx(0);
    const xa = sx(1) - xb;
    const yb = sy(0);
    const ya = sy(1) - yb;
    // The rows in the slab and the window, in index order (the order they are drawn in): one pass over
    // the columns in sequence. (A bucket index of each coordinate, touching only the rows about the
    // slab, was slower: its rows are scattered in memory, and their list had to be sorted back.)
    if (this.slabRows.length < d.n) this.slabRows = new Int32Array(d.n);
    const list = this.slabRows;
    let m = 0;
    let unknown = 0;
    for (let i = 0; i < d.n; i++) {
      const a = A[i]!;
      const b = B[i]!;
      const c = C[i]!;
      if (!Number.isFinite(a + b + c)) {
        unknown++;
        continue;
      }
      if (Math.abs(c) > half || Math.abs(a - ca) > R || Math.abs(b - cb) > R) continue;
      px[i] = xa * a + xb;
      py[i] = ya * b + yb;
      list[m++] = i;
    }
    const rows = list.subarray(0, m);
    ctx.save();
    ctx.beginPath();
    ctx.rect(sx(ca - R), sy(cb + R), side, side);
    ctx.clip();
    ctx.fillStyle = "#171b22";
    ctx.fillRect(sx(ca - R), sy(cb + R), side, side);
    // Velocity lines, one stroke per colour bin.
    const bins = binAll(o.u, this.scale);
    const k = side / (2 * R) / H; // px per km/s: u / H Mpc times px per Mpc
    ctx.lineWidth = 1;
    ctx.globalAlpha = st.nSelected > 0 ? 0.35 : 0.9;
    const lines = this.velocityLines(bins, k, rows);
    this.lines = lines;
    for (let bn = 0; bn < N_BINS; bn++) {
      const e = lines.start[bn + 1]!;
      if (lines.start[bn] === e) continue;
      ctx.strokeStyle = bins.colours[bn]!;
      ctx.beginPath();
      const xy = lines.xy;
      for (let q = lines.start[bn]!; q < e; q++) {
        const x = xy[4 * q]!;
        const y = xy[4 * q + 1]!;
        ctx.moveTo(x, y);
        ctx.lineTo(x + xy[4 * q + 2]!, y + xy[4 * q + 3]!);
      }
      ctx.stroke();
    }
    ctx.globalAlpha = 1;
    const { drawn } = drawPointsWithSelection(ctx, st, px, py, o.u, this.scale, this.pointRadius, rows);
    this.bins = bins;
    drawMarks(ctx, st, px, py, this.pointRadius);
    // The origin, and us when re-centred.
    ctx.strokeStyle = ORIGIN_MARK;
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(sx(0) - 7, sy(0));
    ctx.lineTo(sx(0) + 7, sy(0));
    ctx.moveTo(sx(0), sy(0) - 7);
    ctx.lineTo(sx(0), sy(0) + 7);
    ctx.stroke();
    if (o.kind !== "home") {
      const us = [-o.ox, -o.oy, -o.oz];
      ctx.strokeStyle = INK;
      ctx.beginPath();
      ctx.arc(sx(us[ia]!), sy(us[ib]!), 5, 0, 2 * Math.PI);
      ctx.stroke();
    }
    ctx.restore();
    ctx.fillStyle = BACKGROUND;

    const g = this.layer;
    g.append("g")
      .attr("transform", `translate(0,${sy(cb - R)})`)
      .call(d3.axisBottom(sx).ticks(5))
      .call((s) => s.selectAll("text").attr("fill", INK))
      .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
    g.append("g")
      .attr("transform", `translate(${sx(ca - R)},0)`)
      .call(d3.axisLeft(sy).ticks(5))
      .call((s) => s.selectAll("text").attr("fill", INK))
      .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
    const rel = o.kind === "home" ? "" : " − origin";
    g.append("text").attr("x", cx).attr("y", h - 4).attr("text-anchor", "middle").attr("fill", INK).text(`${NAMES[ia]}${rel} (Mpc)`);
    g.append("text").attr("transform", `translate(11,${cy}) rotate(-90)`).attr("text-anchor", "middle").attr("fill", INK).text(`${NAMES[ib]}${rel} (Mpc)`);
    g.append("text")
      .attr("x", sx(ca - R) + 6)
      .attr("y", sy(cb + R) + 14)
      .attr("fill", INK)
      .attr("font-size", 10)
      .text(`slab ${st.slabMpc.toFixed(0)} Mpc · ${o.kind === "home" ? "origin: here" : "origin: " + o.label + " (○ = us)"}${this.zoom !== 1 ? ` · zoom ×${this.zoom.toFixed(1)} (double-click: full view)` : ""}`);
    this.root.dataset.inSlab = String(drawn);
    this.footer.textContent = `${drawn} in the slab${unknown ? `, ${unknown} with unknown position` : ""} · line: u/H Mpc along the line of sight from the origin, outward = receding`;
    this.footer.title = "Each line is the radial peculiar velocity u seen from the origin, drawn as the distance u/H it is worth, along the direction from the origin (outward = receding, inward = approaching).";
    return drawn;
  }
}
