/**
 * Slices through the supergalactic Cartesian volume, centred on the current origin: the SGX-SGY plane
 * and the other two, each a slab |third coordinate| <= thickness / 2. Each galaxy is a dot with a line
 * along the direction from the origin, of length u / H Mpc (u = radial peculiar velocity seen from the
 * origin; outward = receding), coloured on the sky map's scale.
 */
import * as d3 from "d3";
import { CanvasPanel, type PanelActions } from "./panel.js";
import type { ViewState } from "./state.js";
import { BACKGROUND, binByColour, binsWhenAsked, FAINT_INK, INK, N_BINS, ORIGIN_MARK, type VelocityScale } from "./colour.js";
import { compositeCells, DIM_ALPHA, drawBinnedPoints, drawMarks } from "./draw.js";
import { originLimits } from "./limits.js";
import type { OriginView } from "./origin.js";
import { SJ_CA, SJ_CB, SJ_H, SJ_HALF, SJ_IA, SJ_IB, SJ_IC, SJ_K, SJ_KV, SJ_LIM, SJ_N, SJ_OA, SJ_OB, SJ_OC, SJ_OUT, SJ_OX, SJ_OY, SJ_R, SJ_SIZE, SJ_SLOTS, SJ_W, SJ_XA, SJ_XB, SJ_YA, SJ_YB, SLICE_JOB, sliceCells, type DrawJobs, type SliceJob } from "./cells.js";

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

  /** Velocity lines of the last draw (the vector export writes them out), in the job's arrays. */
  private lines: SliceLines | null = null;
  /**
   * The points job (cells.ts sliceCells): the worker's shared one, or this panel's own arrays. Its px
   * and py are the panel's; it writes every row of them.
   */
  private readonly job: SliceJob;
  private readonly shared: boolean;
  /** The number of its shared job (cells.ts SLICE_JOB + slot). */
  private readonly slot: number;
  /** The job as handed to the worker by queue(), for the origin it was made for. */
  private queued: { origin: OriginView; P: Float64Array; index: number } | null = null;
  /** Waits for the k-th drawing job of the open run, and closes the run (fit-threads.ts). */
  private jobs: DrawJobs | null = null;

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

  protected override isZoomed(): boolean {
    return this.zoom !== 1;
  }

  protected override resetView(): boolean {
    if (this.zoom === 1) return false;
    this.zoom = 1;
    this.centre = [0, 0];
    return true;
  }

  constructor(parent: HTMLElement, state: ViewState, actions: PanelActions, scale: VelocityScale, plane: Plane, tools: HTMLElement[], shared: { jobs: DrawJobs; slot: number } | null = null) {
    const [a, b, c] = AXES[plane];
    super(parent, state, actions, { id: `slice-${plane}`, title: `${NAMES[a]}–${NAMES[b]} slice (|${NAMES[c]}| ≤ half the slab)`, tools });
    this.plane = plane;
    this.scale = scale;
    this.pointRadius = 1.3;
    const d = state.data;
    const n = d.n;
    this.clearsPositions = false;
    const sj = shared?.jobs.slices[shared.slot];
    this.slot = shared?.slot ?? -1;
    if (shared && sj && sj.px.length >= n) {
      const j = sj;
      this.jobs = shared.jobs;
      this.shared = true;
      this.px = j.px.subarray(0, n).fill(NaN);
      this.py = j.py.subarray(0, n).fill(NaN);
      this.job = { ...j, px: this.px, py: this.py };
    } else {
      this.shared = false;
      this.job = {
        P: new Float64Array(SJ_SLOTS),
        sg: [d.col.sgx, d.col.sgy, d.col.sgz],
        s: new Float64Array(0),
        u: new Float64Array(0),
        px: this.px,
        py: this.py,
        rows: new Int32Array(n),
        bin: new Uint8Array(n),
        lineStart: new Int32Array(N_BINS + 1),
        xy: new Float64Array(4 * n),
        cells: new Uint8Array(0),
      };
    }
  }

  /** The window of the slab at a panel size (CSS px): scales and the job's parameters. */
  private geometry(w: number, h: number) {
    const st = this.state;
    const o = st.origin;
    const [ia, ib, ic] = AXES[this.plane];
    const R = originLimits(o).extentMpc / this.zoom;
    const side = Math.max(10, Math.min(w - M.left - M.right, h - M.top - M.bottom));
    const cx = M.left + (w - M.left - M.right) / 2;
    const cy = M.top + (h - M.top - M.bottom) / 2;
    const [ca, cb] = this.centre;
    const sx = d3.scaleLinear().domain([ca - R, ca + R]).range([cx - side / 2, cx + side / 2]);
    const sy = d3.scaleLinear().domain([cb - R, cb + R]).range([cy + side / 2, cy - side / 2]);
    const H = Number.isFinite(o.h0) ? o.h0 : st.h0Ref;
    return { ia, ib, ic, R, side, cx, cy, ca, cb, sx, sy, H };
  }

  /** The job's parameters for geometry g on a canvas of W x H device pixels drawn at scale k, offset (e, f). */
  private jobParams(g: ReturnType<SlicePanel["geometry"]>, W: number, H: number, k: number, e: number, f: number): Float64Array {
    const o = this.state.origin;
    const org = [o.ox, o.oy, o.oz];
    const xb = g.sx(0);
    const yb = g.sy(0);
    const r = this.pointRadius;
    const P = new Float64Array(SJ_SLOTS);
    P[SJ_N] = this.state.data.n;
    P[SJ_IA] = g.ia;
    P[SJ_IB] = g.ib;
    P[SJ_IC] = g.ic;
    P[SJ_OA] = org[g.ia]!;
    P[SJ_OB] = org[g.ib]!;
    P[SJ_OC] = org[g.ic]!;
    P[SJ_HALF] = this.state.slabMpc / 2;
    P[SJ_CA] = g.ca;
    P[SJ_CB] = g.cb;
    P[SJ_R] = g.R;
    P[SJ_XA] = g.sx(1) - xb;
    P[SJ_XB] = xb;
    P[SJ_YA] = g.sy(1) - yb;
    P[SJ_YB] = yb;
    P[SJ_KV] = g.side / (2 * g.R) / g.H; // px per km/s: u / H Mpc times px per Mpc
    P[SJ_LIM] = this.scale.limit;
    P[SJ_K] = k;
    P[SJ_OX] = e - r * k;
    P[SJ_OY] = f - r * k;
    P[SJ_SIZE] = Math.max(1, Math.round(2 * r * k));
    P[SJ_W] = W;
    P[SJ_H] = H;
    return P;
  }

  /**
   * Writes this panel's job for the next draw into the worker's shared job and adds it to `kinds`,
   * when the panel has a shared job and its canvas fits; the shared job reads s and u from the Hubble
   * job's inputs, which the caller has written for this origin (HubblePanel.writeInputs).
   */
  queue(kinds: number[]): void {
    if (!this.shared || !this.jobs) return;
    const { w, h, dpr, W, H } = this.plannedDevice();
    if (W * H > this.job.cells.length) return;
    const P = this.jobParams(this.geometry(w, h), W, H, dpr, 0, 0);
    this.job.P.set(P);
    this.queued = { origin: this.state.origin, P, index: kinds.length };
    kinds.push(SLICE_JOB + this.slot);
  }

  /** The run of jobs was not opened: the queued job is forgotten (the draw runs it here). */
  unqueue(): void {
    this.queued = null;
  }

  /** Runs the job for parameters P: takes the worker's if it was queued with them, else runs it here. */
  private runJob(P: Float64Array): SliceJob {
    const o = this.state.origin;
    const q = this.queued;
    this.queued = null;
    const job = this.job;
    if (q && this.jobs) {
      if (q.origin === o && q.P.every((v, i) => Object.is(v, P[i]))) {
        this.jobs.finish(q.index);
        return job;
      }
      // made for another origin or size: wait for it, clear its cells, and run the job here
      this.jobs.finish(q.index);
      const W = job.P[SJ_W]!;
      const [x0, y0, x1, y1] = job.P.subarray(SJ_OUT, SJ_OUT + 4);
      for (let yy = y0!; yy < y1!; yy++) job.cells.fill(0, yy * W + x0!, yy * W + x1!);
    }
    // (not queued: no job of the open run, if any, is on this panel's arrays)
    const W = P[SJ_W]!;
    const H = P[SJ_H]!;
    const here = { ...job, P, s: o.s, u: o.u };
    if (here.cells.length < W * H) here.cells = this.ownCells(W * H);
    sliceCells(here);
    return here;
  }

  private ownCellsBuf = new Uint8Array(0);
  private ownCells(size: number): Uint8Array {
    if (this.ownCellsBuf.length !== size) this.ownCellsBuf = new Uint8Array(size);
    return this.ownCellsBuf;
  }

  protected draw(ctx: CanvasRenderingContext2D): number {
    const st = this.state;
    const o = st.origin;
    const w = this.width;
    const h = this.height;
    const geo = this.geometry(w, h);
    const { ia, ib, R, side, cx, cy, ca, cb, sx, sy } = geo;
    this.pxPerMpc = side / (2 * R);
    const px = this.px;
    const py = this.py;
    const t = ctx.getTransform();
    const job = this.runJob(this.jobParams(geo, ctx.canvas.width, ctx.canvas.height, t.a, t.e, t.f));
    const out = job.P.subarray(SJ_OUT);
    const m = out[5]!;
    const unknown = out[6]!;
    const rows = job.rows.subarray(0, m);
    ctx.save();
    ctx.beginPath();
    ctx.rect(sx(ca - R), sy(cb + R), side, side);
    ctx.clip();
    ctx.fillStyle = "#171b22";
    ctx.fillRect(sx(ca - R), sy(cb + R), side, side);
    // Velocity lines, one stroke per colour bin.
    const bins = binsWhenAsked(o.u, this.scale);
    ctx.lineWidth = 1;
    ctx.globalAlpha = st.nSelected > 0 ? 0.35 : 0.9;
    const lines = { start: job.lineStart, xy: job.xy.subarray(0, 4 * job.lineStart[N_BINS]!) };
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
    compositeCells(ctx, job.cells, { x0: out[0]!, y0: out[1]!, x1: out[2]!, y1: out[3]!, drawn: 0 }, bins.colours, st.nSelected > 0 ? DIM_ALPHA : 1);
    if (st.nSelected > 0) drawBinnedPoints(ctx, px, py, binByColour(o.u, this.scale, st.selected), this.pointRadius + 0.5, 1, rows);
    const drawn = out[4]!;
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
