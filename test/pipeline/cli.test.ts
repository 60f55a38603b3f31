import { beforeAll, describe, expect, it } from "vitest";
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { buildOnce, ROOT, runCli } from "../cli-helpers.js";

const SAMPLES = join(ROOT, "sample-catalogues");

/** The sample plan rewritten into `dir` with absolute input paths and some steps changed. */
function samplePlanIn(dir: string, steps: Record<string, unknown>): string {
  const plan = JSON.parse(readFileSync(join(SAMPLES, "plan.json"), "utf8"));
  plan.inputs.redshifts.file = join(SAMPLES, plan.inputs.redshifts.file);
  for (const d of plan.inputs.distances) d.file = join(SAMPLES, d.file);
  plan.truth = join(SAMPLES, plan.truth);
  Object.assign(plan.steps, steps);
  const file = join(dir, "plan.json");
  writeFileSync(file, JSON.stringify(plan));
  return file;
}

describe("peculiar run and peculiar start", () => {
  beforeAll(() => buildOnce());

  it("documents the plan format in run --help", () => {
    const r = runCli(["run", "--help"]);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain("usage: peculiar run PLAN.json [-o OUTDIR]");
    expect(r.stdout).toContain('"plan": "peculiar-plan/1"');
  });

  it("refuses a missing plan argument with a usage error (exit 2)", () => {
    const r = runCli(["run"]);
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split("\n")).toHaveLength(1);
  });

  it("names the plan key that is wrong in one line (exit 1)", () => {
    const dir = mkdtempSync(join(tmpdir(), "peculiar-cli-run-"));
    writeFileSync(join(dir, "plan.json"), JSON.stringify({ inputs: { redshifts: { file: "a.csv" }, distances: [{ file: "b.vot" }] }, steps: { flow: { kappa: 3 } } }));
    const r = runCli(["run", join(dir, "plan.json"), "-o", join(dir, "out")]);
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/plan key steps\.flow\.kappa: unknown key/);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
  });

  it("exits 1 naming the failed step, and keeps the earlier outputs", () => {
    const dir = mkdtempSync(join(tmpdir(), "peculiar-cli-run-"));
    const plan = samplePlanIn(dir, { velocities: { frame: "lg", apex: "no-such-apex" } });
    const r = runCli(["run", plan, "-o", join(dir, "out")], { timeoutMs: 120_000 });
    expect(r.code).toBe(1);
    expect(r.stderr).toMatch(/peculiar run: step 'velocities' failed: unknown apex for frame lg/);
    expect(r.stderr).toMatch(/outputs of match, combine kept in /);
    expect(r.stdout).toBe("");
    expect(existsSync(join(dir, "out", "02-combined.arrow"))).toBe(true);
    expect(JSON.parse(readFileSync(join(dir, "out", "summary.json"), "utf8")).failedStep).toBe("velocities");
  });

  it("start --no-serve runs a plan into the folder and prints its numbers on stderr only", () => {
    const dir = mkdtempSync(join(tmpdir(), "peculiar-cli-start-"));
    const plan = samplePlanIn(dir, { velocities: false });
    const r = runCli(["start", "--no-serve", "--plan", plan, "-o", join(dir, "out")], { timeoutMs: 120_000 });
    expect(r.code).toBe(0);
    expect(r.stdout).toBe("");
    expect(r.stderr).toMatch(/zero-point offset of sorrel against caldera: 0\.\d+ ± 0\.\d+ mag \(truth 0\.15/);
    expect(r.stderr).not.toContain("\x1b["); // no progress drawing when stderr is not a terminal
    const summary = JSON.parse(readFileSync(join(dir, "out", "summary.json"), "utf8"));
    expect(summary.status).toBe("ok");
    expect(summary.steps.map((s: { status: string }) => s.status)).toEqual(["ok", "ok", "skipped", "skipped", "skipped", "skipped", "skipped"]);
  });
});
