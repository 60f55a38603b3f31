/**
 * What the steps hand to each other, and the one way they write a table into the output folder.
 */
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { writeTable } from "../catalogue/io.js";
import type { RoleMap } from "../catalogue/meta.js";
import type { Truth } from "./truth.js";
import type { FlowFit } from "../flow/bulkflow.js";
import type { GroupTable } from "../flow/groups.js";

/** A loaded catalogue: the table, the roles of its columns and its positions in degrees (NaN where unusable). */
export interface LoadedCatalogue {
  alias: string;
  file: string;
  table: Table;
  roles: RoleMap;
  raDeg: Float64Array;
  decDeg: Float64Array;
  /** The unit each role was read in (the loader's Catalogue.units), when known. */
  units?: Partial<Record<string, string>>;
}

/** One distance catalogue matched onto the redshift survey. */
export interface MatchOutcome {
  alias: string;
  catalogue: LoadedCatalogue;
  /** Per survey row: the matched row of the distance catalogue, -1 for none. */
  rowB: Int32Array;
  /** Per survey row: separation of the pair, arcsec (NaN for none). */
  sepArcsec: Float64Array;
  radiusArcsec: number;
  /** Expected chance pairs within the radius (from the match diagnostics), when known. */
  expectedChance?: number;
}

export interface FlowOutcome {
  h0: { value: number; error: number };
  /** Galactic Cartesian km/s with its 3 x 3 covariance (row-major). */
  bulk: { vx: number; vy: number; vz: number; cov: number[]; amplitude: number; amplitudeErr: number; lDeg: number; bDeg: number };
  nUsed: number;
}

export interface ClusterOutcome {
  groupId: number;
  members: number;
  raDeg: number;
  decDeg: number;
  /** Centroid offset from the injected centre along RA (times cos Dec) and Dec, deg, with 1-sigma errors. */
  dRaCosDecDeg: number;
  dDecDeg: number;
  posErrDeg: number;
  czKmS: number;
  czErrKmS: number;
  sigmaKmS: number;
  sigmaErrKmS: number;
  /** Error-weighted comoving distance of the members with a trusted distance, Mpc. */
  distCMpc: number;
  distCErrMpc: number;
}

export interface PipelineState {
  truth?: Truth;
  redshifts?: LoadedCatalogue;
  matches: MatchOutcome[];
  offsets: { alias: string; offsetMag: number; errMag: number; nShared: number }[];
  combined?: LoadedCatalogue;
  velocities?: LoadedCatalogue;
  /** The velocity frame the velocities step used (for the cz_<frame> column). */
  frame?: string;
  flagged?: LoadedCatalogue;
  grouped?: LoadedCatalogue;
  flow?: FlowOutcome;
  /** The full fit (positions and velocities used), for re-centring. */
  flowFit?: FlowFit;
  groups?: GroupTable;
  cluster?: ClusterOutcome;
  /** The table the view shows, relative to the output folder. */
  finalName?: string;
  finalTable?: Table;
}

export function newState(): PipelineState {
  return { matches: [], offsets: [] };
}

/** Writes `table` as Arrow IPC into the output folder (atomically) and returns the file name. */
export async function saveTable(outDir: string, name: string, table: Table): Promise<string> {
  await writeTable(table, join(outDir, name), { format: "arrow" });
  return name;
}

/** A catalogue with a new table (positions and roles carried over). */
export function withTable(c: LoadedCatalogue, table: Table, roles: RoleMap = c.roles): LoadedCatalogue {
  return { ...c, table, roles };
}
