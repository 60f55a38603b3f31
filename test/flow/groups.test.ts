import { describe, it, expect } from "vitest";
import { gapperSigma, groupTable } from "../../src/flow/groups.js";
import { friendsOfFriends } from "../../src/flow/fof.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { flowRowsOf } from "./mock-rows.js";
import { angleDiffDeg } from "../../src/sky/angles.js";
import { randomLcg, randomNormal } from "d3-random";

describe("gapperSigma", () => {
  it("follows Beers, Flynn & Gebhardt 1990: two values one apart give sqrt(pi)/2", () => {
    expect(gapperSigma([0, 1])).toBeCloseTo(Math.sqrt(Math.PI) / 2, 14);
    expect(Number.isNaN(gapperSigma([5]))).toBe(true);
  });

  it("estimates the sigma of Gaussian draws (unbiased for normal data, Beers et al. 1990)", () => {
    const g = randomNormal.source(randomLcg(3))(0, 300);
    const v = Float64Array.from({ length: 4000 }, () => g()).sort();
    // standard error of sigma for 4000 draws is about 300 / sqrt(8000) = 3.4 km/s
    expect(Math.abs(gapperSigma(v) - 300)).toBeLessThan(12);
  });
});

describe("groupTable", () => {
  it("measures an injected cluster: centroid, dispersion, distance and peculiar velocity within errors", () => {
    const cl = { raDeg: 150, decDeg: 20, distMpc: 50, nMembers: 120, sigmaKmS: 450, rCoreMpc: 0.6 };
    const m = makeMockUniverse({ seed: 41, n: 1500, rMaxMpc: 100, clusters: [cl], distErrFrac: 0.2, bulkFlowGal: [0, 300, 0] });
    const rows = flowRowsOf(m);
    const fof = friendsOfFriends(m.raDeg, m.decDeg, m.czCmbKmS);
    const t = groupTable({ groupId: fof.groupId, nGroups: fof.nGroups, raDeg: m.raDeg, decDeg: m.decDeg, czKmS: m.czCmbKmS, distCMpc: rows.distCMpc, distFracErr: rows.distFracErr }, { h0: 70, omegaM: 0.3 });
    let k = 0;
    for (let g = 1; g < t.nGroups; g++) if (t.nMembers[g]! > t.nMembers[k]!) k = g;
    expect(t.nMembers[k]).toBeGreaterThan(100);
    expect(angleDiffDeg(t.raDeg[k]!, 150)).toBeLessThan(1);
    expect(Math.abs(t.decDeg[k]! - 20)).toBeLessThan(1);
    // dispersion: 450 km/s injected; standard error ~ 450/sqrt(2n) = 30 km/s
    expect(Math.abs(t.sigmaKmS[k]! - 450)).toBeLessThan(100);
    expect(t.sigmaRestKmS[k]).toBeLessThan(t.sigmaKmS[k]!);
    // distance: 20% per member over ~110 members -> ~2% error
    expect(Math.abs(t.distCMpc[k]! - 50) / t.distCErrMpc[k]!).toBeLessThan(3);
    const vTrue = m.truth.clusters[0]!.vPecCentreKmS;
    expect(Math.abs(t.vPecKmS[k]! - vTrue) / t.vPecErrKmS[k]!).toBeLessThan(3);
    expect(t.rProjMpc[k]).toBeGreaterThan(0.3);
    expect(t.rProjMpc[k]).toBeLessThan(2);
    // every member is listed once
    expect(t.members.length).toBe(Array.from(fof.groupId).filter((x) => x > 0).length);
  });

  it("gives NaN distances to a group without distances and handles no groups", () => {
    const ra = Float64Array.from([10, 10.01, 10.02]);
    const dec = Float64Array.from([0, 0, 0]);
    const cz = Float64Array.from([3000, 3050, 2980]);
    const fof = friendsOfFriends(ra, dec, cz);
    expect(fof.nGroups).toBe(1);
    const t = groupTable({ groupId: fof.groupId, nGroups: 1, raDeg: ra, decDeg: dec, czKmS: cz }, { h0: 70, omegaM: 0.3 });
    expect(t.nMembers[0]).toBe(3);
    expect(Number.isNaN(t.distCMpc[0]!)).toBe(true);
    expect(t.nDist[0]).toBe(0);
    expect(groupTable({ groupId: new Int32Array(0), nGroups: 0, raDeg: ra, decDeg: dec, czKmS: cz }, { h0: 70, omegaM: 0.3 }).nGroups).toBe(0);
  });
});
