/**
 * The Hubble diagram as seen from the current origin: radial velocity against distance (from here:
 * vr = H0 dist_c + v_pec against the comoving distance; from elsewhere: v_AB against s), the fitted
 * law v = H s, and below it the residual v - H s. From elsewhere the law fitted from here is drawn
 * dashed beside it. Error bars when few points are drawn.
 */
import * as d3 from "d3";
import { CanvasPanel, marksSvg, type PanelActions } from "./panel.js";
import { pointsSvg } from "./export.js";
import type { ViewState } from "./state.js";
import { binByColour, binsWhenAsked, FAINT_INK, INK, ORIGIN_MARK, type VelocityScale } from "./colour.js";
import { compositeCells, DIM_ALPHA, drawBinnedPoints, drawMarks, drawStampedMarks, markedRows, markStyle } from "./draw.js";
import { HJ_CROSS_RGB, HJ_E, HJ_F, HJ_MARKS, HJ_NG, HJ_NO, HJ_R, HJ_RING_RGB, HJ_H, HJ_K, HJ_LIM, HJ_N, HJ_ORIGIN_ROW, HJ_OUT, HJ_OX, HJ_OY, HJ_RA, HJ_RB, HJ_SIZE, HJ_SLOTS, HJ_W, HJ_XA, HJ_XB, HJ_YA, HJ_YB, HUBBLE_MAIN_JOB, HUBBLE_RES_JOB, hubbleCells, type CellBox, type DrawJobs } from "./cells.js";
import type { OriginView } from "./origin.js";
import { originLimits } from "./limits.js";

/** Above this many drawn points error bars are left out (they would only blacken the panel). */
export const MAX_POINTS_WITH_ERROR_BARS = 300;
const M = { left: 62, right: 14, top: 28, bottom: 38, gap: 10 };

export class HubblePanel extends CanvasPanel {
  readonly scale: VelocityScale;
  /** Screen positions in the residual panel. */
  private rx: Float64Array;
  private ry: Float64Array;
  /** The view from here, for the dashed comparison line. */
  home: OriginView;

  /** The worker's drawing jobs (fit-threads.ts), or null; and whether queue() hands the points to it. */
  private readonly jobs: DrawJobs | null;
  useWorker = true;

  constructor(parent: HTMLElement, state: ViewState, actions: PanelActions, scale: VelocityScale, home: OriginView, tools: HTMLElement[], jobs: DrawJobs | null = null) {
    super(parent, state, actions, { id: "hubble", title: "Hubble diagram", tools });
    this.scale = scale;
    this.home = home;
    this.pointRadius = 1.4;
    const n = state.data.n;
    this.jobs = jobs && jobs.hubble.px.length >= n ? jobs : null;
    // the points job writes every row of the positions; with a worker they are its shared arrays
    this.clearsPositions = false;
    if (this.jobs) {
      const j = this.jobs.hubble;
      const m = markedRows(state.data);
      j.groupRows!.set(m.groupMembers);
      j.outlierRows!.set(m.outliers);
      this.px = j.px.subarray(0, n).fill(NaN);
      this.py = j.py.subarray(0, n).fill(NaN);
      this.rx = j.rx.subarray(0, n).fill(NaN);
      this.ry = j.ry.subarray(0, n).fill(NaN);
    } else {
      this.rx = new Float64Array(n).fill(NaN);
      this.ry = new Float64Array(n).fill(NaN);
    }
  }

  /** The scales of the diagram and the residual panel at a panel size (CSS px). */
  private geometry(w: number, h: number) {
    const st = this.state;
    const o = st.origin;
    const plotH = h - M.top - M.bottom - M.gap;
    const mainH = Math.round(plotH * 0.68);
    const y0 = M.top;
    const r0 = M.top + mainH + M.gap;
    const resH = plotH - mainH - M.gap;
    const H = Number.isFinite(o.h0) ? o.h0 : st.h0Ref;
    const { sMax, vLo, vHi, uAbs } = originLimits(o);
    const xMax = Number.isFinite(sMax) && sMax > 0 ? sMax * 1.05 : 1;
    const x = d3.scaleLinear().domain([0, xMax]).range([M.left, w - M.right]).nice();
    const y = d3
      .scaleLinear()
      .domain([Math.min(0, Number.isFinite(vLo) ? vLo : 0), Math.max(Number.isFinite(vHi) ? vHi * 1.05 : 1, H * x.domain()[1]! * 0.2)])
      .range([y0 + mainH, y0])
      .nice();
    const uLim = Number.isFinite(uAbs) && uAbs > 0 ? uAbs * 1.15 : 500;
    const yr = d3.scaleLinear().domain([-uLim, uLim]).range([r0 + resH, r0]).nice();
    return { mainH, y0, r0, resH, H, x, y, yr };
  }

  /**
   * The points job's parameters (cells.ts) for scales g on a canvas of W x H device pixels drawn at
   * scale k: screen x = xa s + xb etc. (the linear scales as a x + b, so the loop over 1e5 rows makes
   * no function calls), the squares' size and corner offset as drawBinnedPoints has them.
   */
  private jobParams(g: ReturnType<HubblePanel["geometry"]>, W: number, H: number, k: number, e: number, f: number): Float64Array {
    const lin = (fn: d3.ScaleLinear<number, number>): [number, number] => {
      const b = fn(0);
      return [fn(1) - b, b];
    };
    const [xa, xb] = lin(g.x);
    const [ya, yb] = lin(g.y);
    const [ra, rb] = lin(g.yr);
    const r = this.pointRadius;
    const P = new Float64Array(HJ_SLOTS);
    P[HJ_N] = this.state.data.n;
    P[HJ_XA] = xa;
    P[HJ_XB] = xb;
    P[HJ_YA] = ya;
    P[HJ_YB] = yb;
    P[HJ_RA] = ra;
    P[HJ_RB] = rb;
    P[HJ_LIM] = this.scale.limit;
    P[HJ_K] = k;
    P[HJ_OX] = e - r * k;
    P[HJ_OY] = f - r * k;
    P[HJ_SIZE] = Math.max(1, Math.round(2 * r * k));
    P[HJ_W] = W;
    P[HJ_H] = H;
    P[HJ_ORIGIN_ROW] = this.state.origin.row;
    P[HJ_E] = e;
    P[HJ_F] = f;
    P[HJ_R] = r;
    // the worker stamps the group rings and outlier crosses too, where its buffers hold the canvas
    if (this.jobs && W * H <= this.jobs.hubble.marksMain!.length) {
      const m = markedRows(this.state.data);
      const style = markStyle(r, k);
      P[HJ_MARKS] = 1;
      P[HJ_NG] = m.groupMembers.length;
      P[HJ_NO] = m.outliers.length;
      P[HJ_RING_RGB] = style.ringRgb;
      P[HJ_CROSS_RGB] = style.crossRgb;
    }
    return P;
  }

  /** The job as handed to the worker by queue(), for the origin it was made for. */
  private queued: { origin: OriginView; P: Float64Array; index: number } | null = null;
  /** Page-side buffers of the points job (when it runs here). */
  private local: { W: number; H: number; bin: Uint8Array; cellsMain: Uint8Array; cellsRes: Uint8Array } | null = null;

  /**
   * Copies the origin's s, v and u into the worker's shared job (the slices' jobs read s and u there
   * too); false without a worker.
   */
  writeInputs(): boolean {
    if (!this.jobs || !this.useWorker) return false;
    this.jobs.finishAll();
    const o = this.state.origin;
    const job = this.jobs.hubble;
    job.s.set(o.s);
    job.v.set(o.v);
    job.u.set(o.u);
    return true;
  }

  /**
   * Writes this panel's points job (positions, bins and cells of both clouds) for the next draw into
   * the worker's shared job and adds it to `kinds`, when the canvas fits its cell buffers (after
   * writeInputs). The draw then takes the worker's result; otherwise it makes the same cells itself.
   */
  queue(kinds: number[]): void {
    if (!this.jobs || !this.useWorker) return;
    const { w, h, dpr, W, H } = this.plannedDevice();
    if (W * H > this.jobs.hubble.cellsMain.length) return;
    const P = this.jobParams(this.geometry(w, h), W, H, dpr, 0, 0);
    this.jobs.hubble.P.set(P);
    // two jobs (the diagram, the residual panel) that two threads can run at once
    this.queued = { origin: this.state.origin, P, index: kinds.length };
    kinds.push(HUBBLE_MAIN_JOB, HUBBLE_RES_JOB);
  }

  /** The run of jobs was not opened: the queued job is forgotten (the draw runs it here). */
  unqueue(): void {
    this.queued = null;
  }

  /** The outputs of the points job for these parameters: the worker's if it was queued with them, else run here. */
  private runPoints(P: Float64Array): { cellsMain: Uint8Array; cellsRes: Uint8Array; out: Float64Array; marks: [Uint32Array, Uint32Array] | null } {
    const o = this.state.origin;
    const q = this.queued;
    this.queued = null;
    if (this.jobs) {
      const job = this.jobs.hubble;
      if (q && q.origin === o && q.P.every((v, i) => Object.is(v, P[i]))) {
        this.jobs.finish(q.index);
        this.jobs.finish(q.index + 1);
        const marks: [Uint32Array, Uint32Array] | null = P[HJ_MARKS] ? [job.marksMain!, job.marksRes!] : null;
        return { cellsMain: job.cellsMain, cellsRes: job.cellsRes, out: job.P.subarray(HJ_OUT), marks };
      }
      // made for another origin or size: wait for it and clear its cells (not queued: no job of the
      // open run, if any, is on this panel's arrays); the job is run here
      if (q) {
        this.jobs.finish(q.index);
        this.jobs.finish(q.index + 1);
        const W = job.P[HJ_W]!;
        for (const [cells, at] of [[job.cellsMain, HJ_OUT], [job.cellsRes, HJ_OUT + 4], [job.marksMain!, HJ_OUT + 10], [job.marksRes!, HJ_OUT + 14]] as const) {
          const [x0, y0, x1, y1] = job.P.subarray(at, at + 4);
          for (let yy = y0!; yy < y1!; yy++) cells.fill(0, yy * W + x0!, yy * W + x1!);
        }
      }
    }
    const W = P[HJ_W]!;
    const H = P[HJ_H]!;
    if (!this.local || this.local.W !== W || this.local.H !== H) {
      this.local = { W, H, bin: new Uint8Array(this.state.data.n), cellsMain: new Uint8Array(W * H), cellsRes: new Uint8Array(W * H) };
    }
    const L = this.local;
    // (no mark buffers here: the draw stamps the marks itself)
    hubbleCells({ P, s: o.s, v: o.v, u: o.u, px: this.px, py: this.py, rx: this.rx, ry: this.ry, bin: L.bin, cellsMain: L.cellsMain, cellsRes: L.cellsRes });
    return { cellsMain: L.cellsMain, cellsRes: L.cellsRes, out: P.subarray(HJ_OUT), marks: null };
  }

  /** For the vector export: the residual panel's points (the export draws the diagram's), and the marks of both panels. */
  override vectorExtras(): string {
    // clipped to each plot's frame, as the canvas draws them
    const { y0, mainH, r0, resH } = this.geometry(this.width, this.height);
    const w = this.width - M.left - M.right;
    const frame = (id: string, y: number, h: number) => `<clipPath id="${id}"><rect x="${M.left}" y="${y}" width="${w}" height="${h}"/></clipPath>`;
    const res = this.bins ? pointsSvg(this.bins, this.rx, this.ry, this.pointRadius) : "";
    return (
      `<defs>${frame("hubble-main", y0, mainH)}${frame("hubble-res", r0, resH)}</defs>` +
      `<g clip-path="url(#hubble-main)">${super.vectorExtras()}</g>` +
      `<g clip-path="url(#hubble-res)">${res}${marksSvg(this.state, this.rx, this.ry, this.pointRadius)}</g>`
    );
  }

  protected draw(ctx: CanvasRenderingContext2D): number {
    const st = this.state;
    const o = st.origin;
    const w = this.width;
    const h = this.height;
    const geo = this.geometry(w, h);
    const { mainH, y0, r0, resH, H, x, y, yr } = geo;
    const px = this.px;
    const py = this.py;
    const rx = this.rx;
    const ry = this.ry;
    const t = ctx.getTransform();
    const pts = this.runPoints(this.jobParams(geo, ctx.canvas.width, ctx.canvas.height, t.a, t.e, t.f));
    const box = (at: number): CellBox => ({ x0: pts.out[at]!, y0: pts.out[at + 1]!, x1: pts.out[at + 2]!, y1: pts.out[at + 3]!, drawn: 0 });
    const markBox = (at: number) => ({ x0: pts.out[at]!, y0: pts.out[at + 1]!, x1: pts.out[at + 2]!, y1: pts.out[at + 3]! });
    const drawn = pts.out[8]!;
    const unknown = pts.out[9]!;
    const bins = binsWhenAsked(o.u, this.scale);
    this.bins = bins;
    const alpha = st.nSelected > 0 ? DIM_ALPHA : 1;
    const selectedBins = st.nSelected > 0 ? binByColour(o.u, this.scale, st.selected) : null;
    // Frames and zero lines.
    ctx.strokeStyle = "#2a3039";
    ctx.lineWidth = 1;
    ctx.strokeRect(M.left + 0.5, y0 + 0.5, w - M.left - M.right, mainH);
    ctx.strokeRect(M.left + 0.5, r0 + 0.5, w - M.left - M.right, resH);
    ctx.save();
    ctx.beginPath();
    ctx.rect(M.left, y0, w - M.left - M.right, mainH);
    ctx.clip();
    if (drawn <= MAX_POINTS_WITH_ERROR_BARS) this.errorBars(ctx, x, y, H);
    compositeCells(ctx, pts.cellsMain, box(0), bins.colours, alpha);
    if (selectedBins) drawBinnedPoints(ctx, px, py, selectedBins, this.pointRadius + 0.5, 1);
    if (pts.marks) drawStampedMarks(ctx, st, px, py, this.pointRadius, pts.marks[0], markBox(10));
    else drawMarks(ctx, st, px, py, this.pointRadius);
    ctx.restore();
    ctx.save();
    ctx.beginPath();
    ctx.rect(M.left, r0, w - M.left - M.right, resH);
    ctx.clip();
    ctx.strokeStyle = INK;
    ctx.globalAlpha = 0.6;
    ctx.beginPath();
    ctx.moveTo(M.left, yr(0));
    ctx.lineTo(w - M.right, yr(0));
    ctx.stroke();
    ctx.globalAlpha = 1;
    compositeCells(ctx, pts.cellsRes, box(4), bins.colours, alpha);
    if (selectedBins) drawBinnedPoints(ctx, rx, ry, selectedBins, this.pointRadius + 0.5, 1);
    if (pts.marks) drawStampedMarks(ctx, st, rx, ry, this.pointRadius, pts.marks[1], markBox(14));
    else drawMarks(ctx, st, rx, ry, this.pointRadius);
    ctx.restore();

    // Overlay: axes, fitted laws, labels.
    const g = this.layer;
    const xAxis = (yPos: number, labels: boolean) =>
      g
        .append("g")
        .attr("transform", `translate(0,${yPos})`)
        .call(d3.axisBottom(x).ticks(6).tickFormat(labels ? d3.format("d") : () => ""))
        .call((s) => s.selectAll("text").attr("fill", INK))
        .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
    xAxis(y0 + mainH, false);
    xAxis(r0 + resH, true);
    g.append("g")
      .attr("transform", `translate(${M.left},0)`)
      .call(d3.axisLeft(y).ticks(6).tickFormat(d3.format("~s")))
      .call((s) => s.selectAll("text").attr("fill", INK))
      .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
    g.append("g")
      .attr("transform", `translate(${M.left},0)`)
      .call(d3.axisLeft(yr).ticks(4).tickFormat(d3.format("+~s")))
      .call((s) => s.selectAll("text").attr("fill", INK))
      .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
    const home = o.kind === "home";
    g.append("text")
      .attr("x", (M.left + w - M.right) / 2)
      .attr("y", h - 6)
      .attr("text-anchor", "middle")
      .attr("fill", INK)
      .text(home ? "comoving distance from here (Mpc)" : `distance from ${o.label} (Mpc)`);
    g.append("text")
      .attr("transform", `translate(14,${y0 + mainH / 2}) rotate(-90)`)
      .attr("text-anchor", "middle")
      .attr("fill", INK)
      .text(home ? "H0 d + v_pec (km/s)" : "radial velocity seen there (km/s)");
    g.append("text")
      .attr("transform", `translate(14,${r0 + resH / 2}) rotate(-90)`)
      .attr("text-anchor", "middle")
      .attr("fill", INK)
      .attr("font-size", 10)
      .text("v − H s");
    const xEnd = x.domain()[1]!;
    const clip = (v: number) => Math.max(y.domain()[0]!, Math.min(y.domain()[1]!, v));
    const line = (slope: number, colour: string, dash: string | null) => {
      if (!Number.isFinite(slope)) return;
      const xe = Math.min(xEnd, y.domain()[1]! / slope);
      g.append("line")
        .attr("x1", x(0))
        .attr("y1", y(0))
        .attr("x2", x(xe))
        .attr("y2", y(clip(slope * xe)))
        .attr("stroke", colour)
        .attr("stroke-width", 1.6)
        .attr("stroke-dasharray", dash);
    };
    if (!home) line(this.home.h0, INK, "5,4");
    line(o.h0, ORIGIN_MARK, null);
    if (drawn === 0) {
      g.append("text")
        .attr("x", (M.left + w - M.right) / 2)
        .attr("y", y0 + mainH / 2)
        .attr("text-anchor", "middle")
        .attr("fill", INK)
        .attr("class", "empty-note")
        .text("no galaxy has both a distance and a peculiar velocity: nothing to draw (unknown)");
    }
    const fmt = (v: number, e: number) => (Number.isFinite(v) ? `${v.toFixed(2)} ± ${e.toFixed(2)}` : "unknown");
    const legend = g.append("g").attr("transform", `translate(${M.left + 10},${y0 + 16})`);
    legend.append("text").attr("fill", ORIGIN_MARK).text(`${home ? "from here" : "from " + o.label}: H = ${fmt(o.h0, o.h0Err)} km/s/Mpc (${o.nUsed} galaxies)`);
    if (!home) legend.append("text").attr("y", 15).attr("fill", INK).text(`from here (dashed): H0 = ${fmt(this.home.h0, this.home.h0Err)} km/s/Mpc`);
    this.footer.textContent =
      `${drawn} drawn${unknown ? `, ${unknown} with unknown distance or velocity` : ""} · colour: v − H s` +
      (drawn <= MAX_POINTS_WITH_ERROR_BARS ? " · bars: 1σ distance and velocity" : "");
    return drawn;
  }

  /** 1-sigma bars: distance error (comoving, scaled from dist_err_mpc) and velocity error, projected on e_AB. */
  private errorBars(ctx: CanvasRenderingContext2D, x: d3.ScaleLinear<number, number>, y: d3.ScaleLinear<number, number>, H: number): void {
    const d = this.state.data;
    const o = this.state.origin;
    ctx.strokeStyle = "#5b6470";
    ctx.lineWidth = 1;
    ctx.beginPath();
    for (let i = 0; i < d.n; i++) {
      const s = o.s[i]!;
      const v = o.v[i]!;
      if (!Number.isFinite(s + v)) continue;
      const dc = d.col.dist_c_mpc[i]!;
      const fracErr = d.col.dist_err_mpc[i]! / d.col.dist_mpc[i]!;
      let sigD = Number.isFinite(fracErr) ? fracErr * dc : d.col.v_pec_err[i]! / H;
      // cos lambda = n_B . e_AB: how much of B's line of sight lies along the line from the origin.
      const bx = d.col.sgx[i]!;
      const by = d.col.sgy[i]!;
      const bz = d.col.sgz[i]!;
      const cosL = (bx * o.x[i]! + by * o.y[i]! + bz * o.z[i]!) / (Math.hypot(bx, by, bz) * s);
      const c = Number.isFinite(cosL) ? Math.abs(cosL) : 1;
      sigD *= c;
      const sigV = d.col.v_pec_err[i]! * c;
      if (Number.isFinite(sigD)) {
        ctx.moveTo(x(s - sigD), y(v));
        ctx.lineTo(x(s + sigD), y(v));
      }
      if (Number.isFinite(sigV)) {
        ctx.moveTo(x(s), y(v - sigV));
        ctx.lineTo(x(s), y(v + sigV));
      }
    }
    ctx.stroke();
  }
}
