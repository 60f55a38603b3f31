/**
 * Step 4, flag: outlier peculiar velocities against the fitted flow (src/flow/outliers.ts), added as
 * outlier, outlier_score and outlier_reason; rows are never removed, and `valid` is left alone
 * (an outlier is a measurement to distrust, not a broken row). With a truth file, the injected
 * blunders found among the galaxies that have a distance are counted.
 */
import { stringColumn, hasColumn, withColumns } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { flagOutliers, OUTLIER_NOT_USED, OUTLIER_UNSCORED } from "../../flow/outliers.js";
import { PeculiarError } from "../../errors.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, withTable, type PipelineState } from "../state.js";
import { flowRowsOfTable } from "../../flow/table.js";

export async function flagStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const v = s.velocities;
  if (!v) throw new PeculiarError("step", "no velocities table");
  const f = plan.steps.flag;
  const rows = flowRowsOfTable(v.table, v.raDeg, v.decDeg, {}, v.file, false).rows;
  const r = flagOutliers(rows, {
    method: f.method,
    k: f.kappa,
    sigmaStar: f.sigmaStarKmS,
    cosmology: { h0: plan.steps.velocities.h0, omegaM: plan.steps.velocities.omegaM },
  });
  const n = v.table.numRows;
  const reason = new Array<string>(n);
  const what = f.method === "mad" ? "robust z" : "normalised residual";
  for (let i = 0; i < n; i++) {
    const c = r.code[i]!;
    reason[i] =
      r.outlier[i]! === 1
        ? `${what} ${r.score[i]!.toFixed(2)} beyond ${f.kappa} (${f.method}, iteration ${r.iteration[i]})`
        : c === OUTLIER_UNSCORED
          ? "not scored (no usable distance or velocity)"
          : c === OUTLIER_NOT_USED
            ? "not tested (invalid row)"
            : "";
  }
  const scoreNulls = Uint8Array.from(r.score, (x) => (Number.isFinite(x) ? 0 : 1));
  const meta = recordStep(new Map(v.table.schema.metadata), "flag", { method: f.method, k: f.kappa, sigmaStarKmS: f.sigmaStarKmS, iterations: r.iterations, converged: r.converged });
  const table = withColumns(
    v.table,
    [
      { name: "outlier", kind: "bool", values: r.outlier, meta: { description: `flagged as an outlier of the fitted flow (${f.method}, k = ${f.kappa}, sigma* = ${f.sigmaStarKmS} km/s)` } },
      { name: "outlier_score", kind: "float64", values: r.score, nulls: scoreNulls, meta: { description: `${what} against the fitted flow` } },
      { name: "outlier_reason", kind: "utf8", values: reason, meta: { description: "why the row is (or is not) an outlier" } },
    ],
    meta,
  );
  s.flagged = withTable(v, table);
  const numbers: Record<string, unknown> = {
    method: f.method,
    k: f.kappa,
    sigmaStarKmS: f.sigmaStarKmS,
    outliers: r.nOutliers,
    unscored: r.nUnscored,
    iterations: r.iterations,
    converged: r.converged,
  };
  // Injected blunders: ids of the distance catalogues (ALIAS_id columns from the combine step).
  if (s.truth) {
    const wanted = new Set(s.truth.blunders.ids);
    let present = 0;
    let found = 0;
    let other = 0;
    const idCols = s.matches.map((m) => `${m.alias}_id`).filter((c) => hasColumn(table, c)).map((c) => stringColumn(table, c));
    for (let i = 0; i < n; i++) {
      const isBlunder = idCols.some((col) => wanted.has(col[i] ?? ""));
      const scored = Number.isFinite(r.score[i]!);
      if (isBlunder && scored) present++;
      if (isBlunder && scored && r.outlier[i]) found++;
      if (!isBlunder && r.outlier[i]) other++;
    }
    numbers.blundersInjected = s.truth.blunders.count;
    numbers.blundersWithVelocity = present;
    numbers.blundersFlagged = found;
    numbers.otherFlagged = other;
  }
  const out = await saveTable(ctx.outDir, "04-flagged.arrow", table);
  return { outputs: [out], numbers };
}
