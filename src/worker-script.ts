/**
 * The bundled worker scripts (dist/helper-worker.js) are
 * found next to the code that runs: from dist/ or from dist/chunks/. Undefined where there is none
 * (the sources run directly, as under vitest): callers then do the work on their own thread. Node only.
 */
import { existsSync } from "node:fs";
import { fileURLToPath } from "node:url";

export function workerScript(file: string): URL | undefined {
  for (const rel of [`./${file}`, `../${file}`]) {
    const u = new URL(rel, import.meta.url);
    if (u.protocol === "file:" && existsSync(fileURLToPath(u))) return u;
  }
  return undefined;
}
