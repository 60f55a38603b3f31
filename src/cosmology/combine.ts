/**
 * The combine step on a table that holds distance moduli from several catalogues (after a
 * cross-match: columns such as `a_mu`, `b_mu` with `a_mu_err`, `b_mu_err`): the zero-point offset
 * of each catalogue against a reference from the galaxies they share (zeropoint.ts), applied on
 * request, then the inverse-variance combination per galaxy. The network solution (zeroPointNetwork:
 * every overlap at once, so a catalogue linked to the reference only through another one is tied
 * too) is always reported and applied instead with `network`.
 *
 * Columns added: mu, mu_err (mag), n_dist (moduli combined), mu_chi2 (chi^2 of those moduli about
 * the combined one, n_dist - 1 degrees of freedom). The `mu` and `mu_err` roles of the output point
 * at them, and their UCDs carry meta.main, so the velocities step (and role detection on re-reading)
 * picks them up. Input columns of the same names are kept as
 * "<name>_input". The offsets go into the report and the schema metadata (`recordStep`).
 * Nothing is flagged: a galaxy without any modulus gets n_dist = 0 and an empty mu.
 */
import type { Table } from "apache-arrow";
import { float64Column, hasColumn, kindOf, type ColumnData } from "../catalogue/columns.js";
import { META, getRoles, recordStep, setJsonMeta } from "../catalogue/meta.js";
import { withColumns } from "../catalogue/columns.js";
import { PeculiarError } from "../errors.js";
import { combineModuli, zeroPointNetwork, zeroPointOffset, type ZeroPointStats } from "./zeropoint.js";
import { addColumnsKeepingInputs } from "./velocities.js";

export interface CombineOptions {
  /** The modulus columns, at least one. */
  muColumns: string[];
  /** Their error columns, in the same order; found by name when absent (see errorColumnFor). */
  errColumns?: (string | undefined)[];
  /** The reference: a column of muColumns or the alias that prefixes one ("a" for "a_mu"). Default the first. */
  reference?: string;
  /** Subtract the measured offsets before combining. */
  apply: boolean;
  /** Apply the network solution (all overlaps at once) instead of each catalogue against the reference. */
  network?: boolean;
  /** Clipping threshold of the robust check (default 3). */
  kappa?: number;
  file?: string;
}

/** One catalogue's offset: offsetMag is mu(column) - mu(reference) over the galaxies shared with it. */
export interface CatalogueOffset extends ZeroPointStats {
  column: string;
  errColumn: string;
  /** The reference catalogue's own entry (offset 0; nShared = its usable moduli). */
  isReference: boolean;
  /** The network solution's offset and error (zeroPointNetwork; NaN when not linked to the reference). */
  networkOffsetMag: number;
  networkOffsetErrMag: number;
  /** The offset subtracted from this column before combining (0 when not applied). */
  appliedMag: number;
}

export interface CombineReport {
  rows: number;
  reference: string;
  applied: boolean;
  /** Which offsets were applied: each catalogue against the reference, or the network solution. */
  solution: "pairwise" | "network";
  offsets: CatalogueOffset[];
  /** Rows by number of moduli combined: {"0": .., "1": .., "2": ..}. */
  nDist: Record<string, number>;
  notes: string[];
  renamed: string[];
}

/**
 * The error column of a modulus column, by the usual spellings: X_err, e_X, X_error, err_X, and
 * for an alias-prefixed name P_B also P_e_B, P_B_err.
 */
export function errorColumnFor(table: Table, column: string): string | undefined {
  const candidates = [`${column}_err`, `e_${column}`, `${column}_error`, `err_${column}`];
  const k = column.indexOf("_");
  if (k > 0) {
    const p = column.slice(0, k);
    const b = column.slice(k + 1);
    candidates.push(`${p}_e_${b}`, `${p}_${b}_err`, `${p}_err_${b}`);
  }
  return candidates.find((c) => hasColumn(table, c));
}

function resolveReference(muColumns: string[], reference: string | undefined, file: string | undefined): number {
  if (reference === undefined) return 0;
  let k = muColumns.indexOf(reference);
  if (k < 0) k = muColumns.findIndex((c) => c.startsWith(`${reference}_`));
  if (k < 0) throw new PeculiarError("usage", "the reference is neither a modulus column nor the alias of one", { file, value: reference, expected: muColumns.join(", ") });
  return k;
}

export function combineDistances(table: Table, o: CombineOptions): { table: Table; report: CombineReport } {
  const file = o.file;
  if (o.muColumns.length === 0) throw new PeculiarError("usage", "combine needs at least one modulus column (--mu a_mu,b_mu)", { file });
  const seen = new Set<string>();
  for (const c of o.muColumns) {
    if (seen.has(c)) throw new PeculiarError("usage", "a modulus column is named twice", { file, column: c });
    seen.add(c);
    if (!hasColumn(table, c)) throw new PeculiarError("column", "no such modulus column", { file, column: c, expected: table.schema.fields.map((f) => f.name).join(", ") });
  }
  if (o.errColumns && o.errColumns.length !== o.muColumns.length) {
    throw new PeculiarError("usage", `--err names ${o.errColumns.length} columns for ${o.muColumns.length} modulus columns`, { file });
  }
  const errNames = o.muColumns.map((c, k) => {
    const e = o.errColumns?.[k] ?? errorColumnFor(table, c);
    if (!e) throw new PeculiarError("column", "no error column found for this modulus; name it with --err", { file, column: c, expected: `${c}_err or e_${c}` });
    if (!hasColumn(table, e)) throw new PeculiarError("column", "no such error column", { file, column: e });
    return e;
  });
  const ref = resolveReference(o.muColumns, o.reference, file);
  for (const c of [...o.muColumns, ...errNames]) {
    const kind = kindOf(table.schema.fields.find((f) => f.name === c)!.type);
    if (kind === undefined || kind === "utf8" || kind === "bool") throw new PeculiarError("column", `is ${kind === "bool" ? "a flag" : "text"}, not a number: a modulus and its error must be numeric columns`, { file, column: c });
  }
  const mus = o.muColumns.map((c) => float64Column(table, c));
  const errs = errNames.map((c) => float64Column(table, c));
  const notes: string[] = [];
  // moduli whose error cannot weight them: said per column, with what happens to them
  o.muColumns.forEach((c, k) => {
    let withMu = 0;
    let missing = 0;
    let nonPositive = 0;
    for (let i = 0; i < mus[k]!.length; i++) {
      if (!Number.isFinite(mus[k]![i]!)) continue;
      withMu++;
      const e = errs[k]![i]!;
      if (!Number.isFinite(e)) missing++;
      else if (!(e > 0)) nonPositive++;
    }
    if (withMu > 0 && missing === withMu) notes.push(`${errNames[k]} has no value for any of the ${withMu} moduli of ${c}: ${c} shares no weighted galaxy with the other catalogues, and its moduli are used only where no other modulus has an error`);
    else if (missing + nonPositive > 0) notes.push(`${c}: ${missing + nonPositive} of ${withMu} moduli have no usable error in ${errNames[k]} (${missing} empty, ${nonPositive} zero or negative): they enter no offset, and are used only where no other modulus of the galaxy has an error`);
  });
  const net = zeroPointNetwork(mus, errs, ref);
  const network = o.network === true;
  const offsets: CatalogueOffset[] = o.muColumns.map((c, k) => {
    if (k === ref) {
      // The reference against itself: zero by definition; nShared counts its usable moduli.
      let m = 0;
      for (let i = 0; i < mus[k]!.length; i++) if (Number.isFinite(mus[k]![i]!) && errs[k]![i]! > 0) m++;
      const kappa = o.kappa ?? 3;
      return { column: c, errColumn: errNames[k]!, isReference: true, offsetMag: 0, offsetErrMag: 0, nShared: m, chi2Dof: NaN, scatterMag: NaN, medianMag: 0, clippedOffsetMag: 0, clippedOffsetErrMag: 0, nRejected: 0, kappa, networkOffsetMag: 0, networkOffsetErrMag: 0, appliedMag: 0 };
    }
    const r = zeroPointOffset(mus[ref]!, errs[ref]!, mus[k]!, errs[k]!, o.kappa !== undefined ? { kappa: o.kappa } : {});
    let appliedMag = 0;
    const netOff = net.offsetsMag[k]!;
    if (o.apply && network) {
      if (Number.isFinite(netOff)) appliedMag = netOff;
      else notes.push(`${c} is not linked to the reference ${o.muColumns[ref]} through shared galaxies: its offset is unknown and not applied`);
    } else if (o.apply) {
      // the clipped offset (the plain weighted mean when nothing is rejected): one blunder in the
      // shared galaxies must not move a whole catalogue
      if (r.nShared > 0 && Number.isFinite(r.clippedOffsetMag)) appliedMag = r.clippedOffsetMag;
      else if (r.nShared > 0) notes.push(`${c}: no shared galaxy lies within ${r.kappa} sigma of the median difference (${r.medianMag.toFixed(3)} mag): its offset is not applied; check the cross-identifications and the errors`);
      else notes.push(`${c} shares no galaxy with the reference ${o.muColumns[ref]}: its offset is unknown and not applied${Number.isFinite(netOff) ? " (it is linked through another catalogue: --network ties it)" : ""}`);
    }
    if (r.nShared > 1 && Number.isFinite(r.clippedOffsetMag) && Math.abs(r.offsetMag - r.clippedOffsetMag) > 2 * r.offsetErrMag) {
      notes.push(`${c}: the clipped offset (${r.clippedOffsetMag.toFixed(3)} mag, ${r.nRejected} rejected) differs from the plain one (${r.offsetMag.toFixed(3)}) by more than 2 sigma; check for wrong cross-identifications`);
    }
    const { shared: _shared, rejected: _rejected, ...stats } = r;
    return {
      column: c,
      errColumn: errNames[k]!,
      isReference: false,
      ...stats,
      networkOffsetMag: netOff,
      networkOffsetErrMag: net.offsetsErrMag[k]!,
      appliedMag,
    };
  });
  const comb = combineModuli(mus, errs, offsets.map((x) => x.appliedMag));
  const n = table.numRows;
  const nDist: Record<string, number> = {};
  for (let i = 0; i < n; i++) nDist[String(comb.nDist[i])] = (nDist[String(comb.nDist[i])] ?? 0) + 1;
  const nanNulls = (v: Float64Array) => {
    const m = new Uint8Array(v.length);
    let any = false;
    for (let i = 0; i < v.length; i++) if (Number.isNaN(v[i]!)) {
      m[i] = 1;
      any = true;
    }
    return any ? m : undefined;
  };
  const col = (name: string, values: Float64Array, unit: string | undefined, ucd: string, description: string): ColumnData => {
    const c: ColumnData = { name, kind: "float64", values, meta: unit ? { unit, ucd, description } : { ucd, description } };
    const nl = nanNulls(values);
    if (nl) c.nulls = nl;
    return c;
  };
  const refName = o.muColumns[ref]!;
  const columns: ColumnData[] = [
    col("mu", comb.muMag, "mag", "phot.mag.distMod;meta.main", `inverse-variance combination of ${o.muColumns.join(", ")}${o.apply ? ` on the zero point of ${refName}` : " (no zero-point offsets applied)"}`),
    col("mu_err", comb.muErrMag, "mag", "stat.error;phot.mag.distMod;meta.main", "1-sigma error of mu, 1/sqrt(sum of weights); offset errors not included"),
    { name: "n_dist", kind: "int32", values: comb.nDist, meta: { description: "number of moduli combined into mu" } },
    col("mu_chi2", comb.chi2, undefined, "stat.fit.chi2", "chi^2 of the combined moduli about mu (n_dist - 1 degrees of freedom)"),
  ];
  const added = addColumnsKeepingInputs(table, columns);
  let meta = new Map(added.table.schema.metadata);
  const roles = { ...getRoles(added.table), mu: "mu", mu_err: "mu_err" };
  meta = setJsonMeta(meta, META.roles, roles);
  meta = recordStep(meta, "combine", {
    reference: refName,
    applied: o.apply,
    solution: network ? "network" : "pairwise",
    muColumns: o.muColumns,
    errColumns: errNames,
    offsets: offsets.map((x) => ({ column: x.column, offsetMag: x.offsetMag, offsetErrMag: x.offsetErrMag, nShared: x.nShared, clippedOffsetMag: x.clippedOffsetMag, networkOffsetMag: x.networkOffsetMag, appliedMag: x.appliedMag })),
  });
  const out = withColumns(added.table, [], meta);
  return { table: out, report: { rows: n, reference: refName, applied: o.apply, solution: network ? "network" : "pairwise", offsets, nDist, notes, renamed: added.renamed } };
}
