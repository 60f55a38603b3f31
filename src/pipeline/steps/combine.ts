/**
 * Step 2, combine: the distance moduli of every matched catalogue side by side on the survey's
 * rows, the zero-point offset of each catalogue against the reference from the galaxies both
 * measured, and one inverse-variance combined modulus per galaxy (src/cosmology/zeropoint.ts).
 * Columns added per catalogue ALIAS: ALIAS_id, ALIAS_mu, ALIAS_mu_err, ALIAS_sep_arcsec, ALIAS_row
 * (source row in that file); then mu_combined, mu_combined_err, n_dist, mu_chi2.
 */
import { float64Column, stringColumn, withColumns, type ColumnData } from "../../catalogue/columns.js";
import { META, recordStep, setJsonMeta, SOURCE_ROW } from "../../catalogue/meta.js";
import { validMask } from "../../catalogue/validity.js";
import { combineModuli, zeroPointOffset } from "../../cosmology/zeropoint.js";
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
  const mus: Float64Array[] = [];
  const errs: (Float64Array | undefined)[] = [];
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
    mus.push(mu);
    errs.push(errB ? err : undefined);
    cols.push(
      { name: `${m.alias}_id`, kind: "utf8", values: id, nulls: idNull, meta: { description: `id in ${m.alias}` } },
      f64(`${m.alias}_mu`, mu, "mag", `distance modulus from ${m.alias} (as published; offsets are applied in mu_combined)`),
      f64(`${m.alias}_mu_err`, err, "mag", `error of ${m.alias}_mu`),
      f64(`${m.alias}_sep_arcsec`, Float64Array.from(m.sepArcsec), "arcsec", `separation of the ${m.alias} match`),
      { name: `${m.alias}_row`, kind: "int32", values: row, nulls: rowNull, meta: { description: `source row in ${m.alias}` } },
    );
  }
  const refIndex = s.matches.findIndex((m) => m.alias === refAlias);
  if (refIndex < 0) throw new PeculiarError("step", `the reference catalogue '${refAlias}' was not matched`);
  const offsets: number[] = [];
  const offsetNumbers: Record<string, unknown>[] = [];
  s.offsets = [];
  s.matches.forEach((m, k) => {
    if (k === refIndex) {
      offsets.push(0);
      return;
    }
    const ea = errs[refIndex] ?? new Float64Array(n).fill(NaN);
    const eb = errs[k] ?? new Float64Array(n).fill(NaN);
    const zp = zeroPointOffset(mus[refIndex]!, ea, mus[k]!, eb);
    offsets.push(settings.applyOffsets && Number.isFinite(zp.offsetMag) ? zp.offsetMag : 0);
    s.offsets.push({ alias: m.alias, offsetMag: zp.offsetMag, errMag: zp.offsetErrMag, nShared: zp.nShared });
    offsetNumbers.push({
      alias: m.alias,
      relativeTo: refAlias,
      offsetMag: zp.offsetMag,
      offsetErrMag: zp.offsetErrMag,
      nShared: zp.nShared,
      chi2Dof: zp.chi2Dof,
      medianMag: zp.medianMag,
      clippedOffsetMag: zp.clippedOffsetMag,
      nRejected: zp.nRejected,
      applied: settings.applyOffsets,
    });
  });
  const comb = combineModuli(mus, errs, offsets);
  let withDistance = 0;
  let withSeveral = 0;
  for (let i = 0; i < n; i++) {
    if (comb.nDist[i]! > 0) withDistance++;
    if (comb.nDist[i]! > 1) withSeveral++;
  }
  cols.push(
    f64("mu_combined", comb.muMag, "mag", `inverse-variance combined distance modulus on the ${refAlias} zero point`),
    f64("mu_combined_err", comb.muErrMag, "mag", "error of mu_combined (zero-point errors not included)"),
    { name: "n_dist", kind: "int32", values: comb.nDist, meta: { description: "number of distance moduli combined" } },
    f64("mu_chi2", comb.chi2, undefined, "chi2 of the moduli about mu_combined (n_dist - 1 degrees of freedom)"),
  );
  const roles = { ...survey.roles, mu: "mu_combined", mu_err: "mu_combined_err" };
  let meta = setJsonMeta(new Map(survey.table.schema.metadata), META.roles, roles);
  meta = recordStep(meta, "combine", { reference: refAlias, applyOffsets: settings.applyOffsets, offsets: offsetNumbers });
  const table = withColumns(survey.table, cols, meta);
  s.combined = withTable(survey, table, roles);
  const out = await saveTable(ctx.outDir, "02-combined.arrow", table);
  return {
    outputs: [out],
    numbers: { reference: refAlias, offsets: offsetNumbers, galaxiesWithDistance: withDistance, galaxiesWithSeveralDistances: withSeveral },
  };
}
