/**
 * What a catalogue knows about itself, kept in the Arrow schema metadata so that it survives
 * every IPC round trip: the role of each column, where the rows came from, and the settings
 * (frame, H0, Omega_m, estimator, ...) that produced derived columns.
 */
import type { Table } from "apache-arrow";

/** The roles a column can play. Errors are `<role>_err`. */
export const ROLES = [
  "id",
  "ra",
  "dec",
  "ra_err",
  "dec_err",
  "pos_err",
  "cz",
  "cz_err",
  "z",
  "z_err",
  "mu",
  "mu_err",
  "dist",
  "dist_err",
  "eta",
  "eta_err",
  "v_pec",
  "v_pec_err",
  "glon",
  "glat",
  "group",
] as const;
export type Role = (typeof ROLES)[number];
export type RoleMap = Partial<Record<Role, string>>;

/** Schema-metadata keys written by peculiar. Values are JSON strings. */
export const META = {
  roles: "peculiar.roles",
  source: "peculiar.source", // {file, format, rows}
  settings: "peculiar.settings", // settings of the step that made the table
  history: "peculiar.history", // [{step, settings, at}] appended by each step
} as const;

/** Every table keeps these two columns (added by readers when absent). */
export const VALID = "valid";
export const INVALID_REASON = "invalid_reason";
/** 1-based row number in the source file (data rows; see the reader for header offset). */
export const SOURCE_ROW = "source_row";

export function readJsonMeta<T>(table: Table, key: string): T | undefined {
  const s = table.schema.metadata.get(key);
  if (s === undefined) return undefined;
  try {
    return JSON.parse(s) as T;
  } catch {
    return undefined;
  }
}

export function getRoles(table: Table): RoleMap {
  return readJsonMeta<RoleMap>(table, META.roles) ?? {};
}

/** A copy of the schema metadata with `key` set to JSON of `value`. */
export function setJsonMeta(meta: Map<string, string>, key: string, value: unknown): Map<string, string> {
  const m = new Map(meta);
  m.set(key, JSON.stringify(value));
  return m;
}

/** Appends one step to the history and sets it as the current settings. */
export function recordStep(meta: Map<string, string>, step: string, settings: Record<string, unknown>): Map<string, string> {
  let history: unknown[] = [];
  try {
    history = JSON.parse(meta.get(META.history) ?? "[]") as unknown[];
  } catch {
    history = [];
  }
  history.push({ step, settings });
  const m = setJsonMeta(meta, META.history, history);
  return setJsonMeta(m, META.settings, { step, ...settings });
}
