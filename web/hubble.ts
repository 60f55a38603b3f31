/**
 * The Hubble diagram as seen from the current origin: radial velocity against distance (from here:
 * vr = H0 dist_c + v_pec against the comoving distance; from elsewhere: v_AB against s), the fitted
 * law v = H s, and below it the residual v - H s. From elsewhere the law fitted from here is drawn
 * dashed beside it. Error bars when few points are drawn.
 */
import * as d3 from "d3";
import { CanvasPanel, type PanelActions } from "./panel.js";
import type { ViewState } from "./state.js";
import { FAINT_INK, INK, ORIGIN_MARK, type VelocityScale } from "./colour.js";
import { drawMarks, drawPointsWithSelection } from "./draw.js";
import type { OriginView } from "./origin.js";
import { originLimits } from "./limits.js";

/** Above this many drawn points error bars are left out (they would only blacken the panel). */
export const MAX_POINTS_WITH_ERROR_BARS = 300;
const M = { left: 62, right: 14, top: 28, bottom: 38, gap: 10 };

export class HubblePanel extends CanvasPanel {
  readonly scale: VelocityScale;
  /** Screen positions in the residual panel. */
  private rx = new Float64Array(0);
  private ry = new Float64Array(0);
  /** The view from here, for the dashed comparison line. */
  home: OriginView;

  constructor(parent: HTMLElement, state: ViewState, actions: PanelActions, scale: VelocityScale, home: OriginView, tools: HTMLElement[]) {
    super(parent, state, actions, { id: "hubble", title: "Hubble diagram", tools });
    this.scale = scale;
    this.home = home;
    this.pointRadius = 1.4;
  }

  protected draw(ctx: CanvasRenderingContext2D): number {
    const st = this.state;
    const d = st.data;
    const o = st.origin;
    const w = this.width;
    const h = this.height;
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

    const px = this.px;
    const py = this.py;
    const n = d.n;
    let unknown = 0;
    let drawn = 0;
    // Main panel points (px/py hold the main-panel positions for picking); residual points separately.
    if (this.rx.length !== n) {
      this.rx = new Float64Array(n);
      this.ry = new Float64Array(n);
    }
    const rx = this.rx.fill(NaN);
    const ry = this.ry.fill(NaN);
    // The linear scales as a x + b, so the loop over 1e5 rows makes no function calls.
    const lin = (f: d3.ScaleLinear<number, number>): [number, number] => {
      const b = f(0);
      return [f(1) - b, b];
    };
    const [xa, xb] = lin(x);
    const [ya, yb] = lin(y);
    const [ra, rb] = lin(yr);
    for (let i = 0; i < n; i++) {
      const s = o.s[i]!;
      const v = o.v[i]!;
      if (!Number.isFinite(s) || !Number.isFinite(v)) {
        if (i !== o.row) unknown++;
        continue;
      }
      px[i] = xa * s + xb;
      py[i] = ya * v + yb;
      rx[i] = px[i]!;
      ry[i] = ra * o.u[i]! + rb;
      drawn++;
    }
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
    const { bins } = drawPointsWithSelection(ctx, st, px, py, o.u, this.scale, this.pointRadius);
    this.bins = bins;
    drawMarks(ctx, st, px, py, this.pointRadius);
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
    drawPointsWithSelection(ctx, st, rx, ry, o.u, this.scale, this.pointRadius);
    drawMarks(ctx, st, rx, ry, this.pointRadius);
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
