/**
 * Step 2, combine: the distance moduli of every matched catalogue side by side on the survey's
 * rows, the zero-point offset of each catalogue against the reference from the galaxies both
 * measured, and one inverse-variance combined modulus per galaxy (src/cosmology/zeropoint.ts).
 * Columns added per catalogue ALIAS: ALIAS_id, ALIAS_mu, ALIAS_mu_err, ALIAS_sep_arcsec, ALIAS_row
 * (source row in that file); then combineDistances (src/cosmology/combine.ts) adds mu, mu_err, n_dist,
 * mu_chi2 and points the mu roles at them.
 */
import { float64Column, stringColumn, withColumns, type ColumnData } from "../../catalogue/columns.js";
import { getRoles, recordStep, SOURCE_ROW } from "../../catalogue/meta.js";
import { validMask } from "../../catalogue/validity.js";
import { combineDistances } from "../../cosmology/combine.js";
import { PeculiarError } from "../../errors.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, withTable, type PipelineState } from "../state.js";

function f64(name: string, values: Float64Array, unit: string | undefined, description: string): ColumnData {
  const nulls = new Uint8Array(values.length);
  let any = false;
  for (let i = 0; i < values.length; i++) if (Number.isNaN(values[i]!)) {
    nulls[i] = 1;
    any = true;
  }
  const c: ColumnData = { name, kind: "float64", values, meta: unit ? { unit, description } : { description } };
  if (any) c.nulls = nulls;
  return c;
}

export async function combineStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const survey = s.redshifts;
  if (!survey || s.matches.length === 0) throw new PeculiarError("step", "no matched distance catalogues to combine");
  const n = survey.table.numRows;
  const settings = plan.steps.combine;
  const refAlias = settings.reference ?? s.matches[0]!.alias;
  const cols: ColumnData[] = [];
  for (const m of s.matches) {
    const B = m.catalogue;
    const muName = B.roles.mu;
    if (!muName) throw new PeculiarError("column", `distance catalogue '${m.alias}' has no distance-modulus column; name it in the plan (inputs.distances[].columns.mu)`, { file: B.file });
    const muB = float64Column(B.table, muName);
    const errB = B.roles.mu_err ? float64Column(B.table, B.roles.mu_err) : undefined;
    const okB = validMask(B.table);
    const ids = B.roles.id ? stringColumn(B.table, B.roles.id) : undefined;
    const srcRow = B.table.getChild(SOURCE_ROW);
    const mu = new Float64Array(n).fill(NaN);
    const err = new Float64Array(n).fill(NaN);
    const row = new Int32Array(n);
    const rowNull = new Uint8Array(n);
    const id = new Array<string>(n).fill("");
    const idNull = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      const r = m.rowB[i]!;
      if (r < 0) {
        rowNull[i] = 1;
        idNull[i] = 1;
        continue;
      }
      row[i] = srcRow ? Number(srcRow.get(r)) : r + 1;
      if (ids) {
        const v = ids[r];
        if (v === null || v === undefined) idNull[i] = 1;
        else id[i] = v;
      } else idNull[i] = 1;
      if (!okB[r]) continue; // a flagged row of B lends no distance
      mu[i] = muB[r]!;
      err[i] = errB ? errB[r]! : NaN;
    }
    cols.push(
      { name: `${m.alias}_id`, kind: "utf8", values: id, nulls: idNull, meta: { description: `id in ${m.alias}` } },
      f64(`${m.alias}_mu`, mu, "mag", `distance modulus from ${m.alias} (as published; offsets are applied in mu_combined)`),
      f64(`${m.alias}_mu_err`, err, "mag", `error of ${m.alias}_mu`),
      f64(`${m.alias}_sep_arcsec`, Float64Array.from(m.sepArcsec), "arcsec", `separation of the ${m.alias} match`),
      { name: `${m.alias}_row`, kind: "int32", values: row, nulls: rowNull, meta: { description: `source row in ${m.alias}` } },
    );
  }
  const meta = recordStep(new Map(survey.table.schema.metadata), "combine-inputs", { catalogues: s.matches.map((m) => m.alias) });
  const aligned = withColumns(survey.table, cols, meta);
  const { table, report } = combineDistances(aligned, {
    muColumns: s.matches.map((m) => `${m.alias}_mu`),
    errColumns: s.matches.map((m) => `${m.alias}_mu_err`),
    reference: `${refAlias}_mu`,
    apply: settings.applyOffsets,
    file: survey.file,
  });
  s.offsets = [];
  const offsetNumbers: Record<string, unknown>[] = [];
  for (const o of report.offsets) {
    const alias = o.column.replace(/_mu$/, "");
    if (o.isReference) continue;
    // the offset the step applies: the clipped one (combine.ts), the plain one where clipping left none
    const clipped = Number.isFinite(o.clippedOffsetMag);
    s.offsets.push({ alias, offsetMag: clipped ? o.clippedOffsetMag : o.offsetMag, errMag: clipped ? o.clippedOffsetErrMag : o.offsetErrMag, nShared: o.nShared });
    offsetNumbers.push({ alias, relativeTo: refAlias, offsetMag: o.offsetMag, offsetErrMag: o.offsetErrMag, nShared: o.nShared, chi2Dof: o.chi2Dof, medianMag: o.medianMag, clippedOffsetMag: o.clippedOffsetMag, nRejected: o.nRejected, appliedMag: o.appliedMag });
  }
  s.combined = withTable(survey, table, getRoles(table));
  const out = await saveTable(ctx.outDir, "02-combined.arrow", table);
  return {
    outputs: [out],
    numbers: { reference: refAlias, applied: report.applied, offsets: offsetNumbers, galaxiesByDistanceCount: report.nDist },
    notes: report.notes,
  };
}
