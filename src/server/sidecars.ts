/**
 * JSON sidecars: the small JSON files that sit next to a catalogue (a match report, a flow summary,
 * a pipeline summary). The view lists them and fetches each one; the page decides what each is by
 * its content, so a sidecar needs no registry of names.
 *
 * A sidecar is a `.json` file in the catalogue's folder whose name starts with the catalogue's stem
 * (e.g. `merged.arrow` -> `merged.match.json`, `merged-flow.json`), or any `.json` file in that folder
 * when `allInFolder` is set (the pipeline writes its reports beside its tables).
 */
import { readdirSync, statSync } from "node:fs";
import { basename, dirname, extname, join } from "node:path";

/** Sidecars larger than this are left out (the view loads each one whole). */
export const MAX_SIDECAR_BYTES = 32 * 1024 * 1024;
export const MAX_SIDECARS = 64;

export interface Sidecar {
  /** File name (no folder): also the name under /sidecars/ on the server. */
  name: string;
  path: string;
  bytes: number;
}

/** The catalogue's stem: `merged.arrow` -> `merged`, `a.b.fits` -> `a.b`. */
export function catalogueStem(file: string): string {
  const b = basename(file);
  const e = extname(b);
  return e ? b.slice(0, -e.length) : b;
}

export function findSidecars(file: string, allInFolder = false): Sidecar[] {
  const dir = dirname(file);
  const stem = catalogueStem(file);
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return [];
  }
  const out: Sidecar[] = [];
  for (const name of names.sort()) {
    if (!name.toLowerCase().endsWith(".json")) continue;
    if (!allInFolder && !name.startsWith(stem)) continue;
    const path = join(dir, name);
    let bytes: number;
    try {
      const st = statSync(path);
      if (!st.isFile()) continue;
      bytes = st.size;
    } catch {
      continue;
    }
    if (bytes > MAX_SIDECAR_BYTES) continue;
    out.push({ name, path, bytes });
    if (out.length >= MAX_SIDECARS) break;
  }
  return out;
}
