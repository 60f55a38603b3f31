/**
 * Reading the flow steps' inputs from a catalogue table by the column contract of DEVELOPERS.md
 * (cz_cmb, dist_c_mpc, dist_c_err_mpc, outlier, group_id, valid), with per-name overrides.
 * Browser-safe (Arrow tables and typed arrays only).
 */
import type { Table } from "apache-arrow";
import { PeculiarError } from "../errors.js";
import { float64Column, hasColumn, nullMask } from "../catalogue/columns.js";
import { sourceRows, validMask } from "../catalogue/validity.js";
import { convertPositions } from "../sky/frames.js";
import type { FlowRows } from "./bulkflow.js";

/** The contract names a flow step reads, and what each holds. */
export const FLOW_INPUTS = {
  cz_cmb: "observed CMB-frame c z, km/s",
  dist_c_mpc: "measured comoving distance, Mpc",
  dist_c_err_mpc: "its 1-sigma error, Mpc",
  outlier: "outlier flag from 'peculiar flag'",
  group_id: "group id from 'peculiar groups' (-1 none)",
} as const;
export type FlowInput = keyof typeof FLOW_INPUTS;

export type FlowColumnNames = Partial<Record<FlowInput, string>>;

export function columnName(names: FlowColumnNames, key: FlowInput): string {
  return names[key] ?? key;
}

function need(table: Table, name: string, key: FlowInput, file: string): Float64Array {
  if (!hasColumn(table, name)) {
    throw new PeculiarError("column", `no column ${name} (${FLOW_INPUTS[key]}); run 'peculiar velocities' first or name it with --col ${key}=NAME`, { file, column: name });
  }
  return float64Column(table, name);
}

/**
 * A 0/1 column read as a mask: bool, number (non-zero = 1), or text true/false, t/f, yes/no, y/n,
 * 1/0 (any case; a CSV flag column with one odd cell is read as text); null = 0; all 0 when absent.
 * Other text is an error naming the row and the column, never a silent 1.
 */
export function flagColumn(table: Table, name: string, file?: string): Uint8Array {
  const n = table.numRows;
  const out = new Uint8Array(n);
  if (!hasColumn(table, name)) return out;
  const v = table.getChild(name)!;
  const nulls = nullMask(table, name);
  for (let i = 0; i < n; i++) {
    if (nulls[i]) continue;
    const x = v.get(i) as unknown;
    if (typeof x === "string") {
      // a flag column read as text (CSV with a cell that is not true/false): each cell by its word
      const w = x.trim().toLowerCase();
      if (FLAG_TRUE.has(w)) out[i] = 1;
      else if (!FLAG_FALSE.has(w)) {
        // the place names the row as the file counts it (its source_row: a line of a text file)
        throw new PeculiarError("column", `${JSON.stringify(x)} is not a flag (true or false)`, { ...(file ? { file } : {}), column: name, row: sourceRows(table)[i]! });
      }
    } else out[i] = typeof x === "number" ? (x !== 0 && x === x ? 1 : 0) : Boolean(x) ? 1 : 0;
  }
  return out;
}

const FLAG_TRUE = new Set(["true", "t", "1", "yes", "y"]);
const FLAG_FALSE = new Set(["false", "f", "0", "no", "n", ""]);

export interface FlowTableRows {
  rows: FlowRows;
  /** valid and (when excludeOutliers) not an outlier. */
  use: Uint8Array;
  nValid: number;
  nOutliers: number;
}

/**
 * FlowRows of a table with positions (ICRS degrees, from loadCatalogue). `use` = valid rows, minus rows
 * flagged outlier when excludeOutliers. The fractional distance error is dist_c_err_mpc / dist_c_mpc.
 */
export function flowRowsOfTable(
  table: Table,
  raDeg: Float64Array,
  decDeg: Float64Array,
  names: FlowColumnNames,
  file: string,
  excludeOutliers: boolean,
): FlowTableRows {
  const cz = need(table, columnName(names, "cz_cmb"), "cz_cmb", file);
  const d = need(table, columnName(names, "dist_c_mpc"), "dist_c_mpc", file);
  const de = need(table, columnName(names, "dist_c_err_mpc"), "dist_c_err_mpc", file);
  const n = table.numRows;
  const frac = new Float64Array(n);
  for (let i = 0; i < n; i++) frac[i] = de[i]! / d[i]!;
  const { lonDeg, latDeg } = convertPositions(raDeg, decDeg, "icrs", "galactic");
  const valid = validMask(table);
  const out = excludeOutliers ? flagColumn(table, columnName(names, "outlier"), file) : new Uint8Array(n);
  const use = new Uint8Array(n);
  let nValid = 0;
  let nOut = 0;
  for (let i = 0; i < n; i++) {
    if (valid[i]) nValid++;
    if (valid[i] && out[i]) nOut++;
    use[i] = valid[i] && !out[i] ? 1 : 0;
  }
  return { rows: { lDeg: lonDeg, bDeg: latDeg, distCMpc: d, distFracErr: frac, czCmbKmS: cz, use }, use, nValid, nOutliers: nOut };
}

/**
 * Splits --col items: NAME=COLUMN where NAME is a flow input (cz_cmb, dist_c_mpc, ...) goes to the
 * flow names; everything else (ROLE=NAME) is left for the catalogue loader.
 */
export function splitFlowColumns(items: string[] | undefined): { names: FlowColumnNames; rest: string[] } {
  const names: FlowColumnNames = {};
  const rest: string[] = [];
  for (const item of items ?? []) {
    const m = /^([A-Za-z_]+)=(.+)$/.exec(item);
    if (m && m[1]! in FLOW_INPUTS) names[m[1] as FlowInput] = m[2]!;
    else rest.push(item);
  }
  return { names, rest };
}
