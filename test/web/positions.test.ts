/**
 * Catalogues whose rows lack what an origin needs: a table of RA/Dec alone is drawn (the server adds
 * l, b, sgl, sgb from the positions), and a galaxy without a distance is no origin (a click on it
 * leaves the view where it was and says why). Our own rules (DEVELOPERS.md "Web view").
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeFileSync } from "node:fs";
import { join } from "node:path";
import type { ViewServer } from "../../src/server/index.js";
import { tempDir } from "../cli-helpers.js";
import { buildWebOnce, launchBrowser, openView, type Browser } from "./browser.js";
import { writeViewCatalogue } from "./catalogue.js";

const ROWS = 300;

let tmp: { dir: string; cleanup: () => void };
let browser: Browser;
const servers: ViewServer[] = [];

beforeAll(async () => {
  buildWebOnce();
  tmp = tempDir("peculiar-view-positions-");
  browser = await launchBrowser({ width: 1400, height: 1200 });
});

afterAll(async () => {
  await browser?.close();
  for (const s of servers) await s.close();
  tmp?.cleanup();
});

describe("the web view of rows without a frame or a distance", () => {
  it("draws a hand-made table of RA, Dec, cz, distance and v_pec on every panel", async () => {
    // invented rows: 40 galaxies on a seeded spiral of positions, v = 70 d + 300 km/s
    const rows = Array.from({ length: 40 }, (_, i) => {
      const d = 20 + i * 1.5;
      return `s${i},${((i * 47) % 360).toFixed(2)},${(((i * 29) % 120) - 60).toFixed(2)},${(70 * d + 300).toFixed(1)},${d.toFixed(2)},${(0.1 * d).toFixed(2)},300`;
    });
    const file = join(tmp.dir, "hand.csv");
    writeFileSync(file, ["id,ra,dec,cz_cmb,dist_c_mpc,dist_c_err_mpc,v_pec", ...rows].join("\n") + "\n");
    const { server, page, errors } = await openView(browser, file);
    servers.push(server);
    expect(errors).toEqual([]);
    expect(await page.getAttribute("#panel-sky", "data-drawn")).toBe("40");
    expect(await page.getAttribute("#panel-hubble", "data-drawn")).toBe("40");
    expect(Number(await page.getAttribute("#panel-slice-xy", "data-drawn"))).toBeGreaterThan(0);
  });

  it("does not re-centre on a clicked galaxy that has no distance, and says why", async () => {
    const file = join(tmp.dir, "nodist.arrow");
    writeViewCatalogue(file, { seed: 9, n: ROWS, drop: ["dist_c_mpc", "dist_c_err_mpc", "dist_mpc", "dist_err_mpc", "sgx", "sgy", "sgz"] });
    const { server, page, errors } = await openView(browser, file);
    servers.push(server);
    const v = (fn: string) => page.evaluate(`(() => { const v = window.peculiarView; return ${fn}; })()`);
    const row = (await v("v.panels.sky.px.findIndex((x) => Number.isFinite(x))")) as number;
    expect(row).toBeGreaterThanOrEqual(0);
    const at = (await v(`v.clientPosition("sky", ${row})`)) as { x: number; y: number };
    await page.mouse.click(at.x, at.y);
    await page.waitForFunction(() => /cannot be an origin/.test(document.getElementById("status")?.textContent ?? ""));
    expect(await page.getAttribute("body", "data-origin")).toBe("home");
    expect(errors).toEqual([]);
  });
  it("resets a zoomed slice on a double click without re-centring, and re-centres on a single click", async () => {
    const file = join(tmp.dir, "zoom.arrow");
    writeViewCatalogue(file, { seed: 12, n: ROWS });
    const { server, page, errors } = await openView(browser, file);
    servers.push(server);
    const v = (fn: string) => page.evaluate(`(() => { const v = window.peculiarView; return ${fn}; })()`);
    const box = (await page.locator("#panel-slice-xy canvas").boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.wheel(0, -600);
    // a galaxy drawn inside the zoomed slice
    const at = (await v(`(() => { const p = v.panels["slice-xy"]; for (let i = 0; i < p.px.length; i++) if (Number.isFinite(p.px[i]) && p.px[i] > 40 && p.py[i] > 40) return v.clientPosition("slice-xy", i); return null; })()`)) as { x: number; y: number } | null;
    expect(at).not.toBeNull();
    await page.mouse.dblclick(at!.x, at!.y);
    await page.waitForTimeout(500);
    expect(await page.getAttribute("body", "data-origin")).toBe("home");
    // zoomed again, one click re-centres (after the double-click wait)
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.wheel(0, -600);
    const at2 = (await v(`(() => { const p = v.panels["slice-xy"]; for (let i = 0; i < p.px.length; i++) if (Number.isFinite(p.px[i]) && p.px[i] > 40 && p.py[i] > 40) return v.clientPosition("slice-xy", i); return null; })()`)) as { x: number; y: number };
    await page.mouse.click(at2.x, at2.y);
    await page.waitForSelector("body[data-origin='galaxy']");
    expect(errors).toEqual([]);
  });
});
