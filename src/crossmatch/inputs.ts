/**
 * What the matcher needs from a loaded catalogue besides positions: a velocity (cz, or c * z) and a
 * 1-sigma positional error per axis in arcsec. Both come from the catalogue's roles; a velocity's
 * unit from --unit or the column metadata (catalogue/units.ts), an error's from its metadata.
 */
import type { Table } from "apache-arrow";
import { columnMeta, float64Column } from "../catalogue/columns.js";
import type { RoleMap } from "../catalogue/meta.js";
import { PeculiarError } from "../errors.js";
import { velocityScaleKmS } from "../catalogue/units.js";

/** Speed of light in km/s (exact; SI definition of the metre). */
const C_KMS = 299792.458;

export interface SideExtras {
  velocityKmS?: Float64Array;
  /** how the velocity was found, for the summary */
  velocityFrom?: string;
  /** 1-sigma per-axis positional error in arcsec; NaN where missing, negative or infinite. */
  posErrArcsec?: Float64Array;
  posErrFrom?: string;
  /** Rows whose positional error is negative or infinite (1 = bad), with their reasons; undefined when none. */
  badPosErr?: { bad: Uint8Array; reasons: (string | undefined)[]; count: number };
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

/** Velocity and positional error of a catalogue, from its roles; `units` (the loader's, --unit included) win over column metadata. */
export function sideExtras(table: Table, roles: RoleMap, file: string, units: Partial<Record<string, string>> = {}): SideExtras {
  const notes: string[] = [];
  const out: SideExtras = { notes };
  if (roles.cz) {
    const f = velocityScaleKmS(units.cz ?? columnMeta(table, roles.cz).unit, { file, column: roles.cz, role: "cz" });
    const v = float64Column(table, roles.cz);
    if (f !== 1) for (let i = 0; i < v.length; i++) v[i] = v[i]! * f;
    out.velocityKmS = v;
    out.velocityFrom = `cz <- ${roles.cz}`;
  } else if (roles.z) {
    const z = float64Column(table, roles.z);
    out.velocityKmS = z.map((x) => C_KMS * x);
    out.velocityFrom = `c*z <- ${roles.z}`;
  }
  const errCols = roles.pos_err ? [roles.pos_err] : [roles.ra_err, roles.dec_err].filter((c): c is string => c !== undefined);
  if (errCols.length > 0) {
    const n = table.numRows;
    const parts = errCols.map((c) => {
      const f = errorScale(table, c, notes, file);
      return float64Column(table, c).map((x) => x * f);
    });
    const e = new Float64Array(n);
    let bad: Uint8Array | undefined;
    const reasons: (string | undefined)[] = [];
    let count = 0;
    for (let i = 0; i < n; i++) {
      let s = 0;
      let why: string | undefined;
      for (let k = 0; k < parts.length; k++) {
        const x = parts[k]![i]!;
        if (x < 0 || x === Infinity) why = (why ? `${why}; ` : "") + `column ${errCols[k]}: positional error ${x < 0 ? "is negative" : "is infinite"}`;
        s += x * x;
      }
      // one error column: its value; two: the per-axis rms of the axis errors
      e[i] = why ? NaN : parts.length === 1 ? parts[0]![i]! : Math.sqrt(s / parts.length);
      if (why) {
        (bad ??= new Uint8Array(n))[i] = 1;
        reasons[i] = why;
        count++;
      }
    }
    out.posErrArcsec = e;
    out.posErrFrom = roles.pos_err ? `pos_err <- ${roles.pos_err}` : `per-axis rms of ${errCols.join(", ")}`;
    if (bad) out.badPosErr = { bad, reasons, count };
  }
  return out;
}
