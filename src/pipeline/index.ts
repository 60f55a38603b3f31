// The pipeline's public names (explicit, so that generic names stay inside the area).
export { parsePlan, PLAN_FORMAT, STEP_NAMES, DEFAULT_STEPS, type Plan, type StepName, type StepSettings } from "./plan.js";
export { type RunRecord, type StepRecord, type StepStatus } from "./runner.js";
export { readTruth, TRUTH_FORMAT, type Truth, type Comparison } from "./truth.js";
export { reportMarkdown, SUMMARY_FORMAT, type RunSummary } from "./report.js";
export { hubbleDiagramSvg, skyMapSvg, separationHistogramSvg } from "./plots.js";
export { readPlan, runPlan, failureOf, CONSISTENT_WITHIN_SIGMA, type RunOptions as PlanRunOptions, type RunResult as PlanRunResult } from "./run.js";
export { PLAN_HELP } from "./describe.js";
export { samplePlanPath } from "./samples.js";
