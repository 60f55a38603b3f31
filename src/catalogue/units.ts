/**
 * Units of the velocity and distance columns a catalogue gives: the scale from the column's unit
 * (its metadata, a CSV units row, or --unit ROLE=UNIT) to km/s and to Mpc. A column without a unit
 * is read in km/s or Mpc (common practice for catalogues of peculiar velocities); a unit we do not
 * know is an error naming the column, never a silent guess. Spellings follow the IAU style and the
 * VOUnit / FITS forms (km/s, km.s-1, km s-1, Mpc, kpc, pc, Gpc); Mpc/h (h^-1 Mpc, h = H0/100) and
 * Mpc/h70 (h70 = H0/70) use the run's H0. roles.ts takes its velocity and length classes from here.
 */
import { PeculiarError } from "../errors.js";

/** km/s per unit, by the unit written without blanks or quotes, lower case. */
const VELOCITY_KMS: Record<string, number> = {
  "km/s": 1,
  "km.s-1": 1,
  "kms-1": 1,
  "kms^-1": 1,
  "km*s-1": 1,
  "km.s**-1": 1,
  "km/sec": 1,
  kms: 1,
  "km/s/1": 1,
  "m/s": 1e-3,
  "m.s-1": 1e-3,
  "ms-1": 1e-3,
  "ms^-1": 1e-3,
};

/** Mpc per unit (h-scaled forms apart), by the unit written without blanks, lower case ("mpc" is Mpc: a galaxy distance is never in milliparsec). */
const DISTANCE_MPC: Record<string, number> = { mpc: 1, kpc: 1e-3, pc: 1e-6, gpc: 1e3 };
/** Mpc/h forms (h = H0 / 100) and Mpc/h70 forms (h70 = H0 / 70). */
const PER_H = ["mpc/h", "h-1mpc", "h^-1mpc", "mpch-1", "mpch^-1", "mpc.h-1", "h-1.mpc"];
const PER_H70 = ["mpc/h70", "h70-1mpc", "h70^-1mpc", "mpch70-1"];

function key(unit: string): string {
  return unit.trim().replace(/^["']|["']$/g, "").replace(/\s+/g, "").toLowerCase();
}

/** Whether a unit is one velocityScaleKmS reads. */
export function isVelocityUnit(unit: string): boolean {
  return VELOCITY_KMS[key(unit)] !== undefined;
}

/** Whether a unit is one distanceScaleMpc reads. */
export function isDistanceUnit(unit: string): boolean {
  const k = key(unit);
  return DISTANCE_MPC[k] !== undefined || PER_H.includes(k) || PER_H70.includes(k);
}

/** km/s per unit of a velocity column (cz, cz_err); 1 when it has no unit. */
export function velocityScaleKmS(unit: string | undefined, where: { file?: string; column: string; role: string }): number {
  if (unit === undefined || unit.trim() === "") return 1;
  const f = VELOCITY_KMS[key(unit)];
  if (f === undefined) throw new PeculiarError("column", `unit "${unit}" is not a velocity unit`, { ...(where.file ? { file: where.file } : {}), column: where.column, expected: `km/s or m/s (give one with --unit ${where.role}=UNIT)` });
  return f;
}

/** Mpc per unit of a distance column (dist, dist_err); 1 when it has no unit; h = H0 / (100 km/s/Mpc) for Mpc/h. */
export function distanceScaleMpc(unit: string | undefined, h0KmSMpc: number, where: { file?: string; column: string; role: string }): number {
  if (unit === undefined || unit.trim() === "") return 1;
  const k = key(unit);
  const f = DISTANCE_MPC[k];
  if (f !== undefined) return f;
  if (PER_H.includes(k)) return 100 / h0KmSMpc;
  if (PER_H70.includes(k)) return 70 / h0KmSMpc;
  throw new PeculiarError("column", `unit "${unit}" is not a distance unit`, { ...(where.file ? { file: where.file } : {}), column: where.column, expected: `Mpc, kpc, pc, Gpc, Mpc/h or Mpc/h70 (give one with --unit ${where.role}=UNIT)` });
}
