/**
 * Export of a panel as SVG and PNG. Canvas panels: the SVG holds the overlay (axes, graticule, legends)
 * as vectors and the points as vector squares when few (<= MAX_VECTOR_POINTS), else as the canvas
 * embedded as an image (the panel adds its other canvas marks as vectors too: lines, crosses, rings);
 * the PNG is the canvas with the overlay rasterised on top, at device resolution.
 */
import { BACKGROUND, N_BINS } from "./colour.js";
import type { CanvasPanel } from "./panel.js";

export const MAX_VECTOR_POINTS = 5000;
const SVG_NS = "http://www.w3.org/2000/svg";

/** Points at (px, py) as vector squares of half-width r, one group per colour bin (NaN positions left out). */
export function pointsSvg(bins: NonNullable<CanvasPanel["bins"]>, px: Float64Array, py: Float64Array, r: number): string {
  let s = "";
  for (let b = 0; b <= N_BINS; b++) {
    const a = bins.start[b]!;
    const e = bins.start[b + 1]!;
    if (a === e) continue;
    s += `<g fill="${bins.colours[b]}">`;
    for (let k = a; k < e; k++) {
      const i = bins.order[k]!;
      const x = px[i]!;
      const y = py[i]!;
      if (x !== x || y !== y) continue;
      s += `<rect x="${(x - r).toFixed(1)}" y="${(y - r).toFixed(1)}" width="${2 * r}" height="${2 * r}"/>`;
    }
    s += "</g>";
  }
  return s;
}

function overlayMarkup(svg: SVGSVGElement): string {
  const clone = svg.cloneNode(true) as SVGSVGElement;
  clone.querySelectorAll("rect.brush").forEach((r) => r.remove());
  return clone.innerHTML;
}

function header(w: number, h: number, title: string): string {
  return `<svg xmlns="${SVG_NS}" xmlns:xlink="http://www.w3.org/1999/xlink" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}" font-family="sans-serif" font-size="11"><title>${title.replace(/[<&]/g, "")}</title>`;
}

export function canvasPanelSvg(p: CanvasPanel, title: string): string {
  const w = p.width;
  const h = p.height;
  let s = header(w, h, title);
  if (p.drawn <= MAX_VECTOR_POINTS && p.bins) {
    s += `<rect width="${w}" height="${h}" fill="${BACKGROUND}"/>`;
    s += pointsSvg(p.bins, p.px, p.py, p.pointRadius);
    s += p.vectorExtras();
  } else {
    s += `<image width="${w}" height="${h}" href="${p.canvas.toDataURL("image/png")}"/>`;
  }
  return s + overlayMarkup(p.svg.node()!) + "</svg>";
}

export function svgElementSvg(svg: SVGSVGElement, title: string): string {
  const w = Number(svg.getAttribute("width"));
  const h = Number(svg.getAttribute("height"));
  return header(w, h, title) + overlayMarkup(svg) + "</svg>";
}

async function rasterise(svgText: string, ctx: CanvasRenderingContext2D, w: number, h: number): Promise<void> {
  const url = URL.createObjectURL(new Blob([svgText], { type: "image/svg+xml" }));
  try {
    const img = new Image();
    await new Promise<void>((ok, fail) => {
      img.onload = () => ok();
      img.onerror = () => fail(new Error("the overlay could not be rasterised"));
      img.src = url;
    });
    ctx.drawImage(img, 0, 0, w, h);
  } finally {
    URL.revokeObjectURL(url);
  }
}

function toBlob(c: HTMLCanvasElement): Promise<Blob> {
  return new Promise((ok, fail) => c.toBlob((b) => (b ? ok(b) : fail(new Error("PNG encoding failed"))), "image/png"));
}

export async function canvasPanelPng(p: CanvasPanel): Promise<Blob> {
  const c = document.createElement("canvas");
  c.width = p.canvas.width;
  c.height = p.canvas.height;
  const ctx = c.getContext("2d")!;
  ctx.drawImage(p.canvas, 0, 0);
  const overlay = header(p.width, p.height, "") + overlayMarkup(p.svg.node()!) + "</svg>";
  await rasterise(overlay, ctx, c.width, c.height);
  return toBlob(c);
}

export async function svgElementPng(svg: SVGSVGElement): Promise<Blob> {
  const w = Number(svg.getAttribute("width"));
  const h = Number(svg.getAttribute("height"));
  const dpr = window.devicePixelRatio || 1;
  const c = document.createElement("canvas");
  c.width = Math.round(w * dpr);
  c.height = Math.round(h * dpr);
  await rasterise(svgElementSvg(svg, ""), c.getContext("2d")!, c.width, c.height);
  return toBlob(c);
}

/** The last export (name and size), for tests; the file itself goes to the browser's downloads. */
export const lastExport: { name: string; bytes: number; type: string } = { name: "", bytes: 0, type: "" };

export function download(name: string, data: Blob | string): void {
  const blob = typeof data === "string" ? new Blob([data], { type: "image/svg+xml" }) : data;
  lastExport.name = name;
  lastExport.bytes = blob.size;
  lastExport.type = blob.type;
  const a = document.createElement("a");
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.appendChild(a);
  a.click();
  setTimeout(() => {
    URL.revokeObjectURL(a.href);
    a.remove();
  }, 1000);
}
