/**
 * Headless Chromium for the browser tests and the benchmark: Debian's /usr/bin/chromium driven by
 * playwright-core, a fresh profile folder per launch (removed on close), no network services of its own.
 */
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { existsSync, mkdtempSync, readdirSync, rmSync, statSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { ROOT } from "../cli-helpers.js";
import { startViewServer, type ViewServer } from "../../src/server/index.js";
import { tmpdir } from "node:os";
import { join } from "node:path";

export const CHROMIUM = process.env.PECULIAR_CHROMIUM ?? "/usr/bin/chromium";

export const CHROMIUM_ARGS = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
  "--no-first-run",
];

export interface Browser {
  context: BrowserContext;
  newPage(): Promise<Page>;
  close(): Promise<void>;
}

export async function launchBrowser(viewport = { width: 1600, height: 1400 }): Promise<Browser> {
  const profile = mkdtempSync(join(tmpdir(), "peculiar-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_ARGS,
    viewport,
    acceptDownloads: true,
  });
  return {
    context,
    newPage: () => context.newPage(),
    close: async () => {
      await context.close();
      rmSync(profile, { recursive: true, force: true });
    },
  };
}

/** Console errors and page errors collected from a page, for the "no console errors" check. */
export function collectErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") errors.push(m.text());
  });
  page.on("pageerror", (e) => errors.push(String(e)));
  return errors;
}


function newestMtime(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs);
  }
  return t;
}

/**
 * Serves `file` on a free loopback port, opens it in a new page and waits until the view is ready.
 * The caller closes page and server; if the page does not come up, both are closed here.
 */
export async function openView(browser: Browser, file: string): Promise<{ server: ViewServer; page: Page; errors: string[] }> {
  const server = await startViewServer({ file, port: 0 });
  const page = await browser.newPage();
  const errors = collectErrors(page);
  try {
    await page.goto(server.url);
    await page.waitForSelector("body[data-ready='1']", { timeout: 90_000 });
  } catch (e) {
    await page.close();
    await server.close();
    throw e;
  }
  return { server, page, errors };
}

/** Builds dist/ (CLI and page) unless its scripts are all newer than src/ and web/. */
export function buildWebOnce(): void {
  const built = [join(ROOT, "dist", "web", "app.js"), join(ROOT, "dist", "web", "fit-worker.js"), join(ROOT, "dist", "cli.js")];
  const newest = Math.max(newestMtime(join(ROOT, "src")), newestMtime(join(ROOT, "web")));
  if (built.every((f) => existsSync(f) && statSync(f).mtimeMs >= newest)) return;
  const r = spawnSync(process.execPath, ["scripts/build.mjs"], { cwd: ROOT, encoding: "utf8" });
  if (r.status !== 0) throw new Error(`build failed:\n${r.stdout}\n${r.stderr}`);
}

export const ARTIFACTS = join(ROOT, "test-artifacts");
