/**
 * The web view in headless Chromium: the page served by startViewServer from a seeded test catalogue,
 * driven through playwright-core. Screenshots of every panel go to test-artifacts/web/.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import type { Page } from "playwright-core";
import type { ViewServer } from "../../src/server/index.js";
import { runCli, tempDir } from "../cli-helpers.js";
import { ARTIFACTS, buildWebOnce, launchBrowser, openView, type Browser } from "./browser.js";
import { writeViewCatalogue } from "./catalogue.js";
import { tableFromIPC } from "apache-arrow";
import { viewDataFromTable } from "../../web/data.js";
import { galaxyView, originInputs } from "../../web/origin.js";

const ROWS = 3000;
/** Screen positions are compared to within this many CSS pixels (d3-geo resamples; common practice). */
const PIXEL_TOL = 1.5;
/** H0 in the page and from the CLI come from the same code on the same numbers: agreement to rounding. */
const H0_REL_TOL = 1e-9;

const SHOTS = join(ARTIFACTS, "web");

interface PageView {
  state: { nSelected: number; origin: { kind: string; row: number; h0: number } };
  project(lon: number, lat: number): { x: number; y: number } | null;
  clientPosition(panel: string, row: number): { x: number; y: number } | null;
  tooltipLines(row: number): [string, string][];
  lastExport: { name: string; bytes: number; type: string };
}

let tmp: { dir: string; cleanup: () => void };
let file: string;
let server: ViewServer;
let browser: Browser;
let page: Page;
let errors: string[];

async function view<T>(fn: string): Promise<T> {
  return page.evaluate(`(() => { const v = window.peculiarView; return ${fn}; })()`) as Promise<T>;
}

/** A seeded match report: Rayleigh-distributed true pairs (sigma 0.6 arcsec) plus a uniform background. */
function matchReport(): unknown {
  const R = 3;
  const bins = 30;
  const edges = Array.from({ length: bins + 1 }, (_, i) => (i * R) / bins);
  const sigma = 0.6;
  const nTrue = 2500;
  const chance = 40;
  const counts = edges.slice(0, -1).map((r1, i) => {
    const r2 = edges[i + 1]!;
    const f = Math.exp(-(r1 * r1) / (2 * sigma * sigma)) - Math.exp(-(r2 * r2) / (2 * sigma * sigma));
    return Math.round(nTrue * f + (chance * (r2 * r2 - r1 * r1)) / (R * R));
  });
  // The layout written by 'peculiar match --report'.
  return {
    command: "match",
    settings: { radiusArcsec: R, select: "nearest" },
    counts: { rowsA: 3000, rowsB: 2800, matchedPairs: 2540, unmatchedA: 460, unmatchedB: 260, ambiguous: 12 },
    histogram: { binEdgesArcsec: edges, counts },
    chance: { expectedChancePairs: chance },
    suggestedRadius: { suggestedArcsec: 1.82, sigmaArcsec: 0.6 },
  };
}

/** A row drawn on the sky map with no other galaxy within the pick radius (so a click picks it). */
async function pickClickableRow(skip = 0): Promise<number> {
  return view<number>(`(() => {
    const p = v.panels.sky; let found = 0;
    for (let i = 0; i < p.px.length; i++) {
      if (!Number.isFinite(p.px[i])) continue;
      if (v.state.data.outlier[i] || !(v.state.data.col.dist_c_mpc[i] > 20)) continue;
      let alone = true;
      for (let j = 0; j < p.px.length && alone; j++) if (j !== i && Math.hypot(p.px[j] - p.px[i], p.py[j] - p.py[i]) < 8) alone = false;
      if (alone && found++ === ${skip}) return i;
    }
    return -1;
  })()`);
}

beforeAll(async () => {
  buildWebOnce();
  mkdirSync(SHOTS, { recursive: true });
  tmp = tempDir("peculiar-view-");
  file = join(tmp.dir, "flowfield.arrow");
  writeViewCatalogue(file, { seed: 20261201, n: ROWS });
  writeFileSync(join(tmp.dir, "flowfield.match.json"), JSON.stringify(matchReport()));
  browser = await launchBrowser();
  ({ server, page, errors } = await openView(browser, file));
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  tmp?.cleanup();
});

describe("the web view", () => {
  it("loads without console errors and draws every row on the sky map", async () => {
    expect(errors).toEqual([]);
    expect(await page.getAttribute("body", "data-rows")).toBe(String(ROWS));
    expect(await page.getAttribute("#panel-sky", "data-drawn")).toBe(String(ROWS));
    expect(await page.getAttribute("#panel-hubble", "data-drawn")).toBe(String(ROWS));
  });

  it("puts the Galactic centre at the map's centre and the poles at its top and bottom", async () => {
    const box = await page.locator("#panel-sky svg.overlay path").nth(1).evaluate((el) => {
      const b = (el as SVGGraphicsElement).getBoundingClientRect();
      return { x: b.left, y: b.top, w: b.width, h: b.height };
    });
    const cx = box.x + box.w / 2;
    const cy = box.y + box.h / 2;
    const gc = await view<{ x: number; y: number }>("v.project(0, 0)");
    const north = await view<{ x: number; y: number }>("v.project(0, 90)");
    const south = await view<{ x: number; y: number }>("v.project(0, -90)");
    const l90 = await view<{ x: number; y: number }>("v.project(90, 0)");
    expect(Math.abs(gc.x - cx)).toBeLessThan(PIXEL_TOL);
    expect(Math.abs(gc.y - cy)).toBeLessThan(PIXEL_TOL);
    expect(Math.abs(north.x - cx)).toBeLessThan(PIXEL_TOL);
    expect(Math.abs(north.y - box.y)).toBeLessThan(PIXEL_TOL);
    expect(Math.abs(south.x - cx)).toBeLessThan(PIXEL_TOL);
    expect(Math.abs(south.y - (box.y + box.h)).valueOf()).toBeLessThan(PIXEL_TOL);
    // Longitude grows to the left, as the sky is seen from inside (common practice for all-sky maps).
    expect(l90.x).toBeLessThan(gc.x);
  });

  it("re-centres on a clicked galaxy with the H0 that the library computes there", async () => {
    const row = await pickClickableRow();
    const at = await view<{ x: number; y: number }>(`v.clientPosition("sky", ${row})`);
    await page.mouse.click(at.x, at.y);
    await page.waitForSelector("body[data-origin='galaxy']");
    expect(await page.getAttribute("body", "data-origin-row")).toBe(String(row));
    const h0Page = Number(await page.getAttribute("body", "data-h0-there"));
    // The same library code in Node on the same catalogue (the view's data and origin modules).
    const table = tableFromIPC(readFileSync(file));
    const d = viewDataFromTable(table);
    const o = galaxyView(originInputs(d), row, d.ids[row]!);
    expect(Math.abs(h0Page - o.h0) / o.h0).toBeLessThan(H0_REL_TOL);
    expect(await page.textContent("#origin")).toBe(`galaxy ${d.ids[row]}`);
    await page.screenshot({ path: join(SHOTS, "recentred-page.png"), fullPage: true });
    for (const id of ["hubble", "slice-xy"]) await page.locator(`#panel-${id}`).screenshot({ path: join(SHOTS, `recentred-${id}.png`) });
  });

  it("shows for a clicked galaxy the H0 that 'peculiar recentre --on ID --json' prints, here and there", async () => {
    const row = await pickClickableRow(1);
    const at = await view<{ x: number; y: number }>(`v.clientPosition("sky", ${row})`);
    await page.mouse.click(at.x, at.y);
    await page.waitForSelector(`body[data-origin-row='${row}']`);
    const h0Page = Number(await page.getAttribute("body", "data-h0-there"));
    const id = (await view<[string, string][]>(`v.tooltipLines(${row})`))[0]![1];
    const r = runCli(["recentre", file, "--on", id, "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as { h0_here: { value: number; error: number }; h0_there: { value: number; error: number } };
    expect(Math.abs(h0Page - out.h0_there.value) / out.h0_there.value).toBeLessThan(H0_REL_TOL);
    const h0Here = Number(await page.getAttribute("body", "data-h0-here"));
    expect(Math.abs(h0Here - out.h0_here.value) / out.h0_here.value).toBeLessThan(H0_REL_TOL);
    expect(Math.abs(Number(await page.getAttribute("body", "data-h0-there-err")) - out.h0_there.error) / out.h0_there.error).toBeLessThan(H0_REL_TOL);
  });

  it("re-centres on a group picked from the list and goes back home in one click", async () => {
    const groupValue = await page.locator("#group option").nth(1).getAttribute("value");
    expect(groupValue).not.toBeNull();
    await page.selectOption("#group", groupValue!);
    await page.waitForSelector("body[data-origin='group']");
    const h0Page = Number(await page.getAttribute("body", "data-h0-there"));
    const r = runCli(["recentre", file, "--on", `group:${groupValue}`, "--json"]);
    expect(r.code, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as { h0_there: { value: number } };
    expect(Math.abs(h0Page - out.h0_there.value) / out.h0_there.value).toBeLessThan(H0_REL_TOL);
    await page.locator("#panel-slice-xy").screenshot({ path: join(SHOTS, "recentred-group-slice-xy.png") });
    await page.click("#home");
    await page.waitForSelector("body[data-origin='home']");
    expect(await page.getAttribute("body", "data-h0-there")).toBe("");
  });

  it("brushing in the sky map selects the same galaxies in every panel and lists them", async () => {
    const box = (await page.locator("#panel-sky canvas").boundingBox())!;
    // Whole pixels: Chromium delivers pointer positions in whole CSS pixels.
    const x0 = Math.round(box.x + box.width * 0.4);
    const y0 = Math.round(box.y + box.height * 0.3);
    await page.mouse.move(x0, y0);
    await page.mouse.down();
    await page.mouse.move(x0 + 60, y0 + 40, { steps: 4 });
    await page.mouse.move(x0 + 120, y0 + 80, { steps: 4 });
    await page.mouse.up();
    const n = await view<number>("v.state.nSelected");
    expect(n).toBeGreaterThan(0);
    expect(await page.getAttribute("#panel-selection", "data-rows")).toBe(String(n));
    // Every selected row lies inside the rectangle on the sky map.
    const inside = await view<boolean>(`Array.from(v.state.selectedRows).every((i) => { const p = v.clientPosition("sky", i); return p && p.x >= ${x0 - PIXEL_TOL} && p.x <= ${x0 + 120 + PIXEL_TOL} && p.y >= ${y0 - PIXEL_TOL} && p.y <= ${y0 + 80 + PIXEL_TOL}; })`);
    expect(inside).toBe(true);
    await page.screenshot({ path: join(SHOTS, "selection-page.png"), fullPage: true });
    await page.click("#panel-selection button");
    expect(await view<number>("v.state.nSelected")).toBe(0);
  });

  it("shows a tooltip with id, position, cz, distance and v_pec with its error", async () => {
    const row = await pickClickableRow(2);
    const at = await view<{ x: number; y: number }>(`v.clientPosition("sky", ${row})`);
    await page.mouse.move(at.x, at.y);
    const tip = page.locator(".tooltip");
    await tip.waitFor({ state: "visible" });
    const text = (await tip.textContent())!;
    const id = (await view<[string, string][]>(`v.tooltipLines(${row})`))[0]![1];
    expect(text).toContain(id);
    for (const key of ["l, b", "cz (CMB)", "distance (comoving)", "v_pec"]) expect(text).toContain(key);
    expect(text).toMatch(/v_pec[^]*±/);
    await page.screenshot({ path: join(SHOTS, "tooltip.png"), clip: { x: Math.max(0, at.x - 200), y: Math.max(0, at.y - 100), width: 700, height: 320 } });
    await page.mouse.move(1, 1);
  });

  it("switches the sky map to supergalactic coordinates with the supergalactic plane on the equator", async () => {
    await page.selectOption("#frame", "supergalactic");
    const c = await view<{ x: number; y: number }>("v.project(0, 0)");
    const e = await view<{ x: number; y: number }>("v.project(90, 0)");
    expect(Math.abs(c.y - e.y)).toBeLessThan(PIXEL_TOL);
    expect(await page.getAttribute("#panel-sky", "data-drawn")).toBe(String(ROWS));
    await page.locator("#panel-sky").screenshot({ path: join(SHOTS, "panel-sky-supergalactic.png") });
    await page.selectOption("#projection", "mollweide");
    await page.locator("#panel-sky").screenshot({ path: join(SHOTS, "panel-sky-supergalactic-mollweide.png") });
    await page.selectOption("#frame", "galactic");
    await page.selectOption("#projection", "hammer");
  });

  it("shows the match diagnostics with the radius, the suggested radius and the chance-match curve", async () => {
    expect(await page.getAttribute("body", "data-match-panel")).toBe("1");
    const text = (await page.textContent("#panel-match"))!;
    expect(text).toContain("radius 3.00″");
    expect(text).toContain("suggested 1.82″");
    expect(text).toContain("expected chance matches (40.0 within the radius)");
    expect(await page.locator("#panel-match rect.bin").count()).toBe(30);
  });

  it("thins the slices as the slab gets thinner", async () => {
    const inSlab = async () => Number(await page.getAttribute("#panel-slice-xy", "data-drawn"));
    const slab = page.locator("#slab");
    await slab.fill("10");
    const thin = await inSlab();
    await slab.fill("200");
    const thick = await inSlab();
    expect(thin).toBeGreaterThan(0);
    expect(thick).toBeGreaterThan(thin);
    await slab.fill("34");
  });

  it("exports each panel as SVG and PNG", async () => {
    for (const id of ["sky", "hubble", "slice-xy", "match"]) {
      for (const kind of ["SVG", "PNG"]) {
        const [dl] = await Promise.all([page.waitForEvent("download"), page.click(`#panel-${id} .tools button:text-is("${kind}")`)]);
        const path = join(SHOTS, `export-${dl.suggestedFilename()}`);
        await dl.saveAs(path);
        const bytes = readFileSync(path);
        expect(bytes.length).toBeGreaterThan(1000);
        if (kind === "SVG") {
          expect(bytes.subarray(0, 200).toString("utf8")).toMatch(/^<svg xmlns/);
          if (id === "hubble") {
            // both panels' points as vector squares: the diagram's and the residuals' (3000 rows <= 5000)
            const drawn = Number(await page.getAttribute("#panel-hubble", "data-drawn"));
            const squares = (bytes.toString("utf8").match(/<rect x="/g) ?? []).length;
            expect(squares).toBeGreaterThanOrEqual(2 * drawn);
          }
          // The file stands alone: Chromium renders it (screenshot kept to look at).
          const viewer = await browser.newPage();
          await viewer.goto(`file://${path}`);
          await viewer.screenshot({ path: `${path}.png` });
          await viewer.close();
        } else expect(bytes.subarray(1, 4).toString("latin1")).toBe("PNG");
      }
    }
  });

  it("saves a screenshot of every panel", async () => {
    await page.screenshot({ path: join(SHOTS, "page.png"), fullPage: true });
    for (const id of ["sky", "hubble", "slice-xy", "slice-xz", "slice-yz", "selection", "outliers", "match"]) {
      await page.locator(`#panel-${id}`).screenshot({ path: join(SHOTS, `panel-${id}.png`) });
    }
  });
});
