/**
 * A catalogue with only some of the contract's columns: the view draws what it can, says "unknown"
 * for the rest, and logs no error.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { mkdirSync } from "node:fs";
import { join } from "node:path";
import type { Page } from "playwright-core";
import type { ViewServer } from "../../src/server/index.js";
import { tempDir } from "../cli-helpers.js";
import { ARTIFACTS, buildWebOnce, launchBrowser, openView, type Browser } from "./browser.js";
import { writeViewCatalogue } from "./catalogue.js";

const ROWS = 400;
const SHOTS = join(ARTIFACTS, "web");

let tmp: { dir: string; cleanup: () => void };
let server: ViewServer;
let browser: Browser;
let page: Page;
let errors: string[];

beforeAll(async () => {
  buildWebOnce();
  mkdirSync(SHOTS, { recursive: true });
  tmp = tempDir("peculiar-view-partial-");
  const file = join(tmp.dir, "positions-only.arrow");
  // Sky positions and distances but no velocities, no flags, no groups, no Cartesian columns.
  writeViewCatalogue(file, { seed: 5, n: ROWS, drop: ["v_pec", "v_pec_err", "cz_cmb", "outlier", "group_id", "group_size", "sgx", "sgy", "sgz", "sgl", "sgb"] });
  browser = await launchBrowser({ width: 1400, height: 1200 });
  ({ server, page, errors } = await openView(browser, file));
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  tmp?.cleanup();
});

describe("the web view of a small catalogue", () => {
  it("draws error bars in the Hubble diagram when there are few points", async () => {
    const file = join(tmp.dir, "few.arrow");
    writeViewCatalogue(file, { seed: 9, n: 120 });
    const { server: s, page: p, errors: errs } = await openView(browser, file);
    try {
      expect(errs).toEqual([]);
      expect(await p.textContent("#panel-hubble footer")).toContain("bars: 1σ distance and velocity");
      await p.locator("#panel-hubble").screenshot({ path: join(SHOTS, "few-hubble.png") });
      await p.locator("#panel-sky").screenshot({ path: join(SHOTS, "few-sky.png") });
    } finally {
      await p.close();
      await s.close();
    }
  });
});

describe("the web view of a partial catalogue", () => {
  it("draws every galaxy on the sky map in the unknown colour and logs no error", async () => {
    expect(errors).toEqual([]);
    expect(await page.getAttribute("#panel-sky", "data-drawn")).toBe(String(ROWS));
    await page.screenshot({ path: join(SHOTS, "partial-page.png"), fullPage: true });
  });

  it("leaves out of the Hubble diagram the galaxies with no velocity and says so", async () => {
    expect(await page.getAttribute("#panel-hubble", "data-drawn")).toBe("0");
    expect(await page.textContent("#panel-hubble footer")).toContain(`${ROWS} with unknown distance or velocity`);
    expect(await page.textContent("#h0-here")).toBe("unknown");
  });

  it("still places galaxies in the slices from the sky position and comoving distance", async () => {
    // sgx, sgy, sgz are rebuilt from l, b (via sgl, sgb) and dist_c_mpc.
    expect(Number(await page.getAttribute("#panel-slice-xy", "data-drawn"))).toBeGreaterThan(0);
  });

  it("shows unknown in the tooltip for the missing values", async () => {
    const lines = (await page.evaluate("window.peculiarView.tooltipLines(0)")) as [string, string][];
    const byKey = new Map(lines);
    expect(byKey.get("v_pec")).toBe("unknown km/s");
    expect(byKey.get("cz (CMB)")).toBe("unknown km/s");
    expect(byKey.get("distance (comoving)")).toMatch(/^\d+\.\d ± \d+\.\d Mpc$/);
  });

  it("says the outlier column is missing and offers no groups", async () => {
    expect(await page.textContent("#panel-outliers .caption")).toContain("no outlier column");
    expect(await page.isDisabled("#group")).toBe(true);
  });
});
