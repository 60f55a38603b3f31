/**
 * The catalogue as the view needs it: one typed array per column of the data contract
 * (DEVELOPERS.md, "Output column names"), NaN / -1 / 0 where a column or a value is missing.
 * Nothing here throws on a missing column: `has` says what the file carried, and the panels
 * draw what they can and say "unknown" for the rest.
 *
 * Derived here when the file lacks them (same library code as the CLI):
 *  - sgl, sgb from l, b (or l, b from sgl, sgb) by the frame rotations of src/sky;
 *  - sgx, sgy, sgz from sgl, sgb and dist_c_mpc, or dist_c_mpc from |sgx, sgy, sgz|;
 */
import { tableFromIPC, type Table } from "apache-arrow";
import { float64Column, hasColumn, stringColumn } from "../src/catalogue/columns.js";
import { META, getRoles, readJsonMeta } from "../src/catalogue/meta.js";
import { convertPositions } from "../src/sky/frames.js";
import { DEG } from "../src/sky/angles.js";
import { DEFAULT_COSMOLOGY } from "../src/cosmology/distances.js";

export const NUMERIC_COLUMNS = [
  "l",
  "b",
  "sgl",
  "sgb",
  "sgx",
  "sgy",
  "sgz",
  "dist_mpc",
  "dist_err_mpc",
  "dist_c_mpc",
  "dist_c_err_mpc",
  "cz_cmb",
  "v_pec",
  "v_pec_err",
] as const;
export type NumericColumn = (typeof NUMERIC_COLUMNS)[number];

export interface ViewData {
  n: number;
  /** Row labels: the id role column, else an "id" column, else the 1-based row number. */
  ids: string[];
  idColumn: string | null;
  col: Record<NumericColumn, Float64Array>;
  /** The column was in the file (derived columns are not counted). */
  has: Record<NumericColumn | "outlier" | "group_id" | "valid", boolean>;
  outlier: Uint8Array;
  groupId: Int32Array;
  groupSize: Int32Array;
  valid: Uint8Array;
  /** H0 in the file's settings (km/s/Mpc), NaN when it says none: shown beside the H0 the view fits. */
  h0File: number;
  /** Schema metadata the page shows (settings, source), as parsed JSON. */
  settings: Record<string, unknown>;
}

function nanColumn(n: number): Float64Array {
  return new Float64Array(n).fill(NaN);
}

/** The H0 the file's distances were turned into velocities with: settings or history, newest first. */
function findH0(table: Table): { h0: number; source: string } {
  const settings = readJsonMeta<Record<string, unknown>>(table, META.settings);
  const fromObj = (o: unknown): number | undefined => {
    if (!o || typeof o !== "object") return undefined;
    const r = o as Record<string, unknown>;
    for (const k of ["h0", "H0", "h0KmSMpc"]) if (typeof r[k] === "number" && (r[k] as number) > 0) return r[k] as number;
    const cos = r["cosmology"];
    if (cos && typeof cos === "object") return fromObj(cos);
    const s = r["settings"];
    if (s && typeof s === "object") return fromObj(s);
    return undefined;
  };
  const a = fromObj(settings);
  if (a !== undefined) return { h0: a, source: "file settings" };
  const history = readJsonMeta<unknown[]>(table, META.history);
  if (Array.isArray(history)) {
    for (let i = history.length - 1; i >= 0; i--) {
      const h = fromObj(history[i]);
      if (h !== undefined) return { h0: h, source: "file history" };
    }
  }
  return { h0: DEFAULT_COSMOLOGY.h0, source: "default" };
}

function boolColumn(table: Table, name: string, n: number): Uint8Array | null {
  if (!hasColumn(table, name)) return null;
  const f = float64Column(table, name);
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) out[i] = f[i]! > 0 ? 1 : 0;
  return out;
}

function intColumn(table: Table, name: string, n: number, missing: number): Int32Array | null {
  if (!hasColumn(table, name)) return null;
  const f = float64Column(table, name);
  const out = new Int32Array(n);
  for (let i = 0; i < n; i++) out[i] = Number.isFinite(f[i]!) ? f[i]! : missing;
  return out;
}

function idsOf(table: Table, n: number): { ids: string[]; column: string | null } {
  const roles = getRoles(table);
  const candidates = [roles.id, "id", "name", "objid"].filter((x): x is string => typeof x === "string");
  for (const c of candidates) {
    if (hasColumn(table, c)) {
      const s = stringColumn(table, c);
      return { ids: s.map((x, i) => (x === null || x === "" ? `row ${i + 1}` : x)), column: c };
    }
  }
  return { ids: Array.from({ length: n }, (_, i) => `row ${i + 1}`), column: null };
}

export function viewDataFromTable(table: Table): ViewData {
  const n = table.numRows;
  const col = {} as Record<NumericColumn, Float64Array>;
  const has = {} as ViewData["has"];
  for (const c of NUMERIC_COLUMNS) {
    has[c] = hasColumn(table, c);
    col[c] = has[c] ? float64Column(table, c) : nanColumn(n);
  }
  // Sky positions in both frames.
  if (!has.sgl && has.l && has.b) {
    const p = convertPositions(col.l, col.b, "galactic", "supergalactic");
    col.sgl = p.lonDeg;
    col.sgb = p.latDeg;
  } else if (!has.l && has.sgl && has.sgb) {
    const p = convertPositions(col.sgl, col.sgb, "supergalactic", "galactic");
    col.l = p.lonDeg;
    col.b = p.latDeg;
  }
  // Supergalactic Cartesian of the comoving distance, and the distance from it.
  if (!(has.sgx && has.sgy && has.sgz) && has.dist_c_mpc) {
    for (let i = 0; i < n; i++) {
      const d = col.dist_c_mpc[i]!;
      const lon = col.sgl[i]! * DEG;
      const lat = col.sgb[i]! * DEG;
      col.sgx[i] = d * Math.cos(lat) * Math.cos(lon);
      col.sgy[i] = d * Math.cos(lat) * Math.sin(lon);
      col.sgz[i] = d * Math.sin(lat);
    }
  } else if (!has.dist_c_mpc && has.sgx && has.sgy && has.sgz) {
    for (let i = 0; i < n; i++) col.dist_c_mpc[i] = Math.hypot(col.sgx[i]!, col.sgy[i]!, col.sgz[i]!);
  }
  const { h0, source } = findH0(table);

  const outlier = boolColumn(table, "outlier", n);
  const valid = boolColumn(table, "valid", n);
  const groupId = intColumn(table, "group_id", n, -1);
  const groupSize = intColumn(table, "group_size", n, 0);
  has.outlier = outlier !== null;
  has.valid = valid !== null;
  has.group_id = groupId !== null;
  const { ids, column } = idsOf(table, n);
  return {
    n,
    ids,
    idColumn: column,
    col,
    has,
    outlier: outlier ?? new Uint8Array(n),
    groupId: groupId ?? new Int32Array(n).fill(-1),
    groupSize: groupSize ?? groupSizesOf(groupId ?? new Int32Array(n).fill(-1)),
    valid: valid ?? new Uint8Array(n).fill(1),
    h0File: source === "default" ? NaN : h0,
    settings: readJsonMeta<Record<string, unknown>>(table, META.settings) ?? {},
  };
}

/**
 * Row i's comoving distance and its error, Mpc: the distance the Hubble diagram and the slices use.
 * The error is dist_c_err_mpc, else dist_err_mpc scaled by dist_c_mpc / dist_mpc (the same fraction).
 */
export function comovingDistance(c: ViewData["col"], i: number): [number, number] {
  const d = c.dist_c_mpc[i]!;
  const e = c.dist_c_err_mpc[i]!;
  return [d, Number.isFinite(e) ? e : (d * c.dist_err_mpc[i]!) / c.dist_mpc[i]!];
}

/** Member counts per row from group ids (-1 = no group -> 0). */
export function groupSizesOf(groupId: Int32Array): Int32Array {
  const count = new Map<number, number>();
  for (const g of groupId) if (g >= 0) count.set(g, (count.get(g) ?? 0) + 1);
  const out = new Int32Array(groupId.length);
  for (let i = 0; i < groupId.length; i++) out[i] = groupId[i]! >= 0 ? count.get(groupId[i]!)! : 0;
  return out;
}

export function viewDataFromIPC(bytes: Uint8Array): ViewData {
  return viewDataFromTable(tableFromIPC(bytes));
}

/** Groups with at least `minSize` members, largest first: [{id, size, rows}]. */
export function groupsOf(d: ViewData, minSize = 2): { id: number; rows: Int32Array }[] {
  const members = new Map<number, number[]>();
  for (let i = 0; i < d.n; i++) {
    const g = d.groupId[i]!;
    if (g < 0) continue;
    let m = members.get(g);
    if (!m) members.set(g, (m = []));
    m.push(i);
  }
  const out: { id: number; rows: Int32Array }[] = [];
  for (const [id, rows] of members) if (rows.length >= minSize) out.push({ id, rows: Int32Array.from(rows) });
  out.sort((a, b) => b.rows.length - a.rows.length || a.id - b.id);
  return out;
}
