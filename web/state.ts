/**
 * The view's shared state: the selection (a byte mask over rows, brushed in any panel), the row under
 * the pointer, the sky frame, the slab thickness, and the current origin with its re-centred view.
 * Panels listen to events and redraw; nothing else talks between panels.
 */
import type { ViewData } from "./data.js";
import type { OriginView } from "./origin.js";

export type ViewEvent = "selection" | "hover" | "frame" | "slab" | "origin";
export type SkyFrameName = "galactic" | "supergalactic";
export type ProjectionName = "hammer" | "mollweide";

export class ViewState {
  readonly data: ViewData;
  /** 1 = selected. */
  readonly selected: Uint8Array;
  nSelected = 0;
  /** Rows in the selection, increasing. */
  selectedRows: Int32Array = new Int32Array(0);
  hover = -1;
  frame: SkyFrameName = "galactic";
  projection: ProjectionName = "hammer";
  slabMpc: number;
  origin: OriginView;
  private readonly listeners = new Map<ViewEvent, ((s: ViewState) => void)[]>();

  /** The H0 the positions and velocities were made with (the fit from here), km/s/Mpc. */
  readonly h0Ref: number;

  constructor(data: ViewData, home: OriginView, slabMpc: number, h0Ref: number) {
    this.data = data;
    this.h0Ref = h0Ref;
    this.selected = new Uint8Array(data.n);
    this.origin = home;
    this.slabMpc = slabMpc;
  }

  on(event: ViewEvent, fn: (s: ViewState) => void): void {
    const l = this.listeners.get(event) ?? [];
    l.push(fn);
    this.listeners.set(event, l);
  }

  private emit(event: ViewEvent): void {
    for (const fn of this.listeners.get(event) ?? []) fn(this);
  }

  setSelection(rows: Int32Array): void {
    this.selected.fill(0);
    for (const r of rows) this.selected[r] = 1;
    this.selectedRows = rows;
    this.nSelected = rows.length;
    this.emit("selection");
  }

  clearSelection(): void {
    this.setSelection(new Int32Array(0));
  }

  setHover(row: number): void {
    if (row === this.hover) return;
    this.hover = row;
    this.emit("hover");
  }

  setFrame(frame: SkyFrameName, projection: ProjectionName = this.projection): void {
    this.frame = frame;
    this.projection = projection;
    this.emit("frame");
  }

  setSlab(mpc: number): void {
    this.slabMpc = mpc;
    this.emit("slab");
  }

  setOrigin(o: OriginView): void {
    this.origin = o;
    this.emit("origin");
  }
}
