/**
 * The all-sky map: an equal-area projection (Hammer or Mollweide, d3-geo-projection) in Galactic or
 * supergalactic coordinates, longitude increasing to the left with zero at the centre and the poles at
 * top and bottom (the usual way of drawing the sky from inside). Graticule every 30 degrees, the
 * Galactic and supergalactic planes, galaxies coloured by v_pec, outliers and group members marked,
 * and the current origin's direction when re-centred.
 */
import * as d3 from "d3";
import { geoHammer, geoMollweide } from "d3-geo-projection";
import { convertPosition } from "../src/sky/frames.js";
import { lonLatOf } from "../src/sky/vectors.js";
import { CanvasPanel, type PanelActions } from "./panel.js";
import type { ViewState } from "./state.js";
import { FAINT_INK, INK, ORIGIN_MARK, type VelocityScale } from "./colour.js";
import { drawMarks, drawPointsWithSelection } from "./draw.js";
import { colourBar, markKeys } from "./legend.js";

const GALACTIC_PLANE_COLOUR = "#7fd1ff";
const SG_PLANE_COLOUR = "#ff9fd6";
const LEGEND_SPACE_PX = 46;

/** A line of constant latitude 0 in frame `of`, as coordinates in frame `in`. */
function planeLine(of: "galactic" | "supergalactic", inFrame: "galactic" | "supergalactic"): [number, number][] {
  const out: [number, number][] = [];
  for (let lon = 0; lon <= 360; lon += 2) {
    const [a, b] = of === inFrame ? [lon, 0] : convertPosition(lon, 0, of, inFrame);
    out.push([a > 180 ? a - 360 : a, b]);
  }
  return out;
}

export class SkyMap extends CanvasPanel {
  projection: d3.GeoProjection = geoHammer();
  readonly scale: VelocityScale;

  constructor(parent: HTMLElement, state: ViewState, actions: PanelActions, scale: VelocityScale, tools: HTMLElement[]) {
    super(parent, state, actions, { id: "sky", title: "Sky map", tools });
    this.scale = scale;
    this.pointRadius = 1.6;
  }

  /** Screen position (panel CSS px) of (lon, lat) degrees in the current frame, or null. */
  project(lonDeg: number, latDeg: number): [number, number] | null {
    const p = this.projection([lonDeg > 180 ? lonDeg - 360 : lonDeg, latDeg]);
    return p ? [p[0], p[1]] : null;
  }

  private cacheKey = "";
  private cacheX = new Float64Array(0);
  private cacheY = new Float64Array(0);
  private unplaced = 0;

  /** Projects every row once per frame, projection and size (re-centring does not move the sky). */
  private projectAll(proj: d3.GeoProjection, frame: "galactic" | "supergalactic", key: string): void {
    const d = this.state.data;
    const lon = frame === "galactic" ? d.col.l : d.col.sgl;
    const lat = frame === "galactic" ? d.col.b : d.col.sgb;
    const X = new Float64Array(d.n).fill(NaN);
    const Y = new Float64Array(d.n).fill(NaN);
    let unplaced = 0;
    for (let i = 0; i < d.n; i++) {
      const a = lon[i]!;
      const b = lat[i]!;
      const p = Number.isFinite(a) && Number.isFinite(b) ? proj([a > 180 ? a - 360 : a, b]) : null;
      if (!p) {
        unplaced++;
        continue;
      }
      X[i] = p[0];
      Y[i] = p[1];
    }
    this.cacheX = X;
    this.cacheY = Y;
    this.unplaced = unplaced;
    this.cacheKey = key;
  }

  protected draw(ctx: CanvasRenderingContext2D): number {
    const st = this.state;
    const d = st.data;
    const w = this.width;
    const h = this.height;
    const frame = st.frame;
    const proj = (st.projection === "mollweide" ? geoMollweide() : geoHammer()).reflectX(true).precision(0.2);
    proj.fitExtent(
      [
        [8, 8],
        [w - 8, h - LEGEND_SPACE_PX],
      ],
      { type: "Sphere" },
    );
    this.projection = proj;
    const key = `${frame} ${st.projection} ${w} ${h}`;
    if (key !== this.cacheKey) this.projectAll(proj, frame, key);
    const px = this.px;
    const py = this.py;
    px.set(this.cacheX);
    py.set(this.cacheY);
    const unplaced = this.unplaced;
    // The sphere's disc behind the points.
    const path = d3.geoPath(proj, ctx);
    ctx.fillStyle = "#1a1f27";
    ctx.beginPath();
    path({ type: "Sphere" });
    ctx.fill();
    const { bins, drawn } = drawPointsWithSelection(ctx, st, px, py, d.col.v_pec, this.scale, this.pointRadius);
    this.bins = bins;
    drawMarks(ctx, st, px, py, this.pointRadius);
    this.drawOverlay(frame, drawn, unplaced);
    this.root.dataset.unplaced = String(unplaced);
    this.updateOrigin();
    return drawn;
  }

  /** The current origin's direction, as an SVG ring (re-centring moves only this, not the points). */
  updateOrigin(): void {
    this.svg.selectAll("g.origin-mark").remove();
    const o = this.state.origin;
    if (o.kind === "home" || !Number.isFinite(o.ox + o.oy + o.oz)) return;
    const [sgl, sgb] = lonLatOf(o.ox, o.oy, o.oz);
    const [a, b] = this.state.frame === "supergalactic" ? [sgl, sgb] : convertPosition(sgl, sgb, "supergalactic", "galactic");
    const p = this.project(a, b);
    if (!p) return;
    const g = this.svg.insert("g", "rect.brush").attr("class", "origin-mark").attr("transform", `translate(${p[0]},${p[1]})`);
    g.append("circle").attr("r", 8).attr("fill", "none").attr("stroke", ORIGIN_MARK).attr("stroke-width", 2);
    g.append("text").attr("x", 11).attr("y", -8).attr("fill", ORIGIN_MARK).attr("font-size", 11).text(o.label);
  }

  private drawOverlay(frame: "galactic" | "supergalactic", drawn: number, unplaced: number): void {
    const g = this.layer;
    const path = d3.geoPath(this.projection);
    g.append("path").datum(d3.geoGraticule().step([30, 30])()).attr("d", path).attr("fill", "none").attr("stroke", FAINT_INK).attr("stroke-width", 0.5).attr("stroke-opacity", 0.7);
    g.append("path").datum({ type: "Sphere" } as d3.GeoSphere).attr("d", path).attr("fill", "none").attr("stroke", INK).attr("stroke-width", 1);
    const planes: [string, "galactic" | "supergalactic", string][] = [
      ["Galactic plane", "galactic", GALACTIC_PLANE_COLOUR],
      ["Supergalactic plane", "supergalactic", SG_PLANE_COLOUR],
    ];
    for (const [, of, colour] of planes) {
      g.append("path")
        .datum({ type: "LineString", coordinates: planeLine(of, frame) } as d3.GeoPermissibleObjects)
        .attr("d", path)
        .attr("fill", "none")
        .attr("stroke", colour)
        .attr("stroke-width", 1.4)
        .attr("stroke-dasharray", of === "supergalactic" ? "6,4" : null)
        .attr("class", `plane plane-${of}`);
    }
    // Longitude labels along the equator and latitude labels on the central meridian.
    const sym = frame === "galactic" ? ["l", "b"] : ["SGL", "SGB"];
    for (const lon of [0, 60, 120, 240, 300]) {
      const p = this.project(lon, 0);
      if (p) g.append("text").attr("x", p[0] + 2).attr("y", p[1] + 12).attr("fill", INK).attr("font-size", 10).text(`${lon}°`);
    }
    for (const lat of [-60, -30, 30, 60]) {
      const p = this.project(0, lat);
      if (p) g.append("text").attr("x", p[0] + 3).attr("y", p[1] - 2).attr("fill", INK).attr("font-size", 10).text(`${lat > 0 ? "+" : ""}${lat}°`);
    }
    g.append("text").attr("x", 10).attr("y", 18).attr("fill", INK).attr("font-size", 12).text(`${frame === "galactic" ? "Galactic" : "Supergalactic"} (${sym[0]}, ${sym[1]}), ${this.state.projection === "mollweide" ? "Mollweide" : "Hammer"} equal-area`);
    const h = this.height;
    const lg = g.append("g");
    colourBar(lg, this.scale, 16, h - 30, Math.min(260, this.width * 0.35), "v_pec (km/s)");
    const keys = g.append("g");
    const kx = Math.min(260, this.width * 0.35) + 110;
    markKeys(keys, kx, h - 30, this.state.data.has.outlier, this.state.data.has.group_id);
    const pl = g.append("g").attr("class", "legend").attr("transform", `translate(${kx},${h - 14})`);
    pl.append("line").attr("x1", 0).attr("x2", 18).attr("y1", 4).attr("y2", 4).attr("stroke", GALACTIC_PLANE_COLOUR).attr("stroke-width", 1.4);
    pl.append("text").attr("x", 22).attr("y", 8).attr("fill", INK).text("Galactic plane");
    pl.append("line").attr("x1", 110).attr("x2", 128).attr("y1", 4).attr("y2", 4).attr("stroke", SG_PLANE_COLOUR).attr("stroke-width", 1.4).attr("stroke-dasharray", "6,4");
    pl.append("text").attr("x", 132).attr("y", 8).attr("fill", INK).text("Supergalactic plane");
    this.footer.textContent = `${drawn} drawn${unplaced ? `, ${unplaced} with unknown position` : ""} · drag to select, click a galaxy to re-centre on it`;
  }
}
