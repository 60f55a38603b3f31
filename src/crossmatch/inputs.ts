/**
 * What the matcher needs from a loaded catalogue besides positions: a velocity (cz, or c * z) and a
 * 1-sigma positional error per axis in arcsec. Both come from the catalogue's roles; units come
 * from the column metadata.
 */
import type { Table } from "apache-arrow";
import { columnMeta, float64Column } from "../catalogue/columns.js";
import type { RoleMap } from "../catalogue/meta.js";
import { PeculiarError } from "../errors.js";

/** Speed of light in km/s (exact; SI definition of the metre). */
const C_KMS = 299792.458;

export interface SideExtras {
  velocityKmS?: Float64Array;
  /** how the velocity was found, for the summary */
  velocityFrom?: string;
  posErrArcsec?: Float64Array;
  posErrFrom?: string;
  notes: string[];
}

const ANGLE_ARCSEC: Record<string, number> = {
  mas: 1e-3,
  arcsec: 1,
  '"': 1,
  asec: 1,
  arcmin: 60,
  "'": 60,
  deg: 3600,
  degree: 3600,
  degrees: 3600,
  rad: 206264.80624709636,
};

/** Arcsec per unit of an error column; undefined unit reads as arcsec (noted). */
function errorScale(table: Table, column: string, notes: string[], file: string): number {
  const unit = columnMeta(table, column).unit?.trim().toLowerCase();
  if (!unit) {
    notes.push(`positional error ${column}: no unit; read as arcsec (common practice for positional errors)`);
    return 1;
  }
  const f = ANGLE_ARCSEC[unit];
  if (f === undefined) throw new PeculiarError("column", `positional error column has unit "${unit}"`, { file, column, expected: "mas, arcsec, arcmin, deg or rad" });
  return f;
}

/** Velocity and positional error of a catalogue, from its roles. */
export function sideExtras(table: Table, roles: RoleMap, file: string): SideExtras {
  const notes: string[] = [];
  const out: SideExtras = { notes };
  if (roles.cz) {
    const unit = columnMeta(table, roles.cz).unit?.trim().toLowerCase();
    const f = unit === "m/s" || unit === "m.s-1" ? 1e-3 : 1;
    const v = float64Column(table, roles.cz);
    if (f !== 1) for (let i = 0; i < v.length; i++) v[i] = v[i]! * f;
    out.velocityKmS = v;
    out.velocityFrom = `cz <- ${roles.cz}`;
  } else if (roles.z) {
    const z = float64Column(table, roles.z);
    out.velocityKmS = z.map((x) => C_KMS * x);
    out.velocityFrom = `c*z <- ${roles.z}`;
  }
  if (roles.pos_err) {
    const f = errorScale(table, roles.pos_err, notes, file);
    out.posErrArcsec = float64Column(table, roles.pos_err).map((x) => x * f);
    out.posErrFrom = `pos_err <- ${roles.pos_err}`;
  } else if (roles.ra_err || roles.dec_err) {
    const cols = [roles.ra_err, roles.dec_err].filter((c): c is string => c !== undefined);
    const parts = cols.map((c) => {
      const f = errorScale(table, c, notes, file);
      return float64Column(table, c).map((x) => x * f);
    });
    const n = table.numRows;
    const e = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (const p of parts) s += p[i]! * p[i]!;
      e[i] = Math.sqrt(s / parts.length); // per-axis rms of the axis errors
    }
    out.posErrArcsec = e;
    out.posErrFrom = `per-axis rms of ${cols.join(", ")}`;
  }
  return out;
}
