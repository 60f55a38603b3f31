import { describe, expect, it } from "vitest";
import { groupOrigin, pointOrigin, richestGroup, excludeMembers, galacticPosition } from "../../src/flow/origins.js";
import { comovingDistanceMpc } from "../../src/cosmology/distances.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import type { GroupTable } from "../../src/flow/groups.js";

const COSMO = { h0: 70, omegaM: 0.3 };
// 1e-9 Mpc and 1e-9 km/s: float64 round-off of a rotation and a product.
const TOL = 1e-9;

function table(over: Partial<GroupTable>): GroupTable {
  const f = (xs: number[]) => Float64Array.from(xs);
  return {
    nGroups: 2,
    id: Int32Array.from([1, 2]),
    nMembers: Int32Array.from([2, 3]),
    raDeg: f([10, 266.404994801]),
    decDeg: f([20, -28.93617396]),
    czMeanKmS: f([3000, 5000]),
    czMeanErrKmS: f([10, 10]),
    sigmaKmS: f([100, 200]),
    sigmaRestKmS: f([100, 200]),
    rProjMpc: f([0.5, 0.5]),
    nDist: Int32Array.from([2, 0]),
    distCMpc: f([40, NaN]),
    distCErrMpc: f([2, NaN]),
    vPecKmS: f([150, NaN]),
    vPecErrKmS: f([50, NaN]),
    memberStart: Int32Array.from([0, 2, 5]),
    members: Int32Array.from([0, 3, 1, 2, 4]),
    ...over,
  };
}

describe("re-centring origins", () => {
  it("a point moves with the Hubble flow plus its own line-of-sight peculiar velocity", () => {
    const o = pointOrigin(10, 20, 50, 70, 200);
    expect(Math.hypot(o.x, o.y, o.z)).toBeCloseTo(50, 9);
    expect(o.vr).toBeCloseTo(70 * 50 + 200, 9);
  });

  it("places the Galactic centre direction on the +x Galactic axis", () => {
    // Galactic centre in ICRS (266.404994801, -28.936173960) deg: Hipparcos/ERFA ICRS-Galactic rotation.
    const [x, y, z] = galacticPosition(266.404994801, -28.93617396, 10);
    expect(Math.abs(x - 10)).toBeLessThan(1e-6);
    expect(Math.abs(y)).toBeLessThan(1e-6);
    expect(Math.abs(z)).toBeLessThan(1e-6);
  });

  it("puts a group at its error-weighted distance with its peculiar velocity", () => {
    const o = groupOrigin(table({}), 0, COSMO);
    expect(o.atRedshiftDistance).toBe(false);
    expect(Math.abs(o.distMpc - 40)).toBeLessThan(TOL);
    expect(Math.abs(o.vr - (70 * 40 + 150))).toBeLessThan(TOL);
  });

  it("puts a group without trusted distances at the redshift distance of its mean velocity, at rest", () => {
    const o = groupOrigin(table({}), 1, COSMO);
    const d = comovingDistanceMpc(5000 / C_KMS, COSMO);
    expect(o.atRedshiftDistance).toBe(true);
    expect(Math.abs(o.distMpc - d)).toBeLessThan(TOL);
    expect(Math.abs(o.vr - 70 * d)).toBeLessThan(TOL);
  });

  it("picks the richest group, the first of equals, and none when all are empty", () => {
    expect(richestGroup(table({}))).toBe(1);
    expect(richestGroup(table({ nMembers: Int32Array.from([3, 3]) }))).toBe(0);
    expect(richestGroup(table({ nMembers: Int32Array.from([0, 0]) }))).toBe(-1);
    expect(richestGroup(table({ nGroups: 0 }))).toBe(-1);
  });

  it("leaves exactly the group's members out of the fit from there", () => {
    const use = new Uint8Array(6).fill(1);
    excludeMembers(table({}), 1, use);
    expect(Array.from(use)).toEqual([1, 0, 0, 1, 0, 1]);
  });
});
