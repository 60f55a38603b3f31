import { describe, expect, it } from "vitest";
import { mkdtemp, readFile, writeFile } from "node:fs/promises";
import { existsSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { failureOf, readPlan, runPlan } from "../../src/pipeline/run.js";

describe("runPlan on a plan whose inputs are missing", () => {
  it("fails in the match step naming the missing file, and still writes the summary and the report", async () => {
    const dir = await mkdtemp(join(tmpdir(), "peculiar-run-"));
    const planFile = join(dir, "plan.json");
    await writeFile(planFile, JSON.stringify({ inputs: { redshifts: { file: "nowhere.csv" }, distances: [{ file: "nothing.vot" }] } }));
    const result = await runPlan(await readPlan(planFile), { outDir: join(dir, "out") });
    expect(result.summary.status).toBe("failed");
    expect(result.summary.failedStep).toBe("match");
    const err = failureOf(result)!;
    expect(err.message).toMatch(/^step 'match' failed: /);
    const summary = JSON.parse(await readFile(join(dir, "out", "summary.json"), "utf8"));
    expect(summary.failedStep).toBe("match");
    expect(summary.steps.map((s: { status: string }) => s.status)).toEqual(["failed", "not run", "not run", "not run", "not run", "not run", "not run"]);
    const report = await readFile(join(dir, "out", "report.md"), "utf8");
    expect(report).toContain("**Step 'match' failed:**");
    expect(existsSync(join(dir, "out", "final.arrow"))).toBe(false);
  });

  it("refuses a plan file that does not exist, naming it", async () => {
    await expect(readPlan("/no/such/plan.json")).rejects.toThrow(/\/no\/such\/plan\.json: no such plan file/);
  });
});
