/**
 * The truth of a mock scenario (what the sample generator injected) and the comparison of the
 * pipeline's recovered numbers with it. Every comparison carries the recovered value, its
 * reported 1-sigma error, the truth, and the distance between them in units of that error.
 */
import { readFile } from "node:fs/promises";
import { PeculiarError } from "../errors.js";

export const TRUTH_FORMAT = "peculiar-truth/1";

export interface Truth {
  truth: typeof TRUTH_FORMAT;
  seed: number;
  /** Injected Hubble constant, km/s/Mpc. */
  h0: number;
  omegaM: number;
  /** Injected bulk flow, Galactic Cartesian km/s, with its amplitude and direction. */
  bulkFlow: { vx: number; vy: number; vz: number; amplitude: number; lDeg: number; bDeg: number };
  /** The massive cluster. */
  cluster: {
    name: string;
    raDeg: number;
    decDeg: number;
    lDeg: number;
    bDeg: number;
    /** True comoving distance of the centre, Mpc. */
    distMpc: number;
    /** Systemic CMB-frame cz of the cluster, km/s. */
    czCmbKmS: number;
    /** Line-of-sight velocity dispersion of the members (core dispersion and infall together), km/s. */
    sigmaKmS: number;
    /** Galaxies of the redshift survey that belong to it. */
    members: number;
    [k: string]: unknown;
  };
  /** Zero-point offsets injected into distance catalogues, mag, relative to `relativeTo`. */
  zeroPoints: { alias: string; relativeTo: string; offsetMag: number }[];
  /** Blunders injected into the distance catalogues. */
  blunders: { count: number; ids: string[] };
  [k: string]: unknown;
}

export async function readTruth(path: string): Promise<Truth> {
  let text: string;
  try {
    text = await readFile(path, "utf8");
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new PeculiarError("io", code === "ENOENT" ? "no such file" : `cannot read: ${(e as Error).message}`, { file: path }, { cause: e });
  }
  let t: Truth;
  try {
    t = JSON.parse(text) as Truth;
  } catch (e) {
    throw new PeculiarError("format", `not valid JSON: ${(e as Error).message}`, { file: path });
  }
  if (t?.truth !== TRUTH_FORMAT) throw new PeculiarError("format", "not a truth file", { file: path, value: t?.truth, expected: TRUTH_FORMAT });
  for (const k of ["h0", "bulkFlow", "cluster", "zeroPoints", "blunders"] as const) {
    if (t[k] === undefined) throw new PeculiarError("format", `truth file lacks '${k}'`, { file: path });
  }
  return t;
}

export interface Comparison {
  /** Stable key for tests and tools (e.g. "h0", "bulk_flow.vx"). */
  key: string;
  /** Words for the report. */
  label: string;
  unit: string;
  recovered: number;
  /** Reported 1-sigma error of `recovered`. */
  error: number;
  truth: number;
  /** |recovered - truth| / error (Infinity when error is 0). */
  nSigma: number;
}

export function compare(key: string, label: string, unit: string, recovered: number, error: number, truth: number): Comparison {
  const d = Math.abs(recovered - truth);
  return { key, label, unit, recovered, error, truth, nSigma: error > 0 ? d / error : d === 0 ? 0 : Infinity };
}
