// `npm run bench`: bundles every bench/*.bench.ts with esbuild and runs them one after another.
// Each script prints its own table and appends nothing by itself; figures go to bench/RESULTS.md by hand
// (with the command, Node version and machine), so a noisy run never overwrites a recorded one.
import { build } from "esbuild";
import { readdirSync, mkdirSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { join } from "node:path";

const only = process.argv.slice(2);
const scripts = readdirSync("bench").filter((f) => f.endsWith(".bench.ts")).filter((f) => only.length === 0 || only.some((o) => f.includes(o)));
mkdirSync("bench/out", { recursive: true });
let failed = 0;
for (const f of scripts) {
  const outfile = join("bench/out", f.replace(/\.ts$/, ".mjs"));
  await build({ entryPoints: [join("bench", f)], bundle: true, platform: "node", format: "esm", target: "node20", packages: "external", outfile, logLevel: "warning" });
  console.log(`\n== ${f}`);
  const r = spawnSync(process.execPath, ["--expose-gc", outfile], { stdio: "inherit" });
  if (r.status !== 0) failed++;
}
process.exit(failed ? 1 : 0);
