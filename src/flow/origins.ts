/**
 * Where a re-centred view stands: a point given on the sky, or a group of the groups table.
 * One place for the rules, so `peculiar recentre` and the pipeline's recentre step agree:
 * positions are Galactic Cartesian comoving coordinates (Mpc), and an origin moves with the
 * Hubble flow plus its own line-of-sight peculiar velocity (radial-only, domain reference §10.1).
 */
import { comovingDistanceMpc, type Cosmology } from "../cosmology/distances.js";
import { C_KMS } from "../cosmology/constants.js";
import { convertPosition } from "../sky/frames.js";
import { unitVector } from "../sky/vectors.js";
import type { GroupTable } from "./groups.js";

export interface PlacedOrigin {
  x: number;
  y: number;
  z: number;
  /** Line-of-sight velocity H0 D + v_pec, km/s. */
  vr: number;
  distMpc: number;
  /** True when no member had a trusted distance and the redshift distance of the mean velocity was used. */
  atRedshiftDistance: boolean;
}

/** Galactic Cartesian position (Mpc) of an ICRS direction at a comoving distance. */
export function galacticPosition(raDeg: number, decDeg: number, distMpc: number): [number, number, number] {
  const [l, b] = convertPosition(raDeg, decDeg, "icrs", "galactic");
  const [x, y, z] = unitVector(l, b);
  return [x * distMpc, y * distMpc, z * distMpc];
}

/** A point at (RA, Dec, D) moving with the Hubble flow plus vPecKmS along our line of sight. */
export function pointOrigin(raDeg: number, decDeg: number, distMpc: number, h0: number, vPecKmS = 0): PlacedOrigin {
  const [x, y, z] = galacticPosition(raDeg, decDeg, distMpc);
  return { x, y, z, vr: h0 * distMpc + vPecKmS, distMpc, atRedshiftDistance: false };
}

/** Index k of the group with the most members (the first of equals); -1 when there are none. */
export function richestGroup(g: Pick<GroupTable, "nGroups" | "nMembers">): number {
  let k = -1;
  for (let q = 0; q < g.nGroups; q++) if (g.nMembers[q]! > 0 && (k < 0 || g.nMembers[q]! > g.nMembers[k]!)) k = q;
  return k;
}

/**
 * Group k as an origin: its centroid at its error-weighted distance, moving with H0 D plus its
 * peculiar velocity. A group none of whose members has a trusted distance sits at the redshift
 * distance of its mean velocity, at rest in the flow.
 */
export function groupOrigin(g: GroupTable, k: number, c: Cosmology): PlacedOrigin {
  let d = g.distCMpc[k]!;
  let vPec = g.vPecKmS[k]!;
  let atRedshiftDistance = false;
  if (!(d > 0)) {
    d = comovingDistanceMpc(g.czMeanKmS[k]! / C_KMS, c);
    vPec = 0;
    atRedshiftDistance = true;
  }
  const o = pointOrigin(g.raDeg[k]!, g.decDeg[k]!, d, c.h0, Number.isFinite(vPec) ? vPec : 0);
  return { ...o, atRedshiftDistance };
}

/** Leaves the members of group k out of a fit from there (they are part of the origin). */
export function excludeMembers(g: GroupTable, k: number, use: Uint8Array): void {
  for (let q = g.memberStart[k]!; q < g.memberStart[k + 1]!; q++) use[g.members[q]!] = 0;
}
