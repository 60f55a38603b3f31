// `npm run samples [-- OUTDIR]`: bundles generate.ts with esbuild (Node 20 cannot run .ts) and
// writes the sample catalogues and truth.json into OUTDIR (default: this folder).
import { build } from "esbuild";
import { mkdirSync, rmSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";

const here = dirname(fileURLToPath(import.meta.url));
const outDir = resolve(process.argv[2] ?? here);
mkdirSync(outDir, { recursive: true });
const bundle = join(here, ".generate.bundle.mjs");
await build({
  stdin: { contents: `import { generateSamples } from "./generate.ts";\nawait generateSamples(process.argv[2]);\n`, resolveDir: here, sourcefile: "entry.ts", loader: "ts" },
  bundle: true,
  platform: "node",
  format: "esm",
  target: "node20",
  packages: "external",
  outfile: bundle,
  logLevel: "warning",
});
const r = spawnSync(process.execPath, [bundle, outDir], { stdio: "inherit" });
rmSync(bundle, { force: true });
if (r.status === 0) console.error(`samples: written to ${outDir}`);
process.exit(r.status ?? 1);
