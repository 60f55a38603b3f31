import { describe, expect, it } from "vitest";
import { SaxesParser } from "saxes";
import { hubbleDiagramSvg, separationHistogramSvg, skyMapSvg } from "../../src/pipeline/plots.js";

/** Pixel coordinates are rounded to 0.1 px in the SVG; collinearity is checked to this. */
const PX_TOL = 0.3;

interface El {
  name: string;
  attrs: Record<string, string>;
  parents: string[];
}

/** Parses an SVG string with a strict XML parser (throws on malformed output) and lists its elements. */
function elements(svg: string): El[] {
  const out: El[] = [];
  const stack: { name: string; cls: string }[] = [];
  const p = new SaxesParser();
  p.on("opentag", (t) => {
    const attrs: Record<string, string> = {};
    for (const [k, v] of Object.entries(t.attributes)) attrs[k] = String(v);
    out.push({ name: t.name, attrs, parents: stack.map((s) => s.cls) });
    stack.push({ name: t.name, cls: attrs.class ?? "" });
  });
  p.on("closetag", () => void stack.pop());
  p.write(svg).close();
  return out;
}

const circlesIn = (els: El[], cls: string) => els.filter((e) => e.name === "circle" && e.parents.includes(cls));

function pathOf(els: El[], cls: string): string | undefined {
  return els.find((e) => e.name === "path" && e.attrs.class === cls)?.attrs.d;
}

describe("hubbleDiagramSvg", () => {
  it("draws one dot per usable galaxy in each panel, and skips NaN rows", () => {
    const d = Float64Array.from([10, 20, 30, NaN, 50]);
    const v = Float64Array.from([700, 1400, 2100, 2800, NaN]);
    const u = Float64Array.from([0, 10, -10, 0, 0]);
    const els = elements(hubbleDiagramSvg({ distMpc: d, velKmS: v, vPecKmS: u, h0: 70 }));
    expect(circlesIn(els, "galaxies")).toHaveLength(3);
    expect(circlesIn(els, "residuals")).toHaveLength(3);
  });

  it("puts galaxies that follow v = H0 d exactly on the fitted line", () => {
    const d = Float64Array.from({ length: 20 }, (_, i) => 5 + 7 * i);
    const v = d.map((x) => 70 * x);
    const els = elements(hubbleDiagramSvg({ distMpc: d, velKmS: v, vPecKmS: new Float64Array(20), h0: 70 }));
    const m = /^M([\d.]+),([\d.]+)L([\d.]+),([\d.]+)$/.exec(pathOf(els, "fit-line")!)!;
    const [x0, y0, x1, y1] = m.slice(1).map(Number) as [number, number, number, number];
    for (const c of circlesIn(els, "galaxies")) {
      const cx = Number(c.attrs.cx);
      const cy = Number(c.attrs.cy);
      const onLine = y0 + ((cx - x0) * (y1 - y0)) / (x1 - x0);
      expect(Math.abs(cy - onLine)).toBeLessThan(PX_TOL);
    }
  });

  it("draws outliers as crosses instead of dots, and the injected H0 as a second line", () => {
    const d = Float64Array.from([10, 20, 30]);
    const v = Float64Array.from([700, 1400, 9000]);
    const u = Float64Array.from([0, 0, 6900]);
    const els = elements(hubbleDiagramSvg({ distMpc: d, velKmS: v, vPecKmS: u, outlier: Uint8Array.from([0, 0, 1]), h0: 70, h0Truth: 72 }));
    expect(circlesIn(els, "galaxies")).toHaveLength(2);
    expect(pathOf(els, "outliers")).toMatch(/^M/);
    expect(pathOf(els, "truth-line")).toMatch(/^M/);
  });

  it("says so, and stays valid SVG, when there is nothing to draw", () => {
    const svg = hubbleDiagramSvg({ distMpc: new Float64Array(0), velKmS: new Float64Array(0), vPecKmS: new Float64Array(0), h0: NaN });
    expect(elements(svg).some((e) => e.name === "circle")).toBe(false);
    expect(svg).toContain("no galaxy with both a distance and a velocity");
  });

  it("draws error bars only for small samples", () => {
    const few = hubbleDiagramSvg({ distMpc: [10, 20], velKmS: [700, 1400], vPecKmS: [0, 0], vPecErrKmS: [100, 100], h0: 70 });
    expect(pathOf(elements(few), "error-bars")).toBeDefined();
    const n = 1000;
    const d = Float64Array.from({ length: n }, (_, i) => 1 + i / 10);
    const many = hubbleDiagramSvg({ distMpc: d, velKmS: d.map((x) => 70 * x), vPecKmS: new Float64Array(n), vPecErrKmS: new Float64Array(n).fill(100), h0: 70 });
    expect(pathOf(elements(many), "error-bars")).toBeUndefined();
  });
});

describe("skyMapSvg", () => {
  function centreOf(els: El[]): [number, number] {
    // The sphere outline of an equal-area full-sky map is symmetric about its centre.
    const d = pathOf(els, "sphere")!;
    const nums = d.match(/-?[\d.]+/g)!.map(Number);
    const xs = nums.filter((_, i) => i % 2 === 0);
    const ys = nums.filter((_, i) => i % 2 === 1);
    return [(Math.min(...xs) + Math.max(...xs)) / 2, (Math.min(...ys) + Math.max(...ys)) / 2];
  }

  it("puts the Galactic centre at the middle of the map and l = 90 deg to its left", () => {
    const els = elements(skyMapSvg({ lDeg: [0, 90], bDeg: [0, 0], vPecKmS: [100, -100] }));
    const [cx, cy] = centreOf(els);
    const [gc, l90] = circlesIn(els, "galaxies");
    expect(Math.abs(Number(gc!.attrs.cx) - cx)).toBeLessThan(PX_TOL);
    expect(Math.abs(Number(gc!.attrs.cy) - cy)).toBeLessThan(PX_TOL);
    expect(Number(l90!.attrs.cx)).toBeLessThan(cx - 50);
  });

  it("puts the north Galactic pole at the top and the south pole at the bottom", () => {
    const els = elements(skyMapSvg({ lDeg: [0, 0, 0], bDeg: [90, -90, 0], vPecKmS: [1, 1, 1] }));
    const ys = circlesIn(els, "galaxies").map((c) => Number(c.attrs.cy));
    expect(ys[0]!).toBeLessThan(ys[2]!);
    expect(ys[1]!).toBeGreaterThan(ys[2]!);
  });

  it("colours receding galaxies warm and approaching ones cool, on a scale symmetric about zero", () => {
    const els = elements(skyMapSvg({ lDeg: [10, 20, 30], bDeg: [5, 5, 5], vPecKmS: [500, -500, 0] }));
    const rgb = circlesIn(els, "galaxies").map((c) => c.attrs.fill!.match(/\d+/g)!.map(Number));
    expect(rgb[0]![0]!).toBeGreaterThan(rgb[0]![2]!); // red > blue for receding
    expect(rgb[1]![2]!).toBeGreaterThan(rgb[1]![0]!); // blue > red for approaching
    expect(Math.abs(rgb[2]![0]! - rgb[2]![2]!)).toBeLessThan(12); // near-neutral at zero
  });

  it("draws galaxies on both sides of the l = 180 deg seam and skips NaN positions", () => {
    const els = elements(skyMapSvg({ lDeg: [179.9, 180.1, NaN], bDeg: [0, 0, 0], vPecKmS: [1, 1, 1] }));
    const xs = circlesIn(els, "galaxies").map((c) => Number(c.attrs.cx));
    expect(xs).toHaveLength(2);
    const [cx] = centreOf(els);
    // l slightly below 180 is at the far left, slightly above 180 at the far right.
    expect(xs[0]!).toBeLessThan(cx - 300);
    expect(xs[1]!).toBeGreaterThan(cx + 300);
  });

  it("marks fitted and injected directions and stays valid when empty", () => {
    const svg = skyMapSvg({ lDeg: [], bDeg: [], vPecKmS: [], markers: [{ lDeg: 300, bDeg: 20, label: "fit", kind: "fit" }] });
    expect(svg).toContain("no galaxy with a peculiar velocity");
    elements(svg);
  });
});

describe("separationHistogramSvg", () => {
  it("has one bar per non-empty bin and bars whose heights are in proportion to the counts", () => {
    const seps = [0.1, 0.1, 0.1, 0.1, 1.5, 1.5, NaN];
    const els = elements(separationHistogramSvg({ sepArcsec: seps, radiusArcsec: 3, bins: 3 }));
    const bars = els.filter((e) => e.name === "rect" && e.parents.includes("bars"));
    expect(bars).toHaveLength(2);
    const h = bars.map((b) => Number(b.attrs.height));
    expect(h[0]! / h[1]!).toBeCloseTo(2, 1);
  });

  it("draws the chance-pair curve rising with separation when the expected number is given", () => {
    const els = elements(separationHistogramSvg({ sepArcsec: [0.5, 0.7], radiusArcsec: 4, expectedChance: 10, bins: 4 }));
    const d = pathOf(els, "chance-curve")!;
    const ys = d.match(/-?[\d.]+/g)!.map(Number).filter((_, i) => i % 2 === 1);
    for (let k = 1; k < ys.length; k++) expect(ys[k]!).toBeLessThan(ys[k - 1]!); // higher on screen = smaller y
  });

  it("says so when nothing matched", () => {
    expect(separationHistogramSvg({ sepArcsec: [NaN], radiusArcsec: 2 })).toContain("no matched pairs");
  });
});
