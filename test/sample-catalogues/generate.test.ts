import { describe, expect, it } from "vitest";
import { mkdtemp, readFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { generateSamples, SAMPLE_FILES } from "../../sample-catalogues/generate.js";

const COMMITTED = join(__dirname, "..", "..", "sample-catalogues");

describe("the sample generator", () => {
  it("writes the committed sample files byte for byte from the committed seed", async () => {
    const dir = await mkdtemp(join(tmpdir(), "peculiar-samples-"));
    await generateSamples(dir);
    for (const name of Object.values(SAMPLE_FILES)) {
      const fresh = await readFile(join(dir, name));
      const committed = await readFile(join(COMMITTED, name));
      expect(fresh.equals(committed), `${name} differs from a fresh run; run 'npm run samples' and commit`).toBe(true);
    }
  });
});
