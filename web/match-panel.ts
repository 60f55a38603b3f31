/**
 * Match diagnostics, drawn when a match report sits next to the catalogue: the histogram of pair
 * separations, the match radius, and the expected number of chance matches per bin. For an
 * unrelated background of uniform surface density the chance pairs grow as 2 pi Sigma r dr, so a
 * total E within radius R spreads over a bin [r1, r2] as E (r2^2 - r1^2) / R^2 (Poisson background;
 * domain reference §11 gives P = 1 - exp(-pi r^2 Sigma), common practice).
 *
 * The report is read tolerantly: the layout `peculiar match --report` writes ({settings: {radiusArcsec},
 * counts: {rowsA, ...}, histogram: {binEdgesArcsec, counts}, chance: {expectedChancePairs},
 * suggestedRadius: {suggestedArcsec}}), or flat snake-case keys; what it lacks is said on the panel,
 * not thrown.
 */
import * as d3 from "d3";
import { FAINT_INK, INK, ORIGIN_MARK } from "./colour.js";

export interface MatchDiagnostics {
  source: string;
  edgesArcsec: number[];
  counts: number[];
  radiusArcsec: number;
  /** Expected chance matches per bin (from the report, or spread from its total). */
  chancePerBin: number[] | null;
  chanceTotal: number;
  suggestedRadiusArcsec: number;
  summary: [string, string][];
}

type Json = Record<string, unknown>;

/** The value at a dotted path ("settings.radiusArcsec"). */
function at(o: Json, path: string): unknown {
  let v: unknown = o;
  for (const k of path.split(".")) {
    if (!v || typeof v !== "object") return undefined;
    v = (v as Json)[k];
  }
  return v;
}

function num(o: Json, keys: string[]): number {
  for (const k of keys) {
    const v = at(o, k);
    if (typeof v === "number" && Number.isFinite(v)) return v;
    if (v && typeof v === "object" && typeof (v as Json)["value"] === "number") return (v as Json)["value"] as number;
  }
  return NaN;
}

function numArray(v: unknown): number[] | null {
  return Array.isArray(v) && v.every((x) => typeof x === "number") ? (v as number[]) : null;
}

function findHistogram(o: Json): { edges: number[]; counts: number[] } | null {
  for (const k of ["separation_histogram", "sep_histogram", "histogram", "separationHistogram", "sepHistogram"]) {
    const h = o[k];
    if (!h || typeof h !== "object") continue;
    if (Array.isArray(h)) {
      // [{lo, hi, count}] or [{lo_arcsec, hi_arcsec, n}]
      const edges: number[] = [];
      const counts: number[] = [];
      for (const b of h as Json[]) {
        const lo = num(b, ["lo_arcsec", "lo", "from", "min"]);
        const hi = num(b, ["hi_arcsec", "hi", "to", "max"]);
        const c = num(b, ["count", "n", "pairs"]);
        if (!Number.isFinite(lo + hi + c)) return null;
        if (edges.length === 0) edges.push(lo);
        edges.push(hi);
        counts.push(c);
      }
      return counts.length ? { edges, counts } : null;
    }
    const hj = h as Json;
    const counts = numArray(hj["counts"] ?? hj["count"] ?? hj["n"]);
    let edges = numArray(hj["edges_arcsec"] ?? hj["edgesArcsec"] ?? hj["binEdgesArcsec"] ?? hj["edges"] ?? hj["bin_edges_arcsec"]);
    const width = num(hj, ["bin_width_arcsec", "binWidthArcsec", "width_arcsec"]);
    if (counts && !edges && Number.isFinite(width)) edges = counts.map((_, i) => i * width).concat([counts.length * width]);
    if (counts && edges && edges.length === counts.length + 1) return { edges, counts };
  }
  return null;
}

/** The match diagnostics in a sidecar, or null when it is not a match report. */
export function matchDiagnosticsOf(name: string, json: unknown): MatchDiagnostics | null {
  if (!json || typeof json !== "object") return null;
  const candidates: Json[] = [json as Json];
  for (const k of ["match", "diagnostics", "report", "crossmatch"]) {
    const v = (json as Json)[k];
    if (v && typeof v === "object" && !Array.isArray(v)) candidates.push(v as Json);
  }
  for (const o of candidates) {
    const hist = findHistogram(o);
    if (!hist) continue;
    const radius = num(o, ["radius_arcsec", "radiusArcsec", "radius", "settings.radiusArcsec", "settings.searchRadiusArcsec"]);
    const R = Number.isFinite(radius) ? radius : hist.edges[hist.edges.length - 1]!;
    const hj = (o["separation_histogram"] ?? o["histogram"] ?? {}) as Json;
    let chance = numArray(o["expected_chance_per_bin"] ?? o["chance_per_bin"] ?? (Array.isArray(hj) ? null : (hj["expected_chance"] ?? hj["chance"])));
    const total = num(o, ["expected_chance_matches", "expected_chance", "expectedChance", "expectedChanceMatches", "chance_matches", "chance.expectedChancePairs"]);
    if (chance && chance.length !== hist.counts.length) chance = null;
    if (!chance && Number.isFinite(total) && R > 0) {
      chance = hist.counts.map((_, i) => {
        const r1 = Math.min(hist.edges[i]!, R);
        const r2 = Math.min(hist.edges[i + 1]!, R);
        return (total * (r2 * r2 - r1 * r1)) / (R * R);
      });
    }
    const summary: [string, string][] = [];
    const add = (label: string, keys: string[]) => {
      const v = num(o, keys);
      if (Number.isFinite(v)) summary.push([label, String(Math.round(v * 1000) / 1000)]);
    };
    add("rows in A", ["rows_a", "rowsA", "n_a", "nA", "counts.rowsA"]);
    add("rows in B", ["rows_b", "rowsB", "n_b", "nB", "counts.rowsB"]);
    add("pairs", ["matched", "n_matched", "pairs", "counts.matchedPairs"]);
    add("unmatched in A", ["unmatched_a", "unmatchedA", "counts.unmatchedA"]);
    add("unmatched in B", ["unmatched_b", "unmatchedB", "counts.unmatchedB"]);
    add("ambiguous", ["ambiguous", "n_ambiguous", "counts.ambiguous"]);
    return {
      source: name,
      edgesArcsec: hist.edges,
      counts: hist.counts,
      radiusArcsec: R,
      chancePerBin: chance,
      chanceTotal: Number.isFinite(total) ? total : chance ? chance.reduce((a, b) => a + b, 0) : NaN,
      suggestedRadiusArcsec: num(o, ["suggested_radius_arcsec", "suggestedRadiusArcsec", "suggested_radius", "suggestedRadius.suggestedArcsec"]),
      summary,
    };
  }
  return null;
}

/** Draws the diagnostics into an SVG element of the given size. */
export function drawMatchDiagnostics(svgEl: SVGSVGElement, m: MatchDiagnostics, w: number, h: number, logY = true): void {
  const svg = d3.select(svgEl).attr("width", w).attr("height", h).attr("viewBox", `0 0 ${w} ${h}`);
  svg.selectAll("*").remove();
  svg.append("rect").attr("width", w).attr("height", h).attr("fill", "#13161b");
  const M = { left: 56, right: 16, top: 30, bottom: 40 };
  const xMax = Math.max(m.edgesArcsec[m.edgesArcsec.length - 1]!, m.radiusArcsec * 1.05);
  const x = d3.scaleLinear().domain([0, xMax]).range([M.left, w - M.right]);
  const yMax = Math.max(1, d3.max(m.counts) ?? 1, d3.max(m.chancePerBin ?? [0]) ?? 0);
  // Log-like scale (symlog, linear below 1) so that the chance-match tail shows beside the core.
  const y = logY
    ? d3.scaleSymlog().constant(1).domain([0, yMax * 1.5]).range([h - M.bottom, M.top])
    : d3.scaleLinear().domain([0, yMax * 1.08]).range([h - M.bottom, M.top]).nice();
  const yTicks = logY ? [0, 1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7].filter((t) => t <= yMax * 1.5) : y.ticks(5);
  const g = svg.append("g");
  g.selectAll("rect.bin")
    .data(m.counts)
    .join("rect")
    .attr("class", "bin")
    .attr("x", (_, i) => x(m.edgesArcsec[i]!) + 0.5)
    .attr("width", (_, i) => Math.max(0.5, x(m.edgesArcsec[i + 1]!) - x(m.edgesArcsec[i]!) - 1))
    .attr("y", (c) => y(c))
    .attr("height", (c) => y(0) - y(c))
    .attr("fill", "#5b8fc7");
  if (m.chancePerBin) {
    const pts: [number, number][] = m.chancePerBin.map((c, i) => [(m.edgesArcsec[i]! + m.edgesArcsec[i + 1]!) / 2, c]);
    g.append("path")
      .attr("d", d3.line<[number, number]>().x((p) => x(p[0])).y((p) => y(p[1]))(pts))
      .attr("fill", "none")
      .attr("stroke", "#f4b980")
      .attr("stroke-width", 2);
  }
  const vline = (r: number, colour: string, label: string, dy: number) => {
    if (!Number.isFinite(r)) return;
    g.append("line").attr("x1", x(r)).attr("x2", x(r)).attr("y1", M.top).attr("y2", h - M.bottom).attr("stroke", colour).attr("stroke-dasharray", "5,3").attr("stroke-width", 1.5);
    g.append("text").attr("x", x(r) - 4).attr("y", M.top + 12 + dy).attr("text-anchor", "end").attr("fill", colour).attr("font-size", 11).text(label);
  };
  vline(m.radiusArcsec, ORIGIN_MARK, `radius ${m.radiusArcsec.toFixed(2)}″`, 0);
  vline(m.suggestedRadiusArcsec, "#ff9fd6", `suggested ${m.suggestedRadiusArcsec.toFixed(2)}″`, 14);
  g.append("g")
    .attr("transform", `translate(0,${h - M.bottom})`)
    .call(d3.axisBottom(x).ticks(6))
    .call((s) => s.selectAll("text").attr("fill", INK))
    .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
  g.append("g")
    .attr("transform", `translate(${M.left},0)`)
    .call(d3.axisLeft(y).tickValues(yTicks).tickFormat(d3.format("~s")))
    .call((s) => s.selectAll("text").attr("fill", INK))
    .call((s) => s.selectAll("line,path").attr("stroke", FAINT_INK));
  g.append("text").attr("x", (M.left + w - M.right) / 2).attr("y", h - 6).attr("text-anchor", "middle").attr("fill", INK).text("separation (arcsec)");
  g.append("text").attr("transform", `translate(14,${(M.top + h - M.bottom) / 2}) rotate(-90)`).attr("text-anchor", "middle").attr("fill", INK).text(logY ? "pairs per bin (log scale)" : "pairs per bin");
  const key = g.append("g").attr("transform", `translate(${M.left + 8},${M.top - 12})`);
  key.append("rect").attr("width", 10).attr("height", 8).attr("fill", "#5b8fc7");
  key.append("text").attr("x", 14).attr("y", 8).attr("fill", INK).attr("font-size", 11).text(`pairs (${d3.sum(m.counts)})`);
  if (m.chancePerBin) {
    key.append("line").attr("x1", 110).attr("x2", 126).attr("y1", 4).attr("y2", 4).attr("stroke", "#f4b980").attr("stroke-width", 2);
    key.append("text").attr("x", 130).attr("y", 8).attr("fill", INK).attr("font-size", 11).text(`expected chance matches (${m.chanceTotal.toFixed(1)} within the radius)`);
  } else {
    key.append("text").attr("x", 110).attr("y", 8).attr("fill", INK).attr("font-size", 11).text("expected chance matches: unknown (not in the report)");
  }
}
