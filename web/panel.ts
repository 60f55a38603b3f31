/**
 * A plot panel: points on a canvas, axes, graticules and legends in an SVG overlay on top, and the
 * pointer handling every panel shares. Drag draws a selection rectangle (linked brushing), a click
 * on a galaxy re-centres on it, hovering shows the tooltip; panels that zoom do so with the wheel,
 * pan with shift-drag (or the middle button) and go back to the full view on a double click. Picking goes through the library's
 * PlaneIndex over the screen positions of the drawn points, built lazily after each draw.
 */
import * as d3 from "d3";
import { PlaneIndex } from "../src/crossmatch/plane-index.js";
import type { ViewState } from "./state.js";
import type { BinnedColours } from "./colour.js";
import { BACKGROUND, GROUP_RING, OUTLIER_MARK, SELECTED_RING } from "./colour.js";

/** How far (CSS px) from a point a click or hover still picks it. */
export const PICK_RADIUS_PX = 7;
/** A drag shorter than this (CSS px) is a click. */
const DRAG_THRESHOLD_PX = 4;
/** How long a click in a zoomed panel waits for a second one (a double click resets the zoom instead). */
const DOUBLE_CLICK_MS = 300;

export interface PanelActions {
  recentreOn(row: number): void;
  select(rows: Int32Array): void;
  hover(row: number, clientX: number, clientY: number): void;
}

export type SvgSel = d3.Selection<SVGSVGElement, unknown, null, undefined>;
export type GSel = d3.Selection<SVGGElement, unknown, null, undefined>;

export abstract class CanvasPanel {
  readonly root: HTMLElement;
  readonly body: HTMLDivElement;
  readonly canvas: HTMLCanvasElement;
  readonly ctx: CanvasRenderingContext2D;
  readonly svg: SvgSel;
  /** Redrawn on every draw. */
  readonly layer: GSel;
  /** The selection rectangle while dragging. */
  private readonly brushRect: d3.Selection<SVGRectElement, unknown, null, undefined>;
  readonly footer: HTMLElement;
  readonly name: string;
  width = 0;
  height = 0;
  /** Screen position (CSS px, panel coordinates) of each row as drawn; NaN when not drawn. */
  px: Float64Array;
  py: Float64Array;
  /** Number of galaxies drawn in the last draw. */
  drawn = 0;
  /** Colour bins of the last draw (export re-uses them for vector points). */
  bins: BinnedColours | null = null;
  pointRadius = 1.5;
  private index: PlaneIndex | null = null;
  /**
   * The plot area's size (CSS px) as last laid out, kept up to date by a ResizeObserver: reading
   * clientWidth in render would force a layout of the page for every panel redrawn after another one
   * changed its overlay (window resizes re-render through main.ts).
   */
  private bodySize: [number, number] | null = null;

  constructor(
    parent: HTMLElement,
    readonly state: ViewState,
    readonly actions: PanelActions,
    opts: { id: string; title: string; tools?: HTMLElement[] },
  ) {
    this.name = opts.id;
    const n = state.data.n;
    this.px = new Float64Array(n).fill(NaN);
    this.py = new Float64Array(n).fill(NaN);
    this.root = document.createElement("section");
    this.root.className = "panel";
    this.root.id = `panel-${opts.id}`;
    const head = document.createElement("header");
    const h = document.createElement("h2");
    h.textContent = opts.title;
    head.appendChild(h);
    const tools = document.createElement("div");
    tools.className = "tools";
    for (const t of opts.tools ?? []) tools.appendChild(t);
    head.appendChild(tools);
    this.root.appendChild(head);
    this.body = document.createElement("div");
    this.body.className = "plot";
    this.canvas = document.createElement("canvas");
    this.body.appendChild(this.canvas);
    this.ctx = this.canvas.getContext("2d")!;
    this.svg = d3.select(this.body).append("svg").attr("class", "overlay").attr("xmlns", "http://www.w3.org/2000/svg");
    this.layer = this.svg.append("g");
    this.brushRect = this.svg.append("rect").attr("class", "brush").attr("display", "none");
    this.root.appendChild(this.body);
    this.footer = document.createElement("footer");
    this.root.appendChild(this.footer);
    parent.appendChild(this.root);
    new ResizeObserver(() => {
      this.bodySize = [this.body.clientWidth, this.body.clientHeight];
    }).observe(this.body);
    this.attachPointer();
  }

  /** Fills px/py for the rows it draws, draws the canvas and the overlay; returns the number drawn. */
  protected abstract draw(ctx: CanvasRenderingContext2D): number;

  /** The size (CSS px) and device pixel ratio the next render() draws at. */
  protected plannedSize(): [number, number, number] {
    const [bw, bh] = (this.bodySize ??= [this.body.clientWidth, this.body.clientHeight]);
    return [Math.max(50, Math.floor(bw)), Math.max(50, Math.floor(bh)), window.devicePixelRatio || 1];
  }

  /** plannedSize with the canvas's size in device pixels (W, H) that render() gives it. */
  protected plannedDevice(): { w: number; h: number; dpr: number; W: number; H: number } {
    const [w, h, dpr] = this.plannedSize();
    return { w, h, dpr, W: Math.round(w * dpr), H: Math.round(h * dpr) };
  }

  /** render() sets px and py to NaN before draw(); a panel whose draw writes every row turns this off. */
  protected clearsPositions = true;

  render(): void {
    const { w, h, dpr, W, H } = this.plannedDevice();
    if (w !== this.width || h !== this.height || this.canvas.width !== W) {
      this.width = w;
      this.height = h;
      this.canvas.width = W;
      this.canvas.height = H;
      this.canvas.style.width = `${w}px`;
      this.canvas.style.height = `${h}px`;
      this.svg.attr("width", w).attr("height", h).attr("viewBox", `0 0 ${w} ${h}`);
    }
    const ctx = this.ctx;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = BACKGROUND;
    ctx.fillRect(0, 0, w, h);
    if (this.clearsPositions) {
      this.px.fill(NaN);
      this.py.fill(NaN);
    }
    this.layer.selectAll("*").remove();
    this.drawn = this.draw(ctx);
    this.index = null;
    this.root.dataset.drawn = String(this.drawn);
  }

  /** SVG for what the canvas draws besides the points (for the vector export): marks by default. */
  vectorExtras(): string {
    return marksSvg(this.state, this.px, this.py, this.pointRadius);
  }

  /** Zoom by `factor` about (x, y); false when the panel does not zoom. */
  protected zoomAt(_x: number, _y: number, _factor: number): boolean {
    return false;
  }

  /** Pan by (dx, dy) CSS px (shift-drag or middle-drag); false when the panel does not pan. */
  protected panBy(_dx: number, _dy: number): boolean {
    return false;
  }

  /** Back to the full view (double click); false when nothing changed. */
  protected resetView(): boolean {
    return false;
  }

  /** True while zoomed in: a double click then resets the view, so a click waits to see whether it is one. */
  protected isZoomed(): boolean {
    return false;
  }

  /** The drawn row nearest to (x, y) within r CSS px, or -1. */
  pick(x: number, y: number, r = PICK_RADIUS_PX): number {
    if (!this.index) this.index = new PlaneIndex(this.px, this.py);
    return this.index.nearest(x, y, r);
  }

  rowsIn(x0: number, y0: number, x1: number, y1: number): Int32Array {
    if (!this.index) this.index = new PlaneIndex(this.px, this.py);
    return this.index.within(Math.min(x0, x1), Math.min(y0, y1), Math.max(x0, x1), Math.max(y0, y1));
  }

  /** Where row i was drawn, in page coordinates (for tests and the tooltip), or null. */
  clientPosition(row: number): { x: number; y: number } | null {
    const x = this.px[row]!;
    const y = this.py[row]!;
    if (!Number.isFinite(x) || !Number.isFinite(y)) return null;
    const r = this.canvas.getBoundingClientRect();
    return { x: r.left + x, y: r.top + y };
  }

  private attachPointer(): void {
    const el = this.svg.node()!;
    let start: [number, number] | null = null;
    let dragging = false;
    let panFrom: [number, number] | null = null;
    el.addEventListener(
      "wheel",
      (e) => {
        const p = local(e as unknown as PointerEvent);
        if (this.zoomAt(p[0], p[1], Math.exp(-e.deltaY * 0.0015))) {
          e.preventDefault();
          this.render();
        }
      },
      { passive: false },
    );
    // a click re-centres; in a zoomed panel it first waits out the double-click time, and a double
    // click (which resets the zoom) cancels it
    let pendingClick = 0;
    el.addEventListener("dblclick", () => {
      window.clearTimeout(pendingClick);
      if (this.resetView()) this.render();
    });
    const local = (e: PointerEvent): [number, number] => {
      const r = el.getBoundingClientRect();
      return [e.clientX - r.left, e.clientY - r.top];
    };
    el.addEventListener("pointerdown", (e) => {
      if ((e.button === 0 && e.shiftKey) || e.button === 1) {
        panFrom = local(e);
        el.setPointerCapture(e.pointerId);
        return;
      }
      if (e.button !== 0) return;
      start = local(e);
      dragging = false;
      el.setPointerCapture(e.pointerId);
    });
    el.addEventListener("pointermove", (e) => {
      const p = local(e);
      if (panFrom) {
        if (this.panBy(p[0] - panFrom[0], p[1] - panFrom[1])) this.render();
        panFrom = p;
        return;
      }
      if (start) {
        if (!dragging && Math.hypot(p[0] - start[0], p[1] - start[1]) > DRAG_THRESHOLD_PX) dragging = true;
        if (dragging) {
          this.brushRect
            .attr("display", null)
            .attr("x", Math.min(start[0], p[0]))
            .attr("y", Math.min(start[1], p[1]))
            .attr("width", Math.abs(p[0] - start[0]))
            .attr("height", Math.abs(p[1] - start[1]));
        }
        return;
      }
      this.actions.hover(this.pick(p[0], p[1]), e.clientX, e.clientY);
    });
    el.addEventListener("pointerup", (e) => {
      if (panFrom) {
        panFrom = null;
        return;
      }
      if (!start) return;
      const p = local(e);
      if (dragging) {
        this.brushRect.attr("display", "none");
        this.actions.select(this.rowsIn(start[0], start[1], p[0], p[1]));
      } else {
        const row = this.pick(p[0], p[1]);
        if (row >= 0 && this.isZoomed()) {
          window.clearTimeout(pendingClick);
          pendingClick = window.setTimeout(() => this.actions.recentreOn(row), DOUBLE_CLICK_MS);
        } else if (row >= 0) this.actions.recentreOn(row);
      }
      start = null;
      dragging = false;
    });
    el.addEventListener("pointerleave", () => {
      if (!start) this.actions.hover(-1, 0, 0);
    });
  }
}

/** Outlier crosses, group rings and selection rings as SVG, as drawMarks draws them on the canvas. */
export function marksSvg(state: ViewState, px: Float64Array, py: Float64Array, r: number): string {
  const d = state.data;
  const f = (x: number) => x.toFixed(1);
  let rings = "";
  let crosses = "";
  let sel = "";
  for (let i = 0; i < d.n; i++) {
    const x = px[i]!;
    const y = py[i]!;
    if (x !== x || y !== y) continue;
    if (d.has.group_id && d.groupId[i]! >= 0 && d.groupSize[i]! >= 2) rings += `<circle cx="${f(x)}" cy="${f(y)}" r="${r + 1.5}"/>`;
    if (d.has.outlier && d.outlier[i]) {
      const k = r + 2.5;
      crosses += `M${f(x - k)},${f(y - k)}L${f(x + k)},${f(y + k)}M${f(x - k)},${f(y + k)}L${f(x + k)},${f(y - k)}`;
    }
    if (state.selected[i]) sel += `<circle cx="${f(x)}" cy="${f(y)}" r="${r + 1}"/>`;
  }
  let s = "";
  if (rings) s += `<g fill="none" stroke="${GROUP_RING}" stroke-width="0.8" stroke-opacity="0.7">${rings}</g>`;
  if (crosses) s += `<path fill="none" stroke="${OUTLIER_MARK}" stroke-width="1.2" d="${crosses}"/>`;
  if (sel) s += `<g fill="none" stroke="${SELECTED_RING}" stroke-width="1">${sel}</g>`;
  return s;
}

/** A small button for a panel's tool bar. */
export function toolButton(label: string, title: string, onClick: () => void): HTMLButtonElement {
  const b = document.createElement("button");
  b.type = "button";
  b.textContent = label;
  b.title = title;
  b.addEventListener("click", onClick);
  return b;
}
