// Compiles the library, the CLI and the browser bundle with esbuild.
// Runs on `npm install` (prepare) so a fresh clone has a working `peculiar` bin.
import { build } from "esbuild";
import { chmodSync, mkdirSync, copyFileSync, existsSync, readdirSync, rmSync } from "node:fs";
import { join } from "node:path";

const node = {
  bundle: true,
  platform: "node",
  format: "esm",
  target: "node20",
  packages: "external",
  sourcemap: true,
  logLevel: "warning",
};

// Code splitting keeps each command's dependencies (arrow, d3, XML, ...) out of start-up: the command
// table imports commands lazily, and with splitting each lands in its own chunk under dist/chunks/.
rmSync("dist/chunks", { recursive: true, force: true });
// dist/helper-worker.js: the helper threads (src/helper-threads.ts finds it next to the chunks), shared by every job
// run off the calling thread: reading a second input ahead, cross-match bands, half of a large CSV output.
// The CLI and its helper carry apache-arrow in the bundle: as ~160 separate ES modules it cost about
// 0.2 s of every start-up. The library entry keeps it external, so that a caller's own Arrow tables
// are the same classes as ours.
const cliExternal = { ...node, packages: undefined, external: ["d3", "d3-*", "kdbush", "geokdbush", "saxes", "playwright-core"] };
await build({ ...cliExternal, entryPoints: { cli: "src/cli/main.ts", "helper-worker": "src/helper-worker.ts" }, outdir: "dist", splitting: true, chunkNames: "chunks/[name]-[hash]" });
await build({ ...node, entryPoints: { index: "src/index.ts" }, outdir: "dist" });
chmodSync("dist/cli.js", 0o755);

// The web view: one browser bundle (d3, apache-arrow and our browser-safe modules) plus static files.
if (existsSync("web/main.ts")) {
  mkdirSync("dist/web", { recursive: true });
  await build({
    bundle: true,
    platform: "browser",
    format: "esm",
    target: "es2022",
    sourcemap: true,
    minify: true,
    logLevel: "warning",
    entryPoints: { app: "web/main.ts", "fit-worker": "web/fit-worker.ts" },
    outdir: "dist/web",
  });
  for (const f of readdirSync("web")) {
    if (/\.(html|css|svg)$/.test(f)) copyFileSync(join("web", f), join("dist/web", f));
  }
}
