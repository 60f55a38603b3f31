/**
 * The seven steps of a plan, each a call into the library (src/pipeline/steps/*.ts). A step whose
 * library piece is not in this build fails with that reason instead of pretending.
 */
import { PeculiarError } from "../errors.js";
import type { StepName } from "./plan.js";
import type { StepImpl } from "./runner.js";
import type { PipelineState } from "./state.js";
import { matchStep } from "./steps/match.js";
import { combineStep } from "./steps/combine.js";
import { velocitiesStep } from "./steps/velocities.js";
import { flagStep } from "./steps/flag.js";
import { groupsStep } from "./steps/groups.js";
import { flowStep } from "./steps/flow.js";
import { recentreStep } from "./steps/recentre.js";

function missing(step: StepName, what: string): never {
  throw new PeculiarError("step", `${what} is not available yet in this build, so '${step}' cannot run`);
}

export const STEPS: Record<StepName, StepImpl<PipelineState>> = {
  match: matchStep,
  combine: combineStep,
  velocities: velocitiesStep,
  flag: flagStep,
  groups: groupsStep,
  flow: flowStep,
  recentre: recentreStep,
};
