/** SVG legends: the diverging colour bar of peculiar velocity with its unknown swatch, and mark keys. */
import * as d3 from "d3";
import type { GSel } from "./panel.js";
import type { VelocityScale } from "./colour.js";
import { GROUP_RING, INK, OUTLIER_MARK, UNKNOWN_COLOUR } from "./colour.js";

let gradientSerial = 0;

/** A horizontal colour bar of `width` px at (x, y) with ticks at -limit, 0, +limit. */
export function colourBar(g: GSel, scale: VelocityScale, x: number, y: number, width: number, label: string): void {
  const id = `vbar-${++gradientSerial}`;
  const lg = g.append("defs").append("linearGradient").attr("id", id);
  for (let k = 0; k <= 16; k++) {
    const t = k / 16;
    lg.append("stop").attr("offset", `${t * 100}%`).attr("stop-color", scale(-scale.limit + 2 * t * scale.limit));
  }
  const bar = g.append("g").attr("class", "legend").attr("transform", `translate(${x},${y})`);
  bar.append("rect").attr("width", width).attr("height", 9).attr("fill", `url(#${id})`).attr("stroke", "#444");
  const ax = d3.scaleLinear().domain([-scale.limit, scale.limit]).range([0, width]);
  bar
    .append("g")
    .attr("transform", "translate(0,9)")
    .call(d3.axisBottom(ax).tickValues([-scale.limit, -scale.limit / 2, 0, scale.limit / 2, scale.limit]).tickSize(3).tickFormat((v) => (Number(v) === 0 ? "0" : d3.format("+d")(Number(v)))))
    .call((s) => s.selectAll("text").attr("fill", INK))
    .call((s) => s.selectAll("line,path").attr("stroke", INK));
  bar.append("text").attr("x", width / 2).attr("y", -4).attr("text-anchor", "middle").attr("fill", INK).text(label);
  bar.append("text").attr("x", 0).attr("y", -4).attr("fill", "#8fc2e3").attr("font-size", 10).text("approaching");
  bar.append("text").attr("x", width).attr("y", -4).attr("text-anchor", "end").attr("fill", "#f4b980").attr("font-size", 10).text("receding");
  const u = bar.append("g").attr("transform", `translate(${width + 14},0)`);
  u.append("rect").attr("width", 9).attr("height", 9).attr("fill", UNKNOWN_COLOUR);
  u.append("text").attr("x", 13).attr("y", 8).attr("fill", INK).text("unknown");
}

/** Keys for the outlier cross and the group ring at (x, y); only those the data has. */
export function markKeys(g: GSel, x: number, y: number, hasOutlier: boolean, hasGroups: boolean): void {
  const k = g.append("g").attr("class", "legend").attr("transform", `translate(${x},${y})`);
  let dx = 0;
  if (hasOutlier) {
    k.append("path").attr("d", "M-4,-4L4,4M-4,4L4,-4").attr("transform", `translate(${dx + 4},4)`).attr("stroke", OUTLIER_MARK).attr("stroke-width", 1.4);
    k.append("text").attr("x", dx + 12).attr("y", 8).attr("fill", INK).text("outlier");
    dx += 64;
  }
  if (hasGroups) {
    k.append("circle").attr("cx", dx + 4).attr("cy", 4).attr("r", 4).attr("fill", "none").attr("stroke", GROUP_RING);
    k.append("text").attr("x", dx + 12).attr("y", 8).attr("fill", INK).text("group member");
  }
}
