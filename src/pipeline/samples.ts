/** Where the bundled sample catalogues are: next to the package root, found from the compiled or the source code. */
import { existsSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { PeculiarError } from "../errors.js";

export function samplePlanPath(): string {
  const here = fileURLToPath(new URL(".", import.meta.url));
  // dist/cli.js -> ../sample-catalogues; src/pipeline/samples.ts -> ../../sample-catalogues
  const candidates = [join(here, "..", "sample-catalogues", "plan.json"), join(here, "..", "..", "sample-catalogues", "plan.json")];
  for (const c of candidates) if (existsSync(c)) return c;
  throw new PeculiarError("io", "the sample plan is missing (sample-catalogues/plan.json); run 'npm run samples'", { file: candidates[0] });
}
