import { describe, it, expect } from "vitest";
import { makeMockUniverse, mockInfallSpeed } from "../../src/flow/mock.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { redshiftAtDistance, luminosityDistanceFromModulus } from "../../src/cosmology/distances.js";
import { convertPosition } from "../../src/sky/frames.js";
import { angleDiffDeg } from "../../src/sky/angles.js";

const KMS_TOL = 1e-6; // km/s, round-off of the composition (common practice)

describe("makeMockUniverse", () => {
  it("is reproducible for a seed and differs between seeds", () => {
    const a = makeMockUniverse({ seed: 7, n: 200 });
    const b = makeMockUniverse({ seed: 7, n: 200 });
    const c = makeMockUniverse({ seed: 8, n: 200 });
    expect(Array.from(a.czCmbKmS)).toEqual(Array.from(b.czCmbKmS));
    expect(a.czCmbKmS[0]).not.toBe(c.czCmbKmS[0]);
  });

  it("composes redshifts exactly: 1 + z_obs = (1 + z_cos)(1 + v/c) (Davis & Scrimgeour 2014)", () => {
    const m = makeMockUniverse({ seed: 1, n: 50, distErrFrac: 0 });
    for (let i = 0; i < m.n; i++) {
      const zc = redshiftAtDistance(m.distTrueMpc[i]!, "comoving", { h0: 70, omegaM: 0.3 });
      expect(m.czCmbKmS[i]!).toBeCloseTo(C_KMS * ((1 + zc) * (1 + m.vPecTrue[i]! / C_KMS) - 1), 6);
      // without distance errors mu is that of D_L = (1 + z_cos) D_C (Hogg 1999)
      expect(luminosityDistanceFromModulus(m.mu[i]!)).toBeCloseTo((1 + zc) * m.distTrueMpc[i]!, 8);
    }
  });

  it("gives a pure linear Hubble flow when every velocity term is zero", () => {
    const m = makeMockUniverse({ seed: 2, n: 100, linear: true, sigmaStar: 0, distErrFrac: 0 });
    for (let i = 0; i < m.n; i++) expect(Math.abs(m.czCmbKmS[i]! - 70 * m.distTrueMpc[i]!)).toBeLessThan(KMS_TOL);
  });

  it("draws uniformly in volume: the median radius is rMax / 2^(1/3) (geometry, common practice)", () => {
    const m = makeMockUniverse({ seed: 3, n: 4000, rMaxMpc: 100 });
    const r = Array.from(m.distTrueMpc).sort((x, y) => x - y);
    expect(r[2000]!).toBeGreaterThan(79.37 - 1.5);
    expect(r[2000]!).toBeLessThan(79.37 + 1.5);
    expect(r[r.length - 1]!).toBeLessThanOrEqual(100);
  });

  it("makes log-normal distance errors of the chosen fraction and the chosen blunder fraction", () => {
    const m = makeMockUniverse({ seed: 4, n: 5000, distErrFrac: 0.2, blunderFraction: 0.05, linear: true });
    let s2 = 0;
    let k = 0;
    let nb = 0;
    for (let i = 0; i < m.n; i++) {
      if (m.isBlunder[i]) { nb++; continue; }
      const e = Math.log(luminosityDistanceFromModulus(m.mu[i]!) / m.distTrueMpc[i]!);
      s2 += e * e;
      k++;
    }
    // sigma_lnD = 0.2 with 4750 draws: standard error of sigma about 0.2/sqrt(2k) = 0.002
    expect(Math.sqrt(s2 / k)).toBeGreaterThan(0.2 - 0.008);
    expect(Math.sqrt(s2 / k)).toBeLessThan(0.2 + 0.008);
    // binomial: 250 +- 15
    expect(nb).toBeGreaterThan(250 - 60);
    expect(nb).toBeLessThan(250 + 60);
    // sigma_mu = (5 / ln 10) sigma_lnD (domain reference 5.5, from Hogg 1999's mu definition)
    expect(m.muErr[0]!).toBeCloseTo(0.2 / (Math.LN10 / 5), 12);
  });

  it("keeps a Galactic zone of avoidance empty of field galaxies", () => {
    const m = makeMockUniverse({ seed: 5, n: 1000, zoneOfAvoidanceDeg: 10 });
    for (let i = 0; i < m.n; i++) {
      const [, b] = convertPosition(m.raDeg[i]!, m.decDeg[i]!, "icrs", "galactic");
      expect(Math.abs(b)).toBeGreaterThanOrEqual(10 - 1e-9);
    }
  });

  it("adds the bulk flow to every radial velocity", () => {
    const bulk: [number, number, number] = [300, -200, 100];
    const m = makeMockUniverse({ seed: 6, n: 300, bulkFlowGal: bulk, sigmaStar: 0 });
    for (let i = 0; i < m.n; i++) {
      const [l, b] = convertPosition(m.raDeg[i]!, m.decDeg[i]!, "icrs", "galactic");
      const L = (l * Math.PI) / 180;
      const B = (b * Math.PI) / 180;
      const vr = bulk[0] * Math.cos(B) * Math.cos(L) + bulk[1] * Math.cos(B) * Math.sin(L) + bulk[2] * Math.sin(B);
      expect(m.vPecTrue[i]!).toBeCloseTo(vr, 8);
    }
  });

  it("places cluster members around the centre and makes them fall in", () => {
    const cl = { raDeg: 187.7, decDeg: 12.4, distMpc: 40, nMembers: 60, sigmaKmS: 0, rCoreMpc: 1, infallKmS: 300, infallRefMpc: 5 };
    const m = makeMockUniverse({ seed: 9, n: 2000, rMaxMpc: 80, clusters: [cl], sigmaStar: 0 });
    expect(m.truth.clusters[0]!.infallSlope).toBe(0.9);
    let members = 0;
    for (let i = 0; i < m.n; i++) {
      if (m.clusterOf[i] !== 0) continue;
      members++;
      expect(angleDiffDeg(m.raDeg[i]!, cl.raDeg)).toBeLessThan(20);
      expect(Math.abs(m.distTrueMpc[i]! - 40)).toBeLessThan(6);
    }
    expect(members).toBe(60);
    // v_in(d) = 300 (d / 5)^-0.9 (Terry et al. 2002 power-law form with our parameters)
    expect(mockInfallSpeed(m.truth.clusters[0]!, 10)).toBeCloseTo(300 * Math.pow(2, -0.9), 10);
    expect(mockInfallSpeed(m.truth.clusters[0]!, 25)).toBe(0);
  });

  it("handles an empty mock and rejects impossible options", () => {
    expect(makeMockUniverse({ seed: 1, n: 0 }).n).toBe(0);
    expect(() => makeMockUniverse({ seed: 1, n: 5, clusters: [{ raDeg: 0, decDeg: 0, distMpc: 10, nMembers: 6 }] })).toThrow(/outnumber/);
    expect(() => makeMockUniverse({ seed: 1, n: 5, rMaxMpc: -1 })).toThrow();
  });
});
