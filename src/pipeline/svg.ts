/**
 * The few pieces every report plot shares: text escaping, number formatting, a panel frame with
 * ticked axes drawn from a d3 scale, and the closing of a document. Plots are strings; no DOM.
 */
import type { ScaleLinear } from "d3";

export interface Margin {
  top: number;
  right: number;
  bottom: number;
  left: number;
}

/** Escapes text for SVG/XML content and attribute values. */
export function esc(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

/** A coordinate rounded to 0.1 px (keeps files small; sub-pixel is invisible). */
export function px(x: number): string {
  return (Math.round(x * 10) / 10).toString();
}

export function svgOpen(width: number, height: number, title: string): string {
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" ` +
    `font-family="sans-serif" font-size="11">\n<title>${esc(title)}</title>\n` +
    `<rect width="${width}" height="${height}" fill="#ffffff"/>\n`
  );
}

export function svgClose(): string {
  return "</svg>\n";
}

export function text(x: number, y: number, s: string, attrs = ""): string {
  return `<text x="${px(x)}" y="${px(y)}"${attrs ? " " + attrs : ""}>${esc(s)}</text>\n`;
}

/**
 * A bottom x axis and a left y axis at the edges of the plotting box, with ticks from the scales,
 * a thin frame, and axis labels. `x` and `y` already map data to pixels.
 */
export function axes(
  x: ScaleLinear<number, number>,
  y: ScaleLinear<number, number>,
  xLabel: string,
  yLabel: string,
  opts: { xTicks?: number; yTicks?: number; showXLabels?: boolean } = {},
): string {
  const [x0, x1] = x.range() as [number, number];
  const [y0, y1] = y.range() as [number, number];
  const top = Math.min(y0, y1);
  const bottom = Math.max(y0, y1);
  const fx = x.tickFormat(opts.xTicks ?? 6);
  const fy = y.tickFormat(opts.yTicks ?? 5);
  let s = `<g class="axes" stroke="#333" fill="none" stroke-width="1">\n`;
  s += `<rect x="${px(x0)}" y="${px(top)}" width="${px(x1 - x0)}" height="${px(bottom - top)}"/>\n`;
  for (const t of x.ticks(opts.xTicks ?? 6)) s += `<line x1="${px(x(t))}" x2="${px(x(t))}" y1="${px(bottom)}" y2="${px(bottom + 4)}"/>\n`;
  for (const t of y.ticks(opts.yTicks ?? 5)) s += `<line x1="${px(x0 - 4)}" x2="${px(x0)}" y1="${px(y(t))}" y2="${px(y(t))}"/>\n`;
  s += `</g>\n<g class="tick-labels" fill="#333">\n`;
  if (opts.showXLabels !== false) {
    for (const t of x.ticks(opts.xTicks ?? 6)) s += text(x(t), bottom + 15, fx(t), `text-anchor="middle"`);
    s += text((x0 + x1) / 2, bottom + 30, xLabel, `text-anchor="middle"`);
  }
  for (const t of y.ticks(opts.yTicks ?? 5)) s += text(x0 - 6, y(t) + 4, fy(t), `text-anchor="end"`);
  const cy = (top + bottom) / 2;
  s += `<text transform="translate(${px(x0 - 42)},${px(cy)}) rotate(-90)" text-anchor="middle">${esc(yLabel)}</text>\n`;
  s += `</g>\n`;
  return s;
}

/** A centred "no data" note for a panel that has nothing to draw (plots never throw on empty input). */
export function emptyNote(x: number, y: number, why: string): string {
  return text(x, y, why, `text-anchor="middle" fill="#777"`);
}

/** The finite [min, max] of a column, or undefined when nothing is finite. */
export function finiteExtent(values: ArrayLike<number>, mask?: ArrayLike<number>): [number, number] | undefined {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < values.length; i++) {
    if (mask && !mask[i]) continue;
    const v = values[i]!;
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  return lo <= hi ? [lo, hi] : undefined;
}
