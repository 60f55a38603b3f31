/**
 * The joined table of a match: every column of A and of B (values and metadata kept), names that
 * appear in both prefixed with the catalogue's alias and "_" (a_ra, b_ra), then
 *   sep_arcsec    separation (null without a pair)
 *   dv            v_B - v_A in km/s (when both catalogues have velocities; null when unknown)
 *   n_candidates  accepted candidates of the A row (null for rows of B alone)
 *   ambiguous     true when a competing candidate is almost as good (select.ts); false without a pair
 *   row_a, row_b  source rows (source_row: 1-based line or row) in A and B; null where absent
 * The bookkeeping columns are combined: valid = valid in A and in B (an absent side counts as
 * valid), invalid_reason = "alias: reason" of each invalid side joined by "; ", source_row = the
 * row of this table (1-based). Each side's own source_row is what row_a/row_b carry.
 */
import type { Data, Table } from "apache-arrow";
import { boolDataExcept, sparseUtf8Data, type DataColumn, columnDataOf, columnMeta, isHalfFloat, kindOf, tableFromColumns, takeColumn, type ColumnData } from "../catalogue/columns.js";
import { getRoles, INVALID_REASON, META, recordStep, setJsonMeta, SOURCE_ROW, VALID, type RoleMap } from "../catalogue/meta.js";
import { sourceRows, validMask } from "../catalogue/validity.js";
import { PeculiarError } from "../errors.js";
import { ARCSEC } from "../sky/angles.js";
import type { JoinedRows, MatchResult } from "./match.js";
import { lineTextOf, type RowText } from "../catalogue/line-text.js";

export const ADDED_COLUMNS = ["sep_arcsec", "dv", "n_candidates", "ambiguous", "row_a", "row_b"] as const;
const BOOKKEEPING = new Set([VALID, INVALID_REASON, SOURCE_ROW]);

/** The invalid_reason of the rows where valid is 0 (others ""): reads only the strings it needs. */
function reasonsOfInvalid(table: Table, valid: Uint8Array): string[] {
  const out = new Array<string>(valid.length).fill("");
  const col = table.getChild(INVALID_REASON);
  if (!col) return out;
  for (let i = 0; i < valid.length; i++) {
    if (valid[i]) continue;
    const v = col.get(i) as string | null;
    out[i] = v ?? "";
  }
  return out;
}

/** Output column names for A and B: clashes (with each other or with the added columns) prefixed. */
export function outputNames(a: Table, b: Table, aliasA: string, aliasB: string): { a: Map<string, string>; b: Map<string, string> } {
  if (aliasA === aliasB) throw new PeculiarError("usage", `the two catalogues need different aliases (both are "${aliasA}"); use --alias A,B`);
  const na = a.schema.fields.map((f) => f.name).filter((n) => !BOOKKEEPING.has(n));
  const nb = b.schema.fields.map((f) => f.name).filter((n) => !BOOKKEEPING.has(n));
  const sa = new Set(na);
  const sb = new Set(nb);
  const added = new Set<string>([...ADDED_COLUMNS, ...BOOKKEEPING]);
  const ma = new Map<string, string>();
  const mb = new Map<string, string>();
  for (const n of na) ma.set(n, sb.has(n) || added.has(n) ? `${aliasA}_${n}` : n);
  for (const n of nb) mb.set(n, sa.has(n) || added.has(n) ? `${aliasB}_${n}` : n);
  const all = [...ma.values(), ...mb.values()];
  const seen = new Set<string>();
  for (const n of all) {
    if (seen.has(n)) throw new PeculiarError("column", `two output columns would both be called "${n}"; choose other aliases with --alias`, { column: n });
    seen.add(n);
  }
  return { a: ma, b: mb };
}

const GATHER_KINDS = new Set(["float64", "float32", "int8", "int16", "int32", "uint8", "uint16", "uint32"]);

/**
 * Rows `rows` (-1 = null) of a numeric single-chunk column without nulls, gathered straight from the
 * Arrow buffer (takeColumn(columnDataOf(...)) copies the whole column first). undefined for any other
 * column, which then goes the general way.
 */
function gatherColumn(table: Table, name: string, rows: Int32Array): ColumnData | undefined {
  const v = table.getChild(name);
  const field = table.schema.fields.find((f) => f.name === name);
  if (!v || !field || v.data.length !== 1 || v.nullCount !== 0) return undefined;
  const kind = kindOf(field.type);
  if (kind === undefined || !GATHER_KINDS.has(kind) || isHalfFloat(field.type)) return undefined;
  const chunk = v.data[0]!;
  // Arrow slices `values` already (chunk.offset only indexes the validity bitmap)
  const src = chunk.values as Float64Array | Int32Array | Float32Array | Int8Array | Int16Array | Uint8Array | Uint16Array | Uint32Array;
  const n = rows.length;
  const dst = new (src.constructor as Float64ArrayConstructor)(n);
  // one loop per array type, so that each stays monomorphic (a shared loop over six types is not)
  const missing = src instanceof Float64Array ? gatherF64(src, dst, rows) : src instanceof Int32Array ? gatherI32(src, dst as unknown as Int32Array, rows) : gatherAny(src, dst, rows);
  let nulls: Uint8Array | undefined;
  if (missing > 0) {
    nulls = new Uint8Array(n);
    for (let t = 0; t < n; t++) if (rows[t]! < 0) nulls[t] = 1;
  }
  const out: ColumnData = { name, kind, values: dst, meta: columnMeta(table, name) };
  if (nulls) out.nulls = nulls;
  return out;
}

/**
 * valid and invalid_reason of the joined rows: valid in A and in B (an absent side counts as valid);
 * the reason joins "alias: reason" of each invalid side with "; ". When neither table has an invalid
 * row, no row's reason is looked at.
 */
function joinedValidity(a: Table, b: Table, j: JoinedRows, aliasA: string, aliasB: string): { valid: Data; reason: Data } {
  const n = j.length;
  const validA = validMask(a);
  const validB = validMask(b);
  if (allOnes(validA) && allOnes(validB)) return { valid: boolDataExcept(n), reason: sparseUtf8Data(n) };
  const reasonA = reasonsOfInvalid(a, validA);
  const reasonB = reasonsOfInvalid(b, validB);
  const bad: number[] = [];
  const reason: string[] = [];
  for (let t = 0; t < n; t++) {
    const i = j.rowA[t]!;
    const k = j.rowB[t]!;
    const okA = i < 0 || validA[i] === 1;
    const okB = k < 0 || validB[k] === 1;
    if (okA && okB) continue;
    const ra = okA ? "" : `${aliasA}: ${reasonA[i] || "invalid"}`;
    const rb = okB ? "" : `${aliasB}: ${reasonB[k] || "invalid"}`;
    bad.push(t);
    reason[t] = ra && rb ? `${ra}; ${rb}` : ra || rb;
  }
  return { valid: boolDataExcept(n, bad), reason: sparseUtf8Data(n, bad, reason) };
}

function allOnes(x: Uint8Array): boolean {
  for (let i = 0; i < x.length; i++) if (x[i] !== 1) return false;
  return true;
}

/** dst[t] = src[rows[t]] where rows[t] >= 0; returns the number of rows < 0 (left as 0). */
function gatherF64(src: Float64Array, dst: Float64Array, rows: Int32Array): number {
  let missing = 0;
  for (let t = 0; t < rows.length; t++) {
    const r = rows[t]!;
    if (r >= 0) dst[t] = src[r]!;
    else missing++;
  }
  return missing;
}

function gatherI32(src: Int32Array, dst: Int32Array, rows: Int32Array): number {
  let missing = 0;
  for (let t = 0; t < rows.length; t++) {
    const r = rows[t]!;
    if (r >= 0) dst[t] = src[r]!;
    else missing++;
  }
  return missing;
}

function gatherAny(src: ArrayLike<number>, dst: { [k: number]: number }, rows: Int32Array): number {
  let missing = 0;
  for (let t = 0; t < rows.length; t++) {
    const r = rows[t]!;
    if (r >= 0) dst[t] = src[r]!;
    else missing++;
  }
  return missing;
}

export interface MatchTableOptions {
  aliasA: string;
  aliasB: string;
  /** true when both sides have velocities: the dv column is written */
  withDv: boolean;
  /** settings recorded in the schema metadata (peculiar.settings / peculiar.history) */
  settings: Record<string, unknown>;
  /** roles of each input (default: from its schema metadata) */
  rolesA?: RoleMap;
  rolesB?: RoleMap;
}

/**
 * For a CSV writer (csv-write.ts rowText): the blocks of matchTable's output that are A's and B's
 * columns, each written as the line of its row where that catalogue keeps the lines of its file
 * (line-text.ts). Their cells then read as the file had them: the same values, and their digits as
 * written there.
 */
export function matchRowText(a: Table, b: Table, j: JoinedRows): RowText[] {
  const out: RowText[] = [];
  let first = 0;
  for (const [table, rows] of [
    [a, j.rowA],
    [b, j.rowB],
  ] as const) {
    const names = table.schema.fields.map((f) => f.name).filter((n) => !BOOKKEEPING.has(n));
    const text = lineTextOf(table, names);
    if (text) out.push({ first, count: names.length, text, rows });
    first += names.length;
  }
  return out;
}

export function matchTable(a: Table, b: Table, r: MatchResult, j: JoinedRows, o: MatchTableOptions): Table {
  const names = outputNames(a, b, o.aliasA, o.aliasB);
  const n = j.length;
  const cols: (ColumnData | DataColumn)[] = [];
  for (const [table, rows, map] of [
    [a, j.rowA, names.a],
    [b, j.rowB, names.b],
  ] as const) {
    for (const f of table.schema.fields) {
      if (BOOKKEEPING.has(f.name)) continue;
      const t = gatherColumn(table, f.name, rows) ?? takeColumn(columnDataOf(table, f.name), rows);
      t.name = map.get(f.name)!;
      cols.push(t);
    }
  }
  const cand = r.candidates;
  const sep = new Float64Array(n);
  const dv = new Float64Array(n);
  const ncand = new Int32Array(n);
  const amb = new Uint8Array(n);
  const rowA = new Int32Array(n);
  const rowB = new Int32Array(n);
  const nullSep = new Uint8Array(n);
  const nullDv = new Uint8Array(n);
  const nullN = new Uint8Array(n);
  const nullRA = new Uint8Array(n);
  const nullRB = new Uint8Array(n);
  let unmatched = 0;
  let missingDv = 0;
  let noA = 0;
  let noB = 0;
  // one typed loop per output column group; rows are (j.rowA, j.rowB, j.match), -1 where absent
  const chosen = r.chosen;
  const sepRad = cand.sepRad;
  const dvKmS = cand.dvKmS;
  const ambiguous = r.ambiguous;
  const nCandidates = r.nCandidates;
  const match = j.match;
  const jA = j.rowA;
  const jB = j.rowB;
  for (let t = 0; t < n; t++) {
    const m = match[t]!;
    if (m >= 0) {
      const c = chosen[m]!;
      sep[t] = sepRad[c]! / ARCSEC;
      const d = dvKmS[c]!;
      if (d === d) dv[t] = d;
      else {
        nullDv[t] = 1;
        missingDv++;
      }
      amb[t] = ambiguous[m]!;
    } else {
      nullSep[t] = 1;
      nullDv[t] = 1;
      unmatched++;
      missingDv++;
    }
  }
  const srcA = sourceRows(a);
  for (let t = 0; t < n; t++) {
    const i = jA[t]!;
    if (i >= 0) {
      ncand[t] = nCandidates[i]!;
      rowA[t] = srcA[i]!;
    } else {
      nullN[t] = 1;
      nullRA[t] = 1;
      noA++;
    }
  }
  const srcB = sourceRows(b);
  for (let t = 0; t < n; t++) {
    const k = jB[t]!;
    if (k >= 0) rowB[t] = srcB[k]!;
    else {
      nullRB[t] = 1;
      noB++;
    }
  }
  const ownRow = new Int32Array(n);
  for (let t = 0; t < n; t++) ownRow[t] = t + 1;
  const { valid, reason } = joinedValidity(a, b, j, o.aliasA, o.aliasB);
  cols.push({ name: "sep_arcsec", kind: "float64", values: sep, nulls: nullSep, meta: { unit: "arcsec", ucd: "pos.angDistance", description: "separation of the matched pair (Vincenty/atan2 form)" } });
  if (o.withDv) cols.push({ name: "dv", kind: "float64", values: dv, nulls: nullDv, meta: { unit: "km/s", ucd: "spect.dopplerVeloc", description: `velocity of ${o.aliasB} minus velocity of ${o.aliasA}` } });
  cols.push({ name: "n_candidates", kind: "int32", values: ncand, nulls: nullN, meta: { description: `accepted candidates in ${o.aliasB} for the row of ${o.aliasA}` } });
  cols.push({ name: "ambiguous", kind: "bool", values: amb, meta: { description: "a competing candidate sharing a row has a score within the ambiguity gap" } });
  cols.push({ name: "row_a", kind: "int32", values: rowA, nulls: nullRA, meta: { description: `source row in ${o.aliasA}` } });
  cols.push({ name: "row_b", kind: "int32", values: rowB, nulls: nullRB, meta: { description: `source row in ${o.aliasB}` } });
  cols.push({ name: VALID, data: valid });
  cols.push({ name: INVALID_REASON, data: reason });
  cols.push({ name: SOURCE_ROW, kind: "int32", values: ownRow });
  // nulls masks only where a value is missing (the gathered columns set theirs only then)
  const drop = new Map<Uint8Array, boolean>([
    [nullSep, unmatched === 0],
    [nullDv, missingDv === 0],
    [nullN, noA === 0],
    [nullRA, noA === 0],
    [nullRB, noB === 0],
  ]);
  for (const c of cols) if ("nulls" in c && c.nulls && drop.get(c.nulls)) delete c.nulls;
  // roles: A's roles under their output names (positions of the match are A's), B's in the settings
  const roles: RoleMap = {};
  for (const [role, col] of Object.entries(o.rolesA ?? getRoles(a))) if (col && names.a.has(col)) roles[role as keyof RoleMap] = names.a.get(col)!;
  const rolesB: RoleMap = {};
  for (const [role, col] of Object.entries(o.rolesB ?? getRoles(b))) if (col && names.b.has(col)) rolesB[role as keyof RoleMap] = names.b.get(col)!;
  // A's metadata, but not its source: the joined rows are rows of their own (source_row counts
  // them; row_a and row_b say where each came from, the settings name the inputs)
  let meta = new Map(a.schema.metadata);
  meta.delete(META.source);
  meta = setJsonMeta(meta, META.roles, roles);
  meta = recordStep(meta, "match", { ...o.settings, aliasA: o.aliasA, aliasB: o.aliasB, rolesB });
  return tableFromColumns(cols, meta, n);
}
