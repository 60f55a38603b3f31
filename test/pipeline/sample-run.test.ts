/**
 * The whole job on the bundled sample catalogues. The truth is the generator's input
 * (sample-catalogues/truth.json, written by sample-catalogues/generate.ts from its seed), so these
 * are statistical recovery checks: each recovered number must lie within SIGMA_LIMIT of its own
 * reported 1-sigma error from the injected value.
 */
import { beforeAll, describe, expect, it } from "vitest";
import { mkdtemp, readFile, writeFile } from "node:fs/promises";
import { existsSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { readTable } from "../../src/catalogue/io.js";
import { failureOf, readPlan, runPlan, type RunResult } from "../../src/pipeline/run.js";
import { formatWithError, type RunSummary } from "../../src/pipeline/report.js";
import { samplePlanPath } from "../../src/pipeline/samples.js";
import type { Truth } from "../../src/pipeline/truth.js";

/**
 * 3 sigma per quantity. About ten quantities are checked at once: at 2 sigma each, a perfectly
 * calibrated pipeline would fail one of them in about 40 % of seeds (1 - 0.954^10); at 3 sigma in
 * about 3 % (1 - 0.9973^10). Gaussian coverage figures: common practice. The n-sigma of every
 * quantity on the committed sample is printed in the report and recorded in sample-catalogues/README.md.
 */
const SIGMA_LIMIT = 3;

let result: RunResult;
let summary: RunSummary;
let truth: Truth;
let outDir: string;

beforeAll(async () => {
  outDir = await mkdtemp(join(tmpdir(), "peculiar-sample-run-"));
  const plan = await readPlan(samplePlanPath());
  truth = JSON.parse(await readFile(plan.truth!, "utf8")) as Truth;
  result = await runPlan(plan, { outDir });
  summary = JSON.parse(await readFile(join(outDir, "summary.json"), "utf8")) as RunSummary;
});

function comparison(key: string) {
  const c = summary.comparisons.find((x) => x.key === key);
  expect(c, `no comparison '${key}' in summary.json`).toBeDefined();
  return c!;
}

describe("peculiar run on the sample catalogues", () => {
  it("runs every step", () => {
    expect(failureOf(result)?.message).toBeUndefined();
    expect(summary.steps.map((s) => s.status)).toEqual(["ok", "ok", "ok", "ok", "ok", "ok", "ok"]);
  });

  it("recovers the injected H0 within 3 sigma of its reported error", () => {
    const c = comparison("h0");
    expect(c.truth).toBe(truth.h0);
    expect(c.nSigma).toBeLessThan(SIGMA_LIMIT);
  });

  it.each(["vx", "vy", "vz", "amplitude"])("recovers the bulk flow %s within 3 sigma", (k) => {
    expect(comparison(`bulk_flow.${k}`).nSigma).toBeLessThan(SIGMA_LIMIT);
  });

  it("finds the Sorrel zero-point offset against Caldera within 3 sigma", () => {
    const c = comparison("zero_point.sorrel");
    expect(c.truth).toBe(0.15);
    expect(c.nSigma).toBeLessThan(SIGMA_LIMIT);
  });

  it("finds the Amberwell cluster as the richest group, its centre, mean velocity and distance within 3 sigma", () => {
    expect(comparison("cluster.d_ra").nSigma).toBeLessThan(SIGMA_LIMIT);
    expect(comparison("cluster.d_dec").nSigma).toBeLessThan(SIGMA_LIMIT);
    expect(comparison("cluster.cz").nSigma).toBeLessThan(SIGMA_LIMIT);
    expect(comparison("cluster.distance").nSigma).toBeLessThan(SIGMA_LIMIT);
    const groups = summary.steps.find((x) => x.step === "groups")!.numbers as { richest: { members: number } };
    // Most of the 448 injected members, and not a percolated super-group of thousands.
    expect(groups.richest.members).toBeGreaterThan(0.75 * truth.cluster.members);
    expect(groups.richest.members).toBeLessThan(1.25 * truth.cluster.members);
  });

  it("writes a report that shows the same numbers as the summary", async () => {
    const report = await readFile(join(outDir, "report.md"), "utf8");
    expect(summary.comparisons.length).toBeGreaterThan(0);
    for (const c of summary.comparisons) {
      expect(report).toContain(formatWithError(c.recovered, c.error));
      expect(report).toContain(c.label);
    }
    for (const p of summary.plots) expect(existsSync(join(outDir, p.file))).toBe(true);
  });

  it("keeps every intermediate table as Arrow with every survey row", async () => {
    const tables = summary.steps.flatMap((s) => s.outputs).filter((f) => f.endsWith(".arrow"));
    expect(tables.length).toBeGreaterThanOrEqual(5);
    for (const f of ["02-combined.arrow", "03-velocities.arrow", "04-flagged.arrow", "05-groups.arrow"]) {
      expect(tables).toContain(f);
      expect((await readTable(join(outDir, f))).numRows).toBe(20000);
    }
    expect((await readTable(join(outDir, summary.final!))).numRows).toBe(20000);
  });
});

describe("peculiar run when a later step fails", () => {
  it("names the step and its reason and keeps the outputs of the steps before it", async () => {
    const plan = JSON.parse(await readFile(samplePlanPath(), "utf8"));
    const dir = await mkdtemp(join(tmpdir(), "peculiar-sample-fail-"));
    // The plan lives elsewhere now: point its inputs back at the sample folder.
    const here = join(samplePlanPath(), "..");
    plan.inputs.redshifts.file = join(here, plan.inputs.redshifts.file);
    for (const d of plan.inputs.distances) d.file = join(here, d.file);
    plan.truth = join(here, plan.truth);
    plan.steps.velocities.apex = "no-such-apex";
    await writeFile(join(dir, "plan.json"), JSON.stringify(plan));
    const r = await runPlan(await readPlan(join(dir, "plan.json")), { outDir: join(dir, "out") });
    expect(r.summary.failedStep).toBe("velocities");
    expect(failureOf(r)!.message).toMatch(/^step 'velocities' failed: unknown apex for frame cmb.*no-such-apex/);
    for (const f of ["01-match-caldera.arrow", "01-match-sorrel.json", "02-combined.arrow", "summary.json", "report.md"]) {
      expect(existsSync(join(dir, "out", f)), f).toBe(true);
    }
    expect(existsSync(join(dir, "out", "03-velocities.arrow"))).toBe(false);
    const saved = JSON.parse(await readFile(join(dir, "out", "summary.json"), "utf8")) as RunSummary;
    expect(saved.steps.map((x) => x.status)).toEqual(["ok", "ok", "failed", "not run", "not run", "not run", "not run"]);
  });
});

describe("peculiar run on the Sorrel catalogue alone", () => {
  it("finds H0 low by the uncorrected zero point: the comparison with the truth can fail", async () => {
    const plan = JSON.parse(await readFile(samplePlanPath(), "utf8"));
    const dir = await mkdtemp(join(tmpdir(), "peculiar-sample-one-"));
    const here = join(samplePlanPath(), "..");
    plan.inputs.redshifts.file = join(here, plan.inputs.redshifts.file);
    plan.inputs.distances = [{ ...plan.inputs.distances[1], file: join(here, plan.inputs.distances[1].file) }];
    plan.truth = join(here, plan.truth);
    delete plan.steps.combine.reference;
    plan.steps.groups = false;
    plan.steps.recentre = false;
    await writeFile(join(dir, "plan.json"), JSON.stringify(plan));
    const r = await runPlan(await readPlan(join(dir, "plan.json")), { outDir: join(dir, "out") });
    const h0 = r.summary.comparisons.find((c) => c.key === "h0")!;
    // Moduli too large by dmu put every distance 10^(dmu/5) too far, so H0 comes out 10^(-dmu/5)
    // times the truth (mu = 5 log10(D / Mpc) + 25, Hogg 1999, astro-ph/9905116).
    const biased = truth.h0 * 10 ** (-truth.zeroPoints[0]!.offsetMag / 5);
    expect(Math.abs(h0.recovered - biased) / h0.error).toBeLessThan(SIGMA_LIMIT);
    expect(h0.nSigma).toBeGreaterThan(SIGMA_LIMIT);
  });
});

describe("peculiar run into a folder that holds an earlier run", () => {
  it("removes the earlier run's files this plan does not write, keeps other files, and still writes a final table", async () => {
    const dir = await mkdtemp(join(tmpdir(), "peculiar-sample-again-"));
    const out = join(dir, "out");
    await runPlan(await readPlan(samplePlanPath()), { outDir: out });
    await writeFile(join(out, "my-notes.txt"), "kept\n");
    const plan = JSON.parse(await readFile(samplePlanPath(), "utf8"));
    const here = join(samplePlanPath(), "..");
    plan.inputs.redshifts.file = join(here, plan.inputs.redshifts.file);
    plan.inputs.distances = plan.inputs.distances.map((d: { file: string }) => ({ ...d, file: join(here, d.file) }));
    plan.truth = join(here, plan.truth);
    plan.steps.groups = false;
    plan.steps.recentre = false;
    await writeFile(join(dir, "plan.json"), JSON.stringify(plan));
    const r = await runPlan(await readPlan(join(dir, "plan.json")), { outDir: out });
    expect(failureOf(r)).toBeUndefined();
    expect(r.removed).toEqual(["05-groups-table.arrow", "05-groups.arrow", "07-recentre.arrow", "07-recentre.json"]);
    for (const f of r.removed) expect(existsSync(join(out, f))).toBe(false);
    expect(existsSync(join(out, "my-notes.txt"))).toBe(true);
    // the final table is now the flagged one: no group columns
    const final = await readTable(join(out, "final.arrow"));
    expect(final.numRows).toBe(20000);
    expect(final.schema.fields.some((f) => f.name === "group_id")).toBe(false);
    expect(final.schema.fields.some((f) => f.name === "outlier")).toBe(true);
  });
});
