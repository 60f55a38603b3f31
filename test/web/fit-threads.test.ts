/**
 * The page's re-centring fit on two threads (web/fit-threads.ts, web/fit-worker.ts) in headless
 * Chromium: the view server makes the page cross-origin isolated, the fit worker takes chunks of the
 * passes, and the result is the one-thread result to the last bit.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import type { Page } from "playwright-core";
import { tableFromIPC } from "apache-arrow";
import type { ViewServer } from "../../src/server/index.js";
import { tempDir } from "../cli-helpers.js";
import { buildWebOnce, launchBrowser, openView, type Browser } from "./browser.js";
import { writeViewCatalogue } from "./catalogue.js";
import { viewDataFromTable } from "../../web/data.js";
import { galaxyView, originInputs } from "../../web/origin.js";

/** Enough rows for the kernels to be shared (MIN_SPLIT_ROWS = 32 768 in web/fit-threads.ts). */
const ROWS = 40_000;
/** The same code on the same numbers in Node and in Chromium: agreement to rounding (common practice). */
const REL_TOL = 1e-12;

let tmp: { dir: string; cleanup: () => void };
let file: string;
let server: ViewServer;
let browser: Browser;
let page: Page;
let errors: string[];

interface FitThreads {
  ready: boolean;
  splitRuns: number;
  workerChunks: number;
}

async function view<T>(fn: string): Promise<T> {
  return page.evaluate(`(() => { const v = window.peculiarView; return ${fn}; })()`) as Promise<T>;
}

beforeAll(async () => {
  buildWebOnce();
  tmp = tempDir("peculiar-fit-threads-");
  file = join(tmp.dir, "flowfield.arrow");
  writeViewCatalogue(file, { seed: 20261202, n: ROWS });
  browser = await launchBrowser();
  ({ server, page, errors } = await openView(browser, file));
  await page.waitForFunction(`window.peculiarView.fitThreads()?.ready === true`, undefined, { timeout: 30_000 });
});

afterAll(async () => {
  await browser?.close();
  await server?.close();
  tmp?.cleanup();
});

describe("the page's re-centring fit on two threads", () => {
  const rows = [17, 4321, 12345, ROWS - 2];

  it("runs in a cross-origin isolated page with its fit worker started", async () => {
    expect(errors).toEqual([]);
    expect(await page.evaluate("crossOriginIsolated")).toBe(true);
    expect((await view<FitThreads>("v.fitThreads()")).ready).toBe(true);
  });

  it("gives a group's fit (its members left out) to the last bit on two threads", async () => {
    const fits = await view<{ two: number[][]; one: number[][] }>(`(() => {
      const fit = () => [v.state.origin.h0, v.state.origin.h0Err, ...v.state.origin.dipole, v.state.origin.nUsed];
      const ids = [...new Set(Array.from(v.state.data.groupId))].filter((g) => g > 0).slice(0, 3);
      const two = [], one = [];
      for (const on of [true, false]) {
        v.useFitThreads(on);
        for (const id of ids) {
          v.recentreOnGroup(id);
          (on ? two : one).push(fit());
        }
      }
      v.useFitThreads(true);
      v.goHome();
      return { two, one };
    })()`);
    expect(fits.two.length).toBeGreaterThan(0);
    expect(fits.two).toEqual(fits.one);
  });

  it("gives the one-thread fit to the last bit, with chunks summed by the worker", async () => {
    const fits = await view<{ two: number[][]; one: number[][]; threads: FitThreads }>(`(() => {
      const fit = () => [v.state.origin.h0, v.state.origin.h0Err, ...v.state.origin.dipole, v.state.origin.nUsed];
      const two = [], one = [];
      for (const row of ${JSON.stringify(rows)}) {
        v.useFitThreads(true);
        v.recentreOn(row);
        two.push(fit());
        v.useFitThreads(false);
        v.recentreOn(row);
        one.push(fit());
      }
      v.useFitThreads(true);
      v.goHome();
      return { two, one, threads: v.fitThreads() };
    })()`);
    expect(fits.two).toEqual(fits.one);
    expect(fits.threads.splitRuns).toBeGreaterThan(4 * 3);
    expect(fits.threads.workerChunks).toBeGreaterThan(0);
    // and the library in Node on the same catalogue (one thread) gives the same numbers
    const d = viewDataFromTable(tableFromIPC(readFileSync(file)));
    const inp = originInputs(d);
    rows.forEach((row, k) => {
      const o = galaxyView(inp, row, d.ids[row]!);
      const node = [o.h0, o.h0Err, ...o.dipole, o.nUsed];
      node.forEach((x, j) => expect(Math.abs(fits.two[k]![j]! - x)).toBeLessThanOrEqual(REL_TOL * Math.abs(x)));
    });
  });

  it("draws the Hubble diagram's and the slices' points on the worker with the pixels the page alone draws", async () => {
    const r = await view<{ two: string[]; one: string[]; there: number; here: number }>(`(() => {
      const hash = () =>
        ["hubble", "slice-xy", "slice-xz", "slice-yz"]
          .map((name) => {
            const p = v.panels[name];
            const d = p.canvas.getContext("2d").getImageData(0, 0, p.canvas.width, p.canvas.height).data;
            let h = 2166136261 >>> 0;
            for (let i = 0; i < d.length; i++) h = Math.imul(h ^ d[i], 16777619) >>> 0;
            return name + " " + h.toString(16) + " " + p.drawn;
          })
          .join(", ");
      const before = v.fitThreads();
      const two = [], one = [];
      // without and with a selection (dimmed points, selected points and rings drawn over the worker's)
      for (const selection of [[], Array.from({ length: 300 }, (_, i) => i * 131)]) {
        v.select(selection);
        for (const row of ${JSON.stringify(rows)}) {
          v.useFitThreads(true);
          v.recentreOn(row);
          two.push(hash());
          v.useFitThreads(false);
          v.recentreOn(row);
          one.push(hash());
        }
      }
      v.select([]);
      v.useFitThreads(true);
      v.goHome();
      const after = v.fitThreads();
      return { two, one, there: after.drawJobsThere - before.drawJobsThere, here: after.drawJobsHere - before.drawJobsHere };
    })()`);
    expect(r.two).toEqual(r.one);
    // each re-centring with the worker handed three jobs on (two slices, the Hubble diagram); the page runs a job the worker has not
    // taken by the time it needs it (a worker without a free core), so only some need be the worker's
    expect(r.there + r.here).toBeGreaterThanOrEqual(2 * 3 * rows.length);
    expect(r.there).toBeGreaterThan(0);
  });
});
