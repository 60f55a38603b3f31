/**
 * `runPlan`: the whole job from a plan file into an output folder. Reads the plan, runs the steps
 * (steps.ts), rewrites summary.json after every step, and at the end (also after a failure)
 * writes the plots and report.md from what exists. Every file lands atomically; files of an earlier
 * run in the folder that this one did not write are removed (removeStale).
 */
import { mkdir, readdir, readFile, rm } from "node:fs/promises";
import { join, resolve } from "node:path";
import { PeculiarError } from "../errors.js";
import { writeFileAtomic } from "../catalogue/atomic.js";
import { parsePlan, type Plan } from "./plan.js";
import { runSteps, stepError, type RunRecord } from "./runner.js";
import { reportMarkdown, SUMMARY_FORMAT, type RunSummary } from "./report.js";
import { STEPS } from "./steps.js";
import { comparisonsOf, plotsOf } from "./outcomes.js";
import { newState, saveTable, type PipelineState } from "./state.js";
import { readTruth } from "./truth.js";

/** A recovered number is called consistent with the truth in the report within this many sigma. */
export const CONSISTENT_WITHIN_SIGMA = 2;

export interface RunOptions {
  /** Output folder (created if missing). */
  outDir: string;
  /** Progress lines; the CLI passes one only when stderr is a terminal. */
  progress?: (line: string) => void;
}

export interface RunResult {
  summary: RunSummary;
  outDir: string;
  /** Absolute path of the final table, when the run got that far. */
  final?: string;
  /** Files of an earlier run in the folder that this run did not write, removed (names). */
  removed: string[];
}

/** The names a run writes: step outputs (01-... to 09-...), final.arrow, plot-*.svg, summary.json, report.md. */
const RUN_FILE_RE = /^(0[1-9]-[\w.-]+\.(arrow|json)|final\.arrow|plot-[\w.-]+\.svg|summary\.json|report\.md)$/;

/**
 * Removes the files of an earlier run (our names only, RUN_FILE_RE) that this run did not write:
 * a plan without a step must not leave that step's old table beside the new ones (final.arrow
 * above all, which the view serves). Other files in the folder are never touched.
 */
async function removeStale(outDir: string, written: Set<string>): Promise<string[]> {
  const removed: string[] = [];
  for (const name of (await readdir(outDir)).sort()) {
    if (!RUN_FILE_RE.test(name) || written.has(name)) continue;
    await rm(join(outDir, name), { force: true });
    removed.push(name);
  }
  return removed;
}

export async function readPlan(file: string): Promise<Plan> {
  let text: string;
  try {
    text = await readFile(file, "utf8");
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new PeculiarError("io", code === "ENOENT" ? "no such plan file" : `cannot read: ${(e as Error).message}`, { file }, { cause: e });
  }
  return parsePlan(text, resolve(file));
}

/**
 * Runs a plan. A failed step does not throw here: the result's summary says which step and why
 * (use `failureOf` to get the error the CLI raises). Bad plans and unwritable folders do throw.
 */
export async function runPlan(plan: Plan, opts: RunOptions): Promise<RunResult> {
  const outDir = resolve(opts.outDir);
  try {
    await mkdir(outDir, { recursive: true });
  } catch (e) {
    throw new PeculiarError("io", `cannot create the output folder: ${(e as Error).message}`, { file: outDir }, { cause: e });
  }
  const state: PipelineState = newState();
  if (plan.truth) state.truth = await readTruth(plan.truth);
  const base = (record: RunRecord): RunSummary => {
    const s: RunSummary = {
      summary: SUMMARY_FORMAT,
      title: plan.title,
      plan: plan.file,
      status: record.status,
      seconds: record.seconds,
      steps: record.steps,
      comparisons: [],
      consistentWithin: CONSISTENT_WITHIN_SIGMA,
      plots: [],
    };
    if (record.failedStep) s.failedStep = record.failedStep;
    if (plan.truth) s.truthFile = plan.truth;
    if (state.finalName) s.final = state.finalName;
    return s;
  };
  const writeSummary = (s: RunSummary) => writeFileAtomic(join(outDir, "summary.json"), JSON.stringify(s, jsonNumbers, 2) + "\n");

  let pending: Promise<void> = Promise.resolve();
  const record = await runSteps({ plan, outDir, state, progress: opts.progress ?? (() => {}) }, STEPS, {
    afterStep: (r) => {
      const snapshot = base({ ...r, status: "running" });
      pending = pending.then(() => writeSummary(snapshot));
    },
  });
  await pending;
  // a plan without the groups step (which writes final.arrow) still gets a final table: its last one
  if (!state.finalName && record.status === "ok") {
    const last = state.flagged ?? state.velocities ?? state.combined;
    if (last) state.finalName = await saveTable(outDir, "final.arrow", last.table);
  }

  const summary = base(record);
  summary.comparisons = comparisonsOf(state);
  summary.plots = await plotsOf(state, outDir);
  await writeSummary(summary);
  await writeFileAtomic(join(outDir, "report.md"), reportMarkdown(summary));
  const written = new Set(["summary.json", "report.md", ...summary.steps.flatMap((x) => x.outputs), ...summary.plots.map((p) => p.file)]);
  if (state.finalName) written.add(state.finalName);
  const result: RunResult = { summary, outDir, removed: await removeStale(outDir, written) };
  if (state.finalName) result.final = join(outDir, state.finalName);
  return result;
}

/** The error for a failed run (undefined when the run was fine). */
export function failureOf(result: RunResult): PeculiarError | undefined {
  const s = result.summary;
  if (s.status !== "failed") return undefined;
  return stepError({ status: "failed", failedStep: s.failedStep as RunRecord["failedStep"], steps: s.steps, seconds: s.seconds }, result.outDir);
}

/** JSON.stringify replacer: NaN and infinities become null (JSON has no such numbers). */
function jsonNumbers(_k: string, v: unknown): unknown {
  return typeof v === "number" && !Number.isFinite(v) ? null : v;
}
