/**
 * Running the built CLI from tests: `node dist/cli.js ARGS` in a child process.
 * Call `buildOnce()` in a beforeAll (it runs `npm run build` once per test process unless
 * dist/cli.js is newer than every file in src/), then `runCli([...])`.
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";

export const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), "..");
export const CLI = join(ROOT, "dist", "cli.js");

export interface CliResult {
  code: number;
  stdout: string;
  stderr: string;
}

export interface CliOptions {
  cwd?: string;
  input?: string;
  env?: Record<string, string>;
  timeoutMs?: number;
}

/** Runs `node dist/cli.js ...args`; never throws on a non-zero exit. */
export function runCli(args: string[], options: CliOptions = {}): CliResult {
  const r = spawnSync(process.execPath, [CLI, ...args], {
    cwd: options.cwd ?? ROOT,
    input: options.input,
    env: { ...process.env, ...(options.env ?? {}) },
    encoding: "utf8",
    timeout: options.timeoutMs ?? 60_000,
  });
  if (r.error) throw r.error;
  return { code: r.status ?? (r.signal ? 128 : 1), stdout: r.stdout, stderr: r.stderr };
}

function newestMtime(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs);
  }
  return t;
}

let built = false;

const isFresh = () => existsSync(CLI) && statSync(CLI).mtimeMs >= newestMtime(join(ROOT, "src"));
const sleep = (ms: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);

/**
 * Builds dist/ with `npm run build` unless dist/cli.js is newer than src/ (once per process).
 * Test files run in parallel processes: a lock folder makes one build while the others wait.
 */
export function buildOnce(): void {
  if (built) return;
  const lock = join(ROOT, "dist", ".build-lock");
  const deadline = Date.now() + 120_000;
  while (!isFresh()) {
    try {
      mkdirSync(join(ROOT, "dist"), { recursive: true });
      mkdirSync(lock);
    } catch {
      // Another process builds; a lock older than two minutes is stale.
      try {
        if (Date.now() - statSync(lock).mtimeMs > 120_000) rmSync(lock, { recursive: true, force: true });
      } catch {
        /* gone meanwhile */
      }
      if (Date.now() > deadline) throw new Error("timed out waiting for another test process to build dist/");
      sleep(200);
      continue;
    }
    try {
      if (!isFresh()) {
        const r = spawnSync("npm", ["run", "build", "--silent"], { cwd: ROOT, encoding: "utf8" });
        if (r.status !== 0) throw new Error(`npm run build failed:\n${r.stdout}\n${r.stderr}`);
      }
    } finally {
      rmSync(lock, { recursive: true, force: true });
    }
    break;
  }
  built = true;
}

/** A fresh temporary folder and a function that removes it. */
export function tempDir(prefix = "peculiar-test-"): { dir: string; cleanup: () => void } {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  return { dir, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}
