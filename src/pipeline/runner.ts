/**
 * The step runner: runs the plan's steps in order, times each, records what it wrote and the
 * numbers it found, and stops at the first failure with the step's name and the reason. The
 * record is rewritten (atomically) after every step, so an interrupted run still says how far it
 * got, and the outputs of the steps before a failure stay where they are.
 */
import { PeculiarError } from "../errors.js";
import { NEEDS, STEP_NAMES, type Plan, type StepName } from "./plan.js";

export type StepStatus = "ok" | "failed" | "skipped" | "not run";

export interface StepOutcome {
  /** Files written by the step, relative to the output folder. */
  outputs: string[];
  /** The step's headline numbers (counts, fitted values), JSON-ready. */
  numbers: Record<string, unknown>;
  /** One-line remarks for the report (e.g. a setting chosen automatically). */
  notes?: string[];
}

export interface StepRecord {
  step: StepName;
  status: StepStatus;
  seconds?: number;
  outputs: string[];
  numbers?: Record<string, unknown>;
  notes?: string[];
  /** For failed steps: the error message; for skipped and not-run steps: why. */
  reason?: string;
}

export interface RunContext<S> {
  plan: Plan;
  outDir: string;
  /** What the steps hand to each other (tables, fits); owned by the step implementations. */
  state: S;
  /** Progress line (only drawn when the caller's stderr is a terminal). */
  progress: (line: string) => void;
}

export type StepImpl<S> = (ctx: RunContext<S>) => Promise<StepOutcome> | StepOutcome;

export interface RunRecord {
  status: "ok" | "failed" | "running";
  /** The step that failed, when status is failed. */
  failedStep?: StepName;
  steps: StepRecord[];
  seconds: number;
}

export interface RunHooks {
  /** Called after every step with the record so far (the summary writer). */
  afterStep?: (record: RunRecord) => void;
  now?: () => number;
}

/**
 * Runs the enabled steps of `plan` with `impls`. Returns the record; throws nothing for a failed
 * step (the record says which and why: see `stepError` for the error the CLI raises).
 */
export async function runSteps<S>(ctx: RunContext<S>, impls: Record<StepName, StepImpl<S>>, hooks: RunHooks = {}): Promise<RunRecord> {
  const now = hooks.now ?? (() => performance.now());
  const t0 = now();
  const steps: StepRecord[] = STEP_NAMES.map((step) => ({ step, status: "not run" as StepStatus, outputs: [] }));
  const record: RunRecord = { status: "running", steps, seconds: 0 };
  const done = new Set<StepName>();
  let failed = false;
  for (const rec of steps) {
    const name = rec.step;
    if (failed) {
      rec.reason = `step '${record.failedStep}' failed`;
      continue;
    }
    if (!ctx.plan.enabled.has(name)) {
      rec.status = "skipped";
      rec.reason = "set to false in the plan";
      continue;
    }
    const missing = NEEDS[name].filter((n) => !done.has(n));
    if (missing.length > 0) {
      rec.status = "skipped";
      rec.reason = `needs ${missing.map((m) => `'${m}'`).join(", ")}, which did not run`;
      continue;
    }
    ctx.progress(`step ${name} ...`);
    const ts = now();
    try {
      const out = await impls[name](ctx);
      rec.status = "ok";
      rec.outputs = out.outputs;
      rec.numbers = out.numbers;
      if (out.notes && out.notes.length > 0) rec.notes = out.notes;
      done.add(name);
    } catch (e) {
      rec.status = "failed";
      rec.reason = e instanceof Error ? e.message : String(e);
      record.failedStep = name;
      failed = true;
    }
    rec.seconds = round3((now() - ts) / 1000);
    record.seconds = round3((now() - t0) / 1000);
    hooks.afterStep?.(record);
  }
  record.status = failed ? "failed" : "ok";
  record.seconds = round3((now() - t0) / 1000);
  return record;
}

/** The one-line error for a failed run: which step, why, and where the earlier outputs are. */
export function stepError(record: RunRecord, outDir: string): PeculiarError {
  const rec = record.steps.find((s) => s.step === record.failedStep);
  const kept = record.steps.filter((s) => s.status === "ok").map((s) => s.step);
  const tail = kept.length > 0 ? `; outputs of ${kept.join(", ")} kept in ${outDir}` : "";
  return new PeculiarError("step", `step '${record.failedStep}' failed: ${rec?.reason ?? "unknown reason"}${tail}`);
}

function round3(x: number): number {
  return Math.round(x * 1000) / 1000;
}
