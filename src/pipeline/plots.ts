/**
 * The report's three plots as standalone SVG strings, drawn in Node with d3 scales, shapes and
 * geo paths: the Hubble diagram with its residual panel, the sky map of peculiar velocities in
 * Galactic coordinates (Hammer equal-area), and the match separation histogram. Rows with NaN are
 * skipped and counted in the caption; empty input gives a panel that says so.
 */
import * as d3 from "d3";
import { geoHammer } from "d3-geo-projection";
import { convertPosition } from "../sky/frames.js";
import { axes, emptyNote, finiteExtent, px, svgClose, svgOpen, text } from "./svg.js";

/** Above this many points error bars are left out (they would only blacken the panel). */
const MAX_POINTS_WITH_ERROR_BARS = 300;

export interface HubblePlotInput {
  /** Distance of each galaxy (the x axis), Mpc. */
  distMpc: ArrayLike<number>;
  /** Velocity in the fit frame (cz in the CMB frame), km/s. */
  velKmS: ArrayLike<number>;
  /** Residual panel, km/s: the peculiar velocity, or the velocity minus the fitted law. */
  vPecKmS: ArrayLike<number>;
  /** Axis label of the residual panel. Default "v_pec (km/s)". */
  residualLabel?: string;
  vPecErrKmS?: ArrayLike<number>;
  /** 1 for rows flagged as outliers: drawn as crosses, not dots. */
  outlier?: ArrayLike<number>;
  /** Fitted Hubble constant, km/s/Mpc (the line). */
  h0: number;
  /** The injected value, drawn dashed when known. */
  h0Truth?: number;
  title?: string;
}

export function hubbleDiagramSvg(p: HubblePlotInput): string {
  const W = 640;
  const H = 520;
  const left = 70;
  const right = W - 20;
  const top1 = 34;
  const bottom1 = 320;
  const top2 = 340;
  const bottom2 = H - 46;
  const title = p.title ?? "Hubble diagram";
  const n = p.distMpc.length;
  const ok = new Uint8Array(n);
  let nOk = 0;
  for (let i = 0; i < n; i++) {
    if (Number.isFinite(p.distMpc[i]!) && Number.isFinite(p.velKmS[i]!) && Number.isFinite(p.vPecKmS[i]!)) {
      ok[i] = 1;
      nOk++;
    }
  }
  let s = svgOpen(W, H, title);
  s += text(left, 20, `${title}: ${nOk} galaxies${nOk < n ? ` (${n - nOk} without distance or velocity not drawn)` : ""}`, `font-weight="bold"`);
  if (nOk === 0) return s + emptyNote(W / 2, H / 2, "no galaxy with both a distance and a velocity") + svgClose();

  // Axis ranges from the bulk of the points: a few blunders at 5x the distance would squash the rest.
  const dMax = robustMax(p.distMpc, ok);
  const vExt = finiteExtent(p.velKmS, ok)!;
  const x = d3.scaleLinear().domain([0, dMax]).nice().range([left, right]);
  const y = d3.scaleLinear().domain([Math.min(0, vExt[0]), vExt[1]]).nice().range([bottom1, top1]);
  let beyond = 0;
  const uLim = symmetricLimit(p.vPecKmS, ok, 0.99);
  const yr = d3.scaleLinear().domain([-uLim, uLim]).nice().range([bottom2, top2]);
  const clampR = (v: number) => Math.max(yr.domain()[0]!, Math.min(yr.domain()[1]!, v));

  s += axes(x, y, "", "velocity (km/s)", { showXLabels: false });
  s += axes(x, yr, "distance (Mpc)", p.residualLabel ?? "v_pec (km/s)", { yTicks: 4 });
  const withBars = nOk <= MAX_POINTS_WITH_ERROR_BARS && p.vPecErrKmS !== undefined;

  let dots = "";
  let crosses = "";
  let bars = "";
  let rdots = "";
  for (let i = 0; i < n; i++) {
    if (!ok[i]) continue;
    if (p.distMpc[i]! > x.domain()[1]!) {
      beyond++;
      continue;
    }
    const cx = x(p.distMpc[i]!);
    const cy = y(p.velKmS[i]!);
    const ry = yr(clampR(p.vPecKmS[i]!));
    if (p.outlier?.[i]) {
      crosses += `M${px(cx - 2.5)},${px(cy - 2.5)}l5,5m0,-5l-5,5M${px(cx - 2.5)},${px(ry - 2.5)}l5,5m0,-5l-5,5`;
      continue;
    }
    dots += `<circle cx="${px(cx)}" cy="${px(cy)}" r="1.6"/>`;
    rdots += `<circle cx="${px(cx)}" cy="${px(ry)}" r="1.6"/>`;
    if (withBars) {
      const e = p.vPecErrKmS![i]!;
      if (Number.isFinite(e)) bars += `M${px(cx)},${px(yr(clampR(p.vPecKmS[i]! - e)))}V${px(yr(clampR(p.vPecKmS[i]! + e)))}`;
    }
  }
  if (bars) s += `<path class="error-bars" d="${bars}" stroke="#9db4cc" stroke-width="0.8" fill="none"/>\n`;
  s += `<g class="galaxies" fill="#2b5d8a" fill-opacity="0.55">${dots}</g>\n`;
  s += `<g class="residuals" fill="#2b5d8a" fill-opacity="0.55">${rdots}</g>\n`;
  if (crosses) s += `<path class="outliers" d="${crosses}" stroke="#c2461b" stroke-width="1.1" fill="none"/>\n`;

  const line = (h0: number) => {
    const dMax = Math.min(x.domain()[1]!, y.domain()[1]! / h0);
    return `M${px(x(0))},${px(y(0))}L${px(x(dMax))},${px(y(h0 * dMax))}`;
  };
  if (Number.isFinite(p.h0)) s += `<path class="fit-line" d="${line(p.h0)}" stroke="#111" stroke-width="1.5" fill="none"/>\n`;
  if (p.h0Truth !== undefined && Number.isFinite(p.h0Truth)) {
    s += `<path class="truth-line" d="${line(p.h0Truth)}" stroke="#c2461b" stroke-width="1.2" stroke-dasharray="5,4" fill="none"/>\n`;
  }
  s += `<path class="zero-line" d="M${px(left)},${px(yr(0))}H${px(right)}" stroke="#111" stroke-width="1" fill="none"/>\n`;
  s += text(left + 8, top1 + 14, `fit H0 = ${fmt(p.h0, 2)} km/s/Mpc (solid)`);
  if (p.h0Truth !== undefined) s += text(left + 8, top1 + 28, `injected H0 = ${fmt(p.h0Truth, 2)} km/s/Mpc (dashed)`);
  const extras: string[] = [];
  if (p.outlier) extras.push("x = flagged outlier");
  if (beyond > 0) extras.push(`${beyond} beyond ${fmt(x.domain()[1]!, 0)} Mpc not drawn`);
  if (extras.length) s += text(left + 8, top1 + 42, extras.join("; "));
  return s + svgClose();
}

export interface SkyMarker {
  lDeg: number;
  bDeg: number;
  label: string;
  /** ring for a fitted direction, star-like cross for an injected one. */
  kind: "fit" | "truth";
}

export interface SkyPlotInput {
  /** Galactic longitude and latitude, degrees. */
  lDeg: ArrayLike<number>;
  bDeg: ArrayLike<number>;
  vPecKmS: ArrayLike<number>;
  /** 1 for outliers (drawn as open squares, not coloured). */
  outlier?: ArrayLike<number>;
  markers?: SkyMarker[];
  title?: string;
}

/** Galactic-coordinate sky map, longitude increasing to the left, l = 0 at the centre. */
export function skyMapSvg(p: SkyPlotInput): string {
  const W = 720;
  const H = 460;
  const title = p.title ?? "Peculiar velocities on the sky (Galactic)";
  const n = p.lDeg.length;
  const ok = new Uint8Array(n);
  let nOk = 0;
  for (let i = 0; i < n; i++) {
    if (Number.isFinite(p.lDeg[i]!) && Number.isFinite(p.bDeg[i]!) && Number.isFinite(p.vPecKmS[i]!)) {
      ok[i] = 1;
      nOk++;
    }
  }
  const proj = geoHammer().reflectX(true).fitExtent([[20, 30], [W - 20, H - 95]], { type: "Sphere" });
  const path = d3.geoPath(proj);
  let s = svgOpen(W, H, title);
  s += text(20, 18, `${title}: ${nOk} galaxies`, `font-weight="bold"`);
  s += `<path class="sphere" d="${path({ type: "Sphere" })}" fill="#fafafa" stroke="#333"/>\n`;
  s += `<path class="graticule" d="${path(d3.geoGraticule().step([30, 30])())}" fill="none" stroke="#ccc" stroke-width="0.6"/>\n`;
  s += `<path class="galactic-plane" d="${path({ type: "LineString", coordinates: d3.range(-180, 181, 5).map((l) => [l, 0]) })}" fill="none" stroke="#888" stroke-width="1"/>\n`;
  const sg = d3.range(0, 361, 3).map((sgl) => convertPosition(sgl, 0, "supergalactic", "galactic"));
  s += `<path class="supergalactic-plane" d="${path({ type: "LineString", coordinates: sg })}" fill="none" stroke="#888" stroke-width="1" stroke-dasharray="4,3"/>\n`;
  if (nOk === 0) return s + emptyNote(W / 2, H / 2, "no galaxy with a peculiar velocity") + svgClose();

  const lim = symmetricLimit(p.vPecKmS, ok, 0.95);
  const colour = d3.scaleDiverging(d3.interpolateRdBu).domain([lim, 0, -lim]).clamp(true);
  let dots = "";
  let squares = "";
  for (let i = 0; i < n; i++) {
    if (!ok[i]) continue;
    const xy = proj([wrapLon(p.lDeg[i]!), p.bDeg[i]!]);
    if (!xy) continue;
    if (p.outlier?.[i]) squares += `M${px(xy[0] - 2.5)},${px(xy[1] - 2.5)}h5v5h-5z`;
    else dots += `<circle cx="${px(xy[0])}" cy="${px(xy[1])}" r="2" fill="${colour(p.vPecKmS[i]!)}"/>`;
  }
  s += `<g class="galaxies" fill-opacity="0.85">${dots}</g>\n`;
  if (squares) s += `<path class="outliers" d="${squares}" fill="none" stroke="#333" stroke-width="0.8"/>\n`;
  for (const m of p.markers ?? []) {
    const xy = proj([wrapLon(m.lDeg), m.bDeg]);
    if (!xy) continue;
    const [mx, my] = xy;
    s +=
      m.kind === "fit"
        ? `<circle class="marker-fit" cx="${px(mx)}" cy="${px(my)}" r="7" fill="none" stroke="#000" stroke-width="1.8"/>\n`
        : `<path class="marker-truth" d="M${px(mx - 7)},${px(my)}h14M${px(mx)},${px(my - 7)}v14" stroke="#000" stroke-width="1.8"/>\n`;
    s += text(mx + 9, m.kind === "fit" ? my + 16 : my - 6, m.label, `font-weight="bold"`);
  }
  // Legend: a horizontal colour bar with ticks at -lim, 0, +lim.
  const lx0 = W / 2 - 150;
  const lx1 = W / 2 + 150;
  const ly = H - 78;
  const stops = d3.range(0, 1.0001, 0.1).map((t) => `<stop offset="${px(t * 100)}%" stop-color="${colour(-lim + 2 * lim * t)}"/>`).join("");
  s += `<defs><linearGradient id="vpec-scale">${stops}</linearGradient></defs>\n`;
  s += `<rect x="${lx0}" y="${ly}" width="${lx1 - lx0}" height="10" fill="url(#vpec-scale)" stroke="#333" stroke-width="0.5"/>\n`;
  const lxs = d3.scaleLinear().domain([-lim, lim]).range([lx0, lx1]);
  for (const t of [-lim, -lim / 2, 0, lim / 2, lim]) s += text(lxs(t), ly + 23, fmt(t, 0), `text-anchor="middle"`);
  s += text(W / 2, ly + 37, "v_pec (km/s): approaching blue, receding red; squares = flagged outliers", `text-anchor="middle"`);
  s += text(20, H - 8, "solid line: Galactic plane; dashed: supergalactic plane; l = 0 at centre, increasing to the left");
  return s + svgClose();
}

export interface SeparationPlotInput {
  /** Separation of each matched pair, arcsec (NaN for unmatched rows: skipped). */
  sepArcsec: ArrayLike<number>;
  /** The match radius, arcsec: the histogram spans [0, radius]. */
  radiusArcsec: number;
  /** Expected number of chance pairs within the radius, drawn as a curve growing as r dr. */
  expectedChance?: number;
  bins?: number;
  title?: string;
}

export function separationHistogramSvg(p: SeparationPlotInput): string {
  const W = 560;
  const H = 320;
  const left = 64;
  const right = W - 20;
  const top = 34;
  const bottom = H - 46;
  const title = p.title ?? "Match separations";
  const R = p.radiusArcsec;
  const seps: number[] = [];
  for (let i = 0; i < p.sepArcsec.length; i++) {
    const v = p.sepArcsec[i]!;
    if (Number.isFinite(v)) seps.push(v);
  }
  let s = svgOpen(W, H, title);
  s += text(left, 20, `${title}: ${seps.length} pairs within ${fmt(R, 2)} arcsec`, `font-weight="bold"`);
  if (seps.length === 0 || !(R > 0)) return s + emptyNote(W / 2, H / 2, "no matched pairs") + svgClose();
  const nb = p.bins ?? 30;
  const edges = d3.range(0, nb + 1).map((k) => (k * R) / nb);
  const counts = new Array<number>(nb).fill(0);
  for (const v of seps) counts[Math.min(nb - 1, Math.max(0, Math.floor((v / R) * nb)))]! += 1;
  const chance = (k: number) => (p.expectedChance ?? 0) * ((edges[k + 1]! ** 2 - edges[k]! ** 2) / (R * R));
  const yMax = Math.max(d3.max(counts) ?? 1, p.expectedChance ? chance(nb - 1) : 0, 1);
  const x = d3.scaleLinear().domain([0, R]).range([left, right]);
  const y = d3.scaleLinear().domain([0, yMax]).nice().range([bottom, top]);
  s += axes(x, y, "separation (arcsec)", "pairs per bin");
  let bars = "";
  for (let k = 0; k < nb; k++) {
    const c = counts[k]!;
    if (c === 0) continue;
    bars += `<rect x="${px(x(edges[k]!) + 0.5)}" y="${px(y(c))}" width="${px(Math.max(0.5, x(edges[k + 1]!) - x(edges[k]!) - 1))}" height="${px(bottom - y(c))}"/>`;
  }
  s += `<g class="bars" fill="#5b7fa6">${bars}</g>\n`;
  if (p.expectedChance !== undefined && Number.isFinite(p.expectedChance)) {
    const pts = d3.range(0, nb).map((k): [number, number] => [x((edges[k]! + edges[k + 1]!) / 2), y(chance(k))]);
    s += `<path class="chance-curve" d="${d3.line()(pts) ?? ""}" stroke="#c2461b" stroke-width="1.5" fill="none"/>\n`;
    s += text(right - 4, top + 14, `expected chance pairs: ${fmt(p.expectedChance, 1)} (curve)`, `text-anchor="end"`);
  }
  return s + svgClose();
}

/** 1.1 times the 99.5 % quantile of the rows in `mask`, capped at their maximum. */
function robustMax(v: ArrayLike<number>, mask: ArrayLike<number>): number {
  const a: number[] = [];
  for (let i = 0; i < v.length; i++) if (mask[i] && Number.isFinite(v[i]!)) a.push(v[i]!);
  a.sort((p, q) => p - q);
  const q = d3.quantileSorted(a, 0.995) ?? 1;
  const top = a[a.length - 1] ?? 1;
  return Math.max(1e-9, Math.min(top, 1.1 * q));
}

/** A symmetric colour/axis limit: the q-quantile of |v| over the rows in `mask`, at least 1. */
function symmetricLimit(v: ArrayLike<number>, mask: ArrayLike<number>, q: number): number {
  const a: number[] = [];
  for (let i = 0; i < v.length; i++) if (mask[i] && Number.isFinite(v[i]!)) a.push(Math.abs(v[i]!));
  const lim = d3.quantile(a, q) ?? 1;
  return lim > 0 ? Number(lim.toPrecision(2)) : 1;
}

function wrapLon(lDeg: number): number {
  return lDeg > 180 ? lDeg - 360 : lDeg;
}

function fmt(x: number | undefined, digits: number): string {
  return x === undefined || !Number.isFinite(x) ? "n/a" : x.toFixed(digits);
}

