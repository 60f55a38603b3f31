/**
 * Step 3, velocities: redshifts into the plan's frame, the combined moduli into distances and
 * peculiar velocities with errors (src/cosmology/velocities.ts). Rows without a distance stay,
 * flagged by that step; the later steps choose their own rows (groups need only a redshift).
 */
import { computeVelocities } from "../../cosmology/velocities.js";
import { PeculiarError } from "../../errors.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, withTable, type PipelineState } from "../state.js";

export async function velocitiesStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const cat = s.combined;
  if (!cat) throw new PeculiarError("step", "no combined table");
  const v = plan.steps.velocities;
  const opts: Parameters<typeof computeVelocities>[1] = { frame: v.frame, cosmology: { h0: v.h0, omegaM: v.omegaM }, estimator: v.estimator, distance: "mu" };
  if (v.apex !== undefined) opts.apex = v.apex;
  const { table, report } = computeVelocities({ table: cat.table, roles: cat.roles, raDeg: cat.raDeg, decDeg: cat.decDeg, file: cat.file }, opts);
  s.velocities = withTable(cat, table);
  s.frame = v.frame;
  const out = await saveTable(ctx.outDir, "03-velocities.arrow", table);
  return {
    outputs: [out],
    numbers: {
      rows: report.rows,
      frame: report.frame,
      apex: report.apex,
      estimator: report.estimator,
      h0Assumed: v.h0,
      omegaM: v.omegaM,
      withVelocity: report.withVelocity,
      withoutError: report.withoutError,
      valid: report.valid,
      flagged: report.flagged,
    },
  };
}
