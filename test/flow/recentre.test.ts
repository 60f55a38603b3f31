import { describe, it, expect } from "vitest";
import { recentre, relativeFrame, radialVelocity3 } from "../../src/flow/recentre.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { unitVector } from "../../src/sky/vectors.js";

const H0 = 70;
const EXACT = 1e-9; // km/s/Mpc and km/s: the pure-Hubble requirement (H0 to 1e-9)

function pointsFrom(raDeg: Float64Array, decDeg: Float64Array, dMpc: Float64Array, vr: Float64Array, vrErr?: Float64Array) {
  const n = raDeg.length;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const z = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = unitVector(raDeg[i]!, decDeg[i]!);
    x[i] = dMpc[i]! * u[0];
    y[i] = dMpc[i]! * u[1];
    z[i] = dMpc[i]! * u[2];
  }
  return vrErr ? { x, y, z, vr, vrErr } : { x, y, z, vr };
}

describe("recentre", () => {
  it("sees H0 from every galaxy of a pure linear Hubble flow to 1e-9, with zero dipole", () => {
    const m = makeMockUniverse({ seed: 11, n: 400, linear: true, sigmaStar: 0, distErrFrac: 0, rMaxMpc: 100 });
    const pts = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    for (const idx of [0, 17, 123, 250, 399]) {
      for (const [form, estimator] of [["minor", "linear"], ["minor", "log"], ["major", "linear"]] as const) {
        const r = recentre(pts, { index: idx }, { h0: 50, sigmaStar: 250, form, estimator });
        expect(r.estimator).toBe(estimator);
        expect(Math.abs(r.h0There - H0)).toBeLessThan(EXACT);
        for (const d of r.dipole) expect(Math.abs(d)).toBeLessThan(1e-7);
        expect(r.residualRmsThere).toBeLessThan(1e-8);
        expect(Number.isNaN(r.vAB[idx]!)).toBe(true);
      }
    }
  });

  it("sees H0 from a free point and from us, in the redshift-space control of domain reference 10.1(b)", () => {
    const m = makeMockUniverse({ seed: 12, n: 300, linear: true, sigmaStar: 0, distErrFrac: 0 });
    const pts = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    const here = recentre(pts, { x: 0, y: 0, z: 0, vr: 0 }, { h0: H0 });
    expect(Math.abs(here.h0There - H0)).toBeLessThan(EXACT);
    const there = recentre(pts, { x: 30, y: -20, z: 10, vr: H0 * Math.hypot(30, 20, 10) }, { h0: H0 });
    expect(Math.abs(there.h0There - H0)).toBeLessThan(EXACT);
    expect(there.originIndex).toBe(-1);
    expect(there.velocityModel).toBe("radial-only");
  });

  it("reproduces the worked pair of domain reference 10.2-10.3 (minor 1833.58, major 1900.66 km/s)", () => {
    // A at (10, 0, 0), B at (0, 20, 0) Mpc, H0 = 70; B has +300 km/s radial peculiar velocity.
    // Values computed in the domain reference from the vector forms of Karachentsev & Kashibadze 2006.
    const pts = { x: Float64Array.from([10, 0]), y: Float64Array.from([0, 20]), z: Float64Array.from([0, 0]), vr: Float64Array.from([700, 1400]) };
    const pure = recentre(pts, { index: 0 }, { h0: H0, fitDipole: false, fitH0: false });
    expect(pure.s[1]).toBeCloseTo(22.3607, 4);
    expect(pure.vAB[1]).toBeCloseTo(1565.2476, 4);
    pts.vr[1] = 1700;
    expect(recentre(pts, { index: 0 }, { h0: H0, fitH0: false, fitDipole: false }).vAB[1]).toBeCloseTo(1833.58, 2);
    expect(recentre(pts, { index: 0 }, { h0: H0, fitH0: false, fitDipole: false, form: "major" }).vAB[1]).toBeCloseTo(1900.66, 2);
  });

  it("shows the origin's own peculiar velocity as a dipole -u_A (domain reference 10.2)", () => {
    const m = makeMockUniverse({ seed: 13, n: 500, linear: true, sigmaStar: 0, distErrFrac: 0 });
    const pts = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    const a = [40, 10, -5];
    const d = Math.hypot(a[0]!, a[1]!, a[2]!);
    const u = 400; // km/s radial, away from us
    const r = recentre(pts, { x: a[0]!, y: a[1]!, z: a[2]!, vr: H0 * d + u }, { h0: H0, sigmaStar: 0 });
    expect(Math.abs(r.h0There - H0)).toBeLessThan(EXACT);
    for (let k = 0; k < 3; k++) expect(Math.abs(r.dipole[k]! + (u * a[k]!) / d)).toBeLessThan(1e-7);
  });

  it("goes there and back: shifting by an origin and by its negative is the identity", () => {
    const m = makeMockUniverse({ seed: 14, n: 100, distErrFrac: 0.2 });
    const p = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    const n = m.n;
    const v = { vx: new Float64Array(n), vy: new Float64Array(n), vz: new Float64Array(n) };
    for (let i = 0; i < n; i++) [v.vx[i], v.vy[i], v.vz[i]] = radialVelocity3(p.x[i]!, p.y[i]!, p.z[i]!, p.vr[i]!);
    const o = { x: p.x[5]!, y: p.y[5]!, z: p.z[5]!, vx: v.vx[5]!, vy: v.vy[5]!, vz: v.vz[5]! };
    const there = relativeFrame({ ...p, ...v }, o);
    const back = relativeFrame(there, { x: -o.x, y: -o.y, z: -o.z, vx: -o.vx, vy: -o.vy, vz: -o.vz });
    for (let i = 0; i < n; i++) {
      expect(Math.abs(back.x[i]! - p.x[i]!)).toBeLessThan(1e-12);
      expect(Math.abs(back.vz[i]! - v.vz[i]!)).toBeLessThan(1e-9);
    }
  });

  it("goes there and back in a Hubble flow: the field seen from A, re-centred on us, is ours again", () => {
    const m = makeMockUniverse({ seed: 15, n: 200, linear: true, sigmaStar: 0, distErrFrac: 0 });
    const p = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    const a = 7;
    const there = recentre(p, { index: a }, { h0: H0 });
    const q = { x: p.x.map((t) => t - p.x[a]!), y: p.y.map((t) => t - p.y[a]!), z: p.z.map((t) => t - p.z[a]!), vr: there.vAB.map((t, i) => (i === a ? 0 : t)) };
    const back = recentre(q, { x: -p.x[a]!, y: -p.y[a]!, z: -p.z[a]!, vr: H0 * m.distTrueMpc[a]! }, { h0: H0 });
    for (let i = 0; i < m.n; i++) {
      if (i === a) continue;
      expect(Math.abs(back.s[i]! - m.distTrueMpc[i]!)).toBeLessThan(1e-9);
      expect(Math.abs(back.vAB[i]! - m.czCmbKmS[i]!)).toBeLessThan(1e-7);
    }
  });

  it("leaves out rows beyond maxDistMpc, rows not in use and NaN rows", () => {
    const m = makeMockUniverse({ seed: 16, n: 50, linear: true, sigmaStar: 0, distErrFrac: 0 });
    const p = pointsFrom(m.raDeg, m.decDeg, m.distTrueMpc, m.czCmbKmS);
    p.vr[3] = NaN;
    const use = new Uint8Array(m.n).fill(1);
    use[4] = 0;
    const r = recentre({ ...p, use }, { index: 0 }, { h0: H0, maxDistMpc: 1e9 });
    expect(r.nUsed).toBe(m.n - 3);
    expect(Number.isNaN(r.vAB[3]!)).toBe(true);
    const near = recentre(p, { index: 0 }, { h0: H0, maxDistMpc: 60 });
    let inside = 0;
    for (let i = 1; i < m.n; i++) if (near.s[i]! <= 60 && i !== 3) inside++;
    expect(near.nUsed).toBe(inside);
  });

  it("takes the log fit exactly when the upper median of the used rows' vrErr exceeds sigma*", () => {
    // the rule as stated in RecentreOptions.estimator: sort, take v[m >> 1], compare with sigmaStar
    for (const m of [10, 11]) {
      for (let low = 0; low <= m; low++) {
        const ra = Float64Array.from({ length: m }, (_, i) => (i * 137.5) % 360);
        const dec = Float64Array.from({ length: m }, (_, i) => -60 + (i * 47) % 120);
        const d = Float64Array.from({ length: m }, (_, i) => 10 + 9 * i);
        const vr = Float64Array.from(d, (x) => 70 * x);
        const vrErr = Float64Array.from({ length: m }, (_, i) => (i < low ? 200 : i % 2 ? 300 : 250.5));
        const sorted = [...vrErr].sort((a, b) => a - b);
        const expected = sorted[m >> 1]! > 250 ? "log" : "linear";
        const r = recentre(pointsFrom(ra, dec, d, vr, vrErr), { x: 0, y: 0, z: 0, vr: 0 }, { h0: 70, sigmaStar: 250 });
        expect(r.estimator).toBe(expected);
      }
    }
  });

  it("returns NaN, not an exception, for empty input or a bad origin index", () => {
    const e = new Float64Array(0);
    const r = recentre({ x: e, y: e, z: e, vr: e }, { x: 0, y: 0, z: 0, vr: 0 }, { h0: H0 });
    expect(r.nUsed).toBe(0);
    expect(Number.isNaN(r.h0There)).toBe(true);
    const one = Float64Array.from([1]);
    const bad = recentre({ x: one, y: one, z: one, vr: one }, { index: 5 }, { h0: H0 });
    expect(bad.originIndex).toBe(-1);
    expect(Number.isNaN(bad.h0There)).toBe(true);
  });
});
